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
mod error;
mod replay;

pub use error::{Place, ScenarioError, TargetError};
pub use replay::{
    find_all, replay, replay_on, replay_recorded, replay_shown, InProcess, ScenarioOutcome,
    TargetSource,
};

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
    /// Hazard kinds that must appear.
    #[serde(default)]
    pub hazards_present: Vec<HazardKind>,
    /// Hazard kinds that must not appear: a list, or `all`.
    #[serde(default)]
    pub hazards_absent: Option<HazardSet>,
}

/// A hazard kind, as scenario files write it (one word per kind of
/// `BoardEvent`; see [`hazard_word`]).
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq, PartialOrd, Ord)]
#[serde(rename_all = "kebab-case")]
pub enum HazardKind {
    /// Strong drivers disagreeing on a net.
    Contention,
    /// An input capturing a net nothing drives.
    FloatingCapture,
    /// A scan output driving a power or ground rail.
    ScanOnRail,
    /// A scan output against a non-scan output.
    ScanVsCluster,
    /// EXTEST entered without a PRELOAD first.
    ExtestWithoutPreload,
    /// TCK faster than a device's TAP_SCAN_CLOCK allows.
    TckTooFast,
    /// TCK stopped high where a device allows only low.
    TckStop,
    /// A scan whose length is not the chain's.
    ScanLength,
}

impl HazardKind {
    /// Every kind, in the order of the enum.
    pub const ALL: [HazardKind; 8] = [
        HazardKind::Contention,
        HazardKind::FloatingCapture,
        HazardKind::ScanOnRail,
        HazardKind::ScanVsCluster,
        HazardKind::ExtestWithoutPreload,
        HazardKind::TckTooFast,
        HazardKind::TckStop,
        HazardKind::ScanLength,
    ];

    /// The word scenario files write.
    pub fn word(self) -> &'static str {
        match self {
            HazardKind::Contention => "contention",
            HazardKind::FloatingCapture => "floating-capture",
            HazardKind::ScanOnRail => "scan-on-rail",
            HazardKind::ScanVsCluster => "scan-vs-cluster",
            HazardKind::ExtestWithoutPreload => "extest-without-preload",
            HazardKind::TckTooFast => "tck-too-fast",
            HazardKind::TckStop => "tck-stop",
            HazardKind::ScanLength => "scan-length",
        }
    }
}

/// A set of hazard kinds: `all`, or a list of kinds.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum HazardSet {
    /// `all`.
    All,
    /// A list of kinds.
    List(Vec<HazardKind>),
}

impl<'de> Deserialize<'de> for HazardSet {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Visit;
        impl<'de> serde::de::Visitor<'de> for Visit {
            type Value = HazardSet;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                let words: Vec<&str> = HazardKind::ALL.iter().map(|k| k.word()).collect();
                write!(f, "`all` or a list of hazard kinds ({})", words.join(", "))
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<HazardSet, E> {
                match v {
                    "all" => Ok(HazardSet::All),
                    _ => Err(E::invalid_value(serde::de::Unexpected::Str(v), &self)),
                }
            }
            fn visit_bool<E: serde::de::Error>(self, v: bool) -> Result<HazardSet, E> {
                Err(E::invalid_value(serde::de::Unexpected::Bool(v), &self))
            }
            fn visit_seq<A: serde::de::SeqAccess<'de>>(
                self,
                mut seq: A,
            ) -> Result<HazardSet, A::Error> {
                let mut list = Vec::new();
                while let Some(k) = seq.next_element()? {
                    list.push(k);
                }
                Ok(HazardSet::List(list))
            }
        }
        d.deserialize_any(Visit)
    }
}

/// What a program must give: `pass` or `fail`.
#[derive(Clone, Copy, Debug, Default, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// Every scan matches.
    #[default]
    Pass,
    /// Some scan fails.
    Fail,
}

/// One program of a scenario and what it must give.
#[derive(Clone, Debug)]
pub enum ProgramEntry {
    /// Just the file: it must pass.
    File(PathBuf),
    /// The file with expectations.
    Full(ProgramExpect),
}

// By hand rather than `untagged`, so that an error inside the mapping (an
// unknown key, `result: fial`) keeps serde's own words and place.
impl<'de> Deserialize<'de> for ProgramEntry {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Visit;
        impl<'de> serde::de::Visitor<'de> for Visit {
            type Value = ProgramEntry;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a program file, or a mapping with `file:`")
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<ProgramEntry, E> {
                Ok(ProgramEntry::File(PathBuf::from(v)))
            }
            fn visit_map<A: serde::de::MapAccess<'de>>(
                self,
                map: A,
            ) -> Result<ProgramEntry, A::Error> {
                ProgramExpect::deserialize(serde::de::value::MapAccessDeserializer::new(map))
                    .map(ProgramEntry::Full)
            }
        }
        d.deserialize_any(Visit)
    }
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
    pub result: Verdict,
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
