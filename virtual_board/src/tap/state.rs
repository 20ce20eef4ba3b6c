//! `TapState`: the sixteen states of the TAP controller and their transitions.

use std::fmt;

use serde::{Deserialize, Serialize};

/// A state of the TAP controller, named as IEEE 1149.1 clause 6 names it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[repr(u8)]
pub enum TapState {
    /// Test-Logic-Reset
    TestLogicReset,
    /// Run-Test/Idle
    RunTestIdle,
    /// Select-DR-Scan
    SelectDrScan,
    /// Capture-DR
    CaptureDr,
    /// Shift-DR
    ShiftDr,
    /// Exit1-DR
    Exit1Dr,
    /// Pause-DR
    PauseDr,
    /// Exit2-DR
    Exit2Dr,
    /// Update-DR
    UpdateDr,
    /// Select-IR-Scan
    SelectIrScan,
    /// Capture-IR
    CaptureIr,
    /// Shift-IR
    ShiftIr,
    /// Exit1-IR
    Exit1Ir,
    /// Pause-IR
    PauseIr,
    /// Exit2-IR
    Exit2Ir,
    /// Update-IR
    UpdateIr,
}

use TapState::*;

impl TapState {
    /// All sixteen states, in the order of the enum.
    pub const ALL: [TapState; 16] = [
        TestLogicReset,
        RunTestIdle,
        SelectDrScan,
        CaptureDr,
        ShiftDr,
        Exit1Dr,
        PauseDr,
        Exit2Dr,
        UpdateDr,
        SelectIrScan,
        CaptureIr,
        ShiftIr,
        Exit1Ir,
        PauseIr,
        Exit2Ir,
        UpdateIr,
    ];

    /// The state after one rising TCK edge with this TMS (IEEE 1149.1
    /// clause 6 state diagram).
    #[inline]
    pub const fn next(self, tms: bool) -> TapState {
        match (self, tms) {
            (TestLogicReset, false) => RunTestIdle,
            (TestLogicReset, true) => TestLogicReset,
            (RunTestIdle, false) => RunTestIdle,
            (RunTestIdle, true) => SelectDrScan,
            (SelectDrScan, false) => CaptureDr,
            (SelectDrScan, true) => SelectIrScan,
            (CaptureDr, false) => ShiftDr,
            (CaptureDr, true) => Exit1Dr,
            (ShiftDr, false) => ShiftDr,
            (ShiftDr, true) => Exit1Dr,
            (Exit1Dr, false) => PauseDr,
            (Exit1Dr, true) => UpdateDr,
            (PauseDr, false) => PauseDr,
            (PauseDr, true) => Exit2Dr,
            (Exit2Dr, false) => ShiftDr,
            (Exit2Dr, true) => UpdateDr,
            (UpdateDr, false) => RunTestIdle,
            (UpdateDr, true) => SelectDrScan,
            (SelectIrScan, false) => CaptureIr,
            (SelectIrScan, true) => TestLogicReset,
            (CaptureIr, false) => ShiftIr,
            (CaptureIr, true) => Exit1Ir,
            (ShiftIr, false) => ShiftIr,
            (ShiftIr, true) => Exit1Ir,
            (Exit1Ir, false) => PauseIr,
            (Exit1Ir, true) => UpdateIr,
            (PauseIr, false) => PauseIr,
            (PauseIr, true) => Exit2Ir,
            (Exit2Ir, false) => ShiftIr,
            (Exit2Ir, true) => UpdateIr,
            (UpdateIr, false) => RunTestIdle,
            (UpdateIr, true) => SelectDrScan,
        }
    }

    /// True for the states a program may rest in: Test-Logic-Reset,
    /// Run-Test/Idle, Pause-DR and Pause-IR (the stable states of SVF).
    pub const fn is_stable(self) -> bool {
        matches!(self, TestLogicReset | RunTestIdle | PauseDr | PauseIr)
    }

    /// True in Shift-DR and Shift-IR, the only states where TDO drives.
    pub const fn is_shift(self) -> bool {
        matches!(self, ShiftDr | ShiftIr)
    }

