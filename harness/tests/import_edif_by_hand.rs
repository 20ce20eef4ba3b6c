//! `import` on a small EDIF 2 0 0 netlist written by hand from the EIA-548
//! grammar and decoded by hand below, and on bad EDIF: each gives its
//! placed error, never a panic.
//!
//! The grammar used (from memory of EIA-548, not checked against the
//! text): `(edif NAME (edifVersion 2 0 0) (edifLevel 0) (keywordMap
//! (keywordLevel 0)) …)` holding `library` forms of `cell`s, each with a
//! `view` whose `interface` lists `port`s and whose `contents` hold
//! `instance`s (`viewRef`/`cellRef`/`libraryRef`) and `net`s `joined` by
//! `portRef`s (`instanceRef` names the instance; without it the port is the
//! cell's own); `portList` groups port references; `(rename IDENT "real")`
//! gives a name identifiers cannot spell (`&` lets an identifier start with
//! a digit); identifiers match in any case; `%34%` in a string is a quote;
//! `design` names the top cell. The `REFDES` property and `(designator
//! "…")` on ports are common practice of CAD tools, not the grammar.

#[allow(dead_code)]
#[path = "support/demo.rs"]
mod demo;

use std::path::{Path, PathBuf};

use demo::repo;
use harness::import::{self, read_edif, NetlistFormat};

/// A connector J1 (TDI 1, TDO 2, TMS 3, TCK 4) wired to a QM3310 expander
/// (U2, TQ44: TDI 11, TMS 12, TCK 13, TDO 14, VCC 1, GND 6) and a QM2040
/// clock buffer (U4, SO24: TDI 7, TMS 8, TCK 9, TDO 10, VDD 5, GND 6), in
/// that chain order (the demo's BSDL files hold both pin maps).
const NETLIST: &str = r#"(edif hand_test
  (edifVersion 2 0 0)
  (edifLevel 0)
  (keywordMap (keywordLevel 0))
  (status (written (timeStamp 2026 1 2 3 4 5) (program "by hand")))
  (comment "hand-written test netlist (invented board)")
  (library parts
    (edifLevel 0)
    (technology (numberDefinition))
    (cell HDR4 (cellType GENERIC)
      (view symbol (viewType NETLIST)
        (interface
          (port &1 (direction INOUT)) (port &2 (direction INOUT))
          (port &3 (direction INOUT)) (port &4 (direction INOUT)))))
    (cell QM3310 (cellType GENERIC)
      (view symbol (viewType NETLIST)
        (interface
          (port (rename TDI_P "11") (direction INPUT))
          (port (rename TMS_P "12")) (port (rename TCK_P "13"))
          (port (rename TDO_P "14") (direction OUTPUT))
          (port &1) (port &6) (port &2))))
    (cell QM2040 (cellType GENERIC)
      (view symbol (viewType NETLIST)
        (interface
          (port P7 (designator "7")) (port P8 (designator "8"))
          (port P9 (designator "9")) (port P10 (designator "10"))
          (port P5 (designator "5")) (port P6 (designator "6"))
          (port P21 (designator "21"))))))
  (library board_lib
    (edifLevel 0)
    (technology (numberDefinition))
    (cell top (cellType GENERIC)
      (view netlist (viewType NETLIST)
        (interface (port EXT_CLK (direction INPUT)))
        (contents
          (instance J1 (viewRef symbol (cellRef HDR4 (libraryRef parts))))
          (instance I_2 (viewRef symbol (cellRef QM3310 (libraryRef parts)))
            (property REFDES (string "U2")))
          (instance (rename U4_ "U4") (viewRef symbol (cellRef QM2040 (libraryRef parts))))
          (net TDI_IN (joined (portRef &1 (instanceRef J1)) (portRef TDI_P (instanceRef I_2))))
          (net TAP_LINK (joined (portRef TDO_P (instanceRef I_2)) (portRef P7 (instanceRef U4_))))
          (net TDO_OUT (joined (portRef P10 (instanceRef U4_)) (portRef &2 (instanceRef J1))))
          (net TMS (joined (portRef &3 (instanceRef J1)) (portRef TMS_P (instanceRef I_2))
            (portRef P8 (instanceRef U4_))))
          (net TCK (joined (portRef &4 (instanceRef J1)) (portRef tck_p (instanceRef i_2))
            (portRef P9 (instanceRef u4_))))
          (net (rename CLK_A "CLOCK%34%A") (joined (portRef P21 (instanceRef U4_))
            (portRef &2 (instanceRef I_2)) (portRef EXT_CLK)))
          (net (rename P3V3 "+3V3") (joined (portRef &1 (instanceRef I_2)) (portRef P5 (instanceRef U4_))))
          (net GND (joined (portList (portRef &6 (instanceRef I_2)) (portRef P6 (instanceRef U4_)))))
          (net UNUSED (joined))
          (userData (a_tool "not used here" (nested (deeper 1 2 3))))))))
  (design hand (cellRef top (libraryRef board_lib))))
