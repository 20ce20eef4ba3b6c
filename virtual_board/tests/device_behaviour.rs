//! Device behaviour: TDO timing, X captures, resets, decode, registers, system logic, keepers.

use std::path::{Path, PathBuf};

use virtual_board::{
    load_board, load_board_text, Bits, Board, BoardEvent, NetRead, PinView, TapPins, TapState,
    TapTarget, TargetError,
};

fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

fn demo_board_path() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml")
}

/// Loads an inline board file over the demo BSDL files; `edit` may change a
/// BSDL text before it is read (path as written, text).
fn load_with(yaml: &str, edit: &dyn Fn(&Path, String) -> String) -> Board {
    let dir = devices_dir();
    load_board_text(yaml, Path::new("inline.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        let text = std::fs::read_to_string(&full).expect("demo BSDL present");
        Ok((edit(p, text), full))
    })
    .expect("board loads")
    .board
}

fn load(yaml: &str) -> Board {
    load_with(yaml, &|_, text| text)
}

/// The demo board (scenarios/boards/harbor_controller.yaml), its text passed through `edit`.
fn demo_board(edit: &dyn Fn(String) -> String) -> Board {
    let path = demo_board_path();
    let text = edit(std::fs::read_to_string(&path).expect("demo board present"));
    let base = path.parent().unwrap().to_path_buf();
    load_board_text(&text, &path, &mut |p: &Path| {
        let full = base.join(p);
        Ok((std::fs::read_to_string(&full).expect("demo BSDL"), full))
    })
    .expect("demo board loads")
    .board
}

/// U1 = QM7420 (IR 4, 40 cells) on P1 with TRST* wired; U3 = QM5508 (IR 8,
/// 50 cells) on P2; U4 = QM2040 (IR 5, 12 cells) on P3.
fn bench(float: &str, seed: u64) -> Board {
    load(&format!(
        r#"
name: device-behaviour
float: {float}
seed: {seed}
devices:
  U1: {{ bsdl: qm7420_bus_bridge.bsd, outputs: low }}
  U3: {{ bsdl: qm5508_port_controller.bsd }}
  U4: {{ bsdl: qm2040_clock_buffer.bsd }}
tap_ports:
  - {{ name: P1, chain: [U1], trst: true }}
  - {{ name: P2, chain: [U3] }}
  - {{ name: P3, chain: [U4] }}
nets:
  LBD0: [U1.LB_D(0), U3.PE(0)]
  HOSTD0: [U1.HOST_D(0), U3.PE(1)]
"#
    ))
}

// Cell numbers from scenarios/devices/qm7420_bus_bridge.bsd (U1).
const U1_HOST_RESET_N: usize = 0;
const U1_HOSTD0: usize = 4;
const U1_HOSTD_CTRL: usize = 8; // CONTROL, disable value 0, result KEEPER
const U1_CONTROLR: usize = 28; // CONTROLR of LB_A and strobes, disable value 0
const U1_LBD0: usize = 29;
const U1_LBD_CTRL: usize = 37; // CONTROL, disable value 1, result Z
                               // Cell numbers from scenarios/devices/qm5508_port_controller.bsd (U3).
const U3_PD_CTRL: usize = 4; // CONTROL of PD, disable value 1
const U3_PD: [usize; 4] = [3, 2, 1, 0]; // PD(0..3)
const U3_PE: [usize; 4] = [14, 13, 12, 11]; // PE(0..3)
const U3_INTERNAL: usize = 31; // BC_1 INTERNAL
                               // Cell number from scenarios/devices/qm3310_io_expander.bsd (U2).
const U2_SW_IN7: usize = 28;

