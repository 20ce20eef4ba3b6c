//! The TAP controller's state diagram, checked transition by transition.

use virtual_board::TapState::{self, *};

// IEEE 1149.1-2001 clause 6, Figure 6-1 (the TAP controller state diagram),
// from memory.
// One row per (state, TMS): all 32 transitions.
const DIAGRAM: [(TapState, bool, TapState); 32] = [
    (TestLogicReset, false, RunTestIdle),
    (TestLogicReset, true, TestLogicReset),
    (RunTestIdle, false, RunTestIdle),
    (RunTestIdle, true, SelectDrScan),
    (SelectDrScan, false, CaptureDr),
    (SelectDrScan, true, SelectIrScan),
    (CaptureDr, false, ShiftDr),
    (CaptureDr, true, Exit1Dr),
    (ShiftDr, false, ShiftDr),
    (ShiftDr, true, Exit1Dr),
    (Exit1Dr, false, PauseDr),
    (Exit1Dr, true, UpdateDr),
    (PauseDr, false, PauseDr),
    (PauseDr, true, Exit2Dr),
    (Exit2Dr, false, ShiftDr),
    (Exit2Dr, true, UpdateDr),
    (UpdateDr, false, RunTestIdle),
    (UpdateDr, true, SelectDrScan),
    (SelectIrScan, false, CaptureIr),
    (SelectIrScan, true, TestLogicReset),
    (CaptureIr, false, ShiftIr),
    (CaptureIr, true, Exit1Ir),
    (ShiftIr, false, ShiftIr),
    (ShiftIr, true, Exit1Ir),
    (Exit1Ir, false, PauseIr),
    (Exit1Ir, true, UpdateIr),
    (PauseIr, false, PauseIr),
    (PauseIr, true, Exit2Ir),
    (Exit2Ir, false, ShiftIr),
    (Exit2Ir, true, UpdateIr),
    (UpdateIr, false, RunTestIdle),
    (UpdateIr, true, SelectDrScan),
];

#[test]
fn every_transition_of_the_diagram() {
    for (from, tms, to) in DIAGRAM {
        assert_eq!(from.next(tms), to, "{from} with TMS={}", tms as u8);
    }
    // The table covers each of the 16 states with both TMS values.
    for s in TapState::ALL {
        assert_eq!(DIAGRAM.iter().filter(|(f, _, _)| *f == s).count(), 2, "{s}");
    }
}

// IEEE 1149.1-2001 clause 6 (from memory): five TCK cycles with TMS held high
// reach Test-Logic-Reset from any state.
#[test]
fn five_tms_high_reach_reset_from_every_state() {
    for s in TapState::ALL {
        let end = (0..5).fold(s, |st, _| st.next(true));
        assert_eq!(end, TestLogicReset, "from {s}");
    }
    // And five is the least that does it for all states: from Shift-DR four are not enough.
    let four = (0..4).fold(ShiftDr, |st, _| st.next(true));
    assert_ne!(four, TestLogicReset);
}

// The SVF stable states (SVF specification Rev E, from memory): RESET, IDLE, DRPAUSE, IRPAUSE.
#[test]
fn stable_states_are_the_four_of_svf() {
    let stable: Vec<TapState> = TapState::ALL
        .into_iter()
        .filter(|s| s.is_stable())
        .collect();
    assert_eq!(stable, vec![TestLogicReset, RunTestIdle, PauseDr, PauseIr]);
}