"#;

fn pins_of(n: &import::Netlist) -> Vec<(String, Vec<String>)> {
    n.nets
        .iter()
        .map(|x| {
            let pins = x
                .pins
                .iter()
                .map(|p| format!("{}-{}", p.designator, p.pin))
                .collect();
            (x.name.clone(), pins)
        })
        .collect()
}

#[test]
fn hand_decoded_nets_and_pins() {
    let n = read_edif(NETLIST, Path::new("hand.edf")).unwrap();
    // Decoded by hand. Designators: J1 (its identifier), U2 (the REFDES
    // property of instance I_2), U4 (the rename of U4_). Pins: J1's `&1`
    // is pin 1 (the `&` only lets an identifier start with a digit); U2's
    // TDI_P is renamed "11"; U4's P7 has designator "7". TCK's references
    // `tck_p`, `i_2`, `u4_` match in any case. The clock net's real name
    // is CLOCK"A (`%34%` is ASCII 34, a quote); its EXT_CLK reference is
    // the top cell's own port, not a pin. GND's references are in a
    // portList. UNUSED joins nothing, so it holds no pin record.
    let s = |n: &str, p: &[&str]| (n.to_string(), p.iter().map(|x| x.to_string()).collect());
    assert_eq!(
        pins_of(&n),
        vec![
            s("TDI_IN", &["J1-1", "U2-11"]),
            s("TAP_LINK", &["U2-14", "U4-7"]),
            s("TDO_OUT", &["U4-10", "J1-2"]),
            s("TMS", &["J1-3", "U2-12", "U4-8"]),
            s("TCK", &["J1-4", "U2-13", "U4-9"]),
            s("CLOCK\"A", &["U4-21", "U2-2"]),
            s("+3V3", &["U2-1", "U4-5"]),
            s("GND", &["U2-6", "U4-6"]),
        ]
    );
    assert_eq!(n.pin_count(), 18);
    // A pin record's place is its portRef: line 40 is the TDI_IN net; its
    // second portRef starts at column 61 (counted by hand: 10 spaces, then
    // `(net TDI_IN (joined ` is 20 characters and `(portRef &1
    // (instanceRef J1)) ` 30, so 10 + 20 + 30 = 60 characters before it).
    let tdi = &n.nets[0].pins[1];
    assert_eq!((tdi.line, tdi.column), (40, 61));
    // One warning: the reference to the design's own port.
    assert_eq!(n.warnings.len(), 1);
    assert!(n.warnings[0]
        .text
        .starts_with("1 net(s) reach the design's own ports"));
    assert!(n.xy_free());
}

/// Every record of an EDIF netlist is without coordinates.
trait XyFree {
    fn xy_free(&self) -> bool;
}

