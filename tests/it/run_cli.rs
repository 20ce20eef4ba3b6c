//! `boardtwin run`: the bundled scenarios, an unmet expectation, JSON output.

use serde_json::Value;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

#[test]
fn the_bundled_demo_runs_from_any_folder() {
    let dir = temp_dir("run-demo");
    let out = boardtwin().arg("run").current_dir(&dir).exits(0);
    let text = stdout_of(&out);
    assert!(text.contains("cases/good_board.yaml"), "{text}");
    let count = std::fs::read_dir(repo().join("scenarios/cases"))
        .unwrap()
        .count();
    assert!(
        text.contains(&format!("{count} scenarios, {count} met, 0 unmet")),
        "{text}"
    );
}

#[test]
fn the_demo_log_names_scenarios_as_the_table_does() {
    let dir = temp_dir("run-demo-log");
    let out = boardtwin().args(["run", "-vvv"]).current_dir(&dir).exits(0);
    let log = stderr_of(&out);
    // One `scenario{file=…}` span per bundled scenario, named below the
    // unpacked demo's folder; the temporary folder itself is never shown.
    let mut seen = 0;
    for entry in std::fs::read_dir(repo().join("scenarios/cases")).unwrap() {
        let name = entry.unwrap().file_name();
        let span = format!("scenario{{file=cases/{}}}", name.to_string_lossy());
        assert!(log.contains(&span), "{span} not in:\n{log}");
        seen += 1;
    }
    assert!(seen > 0, "no bundled scenario found");
    assert!(!log.contains("boardtwin-demo-"), "{log}");
    assert!(
        !log.contains(&std::env::temp_dir().display().to_string()),
        "{log}"
    );
}

#[test]
fn an_unmet_expectation_exits_1_and_says_why() {
    let dir = temp_dir("run-unmet");
    let file = dir.join("wrong.yaml");
    let board = repo().join("scenarios/boards/harbor_controller.yaml");
    let program = repo().join("scenarios/programs/interconnect.yaml");
    std::fs::write(
        &file,
        format!(
            "description: expects a failure the good board does not give\nboard: {}\nprograms:\n  - file: {}\n    result: fail\n",
            board.display(),
            program.display()
        ),
    )
    .unwrap();
    let out = boardtwin().args(["run", "--json"]).arg(&file).exits(1);
    let json: Value = serde_json::from_str(&stdout_of(&out)).expect("JSON");
    assert_eq!(json["unmet"], 1);
    let s = &json["scenarios"][0];
    assert_eq!(s["met"], false);
    assert_eq!(s["expected"], "fail");
    assert_eq!(s["outcome"], "all passed");
    let why = s["mismatches"][0].as_str().unwrap();
    assert!(why.ends_with("expected to fail, but it passed"), "{why}");
}

#[test]
fn a_bad_scenario_or_path_exits_2() {
    boardtwin().args(["run", "/no/such/place"]).exits(2);
    let dir = temp_dir("run-bad");
    let file = dir.join("bad.yaml");
    std::fs::write(
        &file,
        "description: x\nboard: b.yaml\nprograms: []\nsurprise: 1\n",
    )
    .unwrap();
    let out = boardtwin().arg("run").arg(&file).exits(2);
    assert!(
        stderr_of(&out).contains("unknown field `surprise`"),
        "{}",
        stderr_of(&out)
    );
}

/// Copies the repository's `scenarios/` into `to` (boards, devices, programs).
fn copy_scenarios(to: &std::path::Path) {
    fn copy(from: &std::path::Path, to: &std::path::Path) {
        std::fs::create_dir_all(to).unwrap();
        for e in std::fs::read_dir(from).unwrap().flatten() {
            let (src, dst) = (e.path(), to.join(e.file_name()));
            if src.is_dir() {
                copy(&src, &dst);
            } else {
                std::fs::copy(&src, &dst).unwrap();
            }
        }
    }
    copy(&repo().join("scenarios"), to);
}

#[test]
fn reports_show_scenario_paths_relative_to_the_current_folder_without_dot_dot() {
    let dir = temp_dir("run-paths");
    copy_scenarios(&dir.join("scenarios"));
    std::fs::write(
        dir.join("scenarios/cases/wrong.yaml"),
        "description: expects a failure the good board does not give\n\
         board: ../boards/harbor_controller.yaml\n\
         programs:\n  - file: ../programs/interconnect.yaml\n    result: fail\n",
    )
    .unwrap();
    // Given relative, and given absolute (below the current folder): the
    // same names, relative to the current folder, with no `..` steps.
    for given in [
        std::path::PathBuf::from("scenarios/cases/wrong.yaml"),
        dir.join("scenarios/cases/wrong.yaml"),
    ] {
        let out = boardtwin()
            .arg("run")
            .arg(&given)
            .current_dir(&*dir)
            .exits(1);
        let text = stdout_of(&out);
        assert!(
            text.contains("scenarios/programs/interconnect.yaml: expected to fail, but it passed"),
            "{text}"
        );
        assert!(text.contains("\nscenarios/cases/wrong.yaml"), "{text}");
        assert!(!text.contains(".."), "{text}");
        assert!(!text.contains(&dir.display().to_string()), "{text}");
    }

    // A program that is not there: the error names it the same way.
    std::fs::write(
        dir.join("scenarios/cases/missing.yaml"),
        "description: names a program that is not there\n\
         board: ../boards/harbor_controller.yaml\n\
         programs:\n  - ../programs/nope.yaml\n",
    )
    .unwrap();
    let out = boardtwin()
        .args(["run", "scenarios/cases/missing.yaml"])
        .current_dir(&*dir)
        .exits(2);
    let err = stderr_of(&out);
    assert!(
        err.contains(
            "scenarios/cases/missing.yaml:4:5: the program scenarios/programs/nope.yaml cannot be read"
        ),
        "{err}"
    );
}
