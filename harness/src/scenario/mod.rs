//! Scenarios: one regression case each — a board, the defects on it, the
//! programs to run, and what must come out.
//!
//! ```yaml
//! description: a wired-AND short between LB_D0 and LB_D1 is caught by the interconnect test
//! board: ../boards/harbor_controller.yaml
//! defects:                              # the defect list format (see `virtual_board::DefectSpec`)
//!   - { short: [LB_D0, LB_D1], behaviour: wired-and }
//! programs:
//!   - file: ../programs/interconnect.yaml
//!     result: fail                      # pass (default) or fail
//!     failing_scans: [9, 13]            # these scans must fail (and no others)
//!     failing_nets: [LB_D0, LB_D1]      # these nets, as designed, must show failing bits (no others)
//!   - { file: ../programs/infra_j2.svf, port: J2_AUX }
//!   - file: ../programs/interconnect.yaml   # on the good board (no defects) …
//!     compare:                              # … against a real recording
//!       real: ../captures/j2_aux_lb_d0_d1_short.vcd
//!       port: J2_AUX
//!       wires: { tck: ch0_tck, tms: ch1_tms, tdi: ch2_tdi, tdo: ch3_tdo }
//!       differing_nets: [LB_D0, LB_D1]      # exactly these nets differ
//! hazards_present: [contention]        # hazard kinds that must appear
//! hazards_absent: all                  # or a list of kinds that must not appear
//! ```

pub mod embedded;
mod replay;

pub use replay::{find_all, replay, ScenarioOutcome};

use std::path::PathBuf;

use serde::Deserialize;
use virtual_board::DefectSpec;

/// A scenario file as written.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScenarioFile {
    /// One line saying what the scenario shows.
    pub description: String,
    /// The board file, relative to the scenario.
    pub board: PathBuf,
    /// Defects injected into the board.
    #[serde(default)]
    pub defects: Vec<DefectSpec>,
    /// Programs, run in order on the same board.
    pub programs: Vec<ProgramEntry>,
    /// Hazard kinds that must appear (see `BoardEvent::kind`, or the short
    /// names contention, floating-capture, scan-on-rail, scan-vs-cluster,
    /// extest-without-preload, tck-too-fast, tck-stop, scan-length).
    #[serde(default)]
    pub hazards_present: Vec<String>,
    /// Hazard kinds that must not appear: a list, or `all`.
    #[serde(default)]
    pub hazards_absent: Option<HazardSet>,
}

/// A set of hazard kinds.
#[derive(Clone, Debug, Deserialize)]
#[serde(untagged)]
pub enum HazardSet {
    /// `all`.
    Word(String),
    /// A list of kinds.
    List(Vec<String>),
}

/// One program of a scenario and what it must give.
#[derive(Clone, Debug, Deserialize)]
#[serde(untagged)]
pub enum ProgramEntry {
    /// Just the file: it must pass.
    File(PathBuf),
    /// The file with expectations.
    Full(ProgramExpect),
}

/// A program with what it must give.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProgramExpect {
    /// The program, relative to the scenario.
    pub file: PathBuf,
    /// The TAP port an SVF program runs on.
    #[serde(default)]
    pub port: Option<String>,
    /// `pass` (default) or `fail`.
    #[serde(default)]
    pub result: Option<String>,
    /// Scans that must fail, and only these.
    #[serde(default)]
    pub failing_scans: Option<Vec<usize>>,
    /// Nets that must show failing bits, and only these.
    #[serde(default)]
    pub failing_nets: Option<Vec<String>>,
    /// A real capture to compare the run with, scan by scan.
    #[serde(default)]
    pub compare: Option<CompareEntry>,
}

/// A real capture and what comparing with it must find.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CompareEntry {
    /// The capture: a capture log (`.jsonl`) or a VCD recording (`.vcd`).
    pub real: PathBuf,
    /// The TAP port a VCD recording is of.
    #[serde(default)]
    pub port: Option<String>,
    /// The VCD's names of the wires: tck, tms, tdi, tdo, trst.
    #[serde(default)]
    pub wires: std::collections::BTreeMap<String, String>,
    /// Nets whose bits must differ, and only these (empty: the capture must match).
    #[serde(default)]
    pub differing_nets: Vec<String>,
}

/// The short name of a hazard kind, as scenario files write it.
pub fn hazard_word(kind: &str) -> &'static str {
    match kind {
        "contention" => "contention",
        "floating capture" => "floating-capture",
        "scan output on a rail" => "scan-on-rail",
        "scan output against a non-scan output" => "scan-vs-cluster",
        "EXTEST without PRELOAD" => "extest-without-preload",
        "TCK faster than a device allows" => "tck-too-fast",
        "TCK stopped high" => "tck-stop",
        "scan length is not the chain's" => "scan-length",
        _ => "other",
    }
}
