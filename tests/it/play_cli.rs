//! `boardtwin play`: the demo programs pass, wrong expectations fail with the bit placed on the board, bad input exits 2 with its place, and the capture log and VCD files.

use std::collections::VecDeque;
use std::path::{Path, PathBuf};
use std::process::Output;

use predicates::prelude::*;
use serde_json::Value;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir};

fn board() -> PathBuf {
    repo().join("scenarios/boards/harbor_controller.yaml")
}

fn demo(name: &str) -> PathBuf {
    repo().join("scenarios/programs").join(name)
}

fn play(program: &Path, extra: &[&str]) -> Output {
    boardtwin()
        .arg("play")
        .arg("--board")
        .arg(board())
        .arg(program)
        .args(extra)
        .output()
        .expect("run boardtwin play")
}

fn json_of(output: &Output) -> Value {
    serde_json::from_str(&stdout_of(output))
        .unwrap_or_else(|e| panic!("not JSON: {e}\n{}", stdout_of(output)))
}

/// The `error: …` line of stderr (the board's BSDL warnings come first).
fn error_line(output: &Output) -> String {
    let stderr = stderr_of(output);
    stderr
        .lines()
        .find(|l| l.starts_with("error: "))
        .unwrap_or_else(|| panic!("no error line in stderr:\n{stderr}"))
        .to_string()
}

/// 1-based line and column of the first `needle` in `text`.
fn place_of(text: &str, needle: &str) -> (usize, usize) {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in the text"));
    let line = text[..at].matches('\n').count() + 1;
    let start = text[..at].rfind('\n').map_or(0, |i| i + 1);
    (line, text[start..at].chars().count() + 1)
}

// ---------------------------------------------------------------------------
// The IEEE 1149.1 TAP state diagram, written here from memory of clause 6
// (the 16-state diagram), independent
// of `virtual_board::TapState`, to count TCK cycles from outside the project.
// ---------------------------------------------------------------------------

const TLR: usize = 0; // Test-Logic-Reset
const RTI: usize = 1; // Run-Test/Idle
const SHIFT_DR: usize = 4;
const EXIT1_DR: usize = 5;
const SHIFT_IR: usize = 11;
const EXIT1_IR: usize = 12;

/// `NEXT[state] = [state after TMS=0, state after TMS=1]`. Order: TLR, RTI,
/// Select-DR, Capture-DR, Shift-DR, Exit1-DR, Pause-DR, Exit2-DR, Update-DR,
/// Select-IR, Capture-IR, Shift-IR, Exit1-IR, Pause-IR, Exit2-IR, Update-IR.
const NEXT: [[usize; 2]; 16] = [
    [1, 0],   // Test-Logic-Reset: 0 → Run-Test/Idle, 1 → stays
    [1, 2],   // Run-Test/Idle: 0 → stays, 1 → Select-DR-Scan
    [3, 9],   // Select-DR-Scan: 0 → Capture-DR, 1 → Select-IR-Scan
    [4, 5],   // Capture-DR: 0 → Shift-DR, 1 → Exit1-DR
    [4, 5],   // Shift-DR: 0 → stays, 1 → Exit1-DR
    [6, 8],   // Exit1-DR: 0 → Pause-DR, 1 → Update-DR
    [6, 7],   // Pause-DR: 0 → stays, 1 → Exit2-DR
    [4, 8],   // Exit2-DR: 0 → Shift-DR, 1 → Update-DR
    [1, 2],   // Update-DR: 0 → Run-Test/Idle, 1 → Select-DR-Scan
    [10, 0],  // Select-IR-Scan: 0 → Capture-IR, 1 → Test-Logic-Reset
    [11, 12], // Capture-IR: 0 → Shift-IR, 1 → Exit1-IR
    [11, 12], // Shift-IR: 0 → stays, 1 → Exit1-IR
    [13, 15], // Exit1-IR: 0 → Pause-IR, 1 → Update-IR
    [13, 14], // Pause-IR: 0 → stays, 1 → Exit2-IR
    [11, 15], // Exit2-IR: 0 → Shift-IR, 1 → Update-IR
    [1, 2],   // Update-IR: 0 → Run-Test/Idle, 1 → Select-DR-Scan
];

