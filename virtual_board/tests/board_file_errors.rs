//! Board-file loading checks: each problem is an error naming file:line:column.

use std::path::{Path, PathBuf};

use virtual_board::{load_board_text, BsdlError};

fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

const GOOD: &str = "name: t
devices:
  U1: { bsdl: qm7420_bus_bridge.bsd }
  U2: { bsdl: qm5508_port_controller.bsd }
tap_ports:
  - { name: P1, chain: [U1] }
  - { name: P2, chain: [U2] }
nets:
  N1: [U1.LB_D(0), U2.PE(0)]
  N2: [U1.34]
  VCC: [U1.VCC]
pulls: { N1: up }
power: [VCC]
";

fn load(yaml: &str) -> Result<(), String> {
    let dir = devices_dir();
    load_board_text(yaml, Path::new("board.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        std::fs::read_to_string(&full)
            .map(|t| (t, full.clone()))
            .map_err(|e| BsdlError {
                path: Some(full),
                span: Default::default(),
                kind: virtual_board::BsdlErrorKind::Io(e.to_string()),
            })
    })
    .map(|_| ())
    .map_err(|e| e.to_string())
}

fn with(from: &str, to: &str) -> String {
    assert_eq!(GOOD.matches(from).count(), 1, "`{from}` once");
    GOOD.replacen(from, to, 1)
}

#[test]
fn the_base_board_loads() {
    assert_eq!(load(GOOD), Ok(()));
}

#[test]
fn unknown_device_on_a_net() {
    assert_eq!(
        load(&with("U2.PE(0)", "U9.PE(0)")).unwrap_err(),
        "board.yaml:9:20: unknown device `U9`"
    );
}

#[test]
fn unknown_pin_and_unknown_port() {
    assert_eq!(
        load(&with("U1.34", "U1.99")).unwrap_err(),
        "board.yaml:10:8: device U1 has no pin or port `99`"
    );
    assert_eq!(
        load(&with("U2.PE(0)", "U2.PQ(0)")).unwrap_err(),
        "board.yaml:9:20: device U2 has no pin or port `PQ(0)`"
    );
}

#[test]
fn pin_on_two_nets() {
    // U1.LB_D(0) is pin 42 of the TQ64 package: LB_D is `(7 downto 0)` on
    // pins (34, …, 42), left index first (demo BSDL pin map).
    assert_eq!(
        load(&with("N2: [U1.34]", "N2: [U1.34, U2.PE(1)]\n  N3: [U1.42]")).unwrap_err(),
        "board.yaml:11:8: pin U1.42 is on net N1 and on net N3"
    );
}

#[test]
fn pin_twice_on_one_net() {
    assert_eq!(
        load(&with("N2: [U1.34]", "N2: [U1.41, U1.LB_D(1)]")).unwrap_err(),
        "board.yaml:10:15: pin U1.41 is listed twice on net N2"
    );
}

#[test]
fn tap_port_problems() {
    assert_eq!(
        load(&with("chain: [U2]", "chain: []")).unwrap_err(),
        "board.yaml:7:17: TAP port P2 has no devices"
    );
    assert_eq!(
        load(&with("chain: [U2]", "chain: [U1, U2]")).unwrap_err(),
        "board.yaml:7:25: device U1 is on TAP port P1 and on P2"
    );
    assert_eq!(
        load(&with("  - { name: P2, chain: [U2] }\n", "")).unwrap_err(),
        "board.yaml:4:3: device U2 is on no TAP port"
    );
}

// IEEE 1149.1-2001 Annex B (from memory): a TAP_SCAN_* attribute makes a
// port a TAP signal; the TAP port wires it, so it is no net's pin. The
// message names the signal and the BSDL line that made it one (found here
// by searching the file's text, not by the reader).
#[test]
fn a_tap_pin_cannot_be_on_a_net() {
    let bsdl = devices_dir().join("qm7420_bus_bridge.bsd");
    let text = std::fs::read_to_string(&bsdl).unwrap();
    let line = |needle: &str| text[..text.find(needle).unwrap()].matches('\n').count() + 1;
    assert_eq!(
        load(&with("N2: [U1.34]", "N2: [U1.TCK]")).unwrap_err(),
        format!(
            "board.yaml:10:8: pin U1.27 is port TCK of QM7420, which TAP_SCAN_CLOCK makes a TAP signal ({}:{}); the tap_ports section wires it, not a net",
            bsdl.display(),
            line("attribute TAP_SCAN_CLOCK")
        )
    );
    // By pin number: pin 28 is TDI in the TQ64 pin map.
    assert_eq!(
        load(&with("N2: [U1.34]", "N2: [U1.28]")).unwrap_err(),
        format!(
            "board.yaml:10:8: pin U1.28 is port TDI of QM7420, which TAP_SCAN_IN makes a TAP signal ({}:{}); the tap_ports section wires it, not a net",
            bsdl.display(),
            line("attribute TAP_SCAN_IN")
        )
    );
}

