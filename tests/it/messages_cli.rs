//! Output a person reads: `-q`, program errors placed once with a caret, the defect syntax in errors and help, `--defects` with a `defects:` mapping, plurals, lists without Rust's debug formatting, exit codes in `--help`.

use std::path::PathBuf;
use std::process::Output;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

fn board() -> PathBuf {
    repo().join("scenarios/boards/harbor_controller.yaml")
}

fn play(dir: &std::path::Path, args: &[&str]) -> Output {
    boardtwin()
        .arg("play")
        .arg("--board")
        .arg(board())
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run boardtwin play")
}

#[test]
fn quiet_leaves_stderr_empty_on_a_passing_run() {
    let program = repo().join("scenarios/programs/infrastructure.yaml");
    let loud = play(&repo(), &[program.to_str().unwrap()]);
    // Without -q the demo board's two design warnings show (model_notes_cli).
    assert_eq!(
        stderr_of(&loud).matches("design warning").count(),
        2,
        "{}",
        stderr_of(&loud)
    );
    let quiet = play(&repo(), &["-q", program.to_str().unwrap()]);
    assert_eq!(quiet.status.code(), Some(0), "{}", stderr_of(&quiet));
    assert_eq!(stderr_of(&quiet), "");
    // The same report, up to the statistics line (its wall time varies).
    let report = |o: &Output| {
        let text = stdout_of(o);
        let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
        lines.pop();
        lines
    };
    assert_eq!(report(&quiet), report(&loud));
}

#[test]
fn an_svf_error_names_its_place_once_and_shows_the_line_with_a_caret() {
    let dir = temp_dir("svf-error");
    std::fs::write(dir.join("e.svf"), "SIR 4 TDI (f);\nSDR 8 TDI (zz);\n").unwrap();
    let out = play(&dir, &["-q", "--port", "J1_MAIN", "e.svf"]);
    assert_eq!(out.status.code(), Some(2));
    // Column 12 is the first `z` (counted by hand).
    assert_eq!(
        stderr_of(&out),
        "error: e.svf:2:12: `z` is not a hex digit\n  |\n2 | SDR 8 TDI (zz);\n  |            ^\n"
    );
}

