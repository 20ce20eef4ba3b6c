//! Diagnosis finds the injected fault for every single short and open of the
//! bundled scenarios, names the cases (shorts between non-neighbours
//! in every behaviour, wrong and dead devices, a one-port recording) with the
//! expectations worked out by hand, and says it in repair words.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use harness::capture::{read_real_capture, WireNames};
use harness::diagnose::{diagnose, probes, repair_words, DiagnoseOptions, Diagnosis};
use harness::program::native::load_program;
use harness::program::Program;
use harness::run::{RunOptions, Runner, ScanRecord};
use harness::scenario::{ProgramEntry, ScenarioFile};
use virtual_board::{load_board, BsdlError, DefectSpec, LoadedBoard, ShortRule};

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn source(loaded: &LoadedBoard) -> impl FnMut(&Path) -> Result<(String, PathBuf), BsdlError> {
    virtual_board::bsdl_files_beside(&loaded.path)
}

/// Two defect entries name the same defect (a short's nets in any order).
fn same(a: &DefectSpec, b: &DefectSpec) -> bool {
    let nets = |d: &DefectSpec| {
        d.short
            .as_ref()
            .map(|v| v.iter().cloned().collect::<BTreeSet<_>>())
    };
    match (nets(a), nets(b)) {
        (Some(x), Some(y)) => {
            x == y
                && a.dominant == b.dominant
                && a.behaviour.unwrap_or_default() == b.behaviour.unwrap_or_default()
        }
        (None, None) => a.open == b.open,
        _ => false,
    }
}

#[test]
fn every_single_short_and_open_of_the_scenarios_is_found() {
    let dir = repo().join("scenarios/cases");
    let mut checked = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let file: ScenarioFile =
            serde_yaml::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        let [defect] = file.defects.as_slice() else {
            continue;
        };
        if defect.short.is_none() && defect.open.is_none() {
            continue;
        }
        let loaded = load_board(&dir.join(&file.board)).unwrap();
        let program_path = match &file.programs[0] {
            ProgramEntry::File(p) => dir.join(p),
            ProgramEntry::Full(x) => dir.join(&x.file),
        };
        let program = load_program(&program_path, &loaded, None).unwrap();
        // The "real" capture: the program run on the board with the defect.
        let faulty = loaded
            .with_defects(std::slice::from_ref(defect), &mut source(&loaded))
            .unwrap();
        let mut board = faulty.board;
        let report = Runner::new(&mut board, RunOptions::default()).run(&program);
        let capture: Vec<_> = report.scans.iter().map(|s| s.record.clone()).collect();
        let options = DiagnoseOptions {
            jobs: 2,
            ..Default::default()
        };
        let d = diagnose(&loaded, &program, &capture, &options).unwrap();
        assert!(d.failing_bits > 0, "{}", path.display());
        assert!(
            d.exact
                .iter()
                .any(|c| c.defects.len() == 1 && same(&c.defects[0], defect)),
            "{}: {} not among the exact matches {:?}",
            path.display(),
            defect.describe(),
            d.exact.iter().map(|c| &c.words).collect::<Vec<_>>()
        );
        checked += 1;
    }
    // short_wired_and, short_wired_or, short_dominant, open_net, open_pin
    // and cluster_pin_open.
    assert_eq!(checked, 6);
}

#[test]
fn repair_words_name_pins_and_chain_links() {
    let loaded = load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap();
    let open = DefectSpec {
        open: Some("U5.A3".into()),
        ..Default::default()
    };
    assert_eq!(repair_words(&loaded, &open), "open at U5 pin A3");
    let link = DefectSpec {
        broken_link: Some("U1".into()),
        ..Default::default()
    };
    assert_eq!(
        repair_words(&loaded, &link),
        "chain breaks between U1 and U3"
    );
    let last = DefectSpec {
        broken_link: Some("U4".into()),
        ..Default::default()
    };
    assert_eq!(
        repair_words(&loaded, &last),
        "chain breaks after U4 (its TDO to the J2_AUX connector)"
    );
    let short = DefectSpec {
        short: Some(vec!["LB_D0".into(), "LB_D1".into()]),
        ..Default::default()
    };
    assert_eq!(
        repair_words(&loaded, &short),
        "short between nets LB_D0 and LB_D1 (wired-AND)"
    );
}

fn demo() -> LoadedBoard {
    load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap()
}

/// The program run on the demo board with `defects`: the "real" capture.
fn capture_of(loaded: &LoadedBoard, program: &Program, defects: &[DefectSpec]) -> Vec<ScanRecord> {
    let faulty = loaded.with_defects(defects, &mut source(loaded)).unwrap();
    let mut board = faulty.board;
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    report.scans.into_iter().map(|s| s.record).collect()
}

