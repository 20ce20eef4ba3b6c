//! `boardtwin diagnose`: a one-port logic-analyzer recording and a wrong
//! device, through the command line, as text and JSON.

use std::process::Command;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir};

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
    .output()
    .unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", stderr_of(&out));
    let text = stdout_of(&out);
    assert!(
        text.contains("(TAP ports J1_MAIN) and are not compared"),
        "{text}"
    );
    assert!(
        text.contains("2 compared bits differ from the good board, on nets LB_D0, LB_D1"),
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
    let play = demo(&[
        "play",
        "--board",
        BOARD,
        program,
        "--defect",
        "{ wrong_device: U3, idcode: 0x35508A01 }",
        "--log",
    ])
    .arg(&log)
    .output()
    .unwrap();
    assert_eq!(play.status.code(), Some(1), "{}", stderr_of(&play));
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
    .output()
    .unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", stderr_of(&out));
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
    .output()
    .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr_of(&out).contains("`bridges` is not a fault class"),
        "{}",
        stderr_of(&out)
    );
}
