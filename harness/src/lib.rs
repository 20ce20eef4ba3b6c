//! boardtwin's harness: reports, test programs and runners around the virtual board, and the `boardtwin` command line.
//!
//! # Layout
//! - `board_summary`: `BoardSummary`, what `boardtwin board` shows about a board file.
//! - `campaign`: fault universes and campaigns (`universe`, `run_campaign`, `merge`).
//! - `capture`: real captures (capture logs, VCD files, JTAG decoding) compared with a run (`compare`, `Comparison`).
//! - `detail_text`: `CellsText` and `NetsText`, the detailed views of `device --cells` and `board --nets`.
//! - `device_summary`: `DeviceSummary`, what `boardtwin device` shows about one BSDL file.
//! - `diagnose`: from failing captures to repair words (`locate_chain_break`, `ChainVerdict`).
//! - `generate`: test generation: interconnect codes (`Method`, `codes`), the interconnect and infrastructure programs of a board (`interconnect_test`, `infrastructure_program`) and the native YAML writer (`write_native`).
//! - `html`: self-contained HTML reports (`--html FILE`): the page, sortable tables, and the chain, waveform and coverage pictures.
//! - `import`: CAD netlists (IPC-D-356A, EDIF, CSV) and an assembly file to a board file (`read_ipc356`, `read_edif`, `read_csv`).
//! - `model_notes`: what the BSDL files say that the model does not simulate (`DesignWarning`, `UnmodelledAttributes`).
//! - `remote`: the virtual board on the network: the protocol, the server (`remote::run`) and `RemoteBoard`.
//! - `report`: plain-text report pieces (`TextTable`, `SourceSnippet`, `count`).
//!
//! The command line itself is `src/bin/boardtwin/`; it is the only place
//! that uses `anyhow`. Library errors stay typed. The binary's own
//! dependencies (clap, anyhow, indicatif, tracing-subscriber) sit behind
//! the `cli` feature, on by default; `default-features = false` gives the
//! library alone.

#![deny(missing_docs)]

mod board_summary;
pub mod campaign;
pub mod capture;
mod detail_text;
mod device_summary;
pub mod diagnose;
pub mod generate;
pub mod html;
pub mod import;
pub mod model_notes;
pub mod mpsse;
pub mod program;
pub mod remote;
mod report;
pub mod run;
pub mod scenario;
pub mod training;
pub mod vcd;

pub use crate::{
    board_summary::{BoardSummary, ChainDevice, NetAccess, PortSummary},
    detail_text::{CellsText, NetsText},
    device_summary::{
        CellRow, DeviceSummary, ElementPins, IdField, IdcodeFields, InstructionRow, PortPins,
        RegisterRow, TapRow,
    },
    report::{atomic::write_atomic, count::count, source_snippet::SourceSnippet, table::TextTable},
};
