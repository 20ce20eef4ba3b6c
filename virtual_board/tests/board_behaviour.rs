//! The board under EXTEST, HIGHZ and CLAMP: cross-port drive and capture, cell
//! capture points, pulls, and contention.

use std::path::{Path, PathBuf};

use virtual_board::{load_board_text, Bits, Board, BoardEvent, TapState};

fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

// U1 = QM7420 on P1 (IR 4 bits, 40 cells), U3 = QM5508 on P2 (IR 8 bits, 50 cells).
// Cell numbers below are from those two demo BSDL files.
const YAML: &str = r#"
name: board-behaviour
float: high
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd, outputs: low }
  U3: { bsdl: qm5508_port_controller.bsd, outputs: off }
tap_ports:
  - { name: P1, chain: [U1] }
  - { name: P2, chain: [U3] }
nets:
  LBD0: [U1.LB_D(0), U3.PE(0)]
  LBD1: [U1.LB_D(1), U3.PE(1)]
  LBD2: [U1.LB_D(2), U3.PE(2)]
  HOSTD0: [U1.HOST_D(0), U3.PA(0)]
pulls: { LBD1: up, LBD2: down }
"#;

// U1 cells: 37 = CONTROL of LB_D (disable value 1); 29, 30, 31 = LB_D(0..2) (BC_1 OUTPUT3);
// 8 = CONTROL of HOST_D (disable value 0); 4 = HOST_D(0) (BC_7 BIDIR).
const U1_LBD_CTRL: usize = 37;
const U1_LBD: [usize; 3] = [29, 30, 31];
const U1_HOSTD_CTRL: usize = 8;
const U1_HOSTD0: usize = 4;
// U3 cells: 14, 13, 12 = PE(0..2) (BC_1 INPUT); 29 = CONTROL of PA (disable 0); 28 = PA(0) (BC_7).
const U3_PE: [usize; 3] = [14, 13, 12];
const U3_PA_CTRL: usize = 29;
const U3_PA0: usize = 28;

const U1_SAMPLE: u64 = 0b0001;
const U1_EXTEST: u64 = 0b0000;
const U1_CLAMP: u64 = 0b0100;
const U1_HIGHZ: u64 = 0b0101;
const U3_SAMPLE: u64 = 0b0000_0001;
const U3_EXTEST: u64 = 0b0000_0000;

