//! The instruction each device says it holds, against the demo BSDL opcode tables.

use std::path::Path;

use crate::register::Bits;
use crate::tap::TapState;
use crate::target::{InstructionView, TapTarget};
use crate::{load_board_text, Board};

/// Two demo devices on one TAP port (TDI -> U1 -> U2 -> TDO) and one on another.
fn board() -> Board {
    let yaml = r#"
name: held
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd, idcode: 0x37420A01 }
  U2: { bsdl: qm3310_io_expander.bsd }
  U3: { bsdl: qm5508_port_controller.bsd }
tap_ports:
  - { name: P1, chain: [U1, U2], trst: true }
  - { name: P2, chain: [U3] }
"#;
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices");
    load_board_text(yaml, Path::new("inline.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    })
    .expect("board loads")
    .board
}

fn view(name: Option<&str>, opcode: &str, register: &str) -> InstructionView {
    InstructionView {
        name: name.map(str::to_string),
        opcode: opcode.into(),
        register: register.into(),
    }
}

// An opcode takes effect at Update-IR and Test-Logic-Reset makes IDCODE the instruction, or
// BYPASS without an identification register (IEEE 1149.1 clauses 6 to 8, from memory); an
// opcode the BSDL table does not list acts as BYPASS (clause 8, from memory).
#[test]
fn each_device_says_the_instruction_it_holds_and_what_a_reset_replaced() {
    let mut b = board();
    let p1 = b.port_index("P1").unwrap();
    let p2 = b.port_index("P2").unwrap();
    // The first 6 bits shifted end in U2 (nearest TDO), the next 4 in U1, bit 0 first.
    // U2: 000101 = HIGHZ in the QM3310 table. U1: 1011, which the QM7420 table does not list.
    let mut tdi = Bits::zeros(10);
    for k in [0, 2, 6, 7, 9] {
        tdi.set(k, true);
    }
    b.scan_ir(p1, &tdi, TapState::RunTestIdle).unwrap();
    let held = b.instructions(p1).unwrap();
    assert_eq!(held.len(), 2);
    assert_eq!(held[0].device, "U1");
    assert_eq!(held[0].now, view(None, "1011", "BYPASS"));
    assert!(!held[0].by_reset);
    assert_eq!(held[1].now, view(Some("HIGHZ"), "000101", "BYPASS"));
    assert_eq!(held[1].replaced, None);

    b.reset_by_tms(p1).unwrap();
    let held = b.instructions(p1).unwrap();
    assert_eq!(held[0].now, view(Some("IDCODE"), "0010", "DEVICE_ID"));
    assert!(held[0].by_reset);
    assert_eq!(held[0].replaced, Some(view(None, "1011", "BYPASS")));
    assert_eq!(held[1].now, view(Some("BYPASS"), "111111", "BYPASS"));
    assert_eq!(
        held[1].replaced,
        Some(view(Some("HIGHZ"), "000101", "BYPASS"))
    );

    // P2 was never clocked: U3 holds IDCODE (00000100) since power-up, nothing replaced.
    let held = b.instructions(p2).unwrap();
    assert_eq!(held[0].now, view(Some("IDCODE"), "00000100", "DEVICE_ID"));
    assert!(held[0].by_reset);
    assert_eq!(held[0].replaced, None);
}