/// TCK cycles of the shortest TMS path from `from` to `to` (breadth-first).
fn tms_steps(from: usize, to: usize) -> u64 {
    let mut dist = [u64::MAX; 16];
    dist[from] = 0;
    let mut queue = VecDeque::from([from]);
    while let Some(s) = queue.pop_front() {
        for &n in &NEXT[s] {
            if dist[n] == u64::MAX {
                dist[n] = dist[s] + 1;
                queue.push_back(n);
            }
        }
    }
    dist[to]
}

/// What a step of infrastructure.yaml does to one TAP port.
enum Op {
    /// `reset: trst`: TRST* low for one TCK period, then released.
    Trst,
    /// `reset: tms`: five TCK with TMS high.
    TmsReset,
    /// An IR scan of this many bits, ending in Run-Test/Idle.
    Ir(u64),
    /// A DR scan of this many bits, ending in Run-Test/Idle.
    Dr(u64),
}

/// TCK cycles for `ops` on one port, from Test-Logic-Reset (the state after
/// power-up, IEEE 1149.1 clause 6, from memory).
fn tck_cycles(ops: &[Op]) -> u64 {
    let mut state = TLR;
    let mut cycles = 0;
    for op in ops {
        match op {
            // TRST* needs no TCK (asynchronous, IEEE 1149.1 clause 6, from
            // memory): asserting and releasing it clocks nothing.
            Op::Trst => {
                state = TLR;
            }
            // Five TCK with TMS high reach Test-Logic-Reset from any state
            // (IEEE 1149.1 clause 6, from memory).
            Op::TmsReset => {
                cycles += 5;
                state = TLR;
            }
            // Shortest path to Shift-xR; one rising edge per bit in Shift-xR,
            // the last with TMS high into Exit1-xR; then the shortest path
            // to Run-Test/Idle (IEEE 1149.1 clause 6, from memory).
            Op::Ir(n) | Op::Dr(n) => {
                let (shift, exit1) = match op {
                    Op::Ir(_) => (SHIFT_IR, EXIT1_IR),
                    _ => (SHIFT_DR, EXIT1_DR),
                };
                cycles += tms_steps(state, shift) + n + tms_steps(exit1, RTI);
                state = RTI;
            }
        }
    }
    cycles
}

/// infrastructure.yaml, step by step, per port (read off the file).
fn infrastructure_ops() -> (Vec<Op>, Vec<Op>) {
    let j1 = vec![
        Op::Trst,
        Op::TmsReset,
        Op::Ir(12),
        Op::Dr(10),
        Op::TmsReset,
        Op::Dr(64),
    ];
    let j2 = vec![
        Op::TmsReset,
        Op::Ir(17),
        Op::Dr(11),
        Op::TmsReset,
        Op::Dr(34),
    ];
    (j1, j2)
}

