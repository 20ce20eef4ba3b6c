//! Chains of the demo devices: IR capture, BYPASS length, blind IDCODE reads.

use std::path::{Path, PathBuf};

use virtual_board::{load_board_text, Bits, Board, TapPins, TapState, TapTarget};

fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

/// A small board of three demo devices on two TAP ports, no nets.
fn board() -> Board {
    let yaml = r#"
name: chain-basics
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd, idcode: 0x37420A01 }
  U2: { bsdl: qm3310_io_expander.bsd }
  U3: { bsdl: qm5508_port_controller.bsd }
tap_ports:
  - { name: P1, chain: [U1, U2], trst: true }
  - { name: P2, chain: [U3] }
"#;
    let dir = devices_dir();
    let loaded = load_board_text(yaml, Path::new("inline.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    })
    .expect("board loads");
    loaded.board
}

fn ones(n: usize) -> Bits {
    Bits::ones(n)
}

// IEEE 1149.1-2001 clause 7 (from memory): Capture-IR loads a pattern whose two
// least significant bits are 01; the chain's IR length is the sum of the devices'.
#[test]
fn ir_capture_of_a_chain_ends_01_for_each_device() {
    let mut b = board();
    let p1 = b.port_index("P1").unwrap();
    // QM3310 (IR 6, nearest TDO) then QM7420 (IR 4): 10 bits in all.
    let out = b.scan_ir(p1, &ones(10 + 8), TapState::RunTestIdle).unwrap();
    let bits = out.to_bools();
    // First out: the 6-bit capture of U2, "XX0001" → bits 0..3 are 1,0,0,0.
    assert_eq!(&bits[0..4], &[true, false, false, false]);
    // Then U1's 4-bit capture "0101" → 1,0,1,0.
    assert_eq!(&bits[6..10], &[true, false, true, false]);
    // Then the ones we shifted in come back out after exactly 10 bits.
    assert!(bits[10..].iter().all(|&b| b), "{out:?}");
}

// IEEE 1149.1-2001 clause 10 (from memory): after Test-Logic-Reset the IDCODE
// instruction is in effect where there is an ID register (bit 0 is 1), and
// BYPASS (one bit capturing 0) where there is none — "blind interrogation".
#[test]
fn blind_dr_scan_after_reset_reads_idcodes_and_bypass_bits() {
    let mut b = board();
    let p1 = b.port_index("P1").unwrap();
    b.reset_by_tms(p1).unwrap();
    let out = b.scan_dr(p1, &ones(33 + 8), TapState::RunTestIdle).unwrap();
    // U2 has no IDCODE: one 0 bit first. Then U1's 32-bit IDCODE.
    assert!(!out.get(0));
    assert_eq!(out.slice(1, 32).to_u64(), 0x37420A01);
    assert!(out.slice(33, 8).to_bools().iter().all(|&b| b));
    let p2 = b.port_index("P2").unwrap();
    let out = b.scan_dr(p2, &ones(32), TapState::RunTestIdle).unwrap();
    assert_eq!(out.to_u64(), 0x25508A01);
}

// IEEE 1149.1-2001 clause 8 (from memory): the all-ones opcode selects BYPASS,
// a one-bit register: a chain in BYPASS delays TDI by one bit per device.
#[test]
fn bypass_adds_one_bit_per_device() {
    let mut b = board();
    let p1 = b.port_index("P1").unwrap();
    b.scan_ir(p1, &ones(10), TapState::RunTestIdle).unwrap();
    let mut pattern = Bits::zeros(12);
    pattern.set(0, true);
    let out = b.scan_dr(p1, &pattern, TapState::RunTestIdle).unwrap();
    // Two bypass bits capture 0, then our single 1 appears at position 2.
    let first_one = (0..12).find(|&i| out.get(i));
    assert_eq!(first_one, Some(2), "{out:?}");
}

// TRST* asserted resets at once, without TCK (IEEE 1149.1-2001 clause 6, from memory).
#[test]
fn trst_resets_the_devices_that_have_it() {
    let mut b = board();
    let p1 = b.port_index("P1").unwrap();
    b.goto_state(p1, TapState::PauseDr).unwrap();
    let cycles = b.total_cycles();
    b.pulse_trst(p1).unwrap();
    // U1 (has TRST_N) is reset; U2 (no TRST) is not, and with no TCK edge
    // it stays where it was.
    let u1 = b.device_index("U1").unwrap();
    let u2 = b.device_index("U2").unwrap();
    assert_eq!(b.devices()[u1].state(), TapState::TestLogicReset);
    assert_eq!(b.devices()[u2].state(), TapState::PauseDr);
    assert_eq!(b.total_cycles(), cycles, "TRST* clocks nothing");
    // Held low, TRST* keeps U1 in reset through TCK edges; U2 follows TMS.
    b.set_trst(p1, true).unwrap();
    b.clock(p1, TapPins::new(true, true)).unwrap();
    assert_eq!(b.devices()[u1].state(), TapState::TestLogicReset);
    assert_eq!(b.devices()[u2].state(), TapState::Exit2Dr);
    b.set_trst(p1, false).unwrap();
    b.clock(p1, TapPins::new(false, true)).unwrap();
    assert_eq!(b.devices()[u1].state(), TapState::RunTestIdle);
}