// Opcodes from the demo BSDL files (bit 0 = rightmost character).
const U1_EXTEST: u64 = 0b0000;
const U1_PRELOAD: u64 = 0b0001; // shared with SAMPLE
const U1_SAMPLE: u64 = 0b0001;
const U1_IDCODE: u64 = 0b0010;
const U1_USERCODE: u64 = 0b0011;
const U1_CLAMP: u64 = 0b0100;
const U1_BYPASS: u64 = 0b1111;
const U3_EXTEST: u64 = 0b0000_0000;
const U3_SAMPLE: u64 = 0b0000_0001;
const U3_PRELOAD: u64 = 0b0000_0010;
const U4_CFG_ACCESS: u64 = 0b01000;
const U4_BYPASS: u64 = 0b11111;
const U2_SAMPLE: u64 = 0b000001;
const QM3310_BYPASS: u64 = 0b111111;

fn dev<'a>(b: &'a Board, designator: &str) -> &'a virtual_board::Device {
    &b.devices()[b.device_index(designator).unwrap()]
}

/// The device's safe vector (X safe values as 0).
fn safe(b: &Board, designator: &str) -> Bits {
    let m = dev(b, designator).model();
    let mut v = Bits::zeros(m.boundary_length);
    for c in &m.cells {
        if c.safe == Some(true) {
            v.set(c.num as usize, true);
        }
    }
    v
}

/// Instruction-register bits of a chain: `(opcode, length)` per device, the
/// device nearest TDO first (its bits are shifted in last, so they come first).
fn chain_ir(opcodes: &[(u64, usize)]) -> Bits {
    let mut v = Bits::zeros(0);
    for &(op, len) in opcodes {
        v.extend(&Bits::from_u64(op, len));
    }
    v
}

fn ir(b: &mut Board, port: &str, opcodes: &[(u64, usize)]) {
    let p = b.port_index(port).unwrap();
    b.scan_ir(p, &chain_ir(opcodes), TapState::RunTestIdle)
        .unwrap();
}

fn dr(b: &mut Board, port: &str, bits: &Bits) -> Bits {
    let p = b.port_index(port).unwrap();
    b.scan_dr(p, bits, TapState::RunTestIdle).unwrap()
}

fn clock(b: &mut Board, port: &str, tms: bool, tdi: bool) -> Option<bool> {
    let p = b.port_index(port).unwrap();
    b.clock(p, TapPins::new(tms, tdi)).unwrap()
}

// IEEE 1149.1-2001 clause 6, from memory: TDO is
// high-impedance except in Shift-IR/Shift-DR, it changes on the falling edge,
// and the first bit out (bit 0 of the captured register) is valid from the
// falling edge just after entering Shift-xR, i.e. before any shift. The value
// is QM5508's IDCODE 0x25508A01 from its BSDL file; its IR capture "000XXX01".
#[test]
fn tdo_is_driven_only_in_shift_states_and_leads_with_the_capture() {
    let mut b = bench("high", 1);
    // Power-up in Test-Logic-Reset: TDO off there, in Run-Test/Idle, Select-DR and Capture-DR.
    assert_eq!(dev(&b, "U3").state(), TapState::TestLogicReset);
    assert_eq!(clock(&mut b, "P2", false, true), None); // TLR → RTI
    assert_eq!(clock(&mut b, "P2", false, true), None); // stays in RTI
    assert_eq!(clock(&mut b, "P2", true, true), None); // → Select-DR
    assert_eq!(clock(&mut b, "P2", false, true), None); // → Capture-DR
    assert_eq!(dev(&b, "U3").tdo(), None);
    // The edge that leaves Capture-DR captures; TDO was still off at that
    // rising edge, and the falling edge in Shift-DR turns it on with bit 0.
    assert_eq!(clock(&mut b, "P2", false, true), None); // → Shift-DR
    assert_eq!(dev(&b, "U3").state(), TapState::ShiftDr);
    assert_eq!(dev(&b, "U3").tdo(), Some(true), "IDCODE bit 0 = 1");
    let idcode: u64 = 0x25508A01;
    for k in 0..32 {
        let out = clock(&mut b, "P2", k == 31, false);
        assert_eq!(out, Some(idcode >> k & 1 == 1), "IDCODE bit {k}");
    }
    // The falling edge in Exit1-DR turns TDO off again.
    assert_eq!(dev(&b, "U3").state(), TapState::Exit1Dr);
    assert_eq!(dev(&b, "U3").tdo(), None);
    assert_eq!(clock(&mut b, "P2", false, true), None); // → Pause-DR
    assert_eq!(clock(&mut b, "P2", false, true), None); // stays in Pause-DR
    assert_eq!(clock(&mut b, "P2", true, true), None); // → Exit2-DR
    assert_eq!(clock(&mut b, "P2", true, true), None); // → Update-DR
    assert_eq!(clock(&mut b, "P2", true, true), None); // → Select-DR
    assert_eq!(clock(&mut b, "P2", true, true), None); // → Select-IR
    assert_eq!(clock(&mut b, "P2", false, true), None); // → Capture-IR
    assert_eq!(clock(&mut b, "P2", false, true), None); // → Shift-IR
                                                        // Capture-IR "000XXX01": bit 0 = 1, bit 1 = 0 (IEEE 1149.1-2001 clause 7, from memory).
    assert_eq!(clock(&mut b, "P2", false, true), Some(true));
    assert_eq!(clock(&mut b, "P2", false, true), Some(false));
    for _ in 2..8 {
        assert!(clock(&mut b, "P2", false, true).is_some());
    }
    // The ones shifted in now come out; TMS=1 on this bit goes to Exit1-IR.
    assert_eq!(clock(&mut b, "P2", true, true), Some(true));
    assert_eq!(clock(&mut b, "P2", true, true), None); // Exit1-IR → Update-IR
    assert_eq!(clock(&mut b, "P2", false, true), None); // → RTI
}