#[test]
fn the_state_diagram_gives_the_textbook_path_lengths() {
    // IEEE 1149.1 clause 6 (from memory): Test-Logic-Reset to Shift-IR is
    // TMS 0,1,1,0,0 (5 TCK), to Shift-DR is 0,1,0,0 (4); Run-Test/Idle to
    // Shift-DR is 1,0,0 (3); Exit1-xR to Run-Test/Idle is 1,0 (2).
    assert_eq!(tms_steps(TLR, SHIFT_IR), 5);
    assert_eq!(tms_steps(TLR, SHIFT_DR), 4);
    assert_eq!(tms_steps(RTI, SHIFT_DR), 3);
    assert_eq!(tms_steps(RTI, SHIFT_IR), 4);
    assert_eq!(tms_steps(EXIT1_IR, RTI), 2);
    assert_eq!(tms_steps(EXIT1_DR, RTI), 2);
    // Three TMS-high steps from Run-Test/Idle reach Test-Logic-Reset.
    assert_eq!(tms_steps(RTI, TLR), 3);
    // The same count written out by hand for infrastructure.yaml:
    // J1_MAIN 0 (TRST*) + 5 + (5+12+2) + (3+10+2) + 5 + (4+64+2) = 114
    // J2_AUX  5 + (5+17+2) + (3+11+2) + 5 + (4+34+2)             = 90
    let (j1, j2) = infrastructure_ops();
    assert_eq!(
        tck_cycles(&j1),
        5 + (5 + 12 + 2) + (3 + 10 + 2) + 5 + (4 + 64 + 2)
    );
    assert_eq!(
        tck_cycles(&j2),
        5 + (5 + 17 + 2) + (3 + 11 + 2) + 5 + (4 + 34 + 2)
    );
}

/// `<n> TCK cycles, <m> scans (0 failed), … at 10.0 MHz TCK, … wall, …cycles/s`
/// (followed by the TCK bound line for a compiled interconnect test).
fn statistics_of(stdout: &str) -> (u64, usize) {
    // The last line but the TCK bound of a compiled interconnect test.
    let line = stdout
        .lines()
        .rev()
        .find(|l| l.contains(" TCK cycles, "))
        .expect("a statistics line");
    let shape = predicate::str::is_match(
        r"^[0-9]+ TCK cycles, [0-9]+ scans \(0 failed\), [0-9.]+ (s|ms|µs) at 10\.0 MHz TCK, [0-9.]+ (s|ms|µs) wall, [0-9.]+ [kMG]?cycles/s$",
    )
    .expect("regex");
    assert!(shape.eval(line), "statistics line: {line}");
    let words: Vec<&str> = line.split_whitespace().collect();
    (words[0].parse().unwrap(), words[3].parse().unwrap())
}

#[test]
fn the_demo_programs_pass_with_a_statistics_line() {
    let (j1, j2) = infrastructure_ops();
    let infrastructure_cycles = tck_cycles(&j1) + tck_cycles(&j2);
    for (name, scans) in [("infrastructure.yaml", 6), ("interconnect.yaml", 24)] {
        let out = play(&demo(name), &[]);
        assert_eq!(out.status.code(), Some(0), "{name}: {}", stderr_of(&out));
        let text = stdout_of(&out);
        assert!(text.lines().any(|l| l == "PASSED"), "{name}:\n{text}");
        let (cycles, m) = statistics_of(&text);
        assert_eq!(m, scans, "{name}");

        let out = play(&demo(name), &["--json"]);
        assert_eq!(out.status.code(), Some(0), "{name}");
        let json = json_of(&out);
        assert_eq!(json["passed"], true, "{name}");
        assert_eq!(json["scans"], scans, "{name}");
        assert_eq!(json["failed_scans"], 0, "{name}");
        assert_eq!(json["tck_cycles"], cycles, "{name}");
        assert!(
            json["wall_seconds"].as_f64().is_some_and(|s| s >= 0.0),
            "{name}"
        );
        assert_eq!(json["hazards"], serde_json::json!([]), "{name}");
        if name == "infrastructure.yaml" {
            // The outside check: the count from the state diagram above.
            assert_eq!(cycles, infrastructure_cycles);
        }
    }
}

