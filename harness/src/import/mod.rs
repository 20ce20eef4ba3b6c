//! Import: a CAD netlist plus an assembly file become a board file.
//!
//! # Layout
//! - `netlist`: `Netlist` (what every reader gives), located errors and warnings.
//! - `csv`: the plain `net,designator,pin` CSV reader.
//! - `ipc356`: the IPC-D-356A reader.
//! - `sexpr`: the s-expression tokenizer and tree reader under `edif`.
//! - `edif`: the EDIF 2 0 0 (EIA-548) netlist-view reader.
//! - `assembly`: the assembly file (scan devices and BSDL files, TAP
//!   connectors, rails, resistors, parts not fitted, hand-given clusters).
//! - `part_table`: the part table (part numbers → cluster kinds and pin
//!   roles) and the designator → part number map.
//! - `part_clusters`: each fitted instance of a table part → clusters and pulls.
//! - `pads`: a scan device's pad centres from the netlist's coordinates.
//! - `plan`: netlist + assembly → devices, chains, nets, rails, pulls,
//!   clusters, unmodelled parts, guesses and warnings.
//! - `board_text`: the plan written as a board file.
//! - `report`: `ImportReport` (text and JSON).
//! - `export`: a board file's netlist, written as CSV or IPC-D-356A;
//!   `export_edif`: the same as EDIF 2 0 0.
//!
//! Readers are pure over `&str` and never panic (property test
//! `harness/tests/import_no_panic.rs`). Data flows one way: files → plan →
//! board text → the board loader (which checks it) → report.

mod assembly;
mod board_text;
mod csv;
mod edif;
mod export;
mod export_edif;
mod ipc356;
mod netlist;
mod pads;
mod part_clusters;
mod part_table;
mod plan;
mod report;
mod sexpr;

use std::path::Path;

use virtual_board::{bsdl_files_beside, load_board_text, LoadedBoard};

pub use self::assembly::{
    read_assembly, Assembly, AssemblyDevice, AssemblyPort, AssemblySource, TrstEntry,
};
pub use self::board_text::{board_text, relative, scalar};
pub use self::csv::read_csv;
pub use self::edif::{read_edif, DESIGNATOR_PROPERTIES};
pub use self::export::{board_netlist, connector_name, write_csv, write_ipc356, ExportPin};
pub use self::export_edif::write_edif;
pub use self::ipc356::{read_ipc356, NO_CONNECTION};
pub use self::netlist::{
    read_text, text_of, ImportError, ImportErrorKind, Netlist, NetlistNet, NetlistPin, Notice,
    Record,
};
pub use self::pads::PlannedPad;
pub use self::part_clusters::PlannedCluster;
pub use self::part_table::{
    designator_matches, read_part_table, GateRoles, Level, PartDef, PartKind, PartNumberOf,
    PartTable, PinList, PinName, TablePart,
};
pub use self::plan::{
    plan, rail_by_name, ImportPlan, PlannedDevice, PlannedNet, PlannedPort, PlannedPull,
    PlannedRail, UnmodelledPart,
};
pub use self::report::{FoundDevice, ImportReport};

/// The netlist formats `import` reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NetlistFormat {
    /// `net,designator,pin` with a header line.
    Csv,
    /// IPC-D-356A.
    Ipc356,
    /// EDIF 2 0 0 (EIA-548), netlist view.
    Edif,
}

impl NetlistFormat {
    /// The format a file name suggests: `.csv`, or `.ipc`, `.356`, `.d356`,
    /// `.ipc356` for IPC-D-356A, `.edf`, `.edn`, `.edif` for EDIF.
    pub fn from_path(path: &Path) -> Option<NetlistFormat> {
        let ext = path.extension()?.to_string_lossy().to_ascii_lowercase();
        match ext.as_str() {
            "csv" => Some(NetlistFormat::Csv),
            "ipc" | "356" | "d356" | "ipc356" | "356a" => Some(NetlistFormat::Ipc356),
            "edf" | "edn" | "edif" => Some(NetlistFormat::Edif),
            _ => None,
        }
    }

    /// The format by its command-line word: `csv`, `ipc-d-356a` or `edif`.
    pub fn from_word(word: &str) -> Option<NetlistFormat> {
        match word.to_ascii_lowercase().as_str() {
            "csv" => Some(NetlistFormat::Csv),
            "ipc-d-356a" | "ipc-d-356" | "ipc356" => Some(NetlistFormat::Ipc356),
            "edif" | "edf" => Some(NetlistFormat::Edif),
            _ => None,
        }
    }

    /// The words `from_word` takes, for messages.
    pub const WORDS: &'static str = "csv, ipc-d-356a, edif";
}

/// Reads a netlist file in `format`.
///
/// # Errors
/// I/O, not text, or the reader's placed errors.
pub fn read_netlist(path: &Path, format: NetlistFormat) -> Result<Netlist, ImportError> {
    let text = read_text(path)?;
    match format {
        NetlistFormat::Csv => read_csv(&text, path),
        NetlistFormat::Ipc356 => read_ipc356(&text, path),
        NetlistFormat::Edif => read_edif(&text, path),
    }
}

/// A board made from a netlist.
#[derive(Debug)]
pub struct Imported {
    /// The board file text.
    pub text: String,
    /// The board, loaded from that text (so the text is known good).
    pub board: LoadedBoard,
    /// The report.
    pub report: ImportReport,
}

/// Reads the netlist and the assembly file and makes the board file that
/// will be written at `out` (nothing is written here).
///
/// # Errors
/// A placed error of the netlist or the assembly file, or the board loader's
/// refusal of the result.
pub fn import(
    netlist_path: &Path,
    format: NetlistFormat,
    assembly_path: &Path,
    out: &Path,
) -> Result<Imported, ImportError> {
    let netlist = read_netlist(netlist_path, format)?;
    let asm_text = read_text(assembly_path)?;
    let asm = read_assembly(&asm_text, assembly_path)?;
    let plan = plan(&netlist, &asm)?;
    let text = board_text(&plan, &asm, netlist_path, out);
    let board = load_board_text(&text, out, &mut bsdl_files_beside(out)).map_err(|e| {
        ImportError::at(
            assembly_path,
            0,
            0,
            ImportErrorKind::Other(format!(
                "the board file made from the netlist and this assembly file does not load: {e}"
            )),
        )
    })?;
    let summary = crate::BoardSummary::from_board(&board.board);
    let report = ImportReport::new(&plan, netlist.nets.len(), netlist.pin_count(), &summary);
    Ok(Imported {
        text,
        board,
        report,
    })
}
