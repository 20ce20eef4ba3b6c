//! Non-scan clusters and hazards: the demo board's cluster-path program against cluster defects, each hazard kind raised by a program made to cause it, `--strict`, and cluster load errors.

use std::path::{Path, PathBuf};
use std::process::Command;

use harness::program::native::{load_program, ProgramFile};
use harness::program::Program;
use harness::run::{failures_of, RunOptions, RunReport, Runner};
use virtual_board::{
    load_board, BoardErrorKind, BoardEvent, DefectSpec, DriverLevel, LoadedBoard, Span,
};

// ---------------------------------------------------------------------------
// Files and runs

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the workspace root")
        .to_path_buf()
}

fn demo_board_path() -> PathBuf {
    repo().join("scenarios/boards/harbor_controller.yaml")
}

fn demo_board() -> LoadedBoard {
    load_board(&demo_board_path()).unwrap_or_else(|e| panic!("{e}"))
}

fn demo_program(name: &str) -> PathBuf {
    repo().join("scenarios/programs").join(name)
}

fn devices_dir() -> PathBuf {
    repo().join("scenarios/devices")
}

fn temp_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("clusters_and_hazards-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the test's directory");
    dir
}

fn load(path: &Path, loaded: &LoadedBoard) -> Program {
    load_program(path, loaded, None).unwrap_or_else(|e| panic!("{e}"))
}

/// Runs `program` on a fresh copy of the board; the run must reach its end.
fn run(loaded: &LoadedBoard, program: &Program) -> RunReport {
    let mut board = loaded.board.clone();
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    assert_eq!(report.error, None, "{}", program.name);
    report
}

/// The demo board with one defect, BSDL files read beside the board file.
fn with_defect(loaded: &LoadedBoard, defect: DefectSpec) -> LoadedBoard {
    let base = loaded.path.parent().expect("board dir").to_path_buf();
    let mut source = |p: &Path| {
        let full = base.join(p);
        let text = std::fs::read_to_string(&full).expect("demo BSDL present");
        Ok((text, full))
    };
    loaded
        .with_defects(&[defect], &mut source)
        .unwrap_or_else(|e| panic!("{e}"))
}

/// Every failing bit of a run: (scan, bit, net, expected, captured).
fn failing(report: &RunReport) -> Vec<(usize, usize, String, bool, bool)> {
    report
        .scans
        .iter()
        .flat_map(failures_of)
        .map(|f| {
            (
                f.scan,
                f.bit,
                f.net.unwrap_or_default(),
                f.expected,
                f.captured,
            )
        })
        .collect()
}

fn events(report: &RunReport) -> Vec<BoardEvent> {
    report.hazards.iter().map(|h| h.event.clone()).collect()
}

/// Each hazard's first occurrence and how many times it happened (a place
/// that repeats is one hazard).
fn grouped(report: &RunReport) -> Vec<(BoardEvent, u64)> {
    report
        .hazards
        .iter()
        .map(|h| (h.event.clone(), h.repeats))
        .collect()
}

/// Writes a native program and loads it for `loaded`.
fn program_file(dir: &Path, name: &str, text: &str, loaded: &LoadedBoard) -> (PathBuf, Program) {
    let path = dir.join(name);
    std::fs::write(&path, text).expect("write the program");
    let program = load(&path, loaded);
    (path, program)
}

/// `boardtwin play --board BOARD PROGRAM [--strict]`: the exit code.
fn play_exit(board: &Path, program: &Path, strict: bool) -> Option<i32> {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_boardtwin"));
    cmd.arg("play").arg("--board").arg(board).arg(program);
    if strict {
        cmd.arg("--strict");
    }
    let out = cmd.output().expect("run boardtwin play");
    out.status.code()
}

// ---------------------------------------------------------------------------
// TCK cycles, counted outside the model

