//! `import` on a small hand-written IPC-D-356A netlist whose records are
//! decoded by hand below, and on bad inputs: each must give its placed
//! error or listed warning, never a panic.
//!
//! The record layout (IPC-D-356A, from memory of the published description,
//! not checked against the text): columns 1–3 operation code (317
//! through-hole, 327 surface), 4–17 net name, 21–26 designator, 27 `-`,
//! 28–31 pin, then hole, access side and `X±nnnnnnY±nnnnnn` pad centre.

#[allow(dead_code)]
#[path = "support/demo.rs"]
mod demo;

use std::path::Path;

use demo::repo;
use harness::import::{self, read_ipc356, NetlistFormat};

/// The hand-written netlist: connector J1 (TDI 1, TDO 2, TMS 3, TCK 4)
/// wired to a QM3310 expander (U2, 44-lead: TDI 11, TMS 12, TCK 13, TDO 14)
/// and a QM2040 clock buffer (U4, SO24: TDI 7, TMS 8, TCK 9, TDO 10), in
/// that chain order; both pin maps are in the demo's BSDL files.
const NETLIST: &str = "\
C  hand-written test netlist (invented board)
P  JOB   HAND-TEST
P  UNITS CUST 1
P  NNAME1     CLOCK_A_TO_EXPANDER_SW0
317TDI_IN           J1    -1    D0400PA00X+010000Y+020000X0600Y0600R000 S0
327TDI_IN           U2    -11         A01X+030000Y+021000X0300Y0100R000 S1
327TAP_LINK         U2    -14         A01X+030000Y+024000X0300Y0100R000 S1
327TAP_LINK         U4    -7          A01X+050000Y+020000X0300Y0100R000 S1
327TDO_OUT          U4    -10         A01X+050000Y+023000X0300Y0100R000 S1
317TDO_OUT          J1    -2    D0400PA00X+012540Y+020000X0600Y0600R000 S0
317TMS              J1    -3    D0400PA00X+015080Y+020000X0600Y0600R000 S0
327TMS              U2    -12         A01
327TMS              U4    -8          A01
317TCK              J1    -4    D0400PA00X+017620Y+020000X0600Y0600R000 S0
327TCK              U2    -13         A01
327TCK              U4    -9          A01
327NNAME1           U4    -21         A01X-001500Y+000250X0300Y0100R000 S1
327NNAME1           U2    -2          A01
327+3V3             U2    -1          A01
327+3V3             U4    -5          A01
327+3V3             R1    -1          A01
327GND              U2    -6          A01
327GND              U4    -6          A01
327DIV0             U4    -4          A01
327DIV0             R1    -2          A01
327MODE             U2    -34         A01
327MODE             R2    -1          A01
327GND              U2    -6          A01
327LONE             U2    -99         A01
999
";