#[test]
fn a_wrong_idcode_bit_fails_and_names_the_register() {
    let dir = temp_dir("play-idcode");
    let text = std::fs::read_to_string(demo("infrastructure.yaml")).unwrap();
    // U3's IDCODE as its BSDL writes it, bit 31 first (0x25508A01: version
    // 0010, part number 0x5508, manufacturer 1010_0000000, 1).
    let u3 = "00100101010100001000101000000001";
    assert_eq!(text.matches(u3).count(), 1);
    // Flip the last (least significant) bit of the part number: IDCODE bit
    // 12 (IEEE 1149.1 clause 10, from memory: bits 27:12 are the part number).
    let mut flipped: Vec<char> = u3.chars().collect();
    flipped[31 - 12] = '1';
    let flipped: String = flipped.into_iter().collect();
    let path = dir.join("wrong_idcode.yaml");
    std::fs::write(&path, text.replace(u3, &flipped)).unwrap();

    let out = play(&path, &[]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr_of(&out));
    let stdout = stdout_of(&out);
    assert!(stdout.lines().any(|l| l == "FAILED"), "{stdout}");
    // The 64-bit J1_MAIN DR scan is scan 2; U3 sits nearest TDO, so its
    // IDCODE bit 12 is scan bit 12. DEVICE_ID is U3's name for the register
    // (qm5508_port_controller.bsd, REGISTER_ACCESS).
    let rows = failing_rows(&stdout);
    assert_eq!(
        rows,
        [vec![
            "2",
            "12",
            "1",
            "0",
            "U3",
            "DEVICE_ID",
            "12",
            "-",
            "-",
            "-",
            "-"
        ]],
        "{stdout}"
    );
    assert!(stdout.contains("6 scans (1 failed)"), "{stdout}");

    let json = json_of(&play(&path, &["--json"]));
    assert_eq!(json["passed"], false);
    assert_eq!(json["failed_scans"], 1);
    let bit = &json["failing_bits"][0];
    assert_eq!(bit["scan"], 2);
    assert_eq!(bit["bit"], 12);
    assert_eq!(bit["expected"], true);
    assert_eq!(bit["captured"], false);
    assert_eq!(bit["device"], "U3");
    assert_eq!(bit["register"], "DEVICE_ID");
    let _ = std::fs::remove_dir_all(&dir);
}

/// The rows of the `failing bits` table, split into columns.
fn failing_rows(stdout: &str) -> Vec<Vec<&str>> {
    let mut lines = stdout.lines().skip_while(|l| *l != "failing bits").skip(1);
    let header: Vec<&str> = lines.next().expect("a header").split_whitespace().collect();
    assert_eq!(
        header,
        [
            "scan", "bit", "expected", "captured", "device", "register", "cell", "function",
            "port", "pin", "net"
        ]
    );
    lines
        .take_while(|l| !l.trim().is_empty())
        .map(|l| l.split_whitespace().collect())
        .collect()
}