impl XyFree for import::Netlist {
    fn xy_free(&self) -> bool {
        self.nets
            .iter()
            .flat_map(|n| &n.pins)
            .all(|p| p.xy.is_none())
    }
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("boardtwin-edif-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn hand_board_imports_with_its_chain_and_rails() {
    let dir = scratch("good");
    let devices = repo().join("scenarios/devices");
    let n = dir.join("hand.edf");
    std::fs::write(&n, NETLIST).unwrap();
    let a = dir.join("assembly.yaml");
    std::fs::write(
        &a,
        format!(
            "bsdl_folder: {0}\ndevices:\n  U2: {{ part: QM3310 }}\n  U4: {{ bsdl: {0}/qm2040_clock_buffer.bsd }}\ntap_ports:\n  - {{ name: JTAG, connector: J1, tdi: \"1\", tdo: \"2\", tms: \"3\", tck: \"4\" }}\n",
            devices.display()
        ),
    )
    .unwrap();
    assert_eq!(NetlistFormat::from_path(&n), Some(NetlistFormat::Edif));
    let got = import::import(&n, NetlistFormat::Edif, &a, &dir.join("board.yaml")).unwrap();
    // TDI_IN reaches U2 pin 11 (TDI); U2 pin 14 (TDO) and U4 pin 7 (TDI)
    // share TAP_LINK; U4 pin 10 (TDO) is on TDO_OUT with J1 pin 2.
    assert_eq!(got.report.chains.len(), 1);
    assert_eq!(got.report.chains[0].chain, ["U2", "U4"]);
    // +3V3 holds U2 pin 1 (VCC) and U4 pin 5 (VDD); GND the two GND pins.
    let rails: Vec<(&str, bool)> = got
        .report
        .rails
        .iter()
        .map(|x| (x.net.as_str(), x.power))
        .collect();
    assert_eq!(rails, [("+3V3", true), ("GND", false)]);
    // The clock net joins U4 pin 21 (CLK_OUT(0)) and U2 pin 2.
    let b = &got.board.board;
    let clock = &b.nets()[b.net_index("CLOCK\"A").unwrap()];
    let pins: Vec<String> = clock
        .pins
        .iter()
        .map(|p| format!("{}.{}", p.device, p.pin))
        .collect();
    assert_eq!(pins, ["U4.21", "U2.2"]);
}

#[test]
fn bad_edif_gets_placed_errors() {
    let e = |text: &str| {
        read_edif(text, Path::new("hand.edf"))
            .unwrap_err()
            .to_string()
    };
    // Line 40, column 89: `(instanceRef I_9)`'s name, after 10 spaces,
    // `(net TDI_IN (joined ` (20), `(portRef &1 (instanceRef J1)) ` (30),
    // `(portRef TDI_P ` (15) and `(instanceRef ` (13): 88 characters.
    let bad = NETLIST.replace(
        "(portRef TDI_P (instanceRef I_2))",
        "(portRef TDI_P (instanceRef I_9))",
    );
    assert_eq!(e(&bad), "hand.edf:40:89: no instance `I_9` in the design");
    // A port the cell does not have: `TDX_P` after 10 + 20 + 30 + 9 = 69.
    let bad = NETLIST.replace(
        "(portRef TDI_P (instanceRef I_2))",
        "(portRef TDX_P (instanceRef I_2))",
    );
    assert_eq!(
        e(&bad),
        "hand.edf:40:70: the cell of instance U2 has no port `TDX_P`"
    );
    // One `)` missing on line 21 (the end of the QM3310 cell): every later
    // `)` then closes the list one level out, so the list left open at the
    // end is the outermost, `(edif` at line 1, column 1.
    let bad = NETLIST.replacen(
        "(port &1) (port &6) (port &2))))",
        "(port &1) (port &6) (port &2)))",
        1,
    );
    assert_eq!(e(&bad), "hand.edf:1:1: this list is never closed");
    // A `)` too many after the last line (53, then its newline).
    assert_eq!(
        e(&format!("{NETLIST})")),
        "hand.edf:54:1: `)` with no list open"
    );
    // Two instances with one name: line 37, after 10 spaces and `(instance `.
    let bad = NETLIST.replace("(instance I_2 ", "(instance J1 ");
    assert_eq!(e(&bad), "hand.edf:37:21: instance `J1` is defined twice");
}
