//! Round-trip tests of `import` (a program compared with its own output,
//! not an outside check): the demo board's netlist, exported as IPC-D-356A,
//! EDIF 2 0 0 and CSV, imported again with the demo assembly file, gives an
//! equivalent board and the same campaign result on the generated
//! interconnect test.

#[path = "support/demo.rs"]
mod demo;

use std::collections::BTreeMap;
use std::path::PathBuf;

use demo::{demo, repo};
use harness::campaign::{self, UniverseOptions};
use harness::generate::{interconnect_test, Method};
use harness::import::{self, NetlistFormat};
use virtual_board::{Board, LoadedBoard};

/// A scratch folder, removed when dropped.
fn scratch(name: &str) -> tempfile::TempDir {
    tempfile::Builder::new()
        .prefix(&format!("boardtwin-import-{name}-"))
        .tempdir()
        .unwrap()
}

/// What makes two boards the same for a test program: each electrical
/// net's pins, pull, rail and float; each TAP port's chain and TRST*.
/// A net's sorted pins, pull, rail, float policy and joined members.
type NetShape = (Vec<String>, Option<bool>, Option<bool>, String, Vec<String>);

#[derive(Debug, PartialEq)]
struct Shape {
    nets: BTreeMap<String, NetShape>,
    ports: Vec<(String, Vec<String>, bool)>,
    clusters: usize,
}

fn shape(b: &Board) -> Shape {
    let nets = b
        .nets()
        .iter()
        .map(|n| {
            let mut pins: Vec<String> = n
                .pins
                .iter()
                .map(|p| format!("{}.{}", p.device, p.pin))
                .collect();
            pins.sort();
            let mut members = n.members.clone();
            members.sort();
            (
                n.name.clone(),
                (pins, n.pull, n.rail, format!("{:?}", n.float), members),
            )
        })
        .collect();
    let ports = b
        .ports()
        .iter()
        .map(|p| {
            let chain = p
                .chain
                .iter()
                .map(|&d| b.devices()[d].designator().to_string())
                .collect();
            (p.name.clone(), chain, p.trst_wired)
        })
        .collect();
    Shape {
        nets,
        ports,
        clusters: b.clusters().len(),
    }
}

/// The imported board, the board file written and the folder holding it
/// (kept while the caller holds it).
fn export_and_import(
    format: NetlistFormat,
    ext: &str,
) -> (import::Imported, PathBuf, tempfile::TempDir) {
    let folder = scratch(ext);
    let dir = folder.path();
    let (pins, notes) = import::board_netlist(demo());
    let text = match format {
        NetlistFormat::Csv => import::write_csv(&pins),
        NetlistFormat::Ipc356 => import::write_ipc356(&pins, &notes),
        NetlistFormat::Edif => import::write_edif(&pins, &notes),
    };
    let netlist = dir.join(format!("harbor.{ext}"));
    std::fs::write(&netlist, text).unwrap();
    let out = dir.join("harbor.yaml");
    let imported = import::import(
        &netlist,
        format,
        &repo().join("scenarios/assembly/harbor_controller.yaml"),
        &out,
    )
    .unwrap();
    (imported, out, folder)
}

/// Verdict of every fault of the default universe.
fn campaign_verdicts(loaded: &LoadedBoard, program_of: &LoadedBoard) -> Vec<(String, String)> {
    let program = interconnect_test(&program_of.board, Method::ModifiedCounting)
        .unwrap()
        .program(program_of)
        .unwrap();
    let faults = campaign::universe(loaded, &UniverseOptions::default());
    let r = campaign::run_campaign(loaded, &program, &faults, 2, (1, 1), &|_| {}).unwrap();
    r.results
        .iter()
        .map(|f| (f.fault.label.clone(), f.verdict.clone()))
        .collect()
}

fn check_round_trip(format: NetlistFormat, ext: &str) {
    let (imported, _, _folder) = export_and_import(format, ext);
    let original = demo();
    assert_eq!(shape(&imported.board.board), shape(&original.board));
    assert_eq!(imported.report.chains.len(), 2);
    // The same campaign result on the generated interconnect test, the
    // program generated on each board and on the original's.
    let want = campaign_verdicts(original, original);
    assert!(want.iter().any(|(_, v)| v == "detected"));
    assert_eq!(campaign_verdicts(&imported.board, &imported.board), want);
    assert_eq!(campaign_verdicts(&imported.board, original), want);
}

#[test]
fn round_trip_ipc_d_356a_gives_the_same_board_and_campaign() {
    check_round_trip(NetlistFormat::Ipc356, "ipc");
}

#[test]
fn round_trip_edif_gives_the_same_board_and_campaign() {
    check_round_trip(NetlistFormat::Edif, "edf");
}