/// The TAP controller's next state: IEEE 1149.1 clause 6, the 16-state
/// diagram (from memory). Kept apart from
/// the project's own `TapState` so that the cycles below are an outside
/// check of where the model puts its events.
fn next_state(state: &str, tms: bool) -> &'static str {
    let (zero, one) = match state {
        "Test-Logic-Reset" => ("Run-Test/Idle", "Test-Logic-Reset"),
        "Run-Test/Idle" => ("Run-Test/Idle", "Select-DR-Scan"),
        "Select-DR-Scan" => ("Capture-DR", "Select-IR-Scan"),
        "Capture-DR" => ("Shift-DR", "Exit1-DR"),
        "Shift-DR" => ("Shift-DR", "Exit1-DR"),
        "Exit1-DR" => ("Pause-DR", "Update-DR"),
        "Pause-DR" => ("Pause-DR", "Exit2-DR"),
        "Exit2-DR" => ("Shift-DR", "Update-DR"),
        "Update-DR" => ("Run-Test/Idle", "Select-DR-Scan"),
        "Select-IR-Scan" => ("Capture-IR", "Test-Logic-Reset"),
        "Capture-IR" => ("Shift-IR", "Exit1-IR"),
        "Shift-IR" => ("Shift-IR", "Exit1-IR"),
        "Exit1-IR" => ("Pause-IR", "Update-IR"),
        "Pause-IR" => ("Pause-IR", "Exit2-IR"),
        "Exit2-IR" => ("Shift-IR", "Update-IR"),
        "Update-IR" => ("Run-Test/Idle", "Select-DR-Scan"),
        other => panic!("not a TAP state: {other}"),
    };
    if tms {
        one
    } else {
        zero
    }
}

/// The TMS a tester sends on one TAP port, TCK by TCK, and the state the
/// controller is in before each TCK.
struct TmsLog {
    state: &'static str,
    /// (state before the TCK, TMS), cycle 1 first.
    tcks: Vec<(&'static str, bool)>,
}

impl TmsLog {
    /// After power-up every TAP is in Test-Logic-Reset (IEEE 1149.1 clause 6).
    fn new() -> TmsLog {
        TmsLog {
            state: "Test-Logic-Reset",
            tcks: Vec::new(),
        }
    }

    fn send(&mut self, tms: &[bool]) {
        for &t in tms {
            self.tcks.push((self.state, t));
            self.state = next_state(self.state, t);
        }
    }

    /// Five TCK with TMS high: Test-Logic-Reset from any state (IEEE 1149.1
    /// clause 6, from memory).
    fn reset(&mut self) {
        self.send(&[true; 5]);
        assert_eq!(self.state, "Test-Logic-Reset");
    }

    /// One scan from Test-Logic-Reset or Run-Test/Idle back to Run-Test/Idle,
    /// by the paths SVF uses (SVF Specification Rev E, from memory; the IEEE 1149.1 clause 6
    /// diagram gives `1,1,0,0` from IDLE to Shift-IR and `1,0,0` to Shift-DR): N bits with TMS high on the last, then Update,
    /// then Idle.
    fn scan(&mut self, ir: bool, bits: usize) {
        let from_reset = self.state == "Test-Logic-Reset";
        if from_reset {
            self.send(&[false]);
        }
        assert_eq!(self.state, "Run-Test/Idle");
        if ir {
            self.send(&[true, true, false, false]);
            assert_eq!(self.state, "Shift-IR");
        } else {
            self.send(&[true, false, false]);
            assert_eq!(self.state, "Shift-DR");
        }
        let mut shift = vec![false; bits];
        shift[bits - 1] = true;
        self.send(&shift);
        self.send(&[true, false]);
        assert_eq!(self.state, "Run-Test/Idle");
    }

    /// Cycles (from 1) whose rising edge enters `state`: for Update-IR and
    /// Update-DR the update happens on the falling edge of that same TCK
    /// (IEEE 1149.1 clause 6, from memory), so an EXTEST starts to drive then.
    fn entering(&self, state: &str) -> Vec<u64> {
        let mut out = Vec::new();
        for (i, &(before, tms)) in self.tcks.iter().enumerate() {
            if next_state(before, tms) == state {
                out.push(i as u64 + 1);
            }
        }
        out
    }

    /// Cycles whose rising edge happens while in `state`: the capture edge
    /// for Capture-DR (IEEE 1149.1 clause 6, from memory).
    fn during(&self, state: &str) -> Vec<u64> {
        let mut out = Vec::new();
        for (i, &(before, _)) in self.tcks.iter().enumerate() {
            if before == state {
                out.push(i as u64 + 1);
            }
        }
        out
    }