#[test]
fn a_wrong_boundary_bit_names_the_receiving_pin_and_net() {
    let dir = temp_dir("play-boundary");
    let text = std::fs::read_to_string(demo("interconnect.yaml")).unwrap();
    // Vector 1 ("code bit 0") drives LB_D0 to 1; expect 0 instead.
    let old = "expect: { LB_D0: 1,";
    assert_eq!(text.matches(old).count(), 1);
    let path = dir.join("wrong_boundary.yaml");
    std::fs::write(&path, text.replace(old, "expect: { LB_D0: 0,")).unwrap();

    let out = play(&path, &[]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr_of(&out));
    let stdout = stdout_of(&out);
    assert!(stdout.lines().any(|l| l == "FAILED"), "{stdout}");
    // Looked up in the demo files:
    // - harbor_controller.yaml: `LB_D0: [U1.LB_D(0), U5.A1]`; U5 uses the
    //   BG49 pin map, where SW_IN(0) is ball A1 (qm3310_io_expander.bsd).
    // - qm3310_io_expander.bsd: cell 21 is `(BC_4, SW_IN(0), INPUT, X)`.
    // - J2_AUX is TDI → U2 → U5 → U4 → TDO; U4 (12 boundary cells, in EXTEST
    //   as the CLK_25M_A driver) is nearest TDO, so U5's cell 21 is scan bit
    //   12 + 21 = 33.
    // - Scans: 0-3 PRELOAD (IR, DR per port), 4-5 EXTEST, 6-7 apply
    //   vector 1, 8 J1_MAIN capture, 9 J2_AUX capture.
    let rows = failing_rows(&stdout);
    assert_eq!(
        rows,
        [vec![
            "9", "33", "0", "1", "U5", "BOUNDARY", "21", "INPUT", "SW_IN(0)", "A1", "LB_D0"
        ]],
        "{stdout}"
    );
    assert!(stdout.contains("24 scans (1 failed)"), "{stdout}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Nets of the demo board with no scan driver and with no scan receiver,
/// as `boardtwin board --json` lists them.
fn nets_without(key: &str) -> Vec<String> {
    let out = boardtwin()
        .arg("board")
        .arg(board())
        .arg("--json")
        .output()
        .expect("run boardtwin board");
    let json = json_of(&out);
    json["net_access"]
        .as_array()
        .expect("net_access")
        .iter()
        .filter(|n| n[key] == 0 && n["tie"] != "power" && n["tie"] != "ground")
        .map(|n| n["name"].as_str().unwrap().to_string())
        .collect()
}

/// Writes `text` as a program, plays it, and checks exit 2, nothing on
/// stdout, and an error line `error: <path>:<line>:<col>: <message…>` with the
/// place of `at` in the text.
fn bad_program(dir: &Path, name: &str, text: &str, at: &str, message: &str) {
    bad_program_with(dir, name, text, at, message, &[]);
}

/// [`bad_program`] with more arguments for `boardtwin play`.
fn bad_program_with(dir: &Path, name: &str, text: &str, at: &str, message: &str, extra: &[&str]) {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    let out = play(&path, extra);
    assert_eq!(out.status.code(), Some(2), "{name}: {}", stderr_of(&out));
    assert_eq!(stdout_of(&out), "", "{name}: nothing on stdout");
    let (line, column) = place_of(text, at);
    let error = error_line(&out);
    let want = format!("error: {}:{line}:{column}: {message}", path.display());
    assert!(
        error.starts_with(&want),
        "{name}:\n got: {error}\nwant: {want}…"
    );
    assert!(
        !error.contains(" at line "),
        "{name}: the place is given once: {error}"
    );
}

#[test]
fn bad_programs_exit_2_with_their_place() {
    let dir = temp_dir("play-bad");
    bad_program(
        &dir,
        "unknown_key.yaml",
        "name: x\nsteps:\n  - { port: J1_MAIN, reset: tms, colour: red }\n",
        "colour",
        "steps[0]: unknown field `colour`",
    );
    bad_program(
        &dir,
        "bad_bits.yaml",
        "name: x\nsteps:\n  - port: J1_MAIN\n    scan_ir: { tdi: \"1021\", expect: \"0101\" }\n",
        "port: J1_MAIN\n    scan_ir",
        "step 1: `1021`: `2` is not 0, 1 or X",
    );
    bad_program(
        &dir,
        "unknown_port.yaml",
        "name: x\nsteps:\n  - { port: J1_MAIN, reset: tms }\n  - { port: J9_NONE, reset: tms }\n",
        "{ port: J9",
        "step 2: the board has no TAP port `J9_NONE` (it has: J1_MAIN, J2_AUX)",
    );
    bad_program(
        &dir,
        "unknown_net.yaml",
        "steps:\n  - patterns:\n      vectors:\n        - drive: { X: 1 }\n",
        "patterns",
        "step 1: unknown net `X`",
    );
    // J2_AUX has no TRST* line (harbor_controller.yaml: `trst: false`):
    // asserting it would not reset the TAP, in a native step or in SVF.
    let no_trst = "TAP port `J2_AUX` has no TRST* line on this board";
    bad_program(
        &dir,
        "no_trst.yaml",
        "steps:\n  - { port: J2_AUX, reset: tms }\n  - { port: J2_AUX, reset: trst }\n",
        "- { port: J2_AUX, reset: trst",
        no_trst,
    );
    bad_program_with(
        &dir,
        "no_trst.svf",
        "STATE RESET;\n  TRST ON;\nTRST OFF;\n",
        "TRST ON",
        no_trst,
        &["--port", "J2_AUX"],
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn impossible_patterns_exit_2_naming_the_net() {
    let dir = temp_dir("play-patterns");
    // A net that can only be observed, and one that can only be driven.
    let undriven = nets_without("scan_drivers");
    let unread = nets_without("scan_receivers");
    assert!(undriven.contains(&"BRD_ID0".to_string()), "{undriven:?}");
    assert!(unread.contains(&"LED_RUN".to_string()), "{unread:?}");
    bad_program(
        &dir,
        "no_driver.yaml",
        "steps:\n  - patterns:\n      vectors:\n        - drive: { BRD_ID0: 1 }\n",
        "patterns",
        "step 1: vector 1: net BRD_ID0 has no scan driver",
    );
    bad_program(
        &dir,
        "no_receiver.yaml",
        "steps:\n  - patterns:\n      vectors:\n        - drive: { LB_D0: 1 }\n          expect: { LED_RUN: 1 }\n",
        "patterns",
        "step 1: vector 1: net LED_RUN has no scan receiver",
    );
    // `LB_D0: [U1.LB_D(0), U5.A1]`: U5's pin is SW_IN(0), an INPUT cell
    // (qm3310_io_expander.bsd cell 21), so U5 cannot drive the net.
    bad_program(
        &dir,
        "from_a_receiver.yaml",
        "steps:\n  - patterns:\n      from: { LB_D0: U5 }\n      vectors:\n        - drive: { LB_D0: 1 }\n",
        "patterns",
        "step 1: vector 1: device U5 has no scan driver on net LB_D0",
    );
    // Two drivers on one net can only be asked for by naming the net twice
    // (the drive map has one entry per net, and each entry picks one
    // driver); the YAML layer refuses the second name as a duplicate key.
    let twice = "steps:\n  - patterns:\n      vectors:\n        - drive: { LB_D0: 1, LB_D0: 0 }\n";
    bad_program(
        &dir,
        "two_drivers.yaml",
        twice,
        "LB_D0: 0",
        "key `LB_D0` is written twice in one mapping: on line 4 and on line 4",
    );
    // The compiler's own two-driver check: U3's PA0..PA7 share control cell
    // 29 (qm5508_port_controller.bsd: `28 (BC_7, PA(0), BIDIR, X, 29, 0,
    // PULL1)`, PA(0) is pin 10, PA(4) pin 5), so driving HOST_D0 from U3
    // also drives BERTH_LAMP5_N, which U5's LED_N(4) (ball E1, BG49 pin map)
    // is asked to drive.
    bad_program(
        &dir,
        "shared_control.yaml",
        "steps:\n  - patterns:\n      from: { BERTH_LAMP5_N: U5, HOST_D0: U3 }\n      vectors:\n        - drive: { BERTH_LAMP5_N: 1, HOST_D0: 0 }\n",
        "patterns",
        "step 1: vector 1: driving U3.10 (PA(0)) also enables U3.5 (PA(4)) (same control cell 29) onto net BERTH_LAMP5_N, which U5.E1 (LED_N(4)) drives",
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_missing_program_or_port_exits_2() {
    let path = temp_dir("play-missing").join("absent.yaml");
    let out = play(&path, &[]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(stdout_of(&out), "");
    let error = error_line(&out);
    assert!(
        error.starts_with(&format!("error: {}", path.display())),
        "{error}"
    );
    assert!(error.contains("cannot read the file"), "{error}");

    let out = play(&demo("infrastructure.yaml"), &["--port", "J9_NONE"]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        error_line(&out),
        "error: the board has no TAP port `J9_NONE` (it has: J1_MAIN, J2_AUX)"
    );
}

#[test]
fn the_capture_log_has_one_complete_line_per_scan() {
    let dir = temp_dir("play-log");
    let log = dir.join("capture.jsonl");
    let out = play(
        &demo("interconnect.yaml"),
        &["--json", "--log", log.to_str().unwrap()],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let json = json_of(&out);
    let text = std::fs::read_to_string(&log).expect("the log is written");
    assert!(text.ends_with('\n'), "the last line is complete");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), json["scans"].as_u64().unwrap() as usize);
    let keys = [
        "index",
        "port",
        "register",
        "length",
        "tdi",
        "tdo",
        "expected",
        "mask",
        "passed",
        "failing_bits",
    ];
    for (i, (line, record)) in lines
        .iter()
        .zip(json["scan_records"].as_array().unwrap())
        .enumerate()
    {
        let row: Value =
            serde_json::from_str(line).unwrap_or_else(|e| panic!("line {i}: {e}: {line}"));
        let mut have: Vec<&str> = row
            .as_object()
            .unwrap()
            .keys()
            .map(String::as_str)
            .collect();
        let mut want = keys.to_vec();
        have.sort_unstable();
        want.sort_unstable();
        assert_eq!(have, want, "line {i}");
        assert_eq!(row["index"], i);
        for key in keys {
            assert_eq!(row[key], record[key], "line {i}: {key} agrees with --json");
        }
        // Hex, one digit per four bits (rounded up).
        let digits = row["length"].as_u64().unwrap().div_ceil(4) as usize;
        assert_eq!(row["tdi"].as_str().unwrap().len(), digits, "line {i}");
        assert_eq!(row["tdo"].as_str().unwrap().len(), digits, "line {i}");
        assert_eq!(row["passed"], true, "line {i}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_vcd_file_has_every_port_wire_trst_only_where_wired_and_one_rising_tck_per_cycle() {
    let dir = temp_dir("play-vcd");
    let vcd = dir.join("infrastructure.vcd");
    let out = play(
        &demo("infrastructure.yaml"),
        &["--vcd", vcd.to_str().unwrap()],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let text = std::fs::read_to_string(&vcd).expect("the VCD file is written");
    assert!(
        text.starts_with("$date"),
        "{}",
        &text[..text.len().min(200)]
    );
    // Declarations (IEEE 1364 §18, from memory): `$var wire 1 <code> <name> $end`.
    let mut codes = std::collections::BTreeMap::new();
    for line in text
        .lines()
        .take_while(|l| !l.starts_with("$enddefinitions"))
    {
        let words: Vec<&str> = line.split_whitespace().collect();
        if let ["$var", "wire", "1", code, name, "$end"] = words[..] {
            codes.insert(name.to_string(), code.to_string());
        }
    }
    for port in ["J1_MAIN", "J2_AUX"] {
        for wire in ["TCK", "TMS", "TDI", "TDO"] {
            assert!(
                codes.contains_key(&format!("{port}_{wire}")),
                "no {port}_{wire}: {codes:?}"
            );
        }
    }
    // The board file wires TRST* to J1_MAIN only (`trst: true`): J2_AUX
    // has no TRST* line, so the file shows none.
    assert!(codes.contains_key("J1_MAIN_TRST_N"), "{codes:?}");
    assert!(!codes.contains_key("J2_AUX_TRST_N"), "{codes:?}");
    assert_eq!(codes.len(), 9, "{codes:?}");
    // Each TCK period the program clocks is one rising edge of that port's
    // TCK in the value section; the counts are the ones the TAP state
    // diagram gives for infrastructure.yaml (see tck_cycles above).
    let (j1, j2) = infrastructure_ops();
    let values = text.split("$enddefinitions $end").nth(1).unwrap();
    for (port, want) in [("J1_MAIN", tck_cycles(&j1)), ("J2_AUX", tck_cycles(&j2))] {
        let rise = format!("1{}", codes[&format!("{port}_TCK")]);
        let rises = values.lines().filter(|l| *l == rise).count() as u64;
        assert_eq!(rises, want, "{port}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// `--export-svf` of a program on two TAP ports: the command says on stderr
/// that the files work only interleaved, in the replay's order, and each
/// file's header says the same (the report on stdout is unchanged).
#[test]
fn export_svf_of_a_two_port_program_warns_that_the_files_work_only_interleaved() {
    let dir = temp_dir("export-interleaved");
    let out = play(
        &demo("interconnect.yaml"),
        &["--export-svf", dir.to_str().expect("utf-8 path")],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let stderr = stderr_of(&out);
    assert!(
        stderr
            .contains("warning: the 2 SVF files (TAP ports J1_MAIN, J2_AUX) work only interleaved")
            && stderr.contains("interconnect.replay.yaml"),
        "{stderr}"
    );
    assert!(!stdout_of(&out).contains("interleaved"));
    for (file, other) in [
        ("interconnect.J1_MAIN.svf", "interconnect.J2_AUX.svf"),
        ("interconnect.J2_AUX.svf", "interconnect.J1_MAIN.svf"),
    ] {
        let text = std::fs::read_to_string(dir.join(file)).expect(file);
        assert!(
            text.starts_with("! CAUTION: this file is one of 2"),
            "{text}"
        );
        let header: Vec<&str> = text
            .lines()
            .take_while(|l| !l.starts_with("! program:"))
            .map(|l| l.trim_start_matches('!').trim())
            .collect();
        let header = header.join(" ");
        assert!(
            header.contains(&format!("works only interleaved with the others ({other})"))
                && header.contains("in the order interconnect.replay.yaml lists"),
            "{header}"
        );
    }
    // One port: no caution, no warning.
    let out = play(
        &demo("hazard_extest_without_preload.yaml"),
        &[
            "--export-svf",
            dir.join("one").to_str().expect("utf-8 path"),
        ],
    );
    assert!(
        !stderr_of(&out).contains("interleaved"),
        "{}",
        stderr_of(&out)
    );
    let text = std::fs::read_to_string(dir.join("one/hazard_extest_without_preload.J2_AUX.svf"))
        .expect("one port's file");
    assert!(text.starts_with("! program:"), "{text}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn strict_says_why_a_passing_run_exits_1() {
    // An 11-bit SIR on J1_MAIN, whose IR path is 12 bits (U1's 4 and U3's
    // 8, from the demo BSDL files), compares nothing: it passes, with one
    // scan-length hazard.
    let dir = temp_dir("play-strict");
    let svf = dir.join("short_ir.svf");
    std::fs::write(
        &svf,
        "! TAP port: J1_MAIN\nSTATE RESET;\nSIR 11 TDI(7FF);\n",
    )
    .unwrap();
    let lax = play(&svf, &[]);
    assert_eq!(lax.status.code(), Some(0), "{}", stderr_of(&lax));
    assert!(
        stdout_of(&lax).lines().any(|l| l == "PASSED"),
        "{}",
        stdout_of(&lax)
    );
    let strict = play(&svf, &["--strict"]);
    assert_eq!(strict.status.code(), Some(1));
    let text = stdout_of(&strict);
    assert!(
        text.lines()
            .any(|l| l == "PASSED, 1 hazard: exit 1 under --strict"),
        "{text}"
    );
    let json = json_of(&play(&svf, &["--strict", "--json"]));
    assert_eq!(json["passed"], true);
    assert_eq!(json["strict"], true);
    assert_eq!(json["verdict"], "PASSED, 1 hazard: exit 1 under --strict");
    assert_eq!(json["hazards"][0]["kind"], "scan_length");
    let _ = std::fs::remove_dir_all(&dir);
}
