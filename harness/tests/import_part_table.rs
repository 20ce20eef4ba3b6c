//! The part table on a small netlist written by hand: every cluster and
//! pull it must give is worked out by hand below from the wiring and the
//! table, and every mistake gets its placed error or listed warning.
//!
//! The board: connector J1 (TDI 1, TDO 2, TMS 3, TCK 4) and one QM3310
//! expander U2 (the demo's BSDL file, 44-lead TQ44 pin map: SW_IN(0..7) on
//! pins 2, 3, 4, 5, 7, 8, 9, 10 are inputs; LED_N(0..7) on 24, 25, 26, 27,
//! 29, 30, 31, 32 and EXP_OUT(0..3) on 34 to 37 are outputs; ADDR(0..2) on
//! 15 to 17 and EXP_MODE on 18 are inputs; TDI 11, TMS 12, TCK 13, TDO 14;
//! VCC 1, GND 6). Around it, invented non-scan parts:
//!
//! - U11, part QB244 (from the CSV's `part` column): an octal three-state
//!   buffer, enables 1 (gates 1–4) and 19 (gates 5–8), active low;
//! - U12, QI04 (a hex inverter), U13, QA08 (a quad two-input AND gate);
//! - RN1, QR8I (four isolated resistors 1–8, 2–7, 3–6, 4–5, by the pattern
//!   `RN*`); RN2, QR5B (a bussed pack, common pin 1, by its own name);
//! - D1 (part QL1, not in the table) and U14 (QB999, not in the table).

#[allow(dead_code)]
#[path = "support/demo.rs"]
mod demo;

use std::path::PathBuf;

use demo::repo;
use harness::import::{self, NetlistFormat};

const NETLIST: &str = "\
net,designator,pin,part
TDI,J1,1,
TDI,U2,11,
TDO,J1,2,
TDO,U2,14,
TMS,J1,3,
TMS,U2,12,
TCK,J1,4,
TCK,U2,13,
+3V3,U2,1,
GND,U2,6,
LED0,U2,24,
LED0,U11,2,QB244
OE,U2,34,
OE,U11,1,QB244
SW0,U11,18,QB244
SW0,U2,2,
LED1,U2,25,
LED1,U11,4,
SW1,U11,16,
SW1,U2,3,
GND,U11,10,
+3V3,U11,20,
GND,U11,6,
LED2,U2,26,
LED2,U11,8,
LED3,U2,27,
LED3,U12,1,
SW2,U12,2,
SW2,U2,4,
GND,U12,7,
LED4,U2,29,
LED4,U13,1,
LED5,U2,30,
LED5,U13,2,
SW3,U13,3,
SW3,U2,5,
EXP1,U2,35,
EXP1,RN1,1,
SW4,RN1,8,
SW4,U2,7,
ADDR0,U2,15,
ADDR0,RN1,2,
+3V3,RN1,7,
ADDR1,U2,16,
ADDR1,RN1,3,
GND,RN1,6,
MODE,U2,18,
MODE,RN1,4,
+3V3,RN2,1,
ADDR2,U2,17,
ADDR2,RN2,2,
TMS,RN2,3,
LED6,U2,31,
LED6,D1,2,
+3V3,D1,1,
LED7,U2,32,
LED7,U14,3,
SW5,U14,4,
SW5,U2,8,
GND,U14,7,
";

/// A part file (the rest of the table is inline in the assembly file).
const PART_FILE: &str = "\
# Invented non-scan parts for the hand-worked import test.
parts:
  QB244:
    description: octal three-state buffer, two enables
    kind: three-state
    pins: 20
    enable_active: low
    gates:
      - { a: 2, y: 18, enable: 1 }
      - { a: 4, y: 16, enable: 1 }
      - { a: 6, y: 14, enable: 1 }
      - { a: 8, y: 12, enable: 1 }
      - { a: 11, y: 9, enable: 19 }
      - { a: 13, y: 7, enable: 19 }
      - { a: 15, y: 5, enable: 19 }
      - { a: 17, y: 3, enable: 19 }
  QR8I:
    kind: resistors
    pins: 8
    elements: [[1, 8], [2, 7], [3, 6], [4, 5]]
";

const ASSEMBLY: &str = "\
bsdl_folder: DEVICES
devices:
  U2: { part: QM3310 }
