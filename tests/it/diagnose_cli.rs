//! `boardtwin diagnose`: a one-port logic-analyzer recording, a wrong
//! device, and a follow-up test that tells an ambiguity group apart,
//! through the command line, as text and JSON.

use std::process::Command;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

const BOARD: &str = "scenarios/boards/harbor_controller.yaml";

fn demo(args: &[&str]) -> Command {
    let mut cmd = boardtwin();
    cmd.current_dir(repo());
    cmd.args(args);
    cmd
}

// The README's recording holds J2_AUX only; LB_D0 (code 0001) and LB_D1
// (0010) bridged wired-AND read 0000 (modified counting sequence, Goel and
// McMahon, ITC 1982): one failing compared bit each.
#[test]
fn a_one_port_recording_names_the_short_and_the_unrecorded_port() {
    let out = demo(&[
        "diagnose",
        "--board",
        BOARD,
        "--program",
        "scenarios/programs/interconnect.yaml",
        "--real",
        "scenarios/captures/j2_aux_lb_d0_d1_short.vcd",
        "--port",
        "J2_AUX",
        "--tck",
        "ch0_tck",
        "--tms",
        "ch1_tms",
        "--tdi",
        "ch2_tdi",
        "--tdo",
        "ch3_tdo",
    ])
    .exits(1);
    let text = stdout_of(&out);
    assert!(
        text.contains("(TAP ports J1_MAIN) and are not compared"),
        "{text}"
    );
    // Each vector's response is read twice on J2_AUX and the program
    // compares the second read: the first reads (scans with no expected
    // value) differ as well, and `compare` on the same file counts all
    // four, two of them the program's.
    assert!(
        text.contains("2 compared bits differ from the good board, on nets LB_D0, LB_D1 (and 2 more TDO bits differ in scans the program does not compare)"),
        "{text}"
    );
    assert!(
        text.contains(
            "this explains the capture exactly:\n  short between nets LB_D0 and LB_D1 (wired-AND)"
        ),
        "{text}"
    );
    assert!(
        text.contains("neighbouring pins: U1.41/U1.42, U5.A1/U5.A2"),
        "{text}"
    );
}

// IDCODE 0x35508A01: version 3, part 0x5508, manufacturer 0x500 (IEEE
// 1149.1 clause 10 field layout, from memory).
#[test]
fn a_wrong_device_as_json() {
    let dir = temp_dir("diagnose-wrong-device");
    let log = dir.join("wrong.jsonl");
    let program = "scenarios/programs/infrastructure.yaml";
    demo(&[
        "play",
        "--board",
        BOARD,
        program,
        "--defect",
        "{ wrong_device: U3, idcode: 0x35508A01 }",
        "--log",
    ])
    .arg(&log)
    .exits(1);
    let out = demo(&[
        "diagnose",
        "--board",
        BOARD,
        "--program",
        program,
        "--json",
        "--real",
    ])
    .arg(&log)
    .exits(1);
    let v: serde_json::Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    assert_eq!(v["method"], "device");
    assert_eq!(v["devices"][0]["device"], "U3");
    assert_eq!(v["devices"][0]["idcode"][1]["version"], 3);
    assert_eq!(v["devices"][0]["idcode"][1]["part"], 0x5508);
    assert_eq!(v["devices"][0]["idcode"][1]["manufacturer"], 0x500);
    assert_eq!(v["exact"][0]["defects"][0]["wrong_device"], "U3");
}

#[test]
fn an_unknown_fault_class_is_bad_input() {
    let out = demo(&[
        "diagnose",
        "--board",
        BOARD,
        "--program",
        "scenarios/programs/interconnect.yaml",
        "--real",
        "scenarios/captures/j2_aux_lb_d0_d1_short.vcd",
        "--port",
        "J2_AUX",
        "--classes",
        "stuck,bridges",
    ])
    .exits(2);
    assert!(
        stderr_of(&out).contains("`bridges` is not a fault class"),
        "{}",
        stderr_of(&out)
    );
}

