//! Issue 19 at the command line: exit codes a CI pipeline relies on, and
//! options checked against the board.

use std::process::Stdio;

use crate::cli::{boardtwin, repo, stderr_of, temp_dir, ExitsWith};

const BOARD: &str = "scenarios/boards/harbor_controller.yaml";

#[test]
fn a_failing_run_exits_1_even_when_stdout_closes_early() {
    // `boardtwin play … | head -0`: the reader leaves before any output.
    // Used to exit 0, which a pipeline takes for a pass.
    let mut child = boardtwin()
        .current_dir(repo())
        .args([
            "play",
            "--board",
            BOARD,
            "scenarios/programs/interconnect.yaml",
        ])
        .args([
            "--defect",
            "{ short: [LB_D0, LB_D1], behaviour: wired-and }",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("spawn boardtwin");
    drop(child.stdout.take());
    let status = child.wait().expect("wait");
    assert_eq!(status.code(), Some(1));
}

#[test]
fn compare_and_diagnose_refuse_a_port_the_board_lacks() {
    // Used to read the recording as port NOPE and call every scan missing.
    let dir = temp_dir("bad-port");
    let log = dir.join("x.jsonl");
    std::fs::write(&log, "").unwrap();
    for command in ["compare", "diagnose"] {
        let out = boardtwin()
            .current_dir(repo())
            .args([command, "--board", BOARD])
            .args(["--program", "scenarios/programs/interconnect.yaml"])
            .arg("--real")
            .arg(&log)
            .args(["--port", "NOPE"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "{command}: {}", stderr_of(&out));
        assert!(
            stderr_of(&out)
                .contains("error: the board has no TAP port `NOPE` (it has: J1_MAIN, J2_AUX)"),
            "{command}: {}",
            stderr_of(&out)
        );
    }
}

#[test]
fn contradictory_defects_are_refused_at_their_place() {
    let dir = temp_dir("contradiction");
    let list = dir.join("defects.yaml");
    std::fs::write(
        &list,
        "- { short: [LB_D0, LB_D1], behaviour: wired-and }\n- { open: LB_A0 }\n\
         - { short: [LB_D1, LB_D0], behaviour: wired-or }\n",
    )
    .unwrap();
    let out = boardtwin()
        .current_dir(repo())
        .args([
            "play",
            "--board",
            BOARD,
            "scenarios/programs/interconnect.yaml",
        ])
        .arg("--defects")
        .arg(&list)
        .exits(2);
    let stderr = stderr_of(&out);
    assert!(
        stderr.contains(&format!(
            "{}:3:3: defect 3: this defect contradicts",
            list.display()
        )),
        "{stderr}"
    );
    assert!(stderr.contains("defect 1"), "{stderr}");
}

#[test]
fn a_huge_text_file_given_as_a_board_gives_a_short_error() {
    // Used to quote the whole file: a 10 MB error.
    let dir = temp_dir("huge-board");
    let file = dir.join("b.yaml");
    std::fs::write(&file, "x".repeat(10_000_000)).unwrap();
    let out = boardtwin().arg("board").arg(&file).exits(2);
    let stderr = stderr_of(&out);
    assert!(
        stderr.len() < 1_000,
        "{} bytes: {:.300}",
        stderr.len(),
        stderr
    );
    assert!(
        stderr.contains(&format!(
            "{}:1:1: invalid type: string \"xxx",
            file.display()
        )),
        "{stderr}"
    );
}