/// U3's IR capture bits 2..5 and its INTERNAL cell 31 under SAMPLE, on a fresh board.
fn u3_arbitrary_bits(seed: u64) -> (u64, bool) {
    let mut b = bench("high", seed);
    let p = b.port_index("P2").unwrap();
    let out = b
        .scan_ir(p, &Bits::from_u64(U3_SAMPLE, 8), TapState::RunTestIdle)
        .unwrap();
    // The fixed bits of "000XXX01".
    assert!(out.get(0));
    assert!(!out.get(1));
    assert_eq!(out.slice(5, 3).to_u64(), 0);
    let v = safe(&b, "U3");
    let cells = dr(&mut b, "P2", &v);
    (out.slice(2, 3).to_u64(), cells.get(U3_INTERNAL))
}

// X in INSTRUCTION_CAPTURE and X capture sources are undefined values a test
// must mask (IEEE 1149.1-2001 clause 7 and Annex B, from memory; the model gives
// them a seeded arbitrary value, common practice). QM5508 cell 31 is BC_1 INTERNAL, whose
// capture is PI (capture_table.txt, BC_1 row, high confidence), and an internal
// node is nothing the board shows: the model gives an arbitrary value.
#[test]
fn x_captures_are_arbitrary_but_repeat_for_a_seed() {
    let runs: Vec<(u64, bool)> = (1..=8).map(u3_arbitrary_bits).collect();
    let ir_values: Vec<u64> = runs.iter().map(|r| r.0).collect();
    assert!(
        ir_values.iter().any(|&v| v != ir_values[0]),
        "IR X bits equal for every seed: {ir_values:?}"
    );
    let cell_values: Vec<bool> = runs.iter().map(|r| r.1).collect();
    assert!(
        cell_values.contains(&true) && cell_values.contains(&false),
        "cell 31 equal for every seed: {cell_values:?}"
    );
    for seed in [1, 5] {
        assert_eq!(
            u3_arbitrary_bits(seed),
            u3_arbitrary_bits(seed),
            "seed {seed}"
        );
    }
}

