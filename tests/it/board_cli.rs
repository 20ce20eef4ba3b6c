//! `boardtwin board`: the demo board's summary, and a located error for a bad board file.

use std::process::Command;

use serde_json::Value;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

fn board_cmd() -> Command {
    let mut cmd = boardtwin();
    cmd.arg("board");
    cmd
}

#[test]
fn the_demo_board_summary_matches_the_model() {
    let path = repo().join("scenarios/boards/harbor_controller.yaml");
    let out = board_cmd().arg(&path).arg("--json").exits(0);
    let json: Value = serde_json::from_str(&stdout_of(&out)).expect("JSON");
    let board = virtual_board::load_board(&path).expect("loads").board;
    assert_eq!(json["nets"], board.nets().len());
    let ports = json["tap_ports"].as_array().expect("ports");
    assert_eq!(ports.len(), board.ports().len());
    for (p, port) in ports.iter().zip(board.ports()) {
        assert_eq!(p["name"], port.name.as_str());
        let ir: usize = port
            .chain
            .iter()
            .map(|&d| board.devices()[d].model().ir_length)
            .sum();
        assert_eq!(p["ir_length"], ir);
        let order: Vec<&str> = port
            .chain
            .iter()
            .map(|&d| board.devices()[d].designator())
            .collect();
        let listed: Vec<&str> = p["devices"]
            .as_array()
            .unwrap()
            .iter()
            .map(|d| d["designator"].as_str().unwrap())
            .collect();
        assert_eq!(listed, order, "TDI-to-TDO order");
    }
    // The demo board was built to have nets crossing its two TAP ports.
    assert!(json["nets_crossing_ports"].as_u64().unwrap() >= 8);
    let text = board_cmd().arg(&path).output().expect("runs");
    assert!(
        stdout_of(&text).contains("TAP port J1_MAIN: 2 devices, IR 12 bits"),
        "{}",
        stdout_of(&text)
    );
}

#[test]
fn a_bad_board_file_exits_2_naming_its_place() {
    let dir = temp_dir("badboard");
    let file = dir.join("b.yaml");
    let devices = repo().join("scenarios/devices");
    std::fs::write(
        &file,
        format!(
            "devices:\n  U1: {{ bsdl: {}/qm7420_bus_bridge.bsd }}\ntap_ports:\n  - {{ name: P, chain: [U1] }}\nnets:\n  N: [U1.LB_D(0), U7.3]\n",
            devices.display()
        ),
    )
    .unwrap();
    let out = board_cmd().arg(&file).exits(2);
    let err = stderr_of(&out);
    assert!(
        err.contains(&format!("{}:6:19: unknown device `U7`", file.display())),
        "{err}"
    );
    assert!(err.contains("^^^^"), "a caret under the place: {err}");
}