fn diagnosed(program: &str, defect: &str) -> Diagnosis {
    let loaded = demo();
    let program = load_program(&repo().join(program), &loaded, None).unwrap();
    let defect: DefectSpec = serde_yaml::from_str(defect).unwrap();
    let capture = capture_of(&loaded, &program, &[defect]);
    let d = diagnose(&loaded, &program, &capture, &DiagnoseOptions::default()).unwrap();
    no_contradictions(&loaded, &d);
    d
}

/// No explanation names one net in two of its defects ("P1_2 stuck at 0,
/// and P1_2 stuck at 1"; "HOST_A6 stuck at 1, and open at HOST_A6").
fn no_contradictions(loaded: &LoadedBoard, d: &Diagnosis) {
    for c in d.exact.iter().chain(&d.nearest) {
        let mut seen = BTreeSet::new();
        for defect in &c.defects {
            for p in probes(loaded, std::slice::from_ref(defect)) {
                assert!(seen.insert(p.net.clone()), "{}", c.words);
            }
        }
    }
}

/// The exact matches as (nets, behaviour) with the nets sorted.
fn exact_shorts(d: &Diagnosis) -> BTreeSet<(Vec<String>, String)> {
    d.exact
        .iter()
        .map(|c| {
            assert_eq!(c.defects.len(), 1, "{}", c.words);
            let s = &c.defects[0];
            let mut nets = s.short.clone().unwrap_or_default();
            nets.sort();
            let how = match (&s.dominant, s.behaviour) {
                (Some(x), _) => format!("{x} dominant"),
                (None, Some(ShortRule::WiredOr)) => "wired-OR".into(),
                _ => "wired-AND".into(),
            };
            (nets, how)
        })
        .collect()
}

fn group(nets: &[&str], how: &str) -> (Vec<String>, String) {
    let mut v: Vec<String> = nets.iter().map(|s| s.to_string()).collect();
    v.sort();
    (v, how.to_string())
}

// interconnect.yaml gives LB_D0 code 1 (0001), HOST_A6 code 8 (1000) and
// HOST_A7 code 9 (1001) of the modified counting sequence (Goel and
// McMahon, ITC 1982), vector 0 the lowest bit. A wired-OR bridge makes
// LB_D0 and HOST_A6 read 0001 | 1000 = 1001 (one failing bit each), which
// is HOST_A7's own code: aliasing (Jarwala and Yau, ITC 1989, from memory).
// The exact explanations are therefore the short of the two, the same short
// with HOST_A7 in it, and both following HOST_A7 — and no pair of stuck nets.
#[test]
fn a_wired_or_short_between_non_neighbours_is_named_with_its_aliases() {
    let d = diagnosed(
        "scenarios/programs/interconnect.yaml",
        "{ short: [LB_D0, HOST_A6], behaviour: wired-or }",
    );
    assert_eq!(d.method, "syndrome");
    assert_eq!(d.failing_bits, 2);
    assert_eq!(d.nets_involved, ["HOST_A6", "LB_D0"]);
    assert_eq!(
        exact_shorts(&d),
        BTreeSet::from([
            group(&["LB_D0", "HOST_A6"], "wired-OR"),
            group(&["LB_D0", "HOST_A6", "HOST_A7"], "wired-OR"),
            group(&["LB_D0", "HOST_A6", "HOST_A7"], "HOST_A7 dominant"),
        ])
    );
    // Pins to probe: the board file's pins of each net.
    let short = d
        .exact
        .iter()
        .find(|c| c.defects[0].short.as_ref().unwrap().len() == 2)
        .unwrap();
    let pins: Vec<(&str, Vec<&str>)> = short
        .probes
        .iter()
        .map(|p| (p.net.as_str(), p.pins.iter().map(String::as_str).collect()))
        .collect();
    assert!(
        pins.contains(&("LB_D0", vec!["U1.42", "U5.A1"])),
        "{pins:?}"
    );
    assert!(
        pins.contains(&("HOST_A6", vec!["U5.F1", "U1.3"])),
        "{pins:?}"
    );
}

// Wired-AND: 0001 & 1000 = 0000 on both nets, a code the modified counting
// sequence never gives, so nothing aliases: the one short, not two stuck-at-0s.
#[test]
fn a_wired_and_short_between_non_neighbours_is_one_short() {
    let d = diagnosed(
        "scenarios/programs/interconnect.yaml",
        "{ short: [LB_D0, HOST_A6], behaviour: wired-and }",
    );
    assert_eq!(d.failing_bits, 2);
    assert_eq!(
        exact_shorts(&d),
        BTreeSet::from([group(&["LB_D0", "HOST_A6"], "wired-AND")])
    );
}

