//! A pin on no net is a one-pin net of its own: what its pad drives, a
//! keeper holding it, or the float policy. And the system logic's data and
//! enable given apart in the board file (`off data high`).

use virtual_board::{Bits, Board, BoardEvent, TapState};

mod support;
use support::random_board::demo_board;

// U3 = QM5508 (IR 8 bits, 50 cells; numbers from the demo BSDL file):
// PA(0..7) are BC_7 BIDIR cells 28..21 with control 29 (disable value 0,
// pulled up when disabled); PB(0..7) are BC_7 BIDIR cells 39..32 with
// control 40 (disable value 0, a keeper when disabled); PE(0) is a BC_1
// INPUT, cell 14. None of their pins is on a net here.
// U1 = QM7420 (IR 4 bits, 40 cells): LB_D(0) is a BC_1 OUTPUT3, cell 29,
// control 37 (disable value 1).
/// `u1` is U1's system logic (its `outputs:` value and any `pins:`).
fn board(u1: &str, float: &str) -> Board {
    let yaml = format!(
        "name: lone-pins\nfloat: {float}\ndevices:\n  U1: {{ bsdl: qm7420_bus_bridge.bsd, outputs: {u1} }}\n  U3: {{ bsdl: qm5508_port_controller.bsd, outputs: off }}\ntap_ports:\n  - {{ name: P1, chain: [U1] }}\n  - {{ name: P2, chain: [U3] }}\nnets:\n  LBD0: [U1.LB_D(0), U3.PE(1)]\n"
    );
    demo_board(&yaml)
}

const U3_PA_CTRL: usize = 29;
const U3_PA1: usize = 27;
const U3_PB_CTRL: usize = 40;
const U3_PB1: usize = 38;
const U3_PE0: usize = 14;
const IDLE: TapState = TapState::RunTestIdle;

/// U3: PRELOAD `v`, then EXTEST; returns the capture of one more DR scan of `v`.
fn u3_extest(b: &mut Board, v: &Bits) -> Bits {
    b.scan_ir(1, &Bits::from_u64(0b10, 8), IDLE).unwrap(); // PRELOAD
    b.scan_dr(1, v, IDLE).unwrap();
    b.scan_ir(1, &Bits::from_u64(0b00, 8), IDLE).unwrap(); // EXTEST
    b.scan_dr(1, v, IDLE).unwrap();
    b.scan_dr(1, v, IDLE).unwrap()
}

// IEEE 1149.1-2001 Annex B, STD_1149_1_2001 (from memory): a BC_7 BIDIR cell
// whose driver is enabled captures in EXTEST from the pin itself (the
// self-monitoring cell). On a pin that no net joins, the pin carries only its
// own driver, so the cell reads back what it drives, 0 as well as 1, even
// where the board's float policy would read 1.
#[test]
fn a_self_monitoring_cell_on_no_net_reads_its_own_driver() {
    for level in [false, true] {
        let mut b = board("low", "high");
        let mut v = Bits::zeros(50);
        v.set(U3_PA_CTRL, true); // enabled (disable value 0)
        v.set(U3_PA1, level);
        let _ = b.take_events();
        let out = u3_extest(&mut b, &v);
        assert_eq!(out.get(U3_PA1), level);
        // Driven, not floating: no floating capture at that cell.
        let floats: Vec<u32> = b
            .take_events()
            .into_iter()
            .filter_map(|e| match e {
                BoardEvent::FloatingCapture { cell, .. } => Some(cell),
                _ => None,
            })
            .collect();
        assert!(!floats.contains(&(U3_PA1 as u32)), "{floats:?}");
    }
}

// BSDL KEEPER (IEEE 1149.1-2001 Annex B, from memory): a disabled driver
// leaves a bus keeper holding the last driven level. PB(1) drives 0, then
// its driver is disabled: the keeper holds 0 (a float policy of high would
// read 1).
#[test]
fn a_keeper_on_no_net_holds_the_last_level() {
    let mut b = board("low", "high");
    let mut v = Bits::zeros(50);
    v.set(U3_PB_CTRL, true);
    v.set(U3_PB1, false);
    u3_extest(&mut b, &v);
    v.set(U3_PB_CTRL, false); // disabled: the keeper holds
    b.scan_dr(1, &v, IDLE).unwrap();
    let out = b.scan_dr(1, &v, IDLE).unwrap();
    assert!(!out.get(U3_PB1));
}

// An input on no net has nothing driving its one-pin net: it reads the
// board's float policy and raises a floating capture without a net.
#[test]
fn an_input_on_no_net_floats_by_the_policy() {
    for (float, level) in [("high", true), ("low", false)] {
        let mut b = board("low", float);
        b.scan_ir(1, &Bits::from_u64(0b01, 8), IDLE).unwrap(); // SAMPLE
        let _ = b.take_events();
        let out = b.scan_dr(1, &Bits::zeros(50), IDLE).unwrap();
        assert_eq!(out.get(U3_PE0), level);
        let event = b.take_events().into_iter().find(
            |e| matches!(e, BoardEvent::FloatingCapture { cell, .. } if *cell == U3_PE0 as u32),
        );
        match event {
            Some(BoardEvent::FloatingCapture { net, device, .. }) => {
                assert_eq!(net, None);
                assert_eq!(device, "U3");
            }
            other => panic!("no floating capture at PE(0): {other:?}"),
        }
    }
}

// SAMPLE (IEEE 1149.1-2001 clause 8 and the STD_1149_1_2001 BC_1 rows, from
// memory): an OUTPUT3 cell captures the system logic's data (PI), and its
// control cell the system's enable. With the driver off and the data line
// at 1, the data cell captures 1 while the pin, undriven, floats low; the
// control cell captures the disable value (1 for LB_D; U1's other outputs
// are off too).
#[test]
fn system_data_and_enable_are_given_apart() {
    let mut b = board("off, pins: { \"LB_D(0)\": off data high }", "low");
    b.scan_ir(0, &Bits::from_u64(0b0001, 4), IDLE).unwrap(); // SAMPLE
    let out = b.scan_dr(0, &Bits::zeros(40), IDLE).unwrap();
    assert!(out.get(29), "the data cell captures the system's data line");
    assert!(
        out.get(37),
        "the control cell captures the system's disable"
    );
    // The pin is not driven: U3's PE(1) on the same net reads the float (low).
    b.scan_ir(1, &Bits::from_u64(0b01, 8), IDLE).unwrap();
    let out = b.scan_dr(1, &Bits::zeros(50), IDLE).unwrap();
    assert!(!out.get(13), "PE(1) reads the floating net");
    // `off data low` and plain `off` capture 0 on the data cell.
    for pin in ["off data low", "off"] {
        let mut b = board(&format!("off, pins: {{ \"LB_D(0)\": {pin} }}"), "low");
        b.scan_ir(0, &Bits::from_u64(0b0001, 4), IDLE).unwrap();
        let out = b.scan_dr(0, &Bits::zeros(40), IDLE).unwrap();
        assert!(!out.get(29), "{pin}");
    }
}