tap_ports:
  - { name: JTAG, connector: J1, tdi: \"1\", tdo: \"2\", tms: \"3\", tck: \"4\" }
part_files: [parts.yaml]
parts:
  QI04:
    kind: inverter
    pins: 14
    gates:
      - { a: 1, y: 2 }
      - { a: 3, y: 4 }
      - { a: 5, y: 6 }
      - { a: 9, y: 8 }
      - { a: 11, y: 10 }
      - { a: 13, y: 12 }
  QA08:
    kind: and
    pins: 14
    gates:
      - { inputs: [1, 2], y: 3 }
      - { inputs: [4, 5], y: 6 }
      - { inputs: [9, 10], y: 8 }
      - { inputs: [12, 13], y: 11 }
  QR5B:
    kind: resistors
    pins: 6
    elements: [[1, 2], [1, 3], [1, 4], [1, 5], [1, 6]]
part_numbers:
  U12: QI04
  U13: QA08
  \"RN*\": QR8I
  RN2: QR5B
  D1: QL1
  U14: QB999
  U19: QB244
  \"X*\": QB244
";

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("boardtwin-parts-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn run(
    name: &str,
    netlist: &str,
    assembly: &str,
    parts: &str,
) -> Result<import::Imported, import::ImportError> {
    let dir = scratch(name);
    let devices = repo().join("scenarios/devices");
    let n = dir.join("hand.csv");
    std::fs::write(&n, netlist).unwrap();
    std::fs::write(dir.join("parts.yaml"), parts).unwrap();
    let a = dir.join("assembly.yaml");
    std::fs::write(
        &a,
        assembly.replace("DEVICES", &devices.display().to_string()),
    )
    .unwrap();
    import::import(&n, NetlistFormat::Csv, &a, &dir.join("board.yaml"))
}

#[test]
fn every_fitted_table_part_becomes_its_clusters_and_pulls() {
    let got = run("good", NETLIST, ASSEMBLY, PART_FILE).unwrap();
    // The clusters, worked out by hand:
    // - U11 gate 1 (a 2, y 18, enable 1): LED0 → SW0 while OE is low; gate 2
    //   (a 4, y 16): LED1 → SW1. Gates 3 (y 14) and 4 (y 12) have no output
    //   wired; gates 5–8 have no pin wired at all.
    // - U12 gate 1 (a 1, y 2): SW2 = not LED3; gates 2–6 unwired.
    // - U13 gate 1 (inputs 1, 2, y 3): SW3 = LED4 and LED5.
    // - RN1 element 1 (pins 1–8) joins EXP1 (U2 pin 35, EXP_OUT(1), an
    //   output) and SW4 (U2 pin 7, SW_IN(4), an input): a series resistor
    //   from the driven side, a = EXP1, b = SW4.
    let clusters: Vec<String> = got
        .text
        .lines()
        .skip_while(|l| *l != "clusters:")
        .skip(1)
        .filter(|l| !l.trim_start().starts_with('#'))
        .take_while(|l| l.starts_with("  "))
        .map(str::to_string)
        .collect();
    assert_eq!(
        clusters,
        [
            "  U11_1: { kind: three-state, a: LED0, enable: OE, enable_active: low, \"y\": SW0 }",
            "  U11_2: { kind: three-state, a: LED1, enable: OE, enable_active: low, \"y\": SW1 }",
            "  U12_1: { kind: inverter, a: LED3, \"y\": SW2 }",
            "  U13_1: { kind: and, inputs: [LED4, LED5], \"y\": SW3 }",
            "  RN1_1: { kind: resistor, a: EXP1, b: SW4 }",
        ]
    );
    // Each with where it came from.
    assert!(got.text.contains(
        "  # U11 gate 1 (QB244), pins a 2, enable 1, y 18; part number from the netlist's line 13\n  U11_1:"
    ));
    assert!(got.text.contains(
        "  # RN1 element 1 (QR8I, pins 1–8), a series resistor from the driven side EXP1; part number from assembly.yaml:"
    ));
    // The loaded board has them, with their kinds.
    let b = &got.board.board;
    let kinds: Vec<(String, virtual_board::ClusterKind)> = b
        .clusters()
        .iter()
        .map(|c| (c.name.clone(), c.kind))
        .collect();
    use virtual_board::ClusterKind::*;
    assert_eq!(
        kinds,
        [
            ("RN1_1".to_string(), Resistor),
            ("U11_1".to_string(), ThreeState),
            ("U11_2".to_string(), ThreeState),
            ("U12_1".to_string(), Inverter),
            ("U13_1".to_string(), And),
        ]
    );
    // Pulls, by hand: RN1 element 2 (pins 2–7) joins ADDR0 and +3V3: up;
    // element 3 (3–6) joins ADDR1 and GND: down; RN2 element 1 (1–2) joins
    // +3V3 and ADDR2: up. RN2 element 2 (1–3) is on TMS, TAP wiring: no
    // pull on the board.
    let pulls: Vec<(&str, bool, &str)> = got
        .report
        .pulls
        .iter()
        .map(|p| (p.net.as_str(), p.up, p.resistor.as_str()))
        .collect();
    assert_eq!(
        pulls,
        [
            ("ADDR0", true, "RN1 element 2"),
            ("ADDR1", false, "RN1 element 3"),
            ("ADDR2", true, "RN2 element 1"),
        ]
    );
    for (net, up) in [("ADDR0", true), ("ADDR1", false), ("ADDR2", true)] {
        assert_eq!(b.nets()[b.net_index(net).unwrap()].pull, Some(up), "{net}");
    }
    // Left unmodelled, most nets first: U14 (QB999 is not in the table) on
    // LED7, SW5, GND; D1 (QL1) on +3V3, LED6.
    let left: Vec<(&str, Option<&str>, usize)> = got
        .report
        .unmodelled
        .iter()
        .map(|u| (u.designator.as_str(), u.part.as_deref(), u.nets.len()))
        .collect();
    assert_eq!(left, [("U14", Some("QB999"), 3), ("D1", Some("QL1"), 2)]);
    // Warnings and decisions, placed.
    let w = got.report.warnings.join("\n");
    for want in [
        // RN1 element 4: pin 4 on MODE, pin 5 on no net (placed at RN1's
        // first record, line 39, its designator in column 6).
        "hand.csv:39:6: RN1 element 4 (QR8I, pins 4–5) has one end unconnected: not modelled",
        "assembly.yaml:37:8: U19 has part number QB244 but is on no net of the netlist (or not fitted)",
        "assembly.yaml:38:9: pattern `X*` matches no fitted part of the netlist",
    ] {
        assert!(w.lines().any(|l| l.ends_with(want)), "missing `{want}` in\n{w}");
    }
    let g = got.report.guesses.join("\n");
    for want in [
        "U11 gate 3 (QB244): output pin 14 on no net, an unused gate: not modelled",
        "U11 gate 5 (QB244): no pin on a net, an unused gate: not modelled",
        "RN2 element 3 (QR5B, pins 1–4): only the end on rail +3V3 is wired, a spare element: not modelled",
        "RN1 element 2: a pull-up on ADDR0, a part-table resistor between it and rail +3V3",
    ] {
        assert!(g.lines().any(|l| l == want), "missing `{want}` in\n{g}");
    }
    // The text report names the table's parts.
    let text = got.report.to_string();
    assert!(
        text.contains("Clusters from the part table: 5 from 4 parts"),
        "{text}"
    );
}

#[test]
fn table_mistakes_are_placed_errors() {
    for (parts, assembly_extra, want) in [
        (
            // A role naming a pin the part does not have.
            PART_FILE.replace("{ a: 17, y: 3, enable: 19 }", "{ a: 17, y: 3, enable: 21 }"),
            "",
            "parts.yaml:16:32: part QB244 has no pin 21 (it has 20 pins)",
        ),
        (
            // One output pin in two gates.
            PART_FILE.replace("{ a: 4, y: 16, enable: 1 }", "{ a: 4, y: 18, enable: 1 }"),
            "",
            "parts.yaml:10:20: pin 18 is an output of gate 1 and of gate 2 of QB244",
        ),
        (
            // A role a three-state gate does not have.
            PART_FILE.replace("{ a: 2, y: 18, enable: 1 }", "{ a: 2, y: 18, dir: 1 }"),
            "",
            "parts.yaml:9:9: gate 1 of QB244 (three-state) needs `enable`",
        ),
        (
            PART_FILE.to_string(),
            // Defined again inline.
            "  QB244: { kind: buffer, pins: 2, gates: [{ a: 1, y: 2 }] }\n",
            "assembly.yaml:30:10: part QB244 is defined again (first in ",
        ),
    ] {
        let asm = ASSEMBLY.replace(
            "part_numbers:\n",
            &format!("{assembly_extra}part_numbers:\n"),
        );
        let e = run("bad", NETLIST, &asm, &parts).unwrap_err().to_string();
        assert!(e.contains(want), "`{e}` lacks `{want}`");
    }
    // Two patterns that give one designator different part numbers.
    let asm = ASSEMBLY.replace("  RN2: QR5B\n", "  \"RN?\": QR5B\n");
    let e = run("two-patterns", NETLIST, &asm, PART_FILE)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("assembly.yaml:") && e.contains("RN1 matches `RN*` (part QR8I) and `RN?` (part QR5B): give RN1 its part number by name"),
        "{e}"
    );
}
