//! `device --cells` and `board --nets`: the detailed text views, checked against the BSDL
//! and board files they are read from.

#[path = "support/demo.rs"]
#[allow(dead_code)]
mod demo;

use std::process::Command;

fn boardtwin(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .args(args)
        .output()
        .expect("boardtwin runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

fn words(line: &str) -> Vec<&str> {
    line.split_whitespace().collect()
}

#[test]
fn device_cells_lists_every_cell_with_its_pin() {
    let bsd = demo::repo().join("scenarios/devices/qm7420_bus_bridge.bsd");
    let text = boardtwin(&["device", "--cells", bsd.to_str().unwrap()]);
    // The BSDL's BOUNDARY_REGISTER has 40 cells (BOUNDARY_LENGTH 40): one row each, plus the
    // title and the heading.
    assert_eq!(text.lines().count(), 2 + 40, "{text}");
    // Entry `"18 (BC_1, HOST_A(6), INPUT, X)"`, and HOST_A(6) bonded to pin 3 by the PIN_MAP
    // string `HOST_A:(2,3,4,5,7,8,9,10)` (element 7 first, so element 6 is pin 3).
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("18 "))
        .unwrap();
    assert_eq!(words(row), ["18", "BC_1", "HOST_A(6)", "3", "INPUT", "X"]);
    // Cells in order from 0 (nearest TDO).
    let first = text.lines().nth(2).unwrap();
    assert_eq!(words(first)[0], "0");
}

#[test]
fn board_nets_lists_every_net_with_pins_and_access() {
    let board = demo::repo().join("scenarios/boards/harbor_controller.yaml");
    let text = boardtwin(&["board", "--nets", board.to_str().unwrap()]);
    // The board file: `HOST_A6: [U5.F1, U1.HOST_A(6)]`; U1's HOST_A(6) is pin 3. U5 drives it
    // (J2_AUX), U1 reads it (J1_MAIN).
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("HOST_A6 "))
        .unwrap();
    assert_eq!(
        words(row),
        ["HOST_A6", "1", "1", "J1_MAIN", "J2_AUX", "U5.F1", "U1.3"]
    );
}