#[test]
fn a_bsdl_file_that_fails_to_read_names_both_places() {
    let e = load(&with("qm5508_port_controller.bsd", "missing.bsd")).unwrap_err();
    assert!(
        e.starts_with(&format!(
            "{}:0:0: cannot read the file",
            devices_dir().join("missing.bsd").display()
        )),
        "{e}"
    );
    assert!(e.ends_with("(device U2, named at board.yaml:4:15)"), "{e}");
}

// Common practice: a BSDL file is plain text. A board whose BSDL file is
// binary (here a copy of a demo file with a NUL byte put into a comment on
// its line 2) is refused at the BSDL file's line and column, through the
// same reader `load_board` uses, not as a bare I/O message.
#[test]
fn a_bsdl_file_that_is_not_text_names_the_first_bad_byte() {
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().to_path_buf();
    let good = std::fs::read(devices_dir().join("qm5508_port_controller.bsd")).unwrap();
    let second_line = good
        .iter()
        .enumerate()
        .find(|(_, b)| **b == b'\n')
        .unwrap()
        .0
        + 1;
    assert!(
        good[second_line..].starts_with(b"--"),
        "line 2 is a comment"
    );
    let mut bytes = good.clone();
    bytes.insert(second_line + 4, 0);
    std::fs::write(dir.join("bin.bsd"), &bytes).unwrap();
    std::fs::copy(
        devices_dir().join("qm7420_bus_bridge.bsd"),
        dir.join("qm7420_bus_bridge.bsd"),
    )
    .unwrap();
    let board = dir.join("board.yaml");
    std::fs::write(&board, with("qm5508_port_controller.bsd", "bin.bsd")).unwrap();
    let Err(e) = virtual_board::load_board(&board) else {
        panic!("a binary BSDL file must be refused");
    };
    let e = e.to_string();
    assert_eq!(
        e,
        format!(
            "{}:2:5: the file is not text: control character U+0000 (a BSDL file is plain ASCII or UTF-8 text) (device U2, named at {}:4:15)",
            dir.join("bin.bsd").display(),
            board.display()
        )
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn yaml_mistakes_are_located_by_the_yaml_reader() {
    let e = load(&with("pulls: { N1: up }", "pulls: { N1: sideways }")).unwrap_err();
    assert!(e.starts_with("board.yaml:12:"), "{e}");
    let e = load(&with("name: t", "name: t\ncolour: red")).unwrap_err();
    assert!(e.contains("unknown field `colour`"), "{e}");
}

#[test]
fn rails_and_pulls() {
    assert_eq!(
        load(&with("pulls: { N1: up }", "pulls: { VCC: up }")).unwrap_err(),
        "board.yaml:12:10: net VCC is a power or ground rail; a pull resistor on it means nothing"
    );
    assert_eq!(
        load(&with("power: [VCC]", "power: [VCC]\nground: [VCC]")).unwrap_err(),
        "board.yaml:14:10: net VCC is both power and ground"
    );
    assert_eq!(
        load(&with("power: [VCC]", "power: [VDD]")).unwrap_err(),
        "board.yaml:13:9: unknown net `VDD`"
    );
}

#[test]
fn system_logic_problems() {
    let base = with(
        "U1: { bsdl: qm7420_bus_bridge.bsd }",
        "U1: { bsdl: qm7420_bus_bridge.bsd, pins: { LB_D(1): follow NX } }",
    );
    assert!(load(&base)
        .unwrap_err()
        .ends_with("`follow NX` follows a net that is not in the nets list"));
    let input = with(
        "U1: { bsdl: qm7420_bus_bridge.bsd }",
        "U1: { bsdl: qm7420_bus_bridge.bsd, pins: { HOST_CS_N: high } }",
    );
    assert!(load(&input)
        .unwrap_err()
        .ends_with("device U1: pin 11 has no output, so its system logic cannot drive it"));
    let bad = with(
        "U1: { bsdl: qm7420_bus_bridge.bsd }",
        "U1: { bsdl: qm7420_bus_bridge.bsd, outputs: sometimes }",
    );
    assert!(load(&bad)
        .unwrap_err()
        .ends_with("`sometimes` is not a system-logic drive (low, high, off, off data high, off data low, follow NET)"));
    // Two pass-throughs that follow each other form a loop.
    let looped = with(
        "U1: { bsdl: qm7420_bus_bridge.bsd }",
        // LB_D(0) is on N1 and LB_D(7) (pin 34) is on N2.
        "U1: { bsdl: qm7420_bus_bridge.bsd, pins: { LB_D(0): follow N2, LB_D(7): follow N1 } }",
    );
    assert!(
        load(&looped)
            .unwrap_err()
            .contains("system-logic pass-throughs form a loop"),
        "{}",
        load(&looped).unwrap_err()
    );
}

#[test]
fn an_idcode_that_disagrees_with_the_bsdl_is_refused() {
    let e = load(&with(
        "U2: { bsdl: qm5508_port_controller.bsd }",
        "U2: { bsdl: qm5508_port_controller.bsd, idcode: 0x35508A01 }",
    ))
    .unwrap_err();
    assert!(e.ends_with("device U2: IDCODE value 0x35508a01 does not match the BSDL pattern 00100101010100001000101000000001"), "{e}");
}

// Issue 19: a key written twice used to replace the first silently (a net
// lost a pin and the board loaded).
#[test]
fn a_net_written_twice_names_both_lines() {
    let text = with("  N2: [U1.34]\n", "  N2: [U1.34]\n  N1: [U1.35]\n");
    assert_eq!(
        load(&text).unwrap_err(),
        "board.yaml:11:3: key `N1` is written twice in one mapping: on line 9 and on line 11"
    );
    let text = with("  U2: { bsdl", "  U1: { bsdl");
    assert_eq!(
        load(&text).unwrap_err(),
        "board.yaml:4:3: key `U1` is written twice in one mapping: on line 3 and on line 4"
    );
}

#[test]
fn an_idcode_wider_than_32_bits_is_refused() {
    let text = with(
        "U1: { bsdl: qm7420_bus_bridge.bsd }",
        "U1: { bsdl: qm7420_bus_bridge.bsd, idcode: 0x117420A01 }",
    );
    assert_eq!(
        load(&text).unwrap_err(),
        "board.yaml:3:38: device U1: idcode 0x117420A01 is wider than 32 bits (the register holds 32)"
    );
}

#[test]
fn a_second_document_is_placed_at_its_marker() {
    let text = format!("{GOOD}---\nname: other\n");
    assert_eq!(
        load(&text).unwrap_err(),
        "board.yaml:14:1: a second YAML document starts here; a file holds one document"
    );
}

#[test]
fn deep_nesting_is_refused_at_the_limit() {
    // 80,000 levels used to take seconds before any error.
    let depth = 80_000;
    let text = format!("nets: {}{}", "[".repeat(depth), "]".repeat(depth));
    let e = load(&text).unwrap_err();
    assert!(e.starts_with("board.yaml:1:"), "{e}");
    assert!(
        e.ends_with(&format!(
            ": nesting deeper than {} levels of mappings and sequences",
            virtual_board::MAX_DEPTH
        )),
        "{e}"
    );
    // Block nesting is stopped by the same limit, at the first level too deep.
    let mut text = String::from(
        "nets:
",
    );
    for level in 0..1000 {
        text.push_str(&format!(
            "{}k{level}:
",
            " ".repeat(2 * level + 2)
        ));
    }
    let e = load(&text).unwrap_err();
    assert_eq!(
        e,
        format!(
            "board.yaml:{}:{}: nesting deeper than {} levels of mappings and sequences",
            virtual_board::MAX_DEPTH + 1,
            2 * virtual_board::MAX_DEPTH + 1,
            virtual_board::MAX_DEPTH
        )
    );
}

#[test]
fn a_huge_text_file_gives_a_short_error() {
    // Not a board at all: one 10 MB line of text.
    let text = "x".repeat(10_000_000);
    let e = load(&text).unwrap_err();
    assert!(e.len() < 400, "{} characters: {}", e.len(), &e[..200]);
    assert!(
        e.starts_with("board.yaml:1:1: invalid type: string \"xxx"),
        "{e}"
    );
}