// LB_D2 (code 3, 0011) following HOST_A6 reads 1000, HOST_A6's own code, at
// three bits; no AND or OR with LB_D2's code gives 1000 (LB_D2 drives 1 in
// vectors 0 and 1 and 0 in vector 3), and only HOST_A6 has that code.
#[test]
fn a_dominant_short_names_the_net_followed() {
    let d = diagnosed(
        "scenarios/programs/interconnect.yaml",
        "{ short: [LB_D2, HOST_A6], dominant: HOST_A6 }",
    );
    assert_eq!(d.failing_bits, 3);
    assert_eq!(d.nets_involved, ["LB_D2"]);
    assert_eq!(
        exact_shorts(&d),
        BTreeSet::from([group(&["LB_D2", "HOST_A6"], "HOST_A6 dominant")])
    );
}

// IDCODE fields: version 31:28, part number 27:12, manufacturer 11:1, bit 0
// always 1 (IEEE 1149.1 clause 10, from memory). 0x25508A01 is version 0x2,
// part 0x5508, manufacturer 0x500; 0x35508A01 differs in the version only.
#[test]
fn a_wrong_device_is_named_with_both_idcodes_decoded() {
    let d = diagnosed(
        "scenarios/programs/infrastructure.yaml",
        "{ wrong_device: U3, idcode: 0x35508A01 }",
    );
    assert_eq!(d.method, "device");
    assert_eq!(d.devices_involved, ["U3"]);
    let f = &d.devices[0];
    let (want, got) = f.idcode.unwrap();
    assert_eq!(
        (want.version, want.part, want.manufacturer),
        (0x2, 0x5508, 0x500)
    );
    assert_eq!(
        (got.version, got.part, got.manufacturer),
        (0x3, 0x5508, 0x500)
    );
    assert_eq!(
        f.words,
        "wrong device at U3: IDCODE reads 0x35508A01 (version 0x3, part 0x5508, manufacturer 0x500) \
         where 0x25508A01 (version 0x2, part 0x5508, manufacturer 0x500) is expected: the same part \
         in another version"
    );
    assert_eq!(d.exact.len(), 1);
    assert_eq!(
        d.exact[0].words,
        "wrong device fitted at U3 (it reads IDCODE 0x35508A01)"
    );
}

#[test]
fn a_dead_device_is_named() {
    let d = diagnosed("scenarios/programs/infrastructure.yaml", "{ dead: U3 }");
    let words: Vec<&str> = d.exact.iter().map(|c| c.words.as_str()).collect();
    assert_eq!(words, ["dead device U3"]);
}

// The README's logic-analyzer recording holds J2_AUX only. LB_D0 (0001) and
// LB_D1 (0010) bridged wired-AND both read 0000: two compared bits, both on
// J2_AUX, where U5 receives them; J1_MAIN's scans are not compared at all.
#[test]
fn a_one_port_recording_is_compared_where_it_holds_data() {
    let loaded = demo();
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        &loaded,
        None,
    )
    .unwrap();
    let names = WireNames {
        tck: Some("ch0_tck".into()),
        tms: Some("ch1_tms".into()),
        tdi: Some("ch2_tdi".into()),
        tdo: Some("ch3_tdo".into()),
        trst: None,
    };
    let (real, _) = read_real_capture(
        &repo().join("scenarios/captures/j2_aux_lb_d0_d1_short.vcd"),
        &["J2_AUX".to_string()],
        &names,
        None,
    )
    .unwrap();
    let d = diagnose(&loaded, &program, &real, &DiagnoseOptions::default()).unwrap();
    assert_eq!(d.failing_bits, 2);
    assert_eq!(d.nets_involved, ["LB_D0", "LB_D1"]);
    assert!(!d.unrecorded_scans.is_empty());
    assert!(d.unrecorded_scans.iter().all(|s| s.port == "J1_MAIN"));
    assert!(d.recorded_bits < d.compared_bits);
    assert_eq!(
        exact_shorts(&d),
        BTreeSet::from([group(&["LB_D0", "LB_D1"], "wired-AND")])
    );
    // U1 pins 41 and 42 and U5 balls A1 and A2 are neighbours: where to look.
    assert_eq!(
        d.exact[0].neighbours,
        [
            ("U1.41".to_string(), "U1.42".to_string()),
            ("U5.A1".to_string(), "U5.A2".to_string())
        ]
    );
}