/// Two QM7420 bridges: U1 with the ID keys on a TRST-wired port, U6 without on an unwired one.
fn two_bridges() -> Board {
    load(
        r#"
name: two-bridges
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd, idcode: 0x27420A01, usercode: 0x48420107 }
  U6: { bsdl: qm7420_bus_bridge.bsd }
tap_ports:
  - { name: WIRED, chain: [U1], trst: true }
  - { name: UNWIRED, chain: [U6], trst: false }
"#,
    )
}

/// PRELOADs cell 28 (CONTROLR) = 1, cell 37 (CONTROL) = 0, cell 29 = 1.
fn preload_controlr(b: &mut Board, port: &str, designator: &str) {
    let mut v = safe(b, designator);
    v.set(U1_CONTROLR, true);
    v.set(U1_LBD_CTRL, false);
    v.set(U1_LBD0, true);
    ir(b, port, &[(U1_PRELOAD, 4)]);
    dr(b, port, &v);
    let latches = dev(b, designator).update_latches();
    assert!(latches.get(U1_CONTROLR));
    assert!(!latches.get(U1_LBD_CTRL));
    assert!(latches.get(U1_LBD0));
}

/// The boundary register is not reset, except CONTROLR cells.
fn assert_only_controlr_reset(b: &Board, designator: &str) {
    let latches = dev(b, designator).update_latches();
    assert!(!latches.get(U1_CONTROLR), "CONTROLR not forced to 0");
    assert!(!latches.get(U1_LBD_CTRL), "CONTROL cell changed");
    assert!(latches.get(U1_LBD0), "data cell changed");
}

// Test-Logic-Reset forces CONTROLR cells to their driver-disable value and
// leaves the rest of the boundary register alone (IEEE 1149.1-2001 clause 11,
// from memory). Five TCKs with TMS=1 reach it from any
// state; TRST* reaches it at once (clause 6, from memory). Cell 28 of the
// QM7420 BSDL file is CONTROLR with disable value 0.
#[test]
fn controlr_cells_take_their_disable_value_in_test_logic_reset() {
    let mut b = two_bridges();
    preload_controlr(&mut b, "WIRED", "U1");
    let p = b.port_index("WIRED").unwrap();
    b.reset_by_tms(p).unwrap();
    assert_eq!(b.port_state(p), Some(TapState::TestLogicReset));
    assert_only_controlr_reset(&b, "U1");

    preload_controlr(&mut b, "WIRED", "U1");
    b.pulse_trst(p).unwrap();
    assert_eq!(b.port_state(p), Some(TapState::TestLogicReset));
    assert_only_controlr_reset(&b, "U1");

    // TRST* on a port that does not wire it reaches no device: no reset,
    // no TCK edge, the TAP stays in Run-Test/Idle and the latch keeps its 1.
    preload_controlr(&mut b, "UNWIRED", "U6");
    let q = b.port_index("UNWIRED").unwrap();
    b.pulse_trst(q).unwrap();
    assert_eq!(b.port_state(q), Some(TapState::RunTestIdle));
    assert!(dev(&b, "U6").update_latches().get(U1_CONTROLR));
    b.reset_by_tms(q).unwrap();
    assert_only_controlr_reset(&b, "U6");
}

/// What U3's PE(0) input cell captures under SAMPLE on P2.
fn u3_pe0(b: &mut Board) -> bool {
    ir(b, "P2", &[(U3_SAMPLE, 8)]);
    let v = safe(b, "U3");
    dr(b, "P2", &v).get(U3_PE[0])
}