    fn cycles(&self) -> u64 {
        self.tcks.len() as u64
    }
}

// ---------------------------------------------------------------------------
// Boundary vectors

/// A device's boundary register at its safe values (X as 0) with every
/// control cell at its disable value: what the net-level compiler starts from.
fn safe_cells(loaded: &LoadedBoard, designator: &str) -> Vec<bool> {
    let b = &loaded.board;
    let dev = &b.devices()[b.device_index(designator).expect("device")];
    let m = dev.model();
    let mut v = vec![false; m.boundary_length];
    for c in &m.cells {
        if c.safe == Some(true) {
            v[c.num as usize] = true;
        }
    }
    for pad in dev.pads() {
        if let Some(c) = pad.control {
            v[c.cell as usize] = c.disable_value;
        }
    }
    v
}

/// One device's cells as a bit string, most significant (highest cell) first.
fn bits_of(cells: &[bool]) -> String {
    cells
        .iter()
        .rev()
        .map(|&b| if b { '1' } else { '0' })
        .collect()
}

// ---------------------------------------------------------------------------
// The cluster path

#[test]
fn the_cluster_path_program_is_a_modified_counting_sequence() {
    // Goel and McMahon, ITC 1982 (from memory): N nets take codes
    // over ceil(log2(N + 2)) vectors, none all-0 or all-1, all distinct, so
    // each net sees 0 and 1. The non-scan parts in these paths do not invert
    // (a buffer, a series resistor, an enabled three-state buffer, a plug):
    // each expected level equals the level driven into the path.
    let text = std::fs::read_to_string(demo_program("cluster_path.yaml")).unwrap();
    let file: ProgramFile = serde_yaml::from_str(&text).expect("the program reads");
    let set = file
        .steps
        .iter()
        .find_map(|s| s.patterns.clone())
        .expect("a pattern set");
    let loop_net = "TP_LOOP_IN+TP_LOOP_OUT";
    let paths = [
        ("LB_CS0_N", "P3_CS0_N"),
        ("LB_WR_N", "P3_WR_N"),
        ("LB_A3", "P3_A3"),
        (loop_net, loop_net),
    ];
    let coded = &set.vectors[..3];
    let n = paths.len() as f64;
    assert_eq!(coded.len(), (n + 2.0).log2().ceil() as usize);
    let mut codes = Vec::new();
    for (drive, expect) in paths {
        let code: Vec<u8> = coded.iter().map(|v| v.drive[drive]).collect();
        let seen: Vec<u8> = coded.iter().map(|v| v.expect[expect]).collect();
        assert_eq!(code, seen, "{drive} -> {expect}");
        assert!(code.contains(&0) && code.contains(&1), "{drive}: {code:?}");
        codes.push(code);
    }
    // Codes 1, 2, 3, 4, bit 0 in the first vector.
    let values: Vec<u32> = codes
        .iter()
        .map(|c| c.iter().rev().fold(0, |a, &b| a * 2 + u32::from(b)))
        .collect();
    assert_eq!(values, [1, 2, 3, 4]);
    // U31 enabled (LAMP_OE_N low) while the codes run, off for the last vector.
    for v in coded {
        assert_eq!(v.drive["LAMP_OE_N"], 0);
    }
    assert_eq!(set.vectors[3].drive["LAMP_OE_N"], 1);
}

#[test]
fn the_cluster_path_passes_on_the_good_board_with_no_hazards() {
    let loaded = demo_board();
    let program = load(&demo_program("cluster_path.yaml"), &loaded);
    let report = run(&loaded, &program);
    assert!(report.passed(), "{:?}", failing(&report));
    // PRELOAD of the safe vector and EXTEST on two ports (6 scans), then per
    // code vector one apply on J1_MAIN and a capture on each port (3 x 3),
    // then the last vector's apply and its J2_AUX capture (2), then the safe
    // vector into each port (2).
    assert_eq!(report.scans.len(), 19);
    assert_eq!(report.hazards, []);
}

// Bit positions in the J2_AUX scans: TDO end first, U4 and U5 in BYPASS
// (one bit each), then U2's boundary register (qm3310_io_expander.bsd, U2
// TQ44 pin map): bit = 2 + cell.
//   SW_IN(2) cell 23 -> bit 25 (TP_LOOP_IN, joined by P5)
//   SW_IN(3) cell 24 -> bit 26 (P3_A3, U31 output)
//   SW_IN(5) cell 26 -> bit 28 (P3_WR_N, R64 far end)
//   SW_IN(6) cell 27 -> bit 29 (P3_CS0_N, U30 output)
// Scan numbers (see the program's step list): J2_AUX captures are scans 8,
// 11, 14 (code bits 0, 1, 2) and 16 (U31 off).
const P3_CS0_N_BIT: usize = 29;
const P3_WR_N_BIT: usize = 28;
const P3_A3_BIT: usize = 26;
const J2_CAPTURES: [usize; 4] = [8, 11, 14, 16];

/// The J2_AUX cycles of the three code-vector captures: reset, PRELOAD IR
/// (17 bits), preload DR (31 bits: U2's 29 cells and two bypass bits), EXTEST
/// IR, then per vector one capture DR scan (J2_AUX does not drive).
fn j2_capture_cycles() -> Vec<u64> {
    let mut j2 = TmsLog::new();
    j2.reset();
    j2.scan(true, 17);
    j2.scan(false, 31);
    j2.scan(true, 17);
    for _ in 0..4 {
        j2.scan(false, 31);
    }
    let captures = j2.during("Capture-DR");
    // The preload scan captures too; the four vectors' captures follow.
    assert_eq!(captures.len(), 5);
    captures[1..].to_vec()
}

fn floating_at(net: &str, pin: &str, cell: u32, cycles: &[u64]) -> Vec<BoardEvent> {
    cycles
        .iter()
        .map(|&cycle| BoardEvent::FloatingCapture {
            port: "J2_AUX".into(),
            cycle,
            pin: pin.into(),
            net: Some(net.into()),
            device: "U2".into(),
            cell,
        })
        .collect()
}

#[test]
fn an_open_buffer_pin_fails_the_vectors_that_expect_0() {
    let loaded = demo_board();
    let program = load(&demo_program("cluster_path.yaml"), &loaded);
    // P3_CS0_N carries code 1 (001): 1 in the first vector, 0 in the next two.
    // U30.a open: the lifted input floats high by the board's float policy
    // (`float: high`, TTL-style inputs float high: common practice), so U30
    // drives a constant 1. U30.y open: nothing drives P3_CS0_N, which has no
    // pull, and U2 reads the float level 1. Either way the first vector
    // passes by luck and the other two fail at the bit of U2 SW_IN(6); only
    // the open output leaves the net floating.
    let want = vec![
        (
            J2_CAPTURES[1],
            P3_CS0_N_BIT,
            "P3_CS0_N".to_string(),
            false,
            true,
        ),
        (
            J2_CAPTURES[2],
            P3_CS0_N_BIT,
            "P3_CS0_N".to_string(),
            false,
            true,
        ),
    ];
    let cycles = j2_capture_cycles();
    for pin in ["U30.a", "U30.y"] {
        let faulty = with_defect(
            &loaded,
            DefectSpec {
                open: Some(pin.into()),
                ..Default::default()
            },
        );
        let report = run(&faulty, &program);
        assert!(!report.passed(), "{pin}");
        assert_eq!(failing(&report), want, "{pin}");
        // With the output open, every compared read of the undriven net is a
        // floating capture (three captures, one cell: one hazard, the first
        // in full, x3); with the input open, U30 still drives the net.
        let expected_events: Vec<_> = if pin == "U30.y" {
            floating_at("P3_CS0_N", "U2.9 (SW_IN(6))", 27, &cycles[..1])
                .into_iter()
                .map(|e| (e, 3))
                .collect()
        } else {
            Vec::new()
        };
        assert_eq!(grouped(&report), expected_events, "{pin}");
    }
}

#[test]
fn a_stuck_cluster_pin_fails_where_the_code_differs() {
    let loaded = demo_board();
    let program = load(&demo_program("cluster_path.yaml"), &loaded);
    // U30's output stuck at 1: the same two bits as the opens (code 1 expects
    // 0 in vectors 2 and 3), but the net is driven, so no hazard.
    let stuck_high = with_defect(
        &loaded,
        DefectSpec {
            stuck: Some("U30.y".into()),
            value: Some(1),
            ..Default::default()
        },
    );
    let report = run(&stuck_high, &program);
    assert_eq!(
        failing(&report),
        [
            (J2_CAPTURES[1], P3_CS0_N_BIT, "P3_CS0_N".into(), false, true),
            (J2_CAPTURES[2], P3_CS0_N_BIT, "P3_CS0_N".into(), false, true),
        ]
    );
    assert_eq!(report.hazards, []);
    // U31's enable stuck active (low): the codes pass, since they run with
    // U31 enabled, and only the last vector fails: LB_A3 = 1 comes through
    // where R66 should hold P3_A3 at 0.
    let always_on = with_defect(
        &loaded,
        DefectSpec {
            stuck: Some("U31.enable".into()),
            value: Some(0),
            ..Default::default()
        },
    );
    let report = run(&always_on, &program);
    assert_eq!(
        failing(&report),
        [(J2_CAPTURES[3], P3_A3_BIT, "P3_A3".into(), false, true)]
    );
    assert_eq!(report.hazards, []);
}

#[test]
fn a_series_resistor_passes_no_level_from_a_floating_net() {
    let loaded = demo_board();
    let program = load(&demo_program("cluster_path.yaml"), &loaded);
    let cycles = j2_capture_cycles();
    // P3_WR_N carries code 2 (010): 0 in vectors 1 and 3. With LB_WR_N cut
    // from U1 (open net) or R64's far end open, nothing drives P3_WR_N: U2
    // reads 1 (float high) and fails those two vectors, and every compared
    // read is a floating capture (the resistor is not a driver): one hazard
    // for the one cell, its first capture in full, three captures in all.
    for open in ["LB_WR_N", "R64.b"] {
        let faulty = with_defect(
            &loaded,
            DefectSpec {
                open: Some(open.into()),
                ..Default::default()
            },
        );
        let report = run(&faulty, &program);
        assert_eq!(
            failing(&report),
            [
                (J2_CAPTURES[0], P3_WR_N_BIT, "P3_WR_N".into(), false, true),
                (J2_CAPTURES[2], P3_WR_N_BIT, "P3_WR_N".into(), false, true),
            ],
            "{open}"
        );
        assert_eq!(
            grouped(&report),
            floating_at("P3_WR_N", "U2.8 (SW_IN(5))", 26, &cycles[..1])
                .into_iter()
                .map(|e| (e, 3))
                .collect::<Vec<_>>(),
            "{open}"
        );
    }
}

#[test]
fn the_demo_programs_raise_no_hazards() {
    let loaded = demo_board();
    for name in [
        "infrastructure.yaml",
        "interconnect.yaml",
        "cluster_path.yaml",
    ] {
        let report = run(&loaded, &load(&demo_program(name), &loaded));
        assert!(report.passed(), "{name}: {:?}", failing(&report));
        assert_eq!(report.hazards, [], "{name}");
        assert_eq!(
            play_exit(&demo_board_path(), &demo_program(name), true),
            Some(0),
            "{name} with --strict"
        );
    }
}

// ---------------------------------------------------------------------------
// Hazards, each from a program made to cause it

/// J1_MAIN of the demo board: TDI -> U1 (IR 4, 40 cells) -> U3 (IR 8, 50
/// cells) -> TDO, so U1's bits are written first (left) and U3's last.
/// Opcodes from the demo BSDL files: U1 PRELOAD 0001, EXTEST 0000; U3
/// PRELOAD 00000010, EXTEST 00000000.
const J1_PRELOAD: &str = "0001_00000010";
const J1_EXTEST: &str = "0000_00000000";

#[test]
fn two_extest_drivers_opposite_on_one_net_are_contention() {
    let loaded = demo_board();
    let dir = temp_dir("contention");
    // HOST_D0 joins U1 HOST_D(0) (pin 20) and U3 PA(0) (pin 10), both BC_7.
    // qm7420_bus_bridge.bsd: cell 8 is HOST_D's control (disable 0), cell 4
    // HOST_D(0). qm5508_port_controller.bsd: cell 29 is PA's control
    // (disable 0), cell 28 PA(0). U1 drives 1, U3 drives 0; HOST_D1..3 (the
    // rest of both control groups) are driven 0 from both ends, so they agree.
    let mut u1 = safe_cells(&loaded, "U1");
    u1[8] = true;
    u1[4] = true;
    let mut u3 = safe_cells(&loaded, "U3");
    u3[29] = true;
    u3[28] = false;
    let text = format!(
        "name: contention on HOST_D0\nsteps:\n  - {{ port: J1_MAIN, reset: tms }}\n  - port: J1_MAIN\n    scan_ir: {{ tdi: \"{J1_PRELOAD}\" }}\n  - port: J1_MAIN\n    scan_dr: {{ tdi: \"{}{}\" }}\n  - port: J1_MAIN\n    scan_ir: {{ tdi: \"{J1_EXTEST}\" }}\n  - {{ port: J1_MAIN, reset: tms }}\n",
        bits_of(&u1),
        bits_of(&u3)
    );
    let (path, program) = program_file(&dir, "contention.yaml", &text, &loaded);
    let report = run(&loaded, &program);
    // The drivers switch on at the falling edge in Update-IR of the EXTEST scan.
    let mut tms = TmsLog::new();
    tms.reset();
    tms.scan(true, 12);
    tms.scan(false, 90);
    tms.scan(true, 12);
    let cycle = tms.entering("Update-IR")[1];
    assert_eq!(cycle, 5 + (5 + 12 + 2) + (3 + 90 + 2) + (4 + 12 + 1));
    assert_eq!(
        events(&report),
        [BoardEvent::Contention {
            port: Some("J1_MAIN".into()),
            cycle,
            net: "HOST_D0".into(),
            drivers: vec![
                DriverLevel {
                    driver: "U1.20 (HOST_D(0))".into(),
                    level: true
                },
                DriverLevel {
                    driver: "U3.10 (PA(0))".into(),
                    level: false
                },
            ],
        }]
    );
    assert_eq!(
        report.hazards[0].scan,
        Some(2),
        "raised during the EXTEST IR scan"
    );
    assert!(report.passed(), "nothing is compared");
    assert_eq!(play_exit(&demo_board_path(), &path, false), Some(0));
    assert_eq!(play_exit(&demo_board_path(), &path, true), Some(1));
}

#[test]
fn extest_without_a_preload_is_reported_for_each_device() {
    let loaded = demo_board();
    let dir = temp_dir("no-preload");
    let text = format!(
        "name: EXTEST straight after reset\nsteps:\n  - {{ port: J1_MAIN, reset: tms }}\n  - port: J1_MAIN\n    scan_ir: {{ tdi: \"{J1_EXTEST}\" }}\n  - {{ port: J1_MAIN, reset: tms }}\n"
    );
    let (path, program) = program_file(&dir, "no_preload.yaml", &text, &loaded);
    let report = run(&loaded, &program);
    let mut tms = TmsLog::new();
    tms.reset();
    tms.scan(true, 12);
    let cycle = tms.entering("Update-IR")[0];
    assert_eq!(cycle, 5 + 5 + 12 + 1);
    // One event per device, in chain order. The update latches power up at
    // arbitrary (seeded) values and could make drivers fight too; with this
    // board's seed they enable no two opposite drivers, so these two events
    // are all.
    let want: Vec<BoardEvent> = ["U1", "U3"]
        .iter()
        .map(|d| BoardEvent::ExtestWithoutPreload {
            port: "J1_MAIN".into(),
            cycle,
            device: (*d).into(),
        })
        .collect();
    assert_eq!(events(&report), want);
    assert_eq!(play_exit(&demo_board_path(), &path, false), Some(0));
    assert_eq!(play_exit(&demo_board_path(), &path, true), Some(1));
}

#[test]
fn a_compared_capture_of_a_floating_net_is_reported() {
    let loaded = demo_board();
    let dir = temp_dir("floating");
    // J2_AUX: TDI -> U2 -> U5 -> U4 -> TDO. U2 and U4 in BYPASS, U5 in
    // SAMPLE (opcodes 111111, 000001, 11111 from the demo BSDL files). U1 is
    // left in Test-Logic-Reset, its LB_D drivers off, and nothing else holds
    // LB_D0 (see the board file): U5 SW_IN(0) (ball A1, cell 21) reads a
    // floating net. DR bits: U4 bypass (bit 0), U5 cells 0..28 (bits 1..29),
    // U2 bypass (bit 30); only bit 22 = 1 + 21 is compared, expected 1 (float
    // high).
    let mut expect = vec!['X'; 31];
    expect[30 - 22] = '1';
    let expect: String = expect.into_iter().collect();
    let text = format!(
        "name: read a floating net\nsteps:\n  - {{ port: J2_AUX, reset: tms }}\n  - port: J2_AUX\n    scan_ir: {{ tdi: \"111111_000001_11111\" }}\n  - port: J2_AUX\n    scan_dr: {{ tdi: \"{}\", expect: \"{expect}\" }}\n",
        "0".repeat(31)
    );
    let (path, program) = program_file(&dir, "floating.yaml", &text, &loaded);
    let report = run(&loaded, &program);
    let mut tms = TmsLog::new();
    tms.reset();
    tms.scan(true, 17);
    tms.scan(false, 31);
    let cycle = tms.during("Capture-DR")[0];
    assert_eq!(cycle, 5 + (5 + 17 + 2) + 3);
    assert!(report.passed(), "the float-high level is what was expected");
    assert_eq!(
        events(&report),
        [BoardEvent::FloatingCapture {
            port: "J2_AUX".into(),
            cycle,
            pin: "U5.A1 (SW_IN(0))".into(),
            net: Some("LB_D0".into()),
            device: "U5".into(),
            cell: 21,
        }]
    );
    // The same scan with the bit masked raises nothing: an unread bit harms nothing.
    let masked = text.replace(&expect, &"X".repeat(31));
    let (_, program) = program_file(&dir, "masked.yaml", &masked, &loaded);
    assert_eq!(run(&loaded, &program).hazards, []);
    assert_eq!(play_exit(&demo_board_path(), &path, false), Some(0));
    assert_eq!(play_exit(&demo_board_path(), &path, true), Some(1));
}

/// A small board for the hazards the demo board is built to avoid: U3
/// (QM5508) alone on TAP port P1, one of its outputs on the supply, and one
/// on a net a non-scan buffer drives. The BSDL file is the demo's, by
/// absolute path.
fn bench(dir: &Path) -> (PathBuf, LoadedBoard) {
    let bsdl = devices_dir().join("qm5508_port_controller.bsd");
    let text = format!(
        "name: hazard bench\nfloat: high\ndevices:\n  U3: {{ bsdl: \"{}\" }}\ntap_ports:\n  - {{ name: P1, chain: [U3], trst: true }}\nnets:\n  VCC: [U3.VCC, U3.PD(0)]\n  GND: [U3.GND]\n  SEL_IN: [U3.PC(0)]\n  SEL_OUT: [U3.PC(1)]\npower: [VCC]\nground: [GND]\nclusters:\n  U20: {{ kind: buffer, a: SEL_IN, y: SEL_OUT }}\n",
        bsdl.display()
    );
    let path = dir.join("bench.yaml");
    std::fs::write(&path, text).expect("write the bench board");
    let loaded = load_board(&path).unwrap_or_else(|e| panic!("{e}"));
    (path, loaded)
}

/// PRELOAD (00000010), a DR scan of U3's 50 cells, EXTEST (00000000): the
/// opcodes from qm5508_port_controller.bsd.
fn bench_program(cells: &[bool]) -> String {
    format!(
        "name: bench\nsteps:\n  - {{ port: P1, reset: tms }}\n  - port: P1\n    scan_ir: {{ tdi: \"00000010\" }}\n  - port: P1\n    scan_dr: {{ tdi: \"{}\" }}\n  - port: P1\n    scan_ir: {{ tdi: \"00000000\" }}\n  - {{ port: P1, reset: tms }}\n",
        bits_of(cells)
    )
}

/// The cycle at which the bench program's EXTEST takes effect.
fn bench_extest_cycle() -> u64 {
    let mut tms = TmsLog::new();
    tms.reset();
    tms.scan(true, 8);
    tms.scan(false, 50);
    tms.scan(true, 8);
    let cycle = tms.entering("Update-IR")[1];
    assert_eq!(cycle, 5 + (5 + 8 + 2) + (3 + 50 + 2) + (4 + 8 + 1));
    assert_eq!(tms.cycles(), cycle + 1);
    cycle
}

#[test]
fn a_scan_output_on_the_supply_is_reported() {
    let dir = temp_dir("rail");
    let (board_path, loaded) = bench(&dir);
    // qm5508_port_controller.bsd: cell 4 is PD's control (disable 1), cell 3
    // PD(0) (pin 41, LQ64). Drive it 1, the rail's own level, so the only
    // hazard is the scan cell on the rail.
    let mut u3 = safe_cells(&loaded, "U3");
    u3[4] = false;
    u3[3] = true;
    let (path, program) = program_file(&dir, "rail.yaml", &bench_program(&u3), &loaded);
    let report = run(&loaded, &program);
    assert_eq!(
        events(&report),
        [BoardEvent::ScanDrivesRail {
            port: Some("P1".into()),
            cycle: bench_extest_cycle(),
            net: "VCC".into(),
            driver: "U3.41 (PD(0))".into(),
        }]
    );
    assert_eq!(play_exit(&board_path, &path, false), Some(0));
    assert_eq!(play_exit(&board_path, &path, true), Some(1));
}

#[test]
fn a_scan_output_against_a_non_scan_output_is_reported() {
    let dir = temp_dir("cluster");
    let (board_path, loaded) = bench(&dir);
    // qm5508_port_controller.bsd: cell 41 is PC's control (BC_5, disable 1),
    // cells 49 and 48 PC(0) and PC(1) (pins 31 and 30). PC(0) drives SEL_IN
    // 1, so U20 drives SEL_OUT 1; PC(1) drives SEL_OUT 1 as well. The two
    // agree, so there is no contention, but a scan cell and a non-scan
    // output are both driving one net.
    let mut u3 = safe_cells(&loaded, "U3");
    u3[41] = false;
    u3[49] = true;
    u3[48] = true;
    let (path, program) = program_file(&dir, "cluster.yaml", &bench_program(&u3), &loaded);
    let report = run(&loaded, &program);
    assert_eq!(
        events(&report),
        [BoardEvent::ScanMeetsCluster {
            port: Some("P1".into()),
            cycle: bench_extest_cycle(),
            net: "SEL_OUT".into(),
            driver: "U3.30 (PC(1))".into(),
            cluster: "U20.y".into(),
        }]
    );
    assert_eq!(play_exit(&board_path, &path, false), Some(0));
    assert_eq!(play_exit(&board_path, &path, true), Some(1));
}

#[test]
fn a_scan_output_fighting_a_non_scan_output_names_both_drivers() {
    let dir = temp_dir("cluster-fight");
    let (_, loaded) = bench(&dir);
    // As above, but PC(1) drives 0 against U20's 1.
    let mut u3 = safe_cells(&loaded, "U3");
    u3[41] = false;
    u3[49] = true;
    u3[48] = false;
    let (_, program) = program_file(&dir, "fight.yaml", &bench_program(&u3), &loaded);
    let report = run(&loaded, &program);
    let cycle = bench_extest_cycle();
    assert_eq!(
        events(&report),
        [
            BoardEvent::Contention {
                port: Some("P1".into()),
                cycle,
                net: "SEL_OUT".into(),
                drivers: vec![
                    DriverLevel {
                        driver: "U3.30 (PC(1))".into(),
                        level: false
                    },
                    DriverLevel {
                        driver: "U20.y".into(),
                        level: true
                    },
                ],
            },
            BoardEvent::ScanMeetsCluster {
                port: Some("P1".into()),
                cycle,
                net: "SEL_OUT".into(),
                driver: "U3.30 (PC(1))".into(),
                cluster: "U20.y".into(),
            },
        ]
    );
}

// ---------------------------------------------------------------------------
// Cluster load errors

/// Line and column (from 1) of the first `needle` after `after` in `text`.
fn place_of(text: &str, after: &str, needle: &str) -> (u32, u32) {
    let from = text.find(after).expect("anchor") + after.len();
    let at = from + text[from..].find(needle).expect("needle");
    let line = text[..at].matches('\n').count() as u32 + 1;
    let column = (at - text[..at].rfind('\n').map_or(0, |i| i + 1)) as u32 + 1;
    (line, column)
}

fn bad_board(dir: &Path, clusters: &str) -> (PathBuf, String) {
    let bsdl = devices_dir().join("qm5508_port_controller.bsd");
    let text = format!(
        "name: loop\ndevices:\n  U3: {{ bsdl: \"{}\" }}\ntap_ports:\n  - {{ name: P1, chain: [U3] }}\nnets:\n  LOOP_A: [U3.PE(0)]\n  LOOP_B: [U3.PE(1)]\nclusters:\n{clusters}",
        bsdl.display()
    );
    let path = dir.join("board.yaml");
    std::fs::write(&path, &text).expect("write the board");
    (path, text)
}

#[test]
fn two_inverters_feeding_each_other_are_a_combinational_loop() {
    let dir = temp_dir("loop");
    let (path, text) = bad_board(
        &dir,
        "  U40: { kind: inverter, a: LOOP_A, y: LOOP_B }\n  U41: { kind: inverter, a: LOOP_B, y: LOOP_A }\n",
    );
    let e = load_board(&path).expect_err("a loop does not load");
    assert_eq!(*e.kind, BoardErrorKind::CombinationalLoop("LOOP_A".into()));
    let (line, column) = place_of(&text, "nets:", "LOOP_A");
    assert_eq!((e.span.line, e.span.column), (line, column));
    assert_eq!(
        e.to_string(),
        format!(
            "{}:{line}:{column}: a combinational loop runs through net LOOP_A",
            path.display()
        )
    );
    // The command line says the same and exits 2 (bad input).
    let out = Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .arg("board")
        .arg(&path)
        .output()
        .expect("run boardtwin board");
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("a combinational loop runs through net LOOP_A"),
        "{stderr}"
    );
    // One inverter alone is no loop.
    let (path, _) = bad_board(&dir, "  U40: { kind: inverter, a: LOOP_A, y: LOOP_B }\n");
    assert!(load_board(&path).is_ok());
}

#[test]
fn a_cluster_naming_an_unknown_net_is_a_located_error() {
    let dir = temp_dir("unknown-net");
    let (path, text) = bad_board(&dir, "  U42: { kind: buffer, a: LOOP_A, y: LOOP_Q }\n");
    let e = load_board(&path).expect_err("an unknown net does not load");
    assert_eq!(*e.kind, BoardErrorKind::UnknownNet("LOOP_Q".into()));
    let (line, column) = place_of(&text, "U42", "LOOP_Q");
    assert_eq!(
        e.span,
        Span {
            line,
            column,
            ..e.span
        }
    );
    assert_eq!(
        e.to_string(),
        format!("{}:{line}:{column}: unknown net `LOOP_Q`", path.display())
    );
}