#[test]
fn hand_decoded_records() {
    let n = read_ipc356(NETLIST, Path::new("hand.ipc")).unwrap();
    // Line 5: `317` through-hole; net `TDI_IN` (columns 4–9); designator
    // `J1` (21–22); `-` (27); pin `1` (28); `D0400` hole, `P` plated, `A00`
    // both sides; `X+010000Y+020000`: with `UNITS CUST 1` (0.001 mm, from
    // memory) the pad centre is (10.000 mm, 20.000 mm).
    let tdi = &n.nets[0];
    assert_eq!(tdi.name, "TDI_IN");
    assert_eq!(
        (tdi.pins[0].designator.as_str(), tdi.pins[0].pin.as_str()),
        ("J1", "1")
    );
    assert_eq!((tdi.pins[0].line, tdi.pins[0].column), (5, 21));
    assert_eq!(tdi.pins[0].xy, Some((10.0, 20.0)));
    // Line 6: `327` surface pad, U2 pin 11 at (30.000 mm, 21.000 mm).
    assert_eq!(tdi.pins[1].pin, "11");
    assert_eq!(tdi.pins[1].xy, Some((30.0, 21.0)));
    // Line 17: net field `NNAME1` is the alias line 4 declares:
    // CLOCK_A_TO_EXPANDER_SW0 (23 characters, too long for columns 4–17);
    // X-001500 is −1.500 mm, Y+000250 is 0.250 mm.
    let clock = n
        .nets
        .iter()
        .find(|x| x.name == "CLOCK_A_TO_EXPANDER_SW0")
        .unwrap();
    assert_eq!(clock.pins.len(), 2);
    assert_eq!(clock.pins[0].xy, Some((-1.5, 0.25)));
    // A record without coordinates has none.
    assert_eq!(clock.pins[1].xy, None);
    // 11 nets: TDI_IN, TAP_LINK, TDO_OUT, TMS, TCK, the alias, +3V3, GND,
    // DIV0, MODE, LONE; 25 records (lines 5 to 29), one repeated (line 28,
    // U2-6 on GND again, first on line 22).
    assert_eq!(n.nets.len(), 11);
    assert_eq!(n.pin_count(), 24);
    assert_eq!(n.warnings.len(), 1);
    assert_eq!(
        n.warnings[0].to_string(),
        "hand.ipc:28:21: pin U2-6 is listed again on net GND (first at line 22); the repeat is ignored"
    );
}

fn run(name: &str, netlist: &str, assembly: &str) -> Result<import::Imported, import::ImportError> {
    // Removed on return: the result holds the board file's text.
    let folder = tempfile::Builder::new()
        .prefix(&format!("boardtwin-hand-{name}-"))
        .tempdir()
        .unwrap();
    let dir = folder.path();
    let devices = repo().join("scenarios/devices");
    let n = dir.join("hand.ipc");
    std::fs::write(&n, netlist).unwrap();
    let a = dir.join("assembly.yaml");
    std::fs::write(
        &a,
        assembly.replace("DEVICES", &devices.display().to_string()),
    )
    .unwrap();
    import::import(&n, NetlistFormat::Ipc356, &a, &dir.join("board.yaml"))
}

const ASSEMBLY: &str = "\
bsdl_folder: DEVICES
devices:
  U2: { part: QM3310 }
  U4: { bsdl: DEVICES/qm2040_clock_buffer.bsd }
  U9: { part: QM5508 }
