//! Diagnosis finds the injected fault for every single short and open of the
//! bundled scenarios, and says it in repair words.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use harness::diagnose::{diagnose, repair_words, DiagnoseOptions};
use harness::program::native::load_program;
use harness::run::{RunOptions, Runner};
use harness::scenario::{ProgramEntry, ScenarioFile};
use virtual_board::{load_board, BsdlError, DefectSpec, LoadedBoard};

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