// Only EXTEST, CLAMP and HIGHZ take the pins from the system logic; under
// BYPASS, SAMPLE and the rest the system logic drives them (IEEE 1149.1-2001
// clause 8, from memory). U1's system logic drives LB_D(0) low (`outputs: low`).
#[test]
fn outputs_return_to_system_logic_outside_extest_clamp_highz() {
    let mut b = bench("high", 2);
    assert!(!u3_pe0(&mut b), "system logic drives LBD0 low at power-up");
    let mut v = safe(&b, "U1");
    v.set(U1_LBD_CTRL, false); // enable LB_D (disable value 1)
    v.set(U1_LBD0, true);
    ir(&mut b, "P1", &[(U1_PRELOAD, 4)]);
    dr(&mut b, "P1", &v);
    assert!(!u3_pe0(&mut b), "PRELOAD alone must not drive the pins");
    ir(&mut b, "P1", &[(U1_EXTEST, 4)]);
    assert!(u3_pe0(&mut b), "EXTEST drives the preloaded 1");
    ir(&mut b, "P1", &[(U1_BYPASS, 4)]);
    assert!(
        !u3_pe0(&mut b),
        "BYPASS gives the pin back to the system logic"
    );
    ir(&mut b, "P1", &[(U1_CLAMP, 4)]);
    assert!(u3_pe0(&mut b), "CLAMP drives the latches again");
    ir(&mut b, "P1", &[(U1_SAMPLE, 4)]);
    assert!(!u3_pe0(&mut b), "SAMPLE leaves the pin to the system logic");
}

/// The QM7420 BSDL with INTEST (1001) and RUNBIST (1011) added, for the
/// not-modelled checks (1001 and 1011 are unused opcodes of the file).
fn with_intest_runbist(p: &Path, text: String) -> String {
    if !p.to_string_lossy().contains("qm7420") {
        return text;
    }
    let edited = text.replace(
        "\"PRIVATE_TRIM (10X0), \" &",
        "\"PRIVATE_TRIM (10X0), \" & \"INTEST (1001), \" & \"RUNBIST (1011), \" &",
    );
    assert_ne!(edited, text, "opcode list found");
    edited
}

// INTEST and RUNBIST drive the core or run self-test, and a private
// instruction's effect is the maker's secret: a virtual board cannot honour
// them and must say so (common practice for a simulator; the standard only
// defines INTEST/RUNBIST, clause 8, and private instructions, clause 7, from
// memory). PRIVATE_TRIM (10X0) is from the QM7420 BSDL file; the X bit is
// don't-care, so 1000 and 1010 both select it.
#[test]
fn intest_runbist_and_private_instructions_fail_by_name() {
    let mut b = load_with(
        "devices:\n  U1: { bsdl: qm7420_bus_bridge.bsd }\ntap_ports:\n  - { name: P1, chain: [U1] }\n",
        &with_intest_runbist,
    );
    let p = b.port_index("P1").unwrap();
    for (opcode, name, why) in [
        (
            0b1000,
            "PRIVATE_TRIM",
            "it is private to the device's maker",
        ),
        (
            0b1010,
            "PRIVATE_TRIM",
            "it is private to the device's maker",
        ),
        (
            0b1001,
            "INTEST",
            "INTEST drives the core from the boundary register",
        ),
        (0b1011, "RUNBIST", "RUNBIST runs the device's own self-test"),
    ] {
        b.reset_by_tms(p).unwrap();
        let err = b
            .scan_ir(p, &Bits::from_u64(opcode, 4), TapState::RunTestIdle)
            .unwrap_err();
        match &err {
            TargetError::NotModelled {
                device,
                instruction,
                ..
            } => {
                assert_eq!(device, "U1");
                assert_eq!(instruction, name);
            }
            other => panic!("{opcode:04b}: expected NotModelled, got {other:?}"),
        }
        assert_eq!(
            err.to_string(),
            format!(
                "U1: instruction {name} is not modelled ({why}); the virtual board cannot run it"
            )
        );
    }
}

// Opcodes a BSDL file does not list select BYPASS (IEEE 1149.1-2001 clause 8,
// from memory). 0110 is not in the QM7420 opcode list.
#[test]
fn an_unlisted_opcode_selects_the_one_bit_bypass_register() {
    let mut b = bench("high", 3);
    ir(&mut b, "P1", &[(0b0110, 4)]);
    assert_eq!(dev(&b, "U1").instruction().name, "BYPASS");
    assert_eq!(dev(&b, "U1").data_register_len(), 1);
    // The bypass register captures 0 (clause 10, from memory), then TDI comes
    // out one bit late.
    let out = dr(&mut b, "P1", &Bits::from_bools(&[true, true, false, true]));
    assert_eq!(out.to_bools(), [false, true, true, false]);
}