fn board() -> Board {
    let dir = devices_dir();
    load_board_text(YAML, Path::new("inline.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    })
    .expect("board loads")
    .board
}

/// The device's safe vector (X safe values as 0), the usual base of a pattern.
fn safe(b: &Board, designator: &str) -> Bits {
    let d = &b.devices()[b.device_index(designator).unwrap()];
    let m = d.model();
    let mut v = Bits::zeros(m.boundary_length);
    for c in &m.cells {
        if c.safe == Some(true) {
            v.set(c.num as usize, true);
        }
    }
    v
}

fn ir(b: &mut Board, port: &str, opcode: u64, len: usize) {
    let p = b.port_index(port).unwrap();
    b.scan_ir(p, &Bits::from_u64(opcode, len), TapState::RunTestIdle)
        .unwrap();
}

fn dr(b: &mut Board, port: &str, bits: &Bits) -> Bits {
    let p = b.port_index(port).unwrap();
    b.scan_dr(p, bits, TapState::RunTestIdle).unwrap()
}

/// U1 drives LB_D(0..2) with `values` under EXTEST, after a PRELOAD of the same vector.
fn u1_extest_lbd(b: &mut Board, values: [bool; 3]) {
    let mut v = safe(b, "U1");
    v.set(U1_LBD_CTRL, false); // enable (disable value is 1)
    for (cell, value) in U1_LBD.iter().zip(values) {
        v.set(*cell, value);
    }
    ir(b, "P1", U1_SAMPLE, 4);
    dr(b, "P1", &v);
    ir(b, "P1", U1_EXTEST, 4);
    dr(b, "P1", &v);
}

/// What U3's PE(0..2) input cells capture under SAMPLE.
fn u3_sample_pe(b: &mut Board) -> [bool; 3] {
    ir(b, "P2", U3_SAMPLE, 8);
    let out = dr(b, "P2", &safe(b, "U3"));
    U3_PE.map(|c| out.get(c))
}

// EXTEST (IEEE 1149.1-2001 clause 8, from memory): the update latches drive
// the output pins and input cells capture the pins. Driven on P1, seen on P2.
#[test]
fn extest_on_one_port_is_captured_on_the_other() {
    let mut b = board();
    u1_extest_lbd(&mut b, [true, false, true]);
    assert_eq!(u3_sample_pe(&mut b), [true, false, true]);
    u1_extest_lbd(&mut b, [false, true, false]);
    assert_eq!(u3_sample_pe(&mut b), [false, true, false]);
}

// HIGHZ (IEEE 1149.1-2001 clause 8, from memory) disables every output; the
// nets fall to their pulls (LBD1 up, LBD2 down) or, unpulled, to the float
// policy (LBD0: high, as the board file says).
#[test]
fn highz_releases_nets_to_pulls_and_float() {
    let mut b = board();
    u1_extest_lbd(&mut b, [false, false, true]);
    assert_eq!(u3_sample_pe(&mut b), [false, false, true]);
    ir(&mut b, "P1", U1_HIGHZ, 4);
    assert_eq!(u3_sample_pe(&mut b), [true, true, false]);
    // The BYPASS register is in the path under HIGHZ: one bit capturing 0.
    let out = dr(&mut b, "P1", &Bits::from_u64(0b0110, 4));
    assert_eq!(out.to_bools(), [false, false, true, true]);
}

// CLAMP (IEEE 1149.1-2001 clause 8, from memory): the pins are driven from the
// update latches while the BYPASS register is in the path.
#[test]
fn clamp_drives_from_latches_with_bypass_in_the_path() {
    let mut b = board();
    let mut v = safe(&b, "U1");
    v.set(U1_LBD_CTRL, false);
    v.set(U1_LBD[0], true);
    v.set(U1_LBD[1], false);
    ir(&mut b, "P1", U1_SAMPLE, 4);
    dr(&mut b, "P1", &v); // PRELOAD only: system logic still drives (outputs: low, enabled)
    assert!(!u3_sample_pe(&mut b)[0]);
    ir(&mut b, "P1", U1_CLAMP, 4);
    assert_eq!(u3_sample_pe(&mut b)[..2], [true, false]);
    // One-bit path: the first bit out is the bypass capture 0, then our bits.
    let out = dr(&mut b, "P1", &Bits::from_u64(0b101, 3));
    assert_eq!(out.to_bools(), [false, true, false]);
    // A DR scan under CLAMP leaves the latches alone: the pins still show the preload.
    assert_eq!(u3_sample_pe(&mut b)[..2], [true, false]);
}

// Capture points (IEEE 1149.1-2001 Annex B, STD_1149_1_2001, from memory; see
// virtual_board/src/cell/capture_table.txt): in EXTEST a BC_1 OUTPUT3 cell
// captures PI, the system logic's data, not the pin; a BC_7 BIDIR cell driving
// captures PO, which for this self-monitoring cell is the pad itself.
#[test]
fn bc_1_output_captures_system_data_bc_7_captures_the_pin() {
    let mut b = board();
    // U1 drives LB_D(0) = 1 and HOST_D(0) = 1; U3 drives PA(0) = 0 on the same
    // net as HOST_D(0), so that pin reads the wired-AND 0.
    let mut v = safe(&b, "U1");
    v.set(U1_LBD_CTRL, false);
    v.set(U1_LBD[0], true);
    v.set(U1_HOSTD_CTRL, true);
    v.set(U1_HOSTD0, true);
    ir(&mut b, "P1", U1_SAMPLE, 4);
    dr(&mut b, "P1", &v);
    ir(&mut b, "P1", U1_EXTEST, 4);
    let mut w = safe(&b, "U3");
    w.set(U3_PA_CTRL, true);
    w.set(U3_PA0, false);
    ir(&mut b, "P2", U3_SAMPLE, 8);
    dr(&mut b, "P2", &w);
    ir(&mut b, "P2", U3_EXTEST, 8);
    // A DR scan on P1 captures in EXTEST.
    let out = dr(&mut b, "P1", &v);
    // The system logic of U1 drives its outputs low (board file: outputs: low),
    // so BC_1 cell 29 captures 0 although its pin LBD0 is 1.
    assert!(!out.get(U1_LBD[0]), "BC_1 OUTPUT3 captured the pin, not PI");
    assert!(u3_sample_pe_after_extest(&mut b));
    // BC_7 cell 4 drives 1 but captures its pad, which the short holds at 0.
    assert!(!out.get(U1_HOSTD0), "BC_7 BIDIR did not capture its pad");
    assert!(
        out.get(U1_HOSTD_CTRL),
        "the control cell captures its PI (system enable)"
    );
}

/// U3 is in EXTEST here: a DR scan of P2 reads PE(0) through its input cell.
fn u3_sample_pe_after_extest(b: &mut Board) -> bool {
    let w = b.devices()[b.device_index("U3").unwrap()]
        .update_latches()
        .clone();
    let out = dr(b, "P2", &w);
    out.get(U3_PE[0])
}

// Two strong drivers with opposite values on one net: contention, recorded
// with the net, the drivers and the TCK cycle of the port whose edge caused it.
#[test]
fn opposite_extest_drivers_raise_contention() {
    let mut b = board();
    let _ = b.take_events();
    let mut v = safe(&b, "U1");
    v.set(U1_HOSTD_CTRL, true);
    v.set(U1_HOSTD0, true);
    ir(&mut b, "P1", U1_SAMPLE, 4);
    dr(&mut b, "P1", &v);
    ir(&mut b, "P1", U1_EXTEST, 4);
    assert!(
        contentions(&mut b).is_empty(),
        "one driver alone is no contention"
    );
    let mut w = safe(&b, "U3");
    w.set(U3_PA_CTRL, true);
    w.set(U3_PA0, false);
    ir(&mut b, "P2", U3_SAMPLE, 8);
    dr(&mut b, "P2", &w);
    ir(&mut b, "P2", U3_EXTEST, 8);
    let p2 = b.port_index("P2").unwrap();
    // The EXTEST takes effect on the falling edge in Update-IR, one TCK before
    // the scan ends in Run-Test/Idle.
    let update_ir_cycle = b.ports()[p2].cycles - 1;
    let events = contentions(&mut b);
    assert_eq!(events.len(), 1, "{events:?}");
    let BoardEvent::Contention {
        port,
        cycle,
        net,
        drivers,
    } = &events[0]
    else {
        panic!("expected contention, got {events:?}");
    };
    assert_eq!(port.as_deref(), Some("P2"));
    assert_eq!(*cycle, update_ir_cycle);
    assert_eq!(net, "HOSTD0");
    let drivers: Vec<(String, bool)> = drivers
        .iter()
        .map(|d| (d.driver.clone(), d.level))
        .collect();
    assert_eq!(
        drivers,
        // HOST_D is `bit_vector(3 downto 0)` mapped to (17,18,19,20) and PA is
        // `(7 downto 0)` mapped to (2,3,4,5,7,8,9,10): positional association,
        // left index first (IEEE 1149.1 Annex B, from memory), so element 0 is
        // the last pin of each list.
        vec![
            ("U1.20 (HOST_D(0))".to_string(), true),
            ("U3.10 (PA(0))".to_string(), false)
        ]
    );
}

/// The contention events since the last call (captures of unconnected,
/// floating pins are events too, and not what these tests are about).
fn contentions(b: &mut Board) -> Vec<BoardEvent> {
    b.take_events()
        .into_iter()
        .filter(|e| matches!(e, BoardEvent::Contention { .. }))
        .collect()
}