// The station's loop through the command line. interconnect.yaml codes
// LB_D0 0001, HOST_A6 1000 and HOST_A7 1001 (modified counting sequence,
// Goel and McMahon, ITC 1982): a wired-OR short of LB_D0 and HOST_A6 reads
// 1001 on both, HOST_A7's own code, so three shorts fit (aliasing, Jarwala
// and Yau, ITC 1989). Worked by hand (see harness/tests/diagnose_follow_up.rs),
// one vector with HOST_A7 at 0 and LB_D0 or HOST_A6 at 1 tells the three
// apart; the two captures diagnosed together name the short alone.
#[test]
fn a_follow_up_test_is_written_and_the_second_diagnosis_names_the_short() {
    let dir = temp_dir("diagnose-follow-up");
    let first = dir.join("first.jsonl");
    let second = dir.join("second.jsonl");
    let follow = dir.join("follow.yaml");
    let program = "scenarios/programs/interconnect.yaml";
    let defect = "{ short: [LB_D0, HOST_A6], behaviour: wired-or }";
    let play = |program: &std::path::Path, log: &std::path::Path| {
        demo(&["play", "--board", BOARD, "--defect", defect, "--log"])
            .arg(log)
            .arg(program)
            .exits(1);
    };
    play(std::path::Path::new(program), &first);
    let out = demo(&["diagnose", "--board", BOARD, "--program", program, "--real"])
        .arg(&first)
        .arg("--follow-up")
        .arg(&follow)
        .exits(1);
    let text = stdout_of(&out);
    assert!(text.contains("an ambiguity group"), "{text}");
    assert!(
        text.contains(&format!(
            "wrote {}: 1 vector over HOST_A6, HOST_A7, LB_D0 tells 3 of the 3 pairs of explanations apart (8 vectors tried, no fewer do)",
            follow.display()
        )),
        "{text}"
    );
    assert!(
        text.contains(&format!(
            "--program {} --real FOLLOW-UP-CAPTURE",
            follow.display()
        )),
        "{text}"
    );
    play(&follow, &second);
    let out = demo(&["diagnose", "--board", BOARD, "--program", program, "--real"])
        .arg(&first)
        .arg("--program")
        .arg(&follow)
        .arg("--real")
        .arg(&second)
        .arg("--follow-up")
        .arg(dir.join("not-needed.yaml"))
        .exits(1);
    let text = stdout_of(&out);
    assert!(
        text.contains(
            "this explains the capture exactly:\n  short between nets HOST_A6 and LB_D0 (wired-OR)"
        ),
        "{text}"
    );
    assert!(
        text.contains("no follow-up test written: one explanation fits the capture exactly"),
        "{text}"
    );
    assert!(!dir.join("not-needed.yaml").exists());
}

#[test]
fn the_follow_up_in_json_and_a_missing_recording() {
    let dir = temp_dir("diagnose-follow-up-json");
    let first = dir.join("first.jsonl");
    let program = "scenarios/programs/interconnect.yaml";
    demo(&[
        "play",
        "--board",
        BOARD,
        program,
        "--defect",
        "{ short: [LB_D0, HOST_A6], behaviour: wired-or }",
        "--log",
    ])
    .arg(&first)
    .exits(1);
    let follow = dir.join("follow.yaml");
    let out = demo(&[
        "diagnose",
        "--board",
        BOARD,
        "--program",
        program,
        "--json",
        "--real",
    ])
    .arg(&first)
    .arg("--follow-up")
    .arg(&follow)
    .exits(1);
    let v: serde_json::Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    assert_eq!(v["exact"].as_array().unwrap().len(), 3);
    assert_eq!(v["follow_up"]["vectors"].as_array().unwrap().len(), 1);
    assert_eq!(v["follow_up"]["vectors"][0]["HOST_A7"], 0);
    assert_eq!(v["follow_up"]["told_apart"], 3);
    assert_eq!(v["follow_up"]["file"], follow.display().to_string());
    // A second program without its recording is bad input.
    let out = demo(&["diagnose", "--board", BOARD, "--program", program, "--real"])
        .arg(&first)
        .arg("--program")
        .arg(&follow)
        .exits(2);
    assert!(
        stderr_of(&out).contains("give one --real for each --program"),
        "{}",
        stderr_of(&out)
    );
}
