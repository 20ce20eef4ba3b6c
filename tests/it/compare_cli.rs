//! `boardtwin compare`: a run against captures of the good and a faulty board,
//! as capture logs and as a logic-analyzer VCD.

use std::process::Command;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

fn demo(args: &[&str]) -> Command {
    let mut cmd = boardtwin();
    cmd.current_dir(repo());
    cmd.args(args);
    cmd
}

const BOARD: &str = "scenarios/boards/harbor_controller.yaml";

#[test]
fn a_capture_of_the_good_board_matches() {
    let dir = temp_dir("compare-good");
    let log = dir.join("good.jsonl");
    demo(&[
        "play",
        "--board",
        BOARD,
        "scenarios/programs/infrastructure.yaml",
        "--log",
    ])
    .arg(&log)
    .exits(0);
    let out = demo(&[
        "compare",
        "--board",
        BOARD,
        "--program",
        "scenarios/programs/infrastructure.yaml",
        "--real",
    ])
    .arg(&log)
    .exits(0);
    let text = stdout_of(&out);
    // Round trip (the run against its own capture log), with a figure
    // worked out by hand from infrastructure.yaml: six scans of 12 + 10 +
    // 64 + 17 + 11 + 34 = 148 bits, of which the expectations leave out
    // 3 + 0 + 4 + 4 + 0 + 0 = 11 as X: 137 TDO bits compared.
    assert!(
        text.contains("6 scan pairs compared, 137 TDO bits compared"),
        "{text}"
    );
    assert!(text.trim_end().ends_with("MATCH"), "{text}");
}

#[test]
fn a_capture_of_a_shorted_board_names_the_differing_bits() {
    let dir = temp_dir("compare-short");
    let log = dir.join("short.jsonl");
    let program = "scenarios/programs/interconnect.yaml";
    let play = demo(&[
        "play",
        "--board",
        BOARD,
        program,
        "--defect",
        "{short: [LB_D0, LB_D1], behaviour: wired-and}",
        "--log",
    ])
    .arg(&log)
    .output()
    .unwrap();
    assert_eq!(
        play.status.code(),
        Some(1),
        "the short fails the test: {}",
        stderr_of(&play)
    );
    let out = demo(&["compare", "--board", BOARD, "--program", program, "--real"])
        .arg(&log)
        .exits(1);
    let text = stdout_of(&out);
    // Wired-AND: LB_D0 (code 0001) reads 0 in vector 0 and LB_D1 (code 0010)
    // reads 0 in vector 1, at U5's SW_IN(0) (cell 21, bit 33) and SW_IN(1)
    // (cell 22, bit 34); each vector's apply scan captures it too.
    for row in [
        "J2_AUX    7         7          33   1          0     U5      BOUNDARY  21    INPUT     SW_IN(0)  A1   LB_D0",
        "J2_AUX    9         9          33   1          0     U5      BOUNDARY  21    INPUT     SW_IN(0)  A1   LB_D0",
        "J2_AUX    11        11         34   1          0     U5      BOUNDARY  22    INPUT     SW_IN(1)  A2   LB_D1",
        "J2_AUX    13        13         34   1          0     U5      BOUNDARY  22    INPUT     SW_IN(1)  A2   LB_D1",
    ] {
        assert!(text.contains(row), "missing row `{row}` in\n{text}");
    }
    assert!(text.contains("4 TDO bits differ"), "{text}");
}

#[test]
fn a_logic_analyzer_vcd_is_decoded_and_compared() {
    let out = demo(&[
        "compare",
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
        "--json",
    ])
    .exits(1);
    let json: serde_json::Value = serde_json::from_str(&stdout_of(&out)).unwrap();
    let nets: std::collections::BTreeSet<&str> = json["bits"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|b| b["net"].as_str())
        .collect();
    assert_eq!(nets.into_iter().collect::<Vec<_>>(), ["LB_D0", "LB_D1"]);
    assert!(json["issues"].as_array().unwrap().is_empty());
}

#[test]
fn a_recording_without_the_named_wire_exits_2_naming_it() {
    let out = demo(&[
        "compare",
        "--board",
        BOARD,
        "--program",
        "scenarios/programs/interconnect.yaml",
        "--real",
        "scenarios/captures/j2_aux_lb_d0_d1_short.vcd",
        "--port",
        "J2_AUX",
        "--tck",
        "ch9_tck",
    ])
    .exits(2);
    let err = stderr_of(&out);
    assert!(
        err.contains("the recording has no signal `ch9_tck`"),
        "{err}"
    );
    assert!(err.contains("probe.ch0_tck"), "lists what is there: {err}");
}
