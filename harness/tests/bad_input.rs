//! Issue 19's reproductions for the harness readers: each was accepted (or
//! aborted, or misplaced) before, and is now refused at its place.

#[path = "support/demo.rs"]
mod demo_support;

use std::path::Path;

use demo_support::{demo, repo};
use harness::program::native::parse_native;
use harness::program::svf::read_svf;
use harness::program::MAX_SCAN_BITS;
use harness::scenario::{replay, HazardKind, HazardSet, ScenarioFile, Verdict};
use virtual_board::read_yaml;

fn native(text: &str) -> String {
    parse_native(text, Path::new("p.yaml"), demo())
        .map(|_| "read".to_string())
        .unwrap_or_else(|e| e.to_string())
}

#[test]
fn a_step_error_names_its_own_step_line() {
    // Step 2 holds a line starting with "- " inside it (a block list), which
    // the old line count took for a step: the error of step 3 named line 5.
    let text = "steps:
  - { port: J1_MAIN, reset: tms }
  - patterns:
      vectors:
        - drive: { LB_D0: 1 }
  - { port: J1_MAIN, goto: nowhere }
";
    let e = native(text);
    assert!(e.starts_with("p.yaml:6:5: step 3:"), "{e}");
}

#[test]
fn a_huge_native_scan_is_refused_not_aborted() {
    // Used to abort: "memory allocation of 125000000000 bytes failed".
    let text = "steps:
  - port: J1_MAIN
    scan_dr: { tdi: \"0x0\", length: 1000000000000 }
";
    assert_eq!(
        native(text),
        format!("p.yaml:2:5: step 1: scan length `1000000000000` is too large (at most {MAX_SCAN_BITS})")
    );
    // SVF says the same words for the same limit.
    let e = read_svf("SDR 16777217 TDI (0);", None, "J1_MAIN").unwrap_err();
    assert!(
        e.to_string().ends_with(&format!(
            "scan length `16777217` is too large (at most {MAX_SCAN_BITS})"
        )),
        "{e}"
    );
}

#[test]
fn idle_counts_above_the_limit_are_refused() {
    let text = "steps:\n  - { port: J1_MAIN, idle: 1000000000000 }\n";
    assert_eq!(
        native(text),
        "p.yaml:2:5: step 1: idle count `1000000000000` is too large (at most 4294967296 TCK cycles)"
    );
    let e = read_svf("RUNTEST 1E12 TCK;", None, "J1_MAIN").unwrap_err();
    assert!(
        e.to_string()
            .ends_with("RUNTEST run_count `1E12` is too large (at most 4294967296)"),
        "{e}"
    );
}

#[test]
fn a_frequency_must_be_hz_above_zero() {
    for (written, shown) in [("-1", "-1"), ("0", "0"), (".nan", "NaN"), (".inf", "inf")] {
        let text = format!("frequency: {written}\nsteps:\n  - {{ port: J1_MAIN, reset: tms }}\n");
        assert_eq!(
            native(&text),
            format!("p.yaml:1:12: frequency `{shown}` is not a number of Hz above zero"),
            "{written}"
        );
    }
}

#[test]
fn a_key_written_twice_in_a_program_names_both_lines() {
    let text = "name: a\nsteps:\n  - { port: J1_MAIN, reset: tms }\nname: b\n";
    assert_eq!(
        native(text),
        "p.yaml:4:1: key `name` is written twice in one mapping: on line 1 and on line 4"
    );
}

// ---- scenario files -------------------------------------------------------

fn scenario_error(text: &str) -> String {
    read_yaml::<ScenarioFile>(text)
        .map(|_| "read".to_string())
        .unwrap_or_else(|e| e.to_string())
}

const SCENARIO: &str = "description: d
board: ../boards/harbor_controller.yaml
programs:
  - file: ../programs/interconnect.yaml
    result: fail
";

#[test]
fn a_misspelt_result_is_refused_with_the_words_known() {
    // `result: fial` used to read as `pass`.
    assert_eq!(
        scenario_error(&SCENARIO.replace("fail", "fial")),
        "5:13: programs[0].result: unknown variant `fial`, expected `pass` or `fail`"
    );
    let (file, _) = read_yaml::<ScenarioFile>(SCENARIO).unwrap();
    let harness::scenario::ProgramEntry::Full(p) = &file.programs[0] else {
        panic!("a mapping entry");
    };
    assert_eq!(p.result, Verdict::Fail);
}

#[test]
fn a_misspelt_hazard_kind_is_refused() {
    // A misspelt kind in `hazards_absent` used to hold always: the check was off.
    let e = scenario_error(&format!("{SCENARIO}hazards_absent: [contension]\n"));
    assert!(
        e.starts_with(
            "6:18: hazards_absent[0]: unknown variant `contension`, expected one of `contention`"
        ),
        "{e}"
    );
    let e = scenario_error(&format!("{SCENARIO}hazards_absent: yes\n"));
    assert!(
        e.starts_with(
            "6:17: hazards_absent: invalid value: string \"yes\", expected `all` or a list of hazard kinds"
        ),
        "{e}"
    );
    let (file, _) =
        read_yaml::<ScenarioFile>(&format!("{SCENARIO}hazards_absent: [contention]\n")).unwrap();
    assert_eq!(
        file.hazards_absent,
        Some(HazardSet::List(vec![HazardKind::Contention]))
    );
}

#[test]
fn every_hazard_word_is_a_kind() {
    // The words scenario files write are the words the runner's hazards get.
    for kind in HazardKind::ALL {
        let (parsed, _) = read_yaml::<HazardKind>(kind.word()).unwrap();
        assert_eq!(parsed, kind);
    }
}

/// A scenario written into a fresh folder beside a copy-free board path.
fn replay_text(name: &str, text: &str) -> String {
    let folder = tempfile::Builder::new()
        .prefix(&format!("bt-bad-input-{name}-"))
        .tempdir()
        .unwrap();
    let dir = folder.path().to_path_buf();
    let path = dir.join("case.yaml");
    let text = text.replace(
        "../boards/",
        &format!("{}/", repo().join("scenarios/boards").display()),
    );
    let text = text.replace(
        "../programs/",
        &format!("{}/", repo().join("scenarios/programs").display()),
    );
    std::fs::write(&path, text).unwrap();
    let out = replay(&path)
        .map(|_| "replayed".to_string())
        .unwrap_or_else(|e| e.to_string());
    let _ = std::fs::remove_dir_all(&dir);
    out.replace(&path.display().to_string(), "case.yaml")
}

#[test]
fn scenario_errors_have_their_place() {
    // An unknown net in a defect: placed at the defect (numbered from 1).
    let text =
        format!("{SCENARIO}defects:\n  - {{ open: LB_D0 }}\n  - {{ stuck: NOPE, value: 1 }}\n");
    assert_eq!(
        replay_text("net", &text),
        "case.yaml:8:5: defect 2: unknown net or cluster pin `NOPE`"
    );
    // A missing board file: placed at `board:`, not `nope.yaml:0:0`.
    let text = SCENARIO.replace("../boards/harbor_controller.yaml", "nope.yaml");
    let e = replay_text("board", &text);
    assert!(e.starts_with("case.yaml:2:8: the board file "), "{e}");
    // Contradictory defects are refused, naming both.
    let text = format!(
        "{SCENARIO}defects:\n  - {{ stuck: LB_D0, value: 0 }}\n  - {{ stuck: LB_D0, value: 1 }}\n"
    );
    assert_eq!(
        replay_text("stuck", &text),
        "case.yaml:8:5: defect 2: this defect contradicts (LB_D0 stuck at 1 against LB_D0 stuck at 0) defect 1"
    );
}
