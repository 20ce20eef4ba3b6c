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
    /// already there): [`TapState::tms_path`] as a vector.
    pub fn path_to(self, target: TapState) -> Vec<bool> {
        self.tms_path(target).to_vec()
    }

    /// The TMS values of a shortest path from `self` to `target`, from a
    /// table worked out at compile time by breadth-first search over the
    /// diagram, so right by construction; ties prefer TMS=0 first. No
    /// allocation: a runner takes one per step.
    #[inline]
    pub fn tms_path(self, target: TapState) -> TmsPath {
        PATHS[self as usize][target as usize]
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
        self.scan_entry_path(ir).to_vec()
    }

    /// [`TapState::scan_entry`] without allocation.
    #[inline]
    pub fn scan_entry_path(self, ir: bool) -> TmsPath {
        let capture = if ir { CaptureIr } else { CaptureDr };
        let mut path = self.tms_path(capture);
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

/// A short run of TMS values (a shortest path between two states is at
/// most seven TCK periods; a scan's entry one more), kept inline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TmsPath {
    tms: [bool; TmsPath::ROOM],
    len: u8,
}

impl TmsPath {
    /// The most TMS values a path holds.
    pub const ROOM: usize = 8;

    const EMPTY: TmsPath = TmsPath {
        tms: [false; TmsPath::ROOM],
        len: 0,
    };

    /// Appends one value; a full path keeps its values (no path of the
    /// diagram comes near [`TmsPath::ROOM`]).
    const fn push(&mut self, tms: bool) {
        if (self.len as usize) < TmsPath::ROOM {
            self.tms[self.len as usize] = tms;
            self.len += 1;
        }
    }

    /// The values, first period first.
    #[inline]
    pub fn as_slice(&self) -> &[bool] {
        &self.tms[..self.len as usize]
    }
}

impl std::ops::Deref for TmsPath {
    type Target = [bool];

    fn deref(&self) -> &[bool] {
        self.as_slice()
    }
}

/// Shortest paths between every two states, by breadth-first search from
/// each state over [`TapState::next`] (TMS=0 tried first).
const PATHS: [[TmsPath; 16]; 16] = {
    let mut paths = [[TmsPath::EMPTY; 16]; 16];
    let mut from = 0;
    while from < 16 {
        // Breadth-first: each state's path is its parent's plus one value.
        let mut seen = [false; 16];
        let mut queue = [0usize; 16];
        let (mut head, mut tail) = (0, 1);
        queue[0] = from;
        seen[from] = true;
        while head < tail {
            let s = queue[head];
            head += 1;
            let mut t = 0;
            while t < 2 {
                let tms = t == 1;
                let n = TapState::ALL[s].next(tms) as usize;
                if !seen[n] {
                    seen[n] = true;
                    let mut path = paths[from][s];
                    assert!((path.len as usize) < TmsPath::ROOM);
                    path.push(tms);
                    paths[from][n] = path;
                    queue[tail] = n;
                    tail += 1;
                }
                t += 1;
            }
        }
        from += 1;
    }
    paths
};

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
        // No shorter path exists: distances by a plain search at run time
        // (a round-trip check of the compile-time table).
        for from in TapState::ALL {
            let mut dist = [usize::MAX; 16];
            dist[from as usize] = 0;
            let mut frontier = vec![from];
            while let Some(s) = frontier.first().copied() {
                frontier.remove(0);
                for t in [false, true] {
                    let n = s.next(t) as usize;
                    if dist[n] == usize::MAX {
                        dist[n] = dist[s as usize] + 1;
                        frontier.push(s.next(t));
                    }
                }
            }
            for to in TapState::ALL {
                assert_eq!(from.tms_path(to).len(), dist[to as usize], "{from} -> {to}");
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
