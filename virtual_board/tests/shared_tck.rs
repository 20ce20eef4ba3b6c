//! TAP ports sharing one TCK (`TapTarget::clock_ports`) and TDO between
//! periods (`TapTarget::peek_tdo`): a worked example of a capture on one port
//! in the period of another port's update, and property tests over random
//! boards against the one-port reference `clock`.

use proptest::prelude::*;
use virtual_board::{Bits, Board, TapPins, TapState, TapTarget, TargetError};

mod support;
use support::random_board::{demo_board, random_board};

// U1 = QM7420 on P1 (IR 4 bits), U3 = QM5508 on P2 (IR 8 bits); cell numbers
// from those two demo BSDL files. LB_D(0) of U1 (BC_1 OUTPUT3, cell 29,
// control 37 with disable value 1) drives net LBD0, read by U3's PE(0)
// (BC_1 INPUT, cell 14).
const YAML: &str = r#"
name: shared-tck
float: high
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd, outputs: low }
  U3: { bsdl: qm5508_port_controller.bsd, outputs: off }
tap_ports:
  - { name: P1, chain: [U1] }
  - { name: P2, chain: [U3] }
nets:
  LBD0: [U1.LB_D(0), U3.PE(0)]
"#;
const U1_LBD_CTRL: usize = 37;
const U1_LBD0: usize = 29;
const U3_PE0: usize = 14;

fn board() -> Board {
    demo_board(YAML)
}

/// U1 in EXTEST driving LB_D(0) = `level` (after a PRELOAD of the same
/// vector); U3 in SAMPLE; both ports in Run-Test/Idle.
fn setup(level: bool) -> (Board, Bits) {
    let mut b = board();
    let mut v = Bits::zeros(40);
    v.set(U1_LBD_CTRL, false); // enabled (disable value 1)
    v.set(U1_LBD0, level);
    let idle = TapState::RunTestIdle;
    b.scan_ir(0, &Bits::from_u64(0b0001, 4), idle).unwrap(); // SAMPLE/PRELOAD
    b.scan_dr(0, &v, idle).unwrap();
    b.scan_ir(0, &Bits::from_u64(0b0000, 4), idle).unwrap(); // EXTEST
    b.scan_dr(0, &v, idle).unwrap();
    b.scan_ir(1, &Bits::from_u64(0b0000_0001, 8), idle).unwrap(); // SAMPLE
    (b, v)
}

/// P1 shifts a vector driving LB_D(0) the other way and waits in Exit1-DR;
/// P2 waits in Capture-DR. The next period takes P1 through Update-DR (the
/// latches load on its falling edge) while P2 captures on its rising edge.
fn arm(b: &mut Board, mut v: Bits) {
    v.set(U1_LBD0, !v.get(U1_LBD0));
    b.goto_state(0, TapState::ShiftDr).unwrap();
    b.shift(0, &v).unwrap();
    b.goto_state(1, TapState::CaptureDr).unwrap();
    assert_eq!(b.port_state(0), Some(TapState::Exit1Dr));
}

/// What P2's PE(0) cell holds after the capture: shifted out from Shift-DR.
fn captured_pe0(b: &mut Board) -> bool {
    assert_eq!(b.port_state(1), Some(TapState::ShiftDr));
    b.shift(1, &Bits::zeros(50)).unwrap().get(U3_PE0)
}

// IEEE 1149.1-2001 clause 6 (from memory): Capture-DR loads the register on
// the rising edge of TCK that leaves Capture-DR; Update-DR loads the update
// latches on the falling edge of TCK in Update-DR. In one TCK period the
// rising edge comes first, so a capture on another port in that period sees
// the level from before the update, whichever port a program names first.
#[test]
fn a_capture_in_another_ports_update_period_sees_the_old_level() {
    for old in [false, true] {
        let (mut b, v) = setup(old);
        arm(&mut b, v.clone());
        let update = (0, TapPins::new(true, true)); // Exit1-DR → Update-DR
        let capture = (1, TapPins::new(false, true)); // Capture-DR → Shift-DR
        for pins in [[update, capture], [capture, update]] {
            let mut c = b.clone();
            let mut tdo = [None; 2];
            c.clock_ports(&pins, &mut tdo).unwrap();
            assert_eq!(c.port_state(0), Some(TapState::UpdateDr));
            assert_eq!(captured_pe0(&mut c), old, "order {pins:?}");
            // The update did happen: the next capture sees the new level.
            c.goto_state(1, TapState::CaptureDr).unwrap();
            c.clock(1, TapPins::new(false, true)).unwrap();
            assert_eq!(captured_pe0(&mut c), !old);
        }
        // One port at a time, updating first, the capture sees the new level:
        // the order dependence `clock_ports` removes.
        let mut c = b.clone();
        c.clock(0, update.1).unwrap();
        c.clock(1, capture.1).unwrap();
        assert_eq!(captured_pe0(&mut c), !old);
    }
}

#[test]
fn a_port_named_twice_or_unknown_is_refused() {
    let mut b = board();
    let p = TapPins::new(true, true);
    let mut tdo = [None; 2];
    assert_eq!(
        b.clock_ports(&[(1, p), (1, p)], &mut tdo),
        Err(TargetError::PortTwice(1))
    );
    assert_eq!(
        b.clock_ports(&[(0, p), (7, p)], &mut tdo),
        Err(TargetError::NoSuchPort(7))
    );
    assert_eq!(b.peek_tdo(7), Err(TargetError::NoSuchPort(7)));
    // Nothing was clocked by the refused calls.
    assert_eq!(b.total_cycles(), 0);
}

