//! Import: a CAD netlist plus an assembly file become a board file.
//!
//! # Layout
//! - `netlist`: `Netlist` (what every reader gives), located errors and warnings.
//! - `csv`: the plain `net,designator,pin` CSV reader.
//! - `ipc356`: the IPC-D-356A reader.
//!
//! Readers are pure over `&str` and never panic (property test
//! `harness/tests/import_no_panic.rs`).

mod csv;
mod ipc356;
mod netlist;

pub use self::csv::read_csv;
pub use self::ipc356::{read_ipc356, NO_CONNECTION};
pub use self::netlist::{
    read_text, text_of, ImportError, ImportErrorKind, Netlist, NetlistNet, NetlistPin, Notice,
    Record,
};