// USERCODE and IDCODE: the 32-bit patterns of the QM7420 BSDL file, their X
// bits filled by the board file's `usercode:` / `idcode:` keys, or 0 without
// them (common practice for a model: the X bits take a configurable value). The USERCODE instruction
// makes the device identification register capture the user code (IEEE
// 1149.1-2001 clause 8, from memory), even where REGISTER_ACCESS lists
// USERCODE under DEVICE_ID, as this file does.
#[test]
fn usercode_and_idcode_x_bits_come_from_the_board_file() {
    let mut b = two_bridges();
    for (port, designator, usercode, idcode) in [
        ("WIRED", "U1", 0x4842_0107, 0x2742_0A01),
        ("UNWIRED", "U6", 0x4842_0000, 0x0742_0A01),
    ] {
        ir(&mut b, port, &[(U1_USERCODE, 4)]);
        assert_eq!(dev(&b, designator).instruction().name, "USERCODE");
        let out = dr(&mut b, port, &Bits::zeros(32));
        assert_eq!(out.to_u64(), usercode, "{designator} USERCODE");
        ir(&mut b, port, &[(U1_IDCODE, 4)]);
        let out = dr(&mut b, port, &Bits::zeros(32));
        assert_eq!(out.to_u64(), idcode, "{designator} IDCODE");
    }
}

// A design-specific register from REGISTER_ACCESS (IEEE 1149.1-2001 Annex B,
// from memory): QM2040 "CLKCFG[6] (CFG_ACCESS)", opcode 01000, both from its
// BSDL file. No CAPTURES is given, so the model captures zeros (the model's
// choice, an open question of the standard's wording).
#[test]
fn a_user_register_is_as_long_as_register_access_says() {
    let mut b = bench("high", 4);
    ir(&mut b, "P3", &[(U4_CFG_ACCESS, 5)]);
    assert_eq!(dev(&b, "U4").instruction().name, "CFG_ACCESS");
    assert_eq!(dev(&b, "U4").data_register_len(), 6);
    let tdi = Bits::from_u64(0b111111_101101, 12);
    let out = dr(&mut b, "P3", &tdi);
    assert_eq!(out.to_u64(), 0b101101_000000, "{out:?}");
    // The next capture loads zeros again, not the 111111 left in the register.
    let out = dr(&mut b, "P3", &Bits::zeros(6));
    assert_eq!(out.to_u64(), 0);
}

/// J2_AUX: U4 and U5 in BYPASS, U2 in SAMPLE; returns U2's SW_IN(7) capture.
fn demo_u2_sw_in7(b: &mut Board) -> bool {
    ir(
        b,
        "J2_AUX",
        &[(U4_BYPASS, 5), (QM3310_BYPASS, 6), (U2_SAMPLE, 6)],
    );
    assert_eq!(dev(b, "U4").instruction().name, "BYPASS");
    let u2 = safe(b, "U2");
    let tdi = Bits::zeros(2).concat(&u2);
    let out = dr(b, "J2_AUX", &tdi);
    assert!(
        !out.get(0) && !out.get(1),
        "U4 and U5 bypass bits capture 0"
    );
    out.get(2 + U2_SW_IN7)
}

