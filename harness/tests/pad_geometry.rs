//! Pin geometry for the adjacent-short class: a CSV netlist with pads
//! placed by hand is imported, the board file carries the pads, and the
//! campaign's fault universe and diagnosis's neighbours go by pad distance;
//! without coordinates the pin-number rule holds. Expected pairs are worked
//! out by hand below.

#[allow(dead_code)]
#[path = "support/demo.rs"]
mod demo;

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use demo::repo;
use harness::campaign::{self, FaultClass, UniverseOptions};
use harness::import::{self, NetlistFormat};
use virtual_board::{bsdl_files_beside, load_board_text, LoadedBoard};

/// A QM2040 clock buffer (U4, SO24 pin map: REF_CLK 1, FB_IN 2, DIV_SEL
/// 3 and 4, TDI 7, TMS 8, TCK 9, TDO 10, LOCK 12, CLK_OUT(5) 13) on
/// connector J1's TAP, each signal pin on a net of its own to connector J2.
///
/// Pads of U4 placed by hand (mm), not in pin order:
/// pin 1 (0, 0), pin 2 (0, 1.27), pin 12 (0.9, 0.9), pin 3 (5, 0),
/// pin 4 (5, 0.65), pin 13 (6.2, 0.65); TAP pins 7–10 in a row at x = 20,
/// y = 0, 1.27, 2.54, 3.81.
///
/// Distances, worked by hand:
/// - 1–2: 1.27; 1–12: √(0.9² + 0.9²) = √1.62 ≈ 1.273; 2–12: √(0.9² +
///   0.37²) = √0.9469 ≈ 0.973 — all within 1.3 mm.
/// - 3–4: 0.65; 4–13: 1.2 — within 1.3 mm. 3–13: √(1.2² + 0.65²) =
///   √1.8625 ≈ 1.365 — beyond 1.3 mm, within 1.4 mm.
/// - 7–8, 8–9, 9–10: 1.27 each (TAP pins: port wiring, not nets).
/// - Every other pair is more than 3 mm apart (the groups sit 5 mm and
///   20 mm apart in x).
const CSV: &str = "\
net,designator,pin,x,y
TDI_IN,J1,1,,
TDI_IN,U4,7,20,0
TMS,J1,3,,
TMS,U4,8,20,1.27
TCK,J1,4,,
TCK,U4,9,20,2.54
TDO_OUT,U4,10,20,3.81
TDO_OUT,J1,2,,
NA,U4,1,0,0
NA,J2,1,,
NB,U4,2,0,1.27
NB,J2,2,,
NC,U4,3,5,0
NC,J2,3,,
ND,U4,4,5,0.65
ND,J2,4,,
NE,U4,12,0.9,0.9
NE,J2,5,,
NF,U4,13,6.2,0.65
NF,J2,6,,
";

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("boardtwin-pads-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Imports `csv` with U4 and J1's TAP; the board file text and the board.
fn import_csv(name: &str, csv: &str) -> (String, PathBuf) {
    let dir = scratch(name);
    let n = dir.join("pads.csv");
    std::fs::write(&n, csv).unwrap();
    let a = dir.join("assembly.yaml");
    std::fs::write(
        &a,
        format!(
            "devices:\n  U4: {{ bsdl: {} }}\ntap_ports:\n  - {{ name: JTAG, connector: J1, tdi: \"1\", tdo: \"2\", tms: \"3\", tck: \"4\" }}\n",
            repo()
                .join("scenarios/devices/qm2040_clock_buffer.bsd")
                .display()
        ),
    )
    .unwrap();
    let out = dir.join("board.yaml");
    let got = import::import(&n, NetlistFormat::Csv, &a, &out).unwrap();
    (got.text, out)
}

fn load(text: &str, out: &Path) -> LoadedBoard {
    load_board_text(text, out, &mut bsdl_files_beside(out)).unwrap()
}

/// The adjacent-short faults of the universe, each as a sorted net pair.
fn adjacent_shorts(loaded: &LoadedBoard) -> BTreeSet<(String, String)> {
    let opts = UniverseOptions {
        classes: [FaultClass::AdjacentShort].into_iter().collect(),
    };
    campaign::universe(loaded, &opts)
        .into_iter()
        .map(|f| {
            let mut s = f.defect.short.unwrap();
            s.sort();
            (s[0].clone(), s[1].clone())
        })
        .collect()
}

fn pairs(list: &[(&str, &str)]) -> BTreeSet<(String, String)> {
    list.iter()
        .map(|(a, b)| (a.to_string(), b.to_string()))
        .collect()
}

#[test]
fn import_writes_the_pads_with_their_origin() {
    let (text, out) = import_csv("written", CSV);
    // The scan device's pads, with the netlist line of each; J1 and J2
    // are not scan devices, so theirs are not written.
    for want in [
        "    pads:  # pad centres in mm, from the netlist's coordinates",
        "      \"1\": [0, 0]  # line 10",
        "      \"12\": [0.9, 0.9]  # line 18",
        "      \"13\": [6.2, 0.65]  # line 20",
    ] {
        assert!(text.lines().any(|l| l == want), "no `{want}` in\n{text}");
    }
    let loaded = load(&text, &out);
    let pads = &loaded.file.devices["U4"].pads;
    assert_eq!(pads.len(), 10);
    assert_eq!(pads["2"], [0.0, 1.27]);
}

#[test]
fn adjacent_shorts_follow_pad_distance() {
    let (text, out) = import_csv("distance", CSV);
    let loaded = load(&text, &out);
    // Within 1.3 mm (the default): pins 1–2 (NA, NB), 1–12 (NA, NE),
    // 2–12 (NB, NE), 3–4 (NC, ND), 4–13 (ND, NF).
    assert_eq!(
        adjacent_shorts(&loaded),
        pairs(&[
            ("NA", "NB"),
            ("NA", "NE"),
            ("NB", "NE"),
            ("NC", "ND"),
            ("ND", "NF"),
        ])
    );
    // Diagnosis names the same neighbours: of NA, NB and NE, the pin pairs
    // 1–12, 1–2 and 12–2 (pairs sorted by pin name).
    let near = harness::diagnose::neighbours(&loaded, &["NA".into(), "NB".into(), "NE".into()]);
    let s = |a: &str, b: &str| (a.to_string(), b.to_string());
    assert_eq!(
        near,
        vec![s("U4.1", "U4.12"), s("U4.1", "U4.2"), s("U4.12", "U4.2")]
    );
}

#[test]
fn the_bridge_distance_is_the_boards_to_set() {
    let (text, out) = import_csv("wider", CSV);
    // 1.4 mm also takes 3–13 (≈ 1.365 mm): NC with NF.
    let wider = format!("{text}\nbridge_distance_mm: 1.4\n");
    assert_eq!(
        adjacent_shorts(&load(&wider, &out)),
        pairs(&[
            ("NA", "NB"),
            ("NA", "NE"),
            ("NB", "NE"),
            ("NC", "ND"),
            ("NC", "NF"),
            ("ND", "NF"),
        ])
    );
    // 1.0 mm keeps only 3–4 (0.65) and 2–12 (≈ 0.973).
    let narrow = format!("{text}\nbridge_distance_mm: 1.0\n");
    assert_eq!(
        adjacent_shorts(&load(&narrow, &out)),
        pairs(&[("NB", "NE"), ("NC", "ND")])
    );
}

#[test]
fn without_coordinates_pin_numbers_decide() {
    // The same netlist without its x and y columns: the leaded-package rule
    // (pin n next to n + 1, common practice) pairs 1–2 (NA, NB), 2–3 (NB,
    // NC), 3–4 (NC, ND) and 12–13 (NE, NF); 4–5 and 11–12 reach pins on no
    // net, 7–10 are TAP pins.
    let plain: String = CSV
        .lines()
        .map(|l| l.splitn(4, ',').take(3).collect::<Vec<_>>().join(","))
        .collect::<Vec<_>>()
        .join("\n");
    let (text, out) = import_csv("plain", &plain);
    assert!(!text.contains("pads:"));
    assert_eq!(
        adjacent_shorts(&load(&text, &out)),
        pairs(&[("NA", "NB"), ("NB", "NC"), ("NC", "ND"), ("NE", "NF")])
    );
}

#[test]
fn bad_pads_and_distances_are_placed_errors() {
    let (text, out) = import_csv("bad", CSV);
    let err = |t: &str| {
        load_board_text(t, &out, &mut bsdl_files_beside(&out))
            .unwrap_err()
            .to_string()
    };
    // A pad for a pin SO24 does not have.
    let bad = text.replace("      \"13\": [6.2, 0.65]", "      \"99\": [6.2, 0.65]");
    let e = err(&bad);
    assert!(e.ends_with("device U4 has no pin or port `99`"), "{e}");
    let line = bad
        .lines()
        .position(|l| l.starts_with("      \"99\""))
        .unwrap()
        + 1;
    assert!(e.contains(&format!("board.yaml:{line}:7:")), "{e}");
    // Not a number.
    let bad = text.replace("[6.2, 0.65]", "[.nan, 0.65]");
    assert!(
        err(&bad).ends_with("device U4: the pad of pin 13 is not two finite numbers [x, y] in mm")
    );
    // A distance that is not positive.
    let bad = format!("{text}\nbridge_distance_mm: 0\n");
    let e = err(&bad);
    assert!(
        e.ends_with("bridge_distance_mm must be a positive number of millimetres, not 0"),
        "{e}"
    );
    let line = bad.lines().count();
    assert!(e.contains(&format!("board.yaml:{line}:1:")), "{e}");
}