// IEEE 1149.1-2001 clause 6 (from memory): TDO changes on the falling edge
// and is high-impedance outside Shift-IR and Shift-DR; in Shift-IR the first
// bit out is the Capture-IR pattern's bit 0, which is 1 (the `01` ending).
#[test]
fn tdo_between_periods_is_the_falling_edges_level() {
    let mut b = board();
    b.goto_state(0, TapState::RunTestIdle).unwrap();
    assert_eq!(b.peek_tdo(0), Ok(None));
    b.goto_state(0, TapState::ShiftIr).unwrap();
    assert_eq!(b.peek_tdo(0), Ok(Some(true)));
    assert_eq!(b.clock(0, TapPins::new(false, false)), Ok(Some(true)));
    // The second IR capture bit is 0.
    assert_eq!(b.peek_tdo(0), Ok(Some(false)));
}

/// Periods on random subsets of the ports with random TMS and TDI, TRST*
/// asserted with probability `trst`.
fn arb_period(trst: f64) -> impl Strategy<Value = Vec<(usize, bool, bool, bool)>> {
    proptest::collection::vec(
        (
            0..3usize,
            any::<bool>(),
            any::<bool>(),
            prop::bool::weighted(trst),
        ),
        1..4,
    )
}

/// The period's ports, once each, within the board.
fn period_pins(board: &Board, period: &[(usize, bool, bool, bool)]) -> Vec<(usize, TapPins)> {
    let mut pins: Vec<(usize, TapPins)> = Vec::new();
    for &(port, tms, tdi, trst) in period {
        let port = port % board.port_count();
        if pins.iter().all(|&(p, _)| p != port) {
            let p = TapPins {
                tms,
                tdi,
                trst_n: !trst,
            };
            pins.push((port, p));
        }
    }
    pins
}

/// Every net's level and every device, for comparing two boards without
/// their events.
fn observable(b: &Board) -> (Vec<virtual_board::NetRead>, Vec<virtual_board::Device>) {
    let reads = (0..b.nets().len()).map(|i| b.net_read(i)).collect();
    (reads, b.devices().to_vec())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    // The reference: the one-port `clock`, ports in Capture-DR first (their
    // captures read the nets before any update). Without TRST* the devices
    // of a port stay in step, so a port either captures or updates in a
    // period, never both. Floats are high or low: the other policies draw
    // or remember levels at every resolution, and the reference resolves
    // once per port.
    #[test]
    fn clock_ports_equals_captures_before_updates(
        seed in any::<u64>(),
        periods in proptest::collection::vec(arb_period(0.0), 1..120),
    ) {
        let mut fast = random_board(seed, &["high", "low"]);
        let mut slow = fast.clone();
        for period in &periods {
            let pins = period_pins(&fast, period);
            let mut tdo = vec![None; pins.len()];
            let expected_tdo: Vec<_> = pins.iter().map(|&(p, _)| fast.peek_tdo(p)).collect();
            let a = fast.clock_ports(&pins, &mut tdo);
            let rank = |&(p, _): &(usize, TapPins)| {
                usize::from(slow.port_state(p) != Some(TapState::CaptureDr))
            };
            let mut order: Vec<usize> = (0..pins.len()).collect();
            order.sort_by_key(|&k| rank(&pins[k]));
            let mut slow_tdo = vec![None; pins.len()];
            let mut b = Ok(());
            for k in order {
                match slow.clock(pins[k].0, pins[k].1) {
                    Ok(t) => slow_tdo[k] = t,
                    Err(e) => { b = b.and(Err(e)); }
                }
            }
            prop_assert_eq!(a.is_ok(), b.is_ok(), "after {:?}", pins);
            if a.is_ok() {
                prop_assert_eq!(&tdo, &slow_tdo, "TDO after {:?}", pins);
                // TDO read between periods is what the period's edge samples.
                let peeked: Vec<_> = expected_tdo.into_iter().map(|t| t.unwrap()).collect();
                prop_assert_eq!(&peeked, &tdo);
            }
            prop_assert!(observable(&fast) == observable(&slow), "state after {:?}", pins);
        }
    }

    // One port at a time, `clock_ports` is `clock`, events included.
    #[test]
    fn clock_ports_on_one_port_is_clock(
        seed in any::<u64>(),
        periods in proptest::collection::vec(arb_period(0.05), 1..120),
    ) {
        let mut fast = random_board(seed, &["high", "low", "previous", "random"]);
        let mut slow = fast.clone();
        for period in &periods {
            let pins = period_pins(&fast, period);
            let one = pins[0];
            let mut tdo = [None];
            let a = fast.clock_ports(&[one], &mut tdo).map(|_| tdo[0]);
            let b = slow.clock(one.0, one.1);
            prop_assert_eq!(a, b);
            prop_assert!(fast == slow, "state after {:?}", one);
        }
        prop_assert_eq!(fast.take_events(), slow.take_events());
        prop_assert_eq!(fast.event_counts(), slow.event_counts());
    }
}