#[test]
fn a_yaml_program_error_names_its_place_once_and_shows_the_line_with_a_caret() {
    let dir = temp_dir("yaml-error");
    std::fs::write(dir.join("e.yaml"), "name: x\nsteps: 5\n").unwrap();
    let out = play(&dir, &["-q", "e.yaml"]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = stderr_of(&out);
    assert!(stderr.starts_with("error: e.yaml:2:8: steps: "), "{stderr}");
    // serde's own ` at line 2 column 8` is not repeated after the place.
    assert!(!stderr.contains("at line"), "{stderr}");
    assert!(stderr.ends_with("2 | steps: 5\n  |        ^\n"), "{stderr}");
}

#[test]
fn a_bad_defect_shows_the_defect_syntax_and_so_does_play_help() {
    let program = repo().join("scenarios/programs/interconnect.yaml");
    let out = play(
        &repo(),
        &[
            "-q",
            program.to_str().unwrap(),
            "--defect",
            "{shorted: [A, B]}",
        ],
    );
    assert_eq!(out.status.code(), Some(2));
    let stderr = stderr_of(&out);
    assert!(
        stderr.starts_with("error: --defect number 1: `{shorted: [A, B]}` is not a defect"),
        "{stderr}"
    );
    for form in [
        "{short: [A, B], behaviour: wired-and}",
        "{open: NET}",
        "{stuck: NET, value: 0}",
        "{broken_link: U1}",
        "{dead: U5}",
    ] {
        assert!(stderr.contains(form), "no `{form}` in:\n{stderr}");
    }
    let help = boardtwin().args(["play", "--help"]).exits(0);
    let help = stdout_of(&help);
    assert!(
        help.contains("{wrong_device: U3, idcode: 0x35508A01}"),
        "{help}"
    );
    assert!(help.contains("{tms_open: U2}"), "{help}");
}

#[test]
fn defects_may_come_from_a_scenario_file_with_a_defects_key() {
    // The wired-AND scenario's own expectation: scans 9 and 13 fail.
    let scenario = repo().join("scenarios/cases/short_wired_and.yaml");
    let program = repo().join("scenarios/programs/interconnect.yaml");
    let out = play(
        &repo(),
        &[
            "-q",
            "--json",
            program.to_str().unwrap(),
            "--defects",
            scenario.to_str().unwrap(),
        ],
    );
    assert_eq!(out.status.code(), Some(1), "{}", stderr_of(&out));
    let json: serde_json::Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    let failed: Vec<u64> = json["scan_records"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|r| r["passed"] == false)
        .map(|r| r["index"].as_u64().unwrap())
        .collect();
    assert_eq!(failed, [9, 13]);

    // A mapping without `defects:` is refused, saying both shapes.
    let dir = temp_dir("defects-shape");
    std::fs::write(dir.join("d.yaml"), "faults:\n  - {dead: U5}\n").unwrap();
    let out = play(
        &dir,
        &["-q", program.to_str().unwrap(), "--defects", "d.yaml"],
    );
    assert_eq!(out.status.code(), Some(2));
    let stderr = stderr_of(&out);
    assert!(stderr.starts_with("error: d.yaml:1:1: "), "{stderr}");
    assert!(
        stderr.contains("a YAML list of defects, or a mapping with a `defects:` list"),
        "{stderr}"
    );
}

#[test]
fn one_of_a_thing_is_singular() {
    let dir = temp_dir("singular");
    // One scan: all ones (BYPASS) into J1_MAIN's two IRs (4 + 8 bits).
    std::fs::write(
        dir.join("one.yaml"),
        "name: one scan\nsteps:\n  - { port: J1_MAIN, reset: tms }\n  - { port: J1_MAIN, scan_ir: { tdi: \"111111111111\" } }\n",
    )
    .unwrap();
    let out = play(&dir, &["-q", "one.yaml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let stdout = stdout_of(&out);
    let stats = stdout.lines().last().unwrap();
    assert!(stats.contains(" 1 scan (0 failed)"), "{stats}");

    let out = boardtwin()
        .args(["generate", "--infrastructure", "--board"])
        .arg(board())
        .arg("-o")
        .arg(dir.join("infra.yaml"))
        .output()
        .unwrap();
    // With -o the summary is the command's output, on stdout.
    assert!(stdout_of(&out).contains("infrastructure test of 2 TAP ports"));
}

#[test]
fn an_unmet_scenario_lists_scans_and_nets_in_plain_words() {
    let dir = temp_dir("unmet");
    let cases = repo().join("scenarios");
    // The wired-AND case with a wrong expectation of its own.
    let text = format!(
        "description: wrong on purpose\nboard: {}\ndefects:\n  - {{ short: [LB_D0, LB_D1], behaviour: wired-and }}\nprograms:\n  - file: {}\n    result: fail\n    failing_scans: [9, 14]\n    failing_nets: [LB_D0]\n",
        cases.join("boards/harbor_controller.yaml").display(),
        cases.join("programs/interconnect.yaml").display()
    );
    std::fs::write(dir.join("wrong.yaml"), text).unwrap();
    let out = boardtwin()
        .args(["-q", "run", "wrong.yaml"])
        .current_dir(&dir)
        .exits(1);
    let stdout = stdout_of(&out);
    assert!(
        stdout.contains("failing scans should be 9, 14, are 9, 13"),
        "{stdout}"
    );
    assert!(
        stdout.contains("failing nets should be LB_D0, are LB_D0, LB_D1"),
        "{stdout}"
    );
    assert!(!stdout.contains("{\""), "{stdout}");
    assert!(stdout.contains("\n1 scenario, 0 met, 1 unmet"), "{stdout}");
}

#[test]
fn campaign_diagnose_and_compare_help_give_their_exit_codes() {
    for (command, one) in [
        ("campaign", "1 some fault undetected"),
        ("campaign-merge", "1 some undetected"),
        ("diagnose", "1 it differs"),
        ("compare", "1 a scan or bit differs"),
    ] {
        let out = boardtwin().args([command, "--help"]).output().unwrap();
        let help = stdout_of(&out);
        assert!(help.contains("Exit status: 0 "), "{command}:\n{help}");
        assert!(help.contains(one), "{command}:\n{help}");
        assert!(help.contains("2 could not run"), "{command}:\n{help}");
    }
}