// A pass-through in a bypassed device's system logic: U4 CLK_OUT(3) follows net
// CLK_REF_25M (demo board file), so a level U3 PD(2) drives by EXTEST on
// J1_MAIN reaches U2 SW_IN(7) on J2_AUX. BYPASS leaves U4's pins to its system
// logic (IEEE 1149.1-2001 clause 8, from memory). Cells from the demo BSDL files.
#[test]
fn a_level_passes_through_a_bypassed_buffer_to_the_other_port() {
    let mut b = load_board(&demo_board_path()).expect("demo board").board;
    for level in [false, true, false, true] {
        // U3 (nearest TDO) PRELOAD then EXTEST; U1 in BYPASS.
        let mut v = safe(&b, "U3");
        v.set(U3_PD_CTRL, false); // enable PD (disable value 1)
        for cell in U3_PD {
            v.set(cell, false);
        }
        v.set(U3_PD[2], level);
        let tdi = v.concat(&Bits::zeros(1));
        ir(&mut b, "J1_MAIN", &[(U3_PRELOAD, 8), (U1_BYPASS, 4)]);
        dr(&mut b, "J1_MAIN", &tdi);
        ir(&mut b, "J1_MAIN", &[(U3_EXTEST, 8), (U1_BYPASS, 4)]);
        let net = b.net_index("CLK_25M_D").unwrap();
        assert_eq!(b.net_read(net).value, level);
        assert_eq!(demo_u2_sw_in7(&mut b), level, "level {level}");
        assert_eq!(dev(&b, "U4").instruction().name, "BYPASS");
    }
}

/// J1_MAIN under SAMPLE on both devices: (U1 HOST_RESET_N, U3 PE(3)).
fn demo_sample_j1(b: &mut Board) -> (bool, bool) {
    ir(b, "J1_MAIN", &[(U3_SAMPLE, 8), (U1_SAMPLE, 4)]);
    let tdi = safe(b, "U3").concat(&safe(b, "U1"));
    let out = dr(b, "J1_MAIN", &tdi);
    (out.get(50 + U1_HOST_RESET_N), out.get(U3_PE[3]))
}

// A device whose TAP is never scanned still drives its pins from its system
// logic: after power-up its TAP is in Test-Logic-Reset, where the device works
// normally (IEEE 1149.1-2001 clause 6, from memory). Demo board: U4 LOCK high
// → CLK_LOCK → U1 HOST_RESET_N (cell 0); U4 `outputs: high` → CLK_25M_A → U3
// PE(3) (cell 11). The board floats high, so the same file with LOCK low is the
// control that the 1 comes from U4.
#[test]
fn system_logic_of_an_unscanned_device_drives_its_nets() {
    let mut b = demo_board(&|t| t);
    let _ = b.take_events();
    assert_eq!(demo_sample_j1(&mut b), (true, true));
    let j2 = b.port_index("J2_AUX").unwrap();
    assert_eq!(b.ports()[j2].cycles, 0, "J2_AUX was never clocked");
    assert_eq!(dev(&b, "U4").state(), TapState::TestLogicReset);
    let lock = b.net_index("CLK_LOCK").unwrap();
    assert!(!b.net_read(lock).floating, "CLK_LOCK is driven");
    let floating: Vec<_> = b
        .take_events()
        .into_iter()
        .filter(|e| matches!(e, BoardEvent::FloatingCapture { net: Some(n), .. } if n == "CLK_LOCK" || n == "CLK_25M_A"))
        .collect();
    assert!(floating.is_empty(), "{floating:?}");

    let mut b = demo_board(&|t| {
        let edited = t.replace("LOCK: high", "LOCK: low");
        assert_ne!(edited, t);
        edited
    });
    assert_eq!(demo_sample_j1(&mut b), (false, true));
}

