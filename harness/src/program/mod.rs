//! `Program`: one test program for a board with several TAP ports, whatever
//! it was written in (SVF, our native YAML, net-level patterns).
//!
//! Readers turn their text into a `Program`; the runner plays it on any
//! `TapTarget`; the SVF writer turns it back into text for the tester.

pub mod bits_text;
pub mod export;
mod handover;
pub mod native;
pub mod net_level;
mod pattern_error;
mod pipeline;
pub mod svf;
pub mod tck_bound;

use std::path::PathBuf;

pub use pattern_error::{PatternError, UnknownSchedule};

use serde::Serialize;
use virtual_board::{Bits, TapState};

/// The longest scan any program or capture may ask for, in bits (2^24):
/// SVF, native scans, net-level patterns and capture logs alike.
pub const MAX_SCAN_BITS: usize = 1 << 24;

/// The most TCK cycles one idle step may ask for (2^32, about 7 minutes at
/// 10 MHz): a native `idle`, an SVF `RUNTEST` count, or a `RUNTEST` time at
/// the program's frequency.
pub const MAX_IDLE_CYCLES: u64 = 1 << 32;

/// The one message for a scan longer than [`MAX_SCAN_BITS`] (SVF's
/// `TooLarge` error says the same words).
pub fn scan_too_long(found: impl std::fmt::Display) -> String {
    format!("scan length `{found}` is too large (at most {MAX_SCAN_BITS})")
}

/// The one message for an idle count above [`MAX_IDLE_CYCLES`].
pub fn idle_too_long(found: impl std::fmt::Display) -> String {
    format!("idle count `{found}` is too large (at most {MAX_IDLE_CYCLES} TCK cycles)")
}

/// A TCK frequency that is not a finite number of Hz above zero.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
#[error("frequency `{0}` is not a number of Hz above zero")]
pub struct FrequencyError(pub f64);

/// Checks a TCK frequency as written: a finite number of Hz above zero.
///
/// # Errors
/// [`FrequencyError`] for any other value.
pub fn check_frequency(hz: f64) -> Result<f64, FrequencyError> {
    if hz.is_finite() && hz > 0.0 {
        Ok(hz)
    } else {
        Err(FrequencyError(hz))
    }
}

/// Where a step came from, for reports: file and line.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Origin {
    /// The file (SVF or YAML) the step was read from.
    pub file: Option<PathBuf>,
    /// 1-based line (0 when made by the harness, as for net-level patterns).
    pub line: u32,
    /// A short description (a pattern's name, an SVF statement keyword).
    pub note: String,
    /// For a step the net-level compiler made while the vectors are
    /// applied: the vector (1-based) it applies, so the TCK cycles can be
    /// set against one DR scan per TAP port per vector (`tck_bound`).
    #[serde(skip)]
    pub vector: Option<u32>,
}

/// Which register a scan goes through.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum ScanKind {
    /// The instruction registers (Shift-IR).
    Ir,
    /// The selected data registers (Shift-DR).
    Dr,
}

impl ScanKind {
    /// `IR` or `DR`.
    pub fn as_str(self) -> &'static str {
        match self {
            ScanKind::Ir => "IR",
            ScanKind::Dr => "DR",
        }
    }
}

/// One scan: the whole chain of a TAP port, TDO end first.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Scan {
    /// IR or DR.
    pub kind: ScanKind,
    /// Bits to shift in; bit 0 enters first and ends nearest TDO.
    pub tdi: Bits,
    /// Expected TDO bits, compared where `mask` is 1; `None`: not compared.
    pub expect: Option<Bits>,
    /// Compare mask (1 = compare); same length as `tdi`.
    pub mask: Bits,
    /// SVF's SMASK: 1 = this TDI bit matters (kept for export; the board
    /// shifts `tdi` as given).
    pub smask: Option<Bits>,
    /// Stable state to end in.
    pub end: TapState,
}

/// What a TRST step does with the TRST* line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum TrstMode {
    /// Asserted (low): the TAP is held in Test-Logic-Reset.
    On,
    /// Deasserted (high).
    Off,
    /// Not driven: the device's pull-up deasserts it.
    Z,
    /// The port has no TRST* line.
    Absent,
}

/// What a step does.
#[derive(Clone, Debug, PartialEq)]
pub enum Action {
    /// Five TCK with TMS high: Test-Logic-Reset from anywhere.
    ResetTms,
    /// Drive TRST*.
    Trst(TrstMode),
    /// Go to a stable state: by `path` (each one TCK from the last) when
    /// given, else by the shortest TMS path.
    Goto {
        /// States after each TCK; empty for the shortest path.
        path: Vec<TapState>,
        /// The stable state to end in.
        end: TapState,
    },
    /// Stay `cycles` TCK in `state` (a stable state), then go to `end`.
    Idle {
        /// Where to clock.
        state: TapState,
        /// TCK cycles in that state.
        cycles: u64,
        /// Minimum time in seconds (converted at the program's frequency).
        min_seconds: Option<f64>,
        /// Where to go after.
        end: TapState,
    },
    /// Scan IR or DR.
    Scan(Scan),
    /// The TCK frequency from here on, in Hz (SVF FREQUENCY applies from
    /// where it stands, SVF Specification Rev E, from memory); `None`: the
    /// tester's full speed (the run's default). Clocks nothing.
    Frequency(Option<f64>),
}

/// One step of a program: an action on one TAP port.
#[derive(Clone, Debug, PartialEq)]
pub struct Step {
    /// TAP port name.
    pub port: String,
    /// What to do.
    pub action: Action,
    /// Where it came from.
    pub origin: Origin,
}

/// A test program.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Program {
    /// Name, for reports.
    pub name: String,
    /// TCK frequency in Hz at the start of the program (a native program's
    /// `frequency`), if any; [`Action::Frequency`] steps change it later.
    pub frequency: Option<f64>,
    /// True when the program's tester stops TCK high between periods (a
    /// native program's `tck_stop: high`); our recordings stop it low.
    pub tck_stops_high: bool,
    /// Steps, in order.
    pub steps: Vec<Step>,
}

impl Program {
    /// Writes every step's file as a person at `base` would: without `.` and
    /// `..` steps, and relative to `base` when it lies below it (the
    /// command line passes the current folder, so reports do not show
    /// absolute or temporary paths). Changes nothing else.
    pub fn show_paths_from(&mut self, base: &std::path::Path) {
        let base = crate::model_notes::tidy_path(base);
        for step in &mut self.steps {
            if let Some(file) = &mut step.origin.file {
                let tidy = crate::model_notes::tidy_path(file);
                *file = match tidy.strip_prefix(&base) {
                    Ok(rel) if !rel.as_os_str().is_empty() => rel.to_path_buf(),
                    _ => tidy,
                };
            }
        }
    }

    /// The TAP ports the program uses, in order of first use.
    pub fn ports(&self) -> Vec<String> {
        let mut out: Vec<String> = Vec::new();
        for s in &self.steps {
            if !out.contains(&s.port) {
                out.push(s.port.clone());
            }
        }
        out
    }
}