#[test]
fn round_trip_csv_gives_the_same_board_and_campaign() {
    check_round_trip(NetlistFormat::Csv, "csv");
}

#[test]
fn round_trip_board_file_is_stable_and_says_where_entries_came_from() {
    let (a, out, _a_folder) = export_and_import(NetlistFormat::Ipc356, "ipc-stable");
    let (b, _, _b_folder) = export_and_import(NetlistFormat::Ipc356, "ipc-stable2");
    // Same bytes apart from the netlist's file name on the first line and
    // the BSDL paths, which are relative to the output.
    let strip = |t: &str| -> Vec<String> {
        t.lines()
            .skip(1)
            .filter(|l| !l.trim_start().starts_with("bsdl:"))
            .map(String::from)
            .collect()
    };
    assert_eq!(strip(&a.text), strip(&b.text));
    assert!(a.text.contains("# found by following the TAP nets from J901: TDI net J1_MAIN_TDI → U1 → net J1_MAIN_LINK1 → U3 → net J1_MAIN_TDO"));
    assert!(a.text.contains("  - P3V3  # by name, confirmed by the BSDL linkage pins U1.VCC, U2.VCC, U3.VCC, U4.VDD, U5.VCC"));
    assert!(a
        .report
        .guesses
        .iter()
        .any(|g| g.starts_with("U5: package BG49 chosen")));
    // Written where it was made for, the BSDL paths point at the demo
    // devices from there (`import` itself writes nothing).
    assert!(!out.exists());
    std::fs::write(&out, &a.text).unwrap();
    let loaded = virtual_board::load_board(&out).unwrap();
    assert_eq!(loaded.board.devices().len(), 5);
}

/// Every scan device's pad centres (designator → pin → [x, y] in mm).
fn pads_of(loaded: &LoadedBoard) -> BTreeMap<String, BTreeMap<String, [f64; 2]>> {
    loaded
        .file
        .devices
        .iter()
        .map(|(d, e)| (d.clone(), e.pads.clone()))
        .collect()
}

/// The second demo board, imported from its netlist with pad centres,
/// exported as IPC-D-356A and as CSV and imported again, keeps every pad
/// (to the thousandth of a millimetre IPC-D-356A's `UNITS CUST 1` writes;
/// exactly through CSV).
#[test]
fn pads_go_round_through_ipc_d_356a_and_csv() {
    let assembly = repo().join("scenarios/assembly/quay_concentrator.yaml");
    let folder = scratch("pads");
    let first = import::import(
        &repo().join("scenarios/netlists/quay_concentrator.ipc"),
        NetlistFormat::Ipc356,
        &assembly,
        &folder.path().join("qd.yaml"),
    )
    .unwrap();
    let want = pads_of(&first.board);
    let pads: usize = want.values().map(BTreeMap::len).sum();
    assert!(pads > 100, "only {pads} pads on the second demo board");
    // The export names TAP connectors J901…: the same assembly with those,
    // its folders made absolute for the scratch folder.
    let text = std::fs::read_to_string(&assembly).unwrap();
    let scenarios = repo().join("scenarios");
    let text = text
        .replace("J11", "J901")
        .replace("J12", "J902")
        .replace("J13", "J903")
        .replace("../", &format!("{}/", scenarios.display()));
    let assembly = folder.path().join("qd-assembly.yaml");
    std::fs::write(&assembly, text).unwrap();
    let (pins, notes) = import::board_netlist(&first.board);
    for (format, ext, text, tolerance) in [
        (
            NetlistFormat::Ipc356,
            "ipc",
            import::write_ipc356(&pins, &notes),
            0.0005,
        ),
        (NetlistFormat::Csv, "csv", import::write_csv(&pins), 0.0),
    ] {
        let netlist = folder.path().join(format!("again.{ext}"));
        std::fs::write(&netlist, text).unwrap();
        let again = import::import(&netlist, format, &assembly, &folder.path().join("qd2.yaml"))
            .unwrap_or_else(|e| panic!("{ext}: {e}"));
        let got = pads_of(&again.board);
        assert_eq!(
            got.iter().map(|(d, p)| (d, p.len())).collect::<Vec<_>>(),
            want.iter().map(|(d, p)| (d, p.len())).collect::<Vec<_>>(),
            "{ext}: pads per device"
        );
        for (d, ps) in &want {
            for (pin, [x, y]) in ps {
                let [gx, gy] = got[d][pin];
                assert!(
                    (gx - x).abs() <= tolerance && (gy - y).abs() <= tolerance,
                    "{ext}: {d}.{pin} at [{gx}, {gy}], was [{x}, {y}]"
                );
            }
        }
    }
}