// Update-DR: the update latches load on the falling edge while in Update-DR
// (IEEE 1149.1-2001 clause 6/11, from memory). A
// scan that ends in Pause-DR has not updated yet; SVF's Pause end states rely on
// it (SVF Specification Rev E, from memory).
#[test]
fn update_dr_loads_the_latches_on_its_falling_edge() {
    let mut b = bench("high", 5);
    ir(&mut b, "P1", &[(U1_PRELOAD, 4)]);
    let before = dev(&b, "U1").update_latches().clone();
    // Every bit different from what the latches hold.
    let mut v = Bits::zeros(before.len());
    for i in 0..v.len() {
        v.set(i, !before.get(i));
    }
    let p = b.port_index("P1").unwrap();
    b.scan_dr(p, &v, TapState::PauseDr).unwrap();
    assert_eq!(b.port_state(p), Some(TapState::PauseDr));
    assert_eq!(
        dev(&b, "U1").update_latches(),
        &before,
        "updated in Pause-DR"
    );
    assert_eq!(clock(&mut b, "P1", true, true), None); // → Exit2-DR
    assert_eq!(
        dev(&b, "U1").update_latches(),
        &before,
        "updated in Exit2-DR"
    );

    // Edge by edge on a copy of the device: the rising edge enters Update-DR,
    // the falling edge loads the latches.
    let mut d = dev(&b, "U1").clone();
    let view = PinView {
        pad_net: &[],
        nets: &[],
        lone: &[],
        unconnected: NetRead::default(),
    };
    d.rising(true, true, &view);
    assert_eq!(d.state(), TapState::UpdateDr);
    assert_eq!(d.update_latches(), &before, "updated on the rising edge");
    d.falling().unwrap();
    assert_eq!(d.update_latches(), &v);

    // The board does the same in one TCK.
    clock(&mut b, "P1", true, true); // → Update-DR
    assert_eq!(dev(&b, "U1").update_latches(), &v);
}

/// U1 in EXTEST drives HOST_D(0) = `level` (`enabled`), captured by U3 PE(1) on P2.
fn u1_drive_hostd0(b: &mut Board, level: bool, enabled: bool) -> bool {
    let mut v = safe(b, "U1");
    v.set(U1_HOSTD_CTRL, enabled); // disable value 0
    v.set(U1_HOSTD0, level);
    dr(b, "P1", &v);
    ir(b, "P2", &[(U3_SAMPLE, 8)]);
    let w = safe(b, "U3");
    dr(b, "P2", &w).get(U3_PE[1])
}

// BSDL disable result KEEPER: a bus-hold circuit keeps the last strongly
// driven level (IEEE 1149.1-2001 Annex B, from memory).
// The QM7420 BSDL file gives HOST_D (BC_7) KEEPER under control cell 8,
// disable value 0. The Z result of LB_D (control cell 37, disable value 1) is
// the contrast: it falls to the float policy.
#[test]
fn a_keeper_holds_the_last_driven_level() {
    for (float, floats_to) in [("high", true), ("low", false)] {
        let mut b = bench(float, 6);
        ir(&mut b, "P1", &[(U1_PRELOAD, 4)]);
        let v = safe(&b, "U1");
        dr(&mut b, "P1", &v);
        ir(&mut b, "P1", &[(U1_EXTEST, 4)]);
        let net = b.net_index("HOSTD0").unwrap();
        for level in [true, false, true] {
            assert_eq!(
                u1_drive_hostd0(&mut b, level, true),
                level,
                "driven {level}"
            );
            // Disabled, and the data cell now says the opposite.
            assert_eq!(
                u1_drive_hostd0(&mut b, !level, false),
                level,
                "float {float}: keeper lost {level}"
            );
            assert!(!b.net_read(net).floating);
            // U1's own BC_7 cell reads the pad too (BIDIR_IN captures PI).
            let latches = dev(&b, "U1").update_latches().clone();
            let own = dr(&mut b, "P1", &latches);
            assert_eq!(own.get(U1_HOSTD0), level);
        }
        // Contrast: LB_D(0) driven to the opposite of the float level, then
        // disabled, reads the float level (Z result, no keeper).
        let mut v = safe(&b, "U1");
        v.set(U1_LBD_CTRL, false);
        v.set(U1_LBD0, !floats_to);
        dr(&mut b, "P1", &v);
        assert_eq!(u3_pe0(&mut b), !floats_to);
        v.set(U1_LBD_CTRL, true);
        dr(&mut b, "P1", &v);
        assert_eq!(u3_pe0(&mut b), floats_to, "float {float}");
    }
}