tap_ports:
  - { name: JTAG, connector: J1, tdi: \"1\", tdo: \"2\", tms: \"3\", tck: \"4\" }
";

#[test]
fn hand_board_chain_rails_pulls_and_warnings() {
    let got = run("good", NETLIST, ASSEMBLY).unwrap();
    let r = &got.report;
    // Chain: TDI_IN reaches U2 pin 11 (TDI); U2 pin 14 (TDO) is on TAP_LINK
    // with U4 pin 7 (TDI); U4 pin 10 (TDO) is on TDO_OUT with J1-2.
    assert_eq!(r.chains.len(), 1);
    assert_eq!(r.chains[0].chain, ["U2", "U4"]);
    assert!(!r.chains[0].trst);
    // +3V3 holds U2 pin 1 (VCC) and U4 pin 5 (VDD): power, confirmed.
    // GND holds U2 pin 6 and U4 pin 6 (GND): ground.
    let rails: Vec<(&str, bool)> = r.rails.iter().map(|x| (x.net.as_str(), x.power)).collect();
    assert_eq!(rails, [("+3V3", true), ("GND", false)]);
    // R1 joins DIV0 and +3V3: a pull-up on DIV0.
    assert_eq!(r.pulls.len(), 1);
    assert_eq!(
        (
            r.pulls[0].net.as_str(),
            r.pulls[0].up,
            r.pulls[0].resistor.as_str()
        ),
        ("DIV0", true, "R1")
    );
    let b = &got.board.board;
    let div0 = &b.nets()[b.net_index("DIV0").unwrap()];
    assert_eq!(div0.pull, Some(true));
    // The alias net joins U4 pin 21 and U2 pin 2.
    let clock = &b.nets()[b.net_index("CLOCK_A_TO_EXPANDER_SW0").unwrap()];
    let pins: Vec<String> = clock
        .pins
        .iter()
        .map(|p| format!("{}.{}", p.device, p.pin))
        .collect();
    assert_eq!(pins, ["U4.21", "U2.2"]);
    // TAP nets are the port's wiring, not nets; LONE loses its only pin.
    for n in ["TDI_IN", "TAP_LINK", "TDO_OUT", "TMS", "TCK", "LONE"] {
        assert!(b.net_index(n).is_none(), "{n}");
    }
    let w = r.warnings.join("\n");
    for want in [
        "hand.ipc:28:21: pin U2-6 is listed again on net GND (first at line 22); the repeat is ignored",
        "hand.ipc:29:21: pin U2-99 (net LONE) is not in the pin map of QM3310 (TQ44): left out",
        "hand.ipc:29:21: net LONE has one pin (U2-99)",
        "hand.ipc:27:21: resistor R2 has one end unconnected: not taken as a pull",
        "assembly.yaml:5:7: scan device U9 is in the assembly file but not in the netlist",
        "assembly.yaml:5:7: scan device U9 is on no TAP port found: left out of the board",
    ] {
        assert!(w.lines().any(|l| l.ends_with(want)), "missing `{want}` in\n{w}");
    }
    // R2 is left unmodelled, with the reason.
    let r2 = r.unmodelled.iter().find(|u| u.designator == "R2").unwrap();
    assert_eq!(r2.note, "one end unconnected");
}

#[test]
fn a_chain_gap_is_explained() {
    // U4's TDI moves to a net of its own: U2's TDO (on TAP_LINK) then reaches
    // no TDI and not the connector's TDO.
    let broken = NETLIST.replace(
        "327TAP_LINK         U4    -7 ",
        "327GAP              U4    -7 ",
    );
    let got = run("gap", &broken, ASSEMBLY).unwrap();
    assert_eq!(got.report.chains[0].chain, ["U2"]);
    let w = got.report.warnings.join("\n");
    for want in [
        "TAP port JTAG: the chain breaks after U2: net TAP_LINK reaches no further device's TDI and not the connector's TDO (TDO_OUT)",
        "scan device U4 is on no TAP port found: left out of the board",
    ] {
        assert!(w.lines().any(|l| l.ends_with(want)), "missing `{want}` in\n{w}");
    }
}

#[test]
fn bad_assembly_files_get_placed_errors() {
    for (assembly, want) in [
        (
            "devices:\n  U2: { part: QM3310 }\n  U2: { part: QM3310 }\n",
            "assembly.yaml:3:3: ",
        ),
        (
            "devices:\n  U2: { part: QM3310 }\ntap_ports: []\n",
            "assembly.yaml:2:7: device U2 names part QM3310 but the assembly file has no bsdl_folder",
        ),
        (
            "bsdl_folder: DEVICES\ndevices:\n  U2: { part: NOPE }\n",
            "assembly.yaml:3:7: no BSDL file in ",
        ),
        (
            "bsdl_folder: DEVICES\ndevices:\n  U2: { part: QM3310 }\ntap_ports:\n  - { name: T, connector: J1, tdi: \"9\", tdo: \"2\" }\n",
            "assembly.yaml:5:36: connector pin J1-9 (tdi) is on no net of the netlist",
        ),
        (
            "bsdl_folder: DEVICES\ndevices:\n  U2: { part: QM3310 }\ntap_ports:\n  - { name: T, chain: [U2, U7] }\n",
            "assembly.yaml:5:28: U7 is not a scan device of the assembly file",
        ),
        ("colour: blue\n", "assembly.yaml:1:1: "),
    ] {
        let e = run("bad", NETLIST, assembly).unwrap_err().to_string();
        assert!(e.contains(want), "`{e}` lacks `{want}`");
    }
}
