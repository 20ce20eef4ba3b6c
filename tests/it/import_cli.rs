//! `boardtwin import` and `board --export-netlist`: the demo board's netlist
//! goes round through the command line (a round trip), and bad input exits 2
//! with a placed message and no board file written.

use serde_json::Value;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

#[test]
fn export_then_import_gives_a_board_that_loads_with_the_demo_chains() {
    let dir = temp_dir("import-round");
    let netlist = dir.join("hc.ipc");
    boardtwin()
        .args(["board", "scenarios/boards/harbor_controller.yaml"])
        .args(["--export-netlist", "ipc-d-356a", "-o"])
        .arg(&netlist)
        .current_dir(repo())
        .exits(0);
    assert!(std::fs::read_to_string(&netlist)
        .unwrap()
        .ends_with("999\n"));
    let board = dir.join("hc.yaml");
    let out = boardtwin()
        .arg("import")
        .arg(&netlist)
        .args([
            "--assembly",
            "scenarios/assembly/harbor_controller.yaml",
            "--json",
            "-o",
        ])
        .arg(&board)
        .current_dir(repo())
        .exits(0);
    let json: Value = serde_json::from_str(&stdout_of(&out)).expect("JSON");
    let chains: Vec<Vec<String>> = json["chains"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| serde_json::from_value(c["chain"].clone()).unwrap())
        .collect();
    assert_eq!(chains, [vec!["U1", "U3"], vec!["U2", "U5", "U4"]]);
    let loaded = virtual_board::load_board(&board).expect("the written board loads");
    assert_eq!(loaded.board.ports().len(), 2);
}

#[test]
fn a_bad_netlist_exits_2_placed_and_writes_nothing() {
    let dir = temp_dir("import-bad");
    let netlist = dir.join("bad.csv");
    std::fs::write(&netlist, "net,designator,pin\nA,U1,3\nB,U1,3\n").unwrap();
    let board = dir.join("out.yaml");
    let out = boardtwin()
        .arg("import")
        .arg(&netlist)
        .args([
            "--assembly",
            "scenarios/assembly/harbor_controller.yaml",
            "-o",
        ])
        .arg(&board)
        .current_dir(repo())
        .exits(2);
    assert!(
        stderr_of(&out).contains("bad.csv:3:3: pin U1-3 is on net B here and on net A at line 2"),
        "{}",
        stderr_of(&out)
    );
    assert!(!board.exists());
}

#[test]
fn an_unbalanced_edif_netlist_exits_2_placed_and_writes_nothing() {
    let dir = temp_dir("import-bad-edif");
    // `--format edif` reads a file whose name does not say; the list
    // opened on line 2, column 3 is never closed.
    let netlist = dir.join("bad.net");
    std::fs::write(&netlist, "(edif x\n  (library l\n").unwrap();
    let board = dir.join("out.yaml");
    let out = boardtwin()
        .arg("import")
        .arg(&netlist)
        .args([
            "--format",
            "edif",
            "--assembly",
            "scenarios/assembly/harbor_controller.yaml",
            "-o",
        ])
        .arg(&board)
        .current_dir(repo())
        .exits(2);
    assert!(
        stderr_of(&out).contains("bad.net:2:3: this list is never closed"),
        "{}",
        stderr_of(&out)
    );
    assert!(!board.exists());
}