    /// The TMS values of a shortest path from `self` to `target` (empty when
    /// already there). Found by breadth-first search over the diagram, so it
    /// is right by construction; ties prefer TMS=0 first.
    pub fn path_to(self, target: TapState) -> Vec<bool> {
        if self == target {
            return Vec::new();
        }
        let mut prev: [Option<(TapState, bool)>; 16] = [None; 16];
        let mut seen = [false; 16];
        let mut queue = std::collections::VecDeque::from([self]);
        seen[self as usize] = true;
        while let Some(s) = queue.pop_front() {
            for tms in [false, true] {
                let n = s.next(tms);
                if !seen[n as usize] {
                    seen[n as usize] = true;
                    prev[n as usize] = Some((s, tms));
                    if n == target {
                        let mut path = Vec::new();
                        let mut at = n;
                        while let Some((p, t)) = prev[at as usize] {
                            path.push(t);
                            at = p;
                            if at == self {
                                break;
                            }
                        }
                        path.reverse();
                        return path;
                    }
                    queue.push_back(n);
                }
            }
        }
        Vec::new()
    }

    /// The TMS values that start a whole scan from the stable state `self`:
    /// through Capture-DR (`ir` false) or Capture-IR into the Shift state.
    ///
    /// Every scan captures. From Pause-DR or Pause-IR the path is
    /// Exit2 → Update → Select-DR-Scan → … → Capture → Shift, so the update
    /// the earlier scan deferred happens here, and the register captures
    /// anew (SVF Specification Rev E, SIR/SDR state paths, from memory;
    /// IEEE 1149.1 clause 6 diagram). `path_to(Shift-xR)` would go
    /// Pause → Exit2 → Shift and skip both.
    pub fn scan_entry(self, ir: bool) -> Vec<bool> {
        let capture = if ir { CaptureIr } else { CaptureDr };
        let mut path = self.path_to(capture);
        path.push(false);
        path
    }

    /// The standard's name, e.g. `Shift-DR`.
    pub const fn name(self) -> &'static str {
        match self {
            TestLogicReset => "Test-Logic-Reset",
            RunTestIdle => "Run-Test/Idle",
            SelectDrScan => "Select-DR-Scan",
            CaptureDr => "Capture-DR",
            ShiftDr => "Shift-DR",
            Exit1Dr => "Exit1-DR",
            PauseDr => "Pause-DR",
            Exit2Dr => "Exit2-DR",
            UpdateDr => "Update-DR",
            SelectIrScan => "Select-IR-Scan",
            CaptureIr => "Capture-IR",
            ShiftIr => "Shift-IR",
            Exit1Ir => "Exit1-IR",
            PauseIr => "Pause-IR",
            Exit2Ir => "Exit2-IR",
            UpdateIr => "Update-IR",
        }
    }
}

impl fmt::Display for TapState {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortest_paths_reach_their_target() {
        for from in TapState::ALL {
            for to in TapState::ALL {
                let path = from.path_to(to);
                let end = path.iter().fold(from, |s, &t| s.next(t));
                assert_eq!(end, to, "{from} -> {to}");
                assert!(path.len() <= 8, "{from} -> {to} takes {}", path.len());
            }
        }
        // Run-Test/Idle to Shift-IR is TMS 1,1,0,0 (common practice; IEEE 1149.1 diagram).
        assert_eq!(RunTestIdle.path_to(ShiftIr), vec![true, true, false, false]);
        assert_eq!(RunTestIdle.path_to(ShiftDr), vec![true, false, false]);
    }

    #[test]
    fn a_scan_from_pause_updates_and_captures_first() {
        // SVF Specification Rev E (from memory): an SDR from DRPAUSE goes
        // DRPAUSE, DREXIT2, DRUPDATE, DRSELECT, DRCAPTURE, DRSHIFT; the
        // IEEE 1149.1 clause 6 diagram gives the TMS of each step.
        let walk = |from: TapState, ir: bool| {
            let mut at = from;
            let mut seen = vec![];
            for t in from.scan_entry(ir) {
                at = at.next(t);
                seen.push(at);
            }
            seen
        };
        assert_eq!(PauseDr.scan_entry(false), [true, true, true, false, false]);
        assert_eq!(
            walk(PauseDr, false),
            [Exit2Dr, UpdateDr, SelectDrScan, CaptureDr, ShiftDr]
        );
        assert_eq!(
            walk(PauseIr, true),
            [
                Exit2Ir,
                UpdateIr,
                SelectDrScan,
                SelectIrScan,
                CaptureIr,
                ShiftIr
            ]
        );
        assert_eq!(
            walk(PauseDr, true),
            [
                Exit2Dr,
                UpdateDr,
                SelectDrScan,
                SelectIrScan,
                CaptureIr,
                ShiftIr
            ]
        );
        // From Run-Test/Idle and Test-Logic-Reset nothing changes.
        assert_eq!(RunTestIdle.scan_entry(false), RunTestIdle.path_to(ShiftDr));
        assert_eq!(
            TestLogicReset.scan_entry(true),
            TestLogicReset.path_to(ShiftIr)
        );
    }
}
