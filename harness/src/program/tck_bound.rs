//! The TCK cycles of a compiled interconnect test set against its lower bound: one DR scan per TAP port per vector, plus the set-up.
//!
//! The steps the net-level compiler makes while it applies the vectors
//! carry their vector (`Origin::vector`). The bound keeps every other step
//! as it is (resets, instructions, the safe vector before and after: the
//! set-up) and counts, for each vector, one DR scan from Run-Test/Idle back
//! to Run-Test/Idle on each TAP port that scans in it. The cycles of the
//! vector steps are worked out from the TAP state diagram (IEEE 1149.1-2001
//! clause 6): the shortest path into Shift-DR, one TCK per bit (the last
//! one leaving Shift-DR), then the path from Exit1-DR to the scan's end
//! state; a DR scan between two waits in Run-Test/Idle is its length plus 5.

use std::collections::BTreeMap;

use serde::Serialize;
use virtual_board::TapState;

use super::{Action, Program, ScanKind, TrstMode};

/// A program's TCK cycles against one DR scan per TAP port per vector.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct TckBound {
    /// Vectors applied.
    pub vectors: usize,
    /// DR scans made while the vectors are applied.
    pub vector_scans: usize,
    /// DR scans the bound allows for them: one per TAP port per vector.
    pub bound_scans: usize,
    /// Scans held in Pause-DR and updated later (two TCK each).
    pub paused: usize,
    /// The program's TCK cycles.
    pub tck: u64,
    /// The lower bound.
    pub bound: u64,
}

impl TckBound {
    /// `tck / bound`.
    pub fn ratio(&self) -> f64 {
        if self.bound == 0 {
            1.0
        } else {
            self.tck as f64 / self.bound as f64
        }
    }

    /// One line for a report.
    pub fn line(&self) -> String {
        format!(
            "{} TCK cycles against a lower bound of {} ({:.2}x): {} DR scans for {} vectors, \
             the bound's {} (one per TAP port per vector, plus the set-up){}",
            self.tck,
            self.bound,
            self.ratio(),
            self.vector_scans,
            self.vectors,
            self.bound_scans,
            match self.paused {
                0 => String::new(),
                1 => "; 1 scan held in Pause-DR".to_string(),
                n => format!("; {n} scans held in Pause-DR"),
            }
        )
    }
}

/// TCK cycles of a DR scan of `bits` from `from` that ends in `end`.
fn dr_cycles(from: TapState, bits: usize, end: TapState) -> u64 {
    (from.path_to(TapState::ShiftDr).len() + bits + TapState::Exit1Dr.path_to(end).len()) as u64
}

/// The bound of `program`, which clocked `tck` cycles; `None` when no step
/// belongs to a vector (no compiled pattern set).
pub fn tck_bound(program: &Program, tck: u64) -> Option<TckBound> {
    let mut state: BTreeMap<&str, TapState> = BTreeMap::new();
    let mut spent: u64 = 0;
    let mut vector_scans = 0;
    let mut paused = 0;
    // (vector, port) → the DR length scanned.
    let mut rounds: BTreeMap<(u32, &str), usize> = BTreeMap::new();
    for step in &program.steps {
        let port = step.port.as_str();
        let now = *state.get(port).unwrap_or(&TapState::TestLogicReset);
        let (cycles, next) = match &step.action {
            Action::ResetTms => (5, TapState::TestLogicReset),
            Action::Trst(TrstMode::On) => (0, TapState::TestLogicReset),
            Action::Trst(_) | Action::Frequency(_) => (0, now),
            Action::Goto { path, end } => {
                let n = if path.is_empty() {
                    now.path_to(*end).len()
                } else {
                    path.len()
                };
                (n as u64, *end)
            }
            Action::Idle { end, .. } => (0, *end),
            Action::Scan(scan) => {
                let cycles = match scan.kind {
                    ScanKind::Dr => dr_cycles(now, scan.tdi.len(), scan.end),
                    ScanKind::Ir => 0,
                };
                (cycles, scan.end)
            }
        };
        state.insert(port, next);
        let Some(v) = step.origin.vector else {
            continue;
        };
        spent += cycles;
        if let Action::Scan(scan) = &step.action {
            if scan.kind == ScanKind::Dr {
                vector_scans += 1;
                paused += usize::from(scan.end == TapState::PauseDr);
                let len = rounds.entry((v, port)).or_default();
                *len = (*len).max(scan.tdi.len());
            }
        }
    }
    if rounds.is_empty() {
        return None;
    }
    let vectors = rounds
        .keys()
        .map(|k| k.0)
        .collect::<std::collections::BTreeSet<_>>()
        .len();
    let ideal: u64 = rounds
        .values()
        .map(|&len| dr_cycles(TapState::RunTestIdle, len, TapState::RunTestIdle))
        .sum();
    Some(TckBound {
        vectors,
        vector_scans,
        bound_scans: rounds.len(),
        paused,
        tck,
        bound: tck.saturating_sub(spent) + ideal,
    })
}
