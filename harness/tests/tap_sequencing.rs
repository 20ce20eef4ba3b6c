//! What a program does to the TAP, checked against the state diagram and the
//! SVF rules: scans that start in a Pause state, TRST* on a port that mixes
//! devices with and without it, FREQUENCY where it stands, TCK limits of the
//! devices, and scan lengths against the chain.
//!
//! Each expectation is worked out by hand from IEEE 1149.1 (clause 6, the
//! TAP controller; Annex B, BSDL's TAP_SCAN_CLOCK) and the SVF Specification
//! Rev E, from memory where marked.

use std::path::{Path, PathBuf};

use harness::program::native::{load_program, parse_native, ProgramErrorKind};
use harness::program::svf::read_svf;
use harness::program::Program;
use harness::run::{RunOptions, RunReport, Runner};
use harness::vcd::{Cycle, Recorder};
use virtual_board::{
    bsdl_files_beside, load_board, load_board_text, BoardEvent, LoadedBoard, TapState,
};

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the workspace root")
        .to_path_buf()
}

fn demo() -> LoadedBoard {
    load_board(&repo().join("scenarios/boards/harbor_controller.yaml"))
        .unwrap_or_else(|e| panic!("{e}"))
}

/// One port `P`: U1 (QM7420, has TRST*, IDCODE 0x37420A01) nearest TDI,
/// then U2 (QM3310: no TRST*, no IDCODE register). TRST* is wired.
fn mixed_trst_board() -> LoadedBoard {
    let yaml = r#"
name: mixed-trst
devices:
  U1: { bsdl: ../devices/qm7420_bus_bridge.bsd, idcode: 0x37420A01 }
  U2: { bsdl: ../devices/qm3310_io_expander.bsd }
tap_ports:
  - { name: P, chain: [U1, U2], trst: true }
"#;
    let path = repo().join("scenarios/boards/mixed_trst.yaml");
    load_board_text(yaml, &path, &mut bsdl_files_beside(&path)).unwrap_or_else(|e| panic!("{e}"))
}

fn svf(text: &str, port: &str) -> Program {
    read_svf(text, None, port)
        .unwrap_or_else(|e| panic!("{e}"))
        .program
}

/// Runs on a fresh copy of the board, recording every period.
fn run(loaded: &LoadedBoard, program: &Program) -> (RunReport, Vec<Cycle>) {
    let mut recorder = Recorder::new(loaded.board.clone());
    let report = Runner::new(&mut recorder, RunOptions::default()).run(program);
    assert_eq!(report.error, None, "{}", program.name);
    (report, recorder.take_cycles())
}

/// The TAP states after each TCK of `port`, walking the diagram from
/// Test-Logic-Reset (a period with TRST* low resets; one with no TCK edge
/// only moves the line).
fn states(cycles: &[Cycle], port: usize) -> Vec<TapState> {
    let mut at = TapState::TestLogicReset;
    let mut out = Vec::new();
    for c in cycles.iter().filter(|c| c.port == port) {
        if !c.trst_n {
            at = TapState::TestLogicReset;
        }
        if c.tck {
            at = if c.trst_n {
                at.next(c.tms)
            } else {
                TapState::TestLogicReset
            };
            out.push(at);
        }
    }
    out
}

// ---------------------------------------------------------------------------
// 1. A scan from Pause-DR updates and captures first.

#[test]
fn an_idcode_read_after_a_scan_that_ended_in_pause_dr_captures_the_idcode() {
    // After a TMS reset both J1_MAIN devices hold IDCODE (IEEE 1149.1 clause
    // 7, from memory). The first scan shifts zeros in and ends in Pause-DR
    // (ENDDR DRPAUSE). The second must go Pause-DR → Exit2-DR → Update-DR →
    // Select-DR-Scan → Capture-DR → Shift-DR (SVF Specification Rev E,
    // from memory) and so read the IDCODEs again: first out U3's 0x25508A01
    // (nearest TDO), then U1's 0x27420A01 (the board file's values), not the
    // zeros shifted in.
    let board = demo();
    let program = svf(
        "STATE RESET;\nENDDR DRPAUSE;\nSDR 64 TDI(0);\n\
         SDR 64 TDI(0) TDO(27420A0125508A01);\n",
        "J1_MAIN",
    );
    let (report, cycles) = run(&board, &program);
    assert!(report.passed(), "{:?}", report.scans[1].record);
    // TCK by hand: 5 (reset) + 4 (TLR→RTI→Select→Capture→Shift) + 64 + 1
    // (Exit1→Pause) + 5 (Exit2, Update, Select, Capture, Shift) + 64 + 1.
    assert_eq!(report.tck_cycles, 5 + 4 + 64 + 1 + 5 + 64 + 1);
    let s = states(&cycles, 0);
    let second = 5 + 4 + 64 + 1;
    assert_eq!(
        s[second - 1..second + 5],
        [
            TapState::PauseDr,
            TapState::Exit2Dr,
            TapState::UpdateDr,
            TapState::SelectDrScan,
            TapState::CaptureDr,
            TapState::ShiftDr
        ]
    );
    assert_eq!(s.last(), Some(&TapState::PauseDr));
}

#[test]
fn a_native_scan_ending_in_pause_leaves_its_update_to_the_next_scan() {
    // The same rule through the native program's `end: drpause`. With both
    // J1_MAIN devices in BYPASS (1 bit each, Capture-DR loads 0: IEEE 1149.1
    // clause 10, from memory), a scan shifts 1s in and rests in Pause-DR.
    // The next scan must capture first, so it reads 00, not the 11 that a
    // path Pause-DR → Exit2-DR → Shift-DR would leave in the registers.
    let board = demo();
    let dir = repo().join("scenarios/programs");
    let text = r#"steps:
  - { port: J1_MAIN, reset: tms }
  - port: J1_MAIN
    scan_ir: { tdi: "0xFFF", length: 12 }
  - port: J1_MAIN
    scan_dr: { tdi: "11", end: drpause }
  - port: J1_MAIN
    scan_dr: { tdi: "00", expect: "00" }
"#;
    let program =
        parse_native(text, &dir.join("inline.yaml"), &board).unwrap_or_else(|e| panic!("{e}"));
    let (report, _) = run(&board, &program);
    assert!(report.passed(), "{:?}", report.scans[2].record);
}

// ---------------------------------------------------------------------------
// 2. TRST* is asynchronous: no TCK edge.

#[test]
fn trst_on_a_mixed_port_keeps_the_devices_without_it_in_step() {
    // Both devices reach Run-Test/Idle; TRST* then resets U1 alone (U2 has
    // no TRST*) without a TCK edge, so U2 stays in Run-Test/Idle. From
    // Test-Logic-Reset (U1) and Run-Test/Idle (U2) the path 0,1,0,0 brings
    // both to Shift-DR together (IEEE 1149.1 clause 6, from memory). The DR
    // path is then U2's BYPASS (U2 has no IDCODE: BYPASS after reset,
    // captures 0) nearest TDO, then U1's IDCODE: 0x37420A01 << 1.
    let board = mixed_trst_board();
    let program = svf(
        "STATE RESET;\nSTATE IDLE;\nTRST ON;\nTRST OFF;\nSDR 33 TDI(0) TDO(06E841402);\n",
        "P",
    );
    let (report, cycles) = run(&board, &program);
    assert!(report.passed(), "{:?}", report.scans[0].record);
    // 5 + 1 (to Run-Test/Idle) + 0 + 0 (TRST*) + 4 + 33 + 2.
    assert_eq!(report.tck_cycles, 5 + 1 + 4 + 33 + 2);
    // The recording shows TRST* low and then high with no TCK rising edge,
    // and the scan's periods with TRST* released.
    let trst: Vec<(bool, bool)> = cycles
        .iter()
        .filter(|c| !c.tck)
        .map(|c| (c.trst_n, c.tck))
        .collect();
    assert_eq!(trst, [(false, false), (true, false)]);
    assert!(cycles.iter().filter(|c| c.tck).all(|c| c.trst_n));
}

#[test]
fn trst_held_low_shows_low_in_every_recorded_period_of_a_whole_scan() {
    // A whole scan (`TapTarget::shift`, recorded without a call per bit)
    // must still record TRST* as the program holds it.
    let board = mixed_trst_board();
    let program = svf(
        "STATE RESET;\nTRST ON;\nSDR 8 TDI(00);\nTRST OFF;\nSDR 8 TDI(00);\n",
        "P",
    );
    let (_, cycles) = run(&board, &program);
    let low: Vec<bool> = cycles.iter().filter(|c| c.tck).map(|c| c.trst_n).collect();
    // 5 reset periods released; then the first scan held low: the TAP is
    // held in Test-Logic-Reset, so the runner goes 0,1,0,0 into the scan, 8
    // bits, and one TMS-low period back to Run-Test/Idle (13); then the
    // second, released (4 + 8 + 2).
    let mut want = vec![true; 5];
    want.extend(vec![false; 13]);
    want.extend(vec![true; 14]);
    assert_eq!(low, want);
}

// ---------------------------------------------------------------------------
// 3. FREQUENCY applies from where it stands.

#[test]
fn runtest_seconds_convert_at_the_frequency_in_force() {
    // SVF Specification Rev E (from memory): FREQUENCY sets the TCK rate for
    // the statements after it. 1E-5 s at 1 MHz is 10 TCK; at 10 MHz, 100.
    let board = demo();
    let program = svf(
        "FREQUENCY 1E6 HZ;\nSTATE RESET;\nSTATE IDLE;\nRUNTEST 1E-5 SEC;\n\
         FREQUENCY 1E7 HZ;\nRUNTEST 1E-5 SEC;\n",
        "J1_MAIN",
    );
    let (report, _) = run(&board, &program);
    assert_eq!(report.tck_cycles, 5 + 1 + 10 + 100);
    // (5 + 1 + 10) periods of 1 µs and 100 of 0.1 µs: 26 µs.
    assert!(
        (report.program_seconds() - 26e-6).abs() < 1e-12,
        "{}",
        report.program_seconds()
    );
    assert_eq!(report.tck_hz, 1e7);
}

// ---------------------------------------------------------------------------
// 4. TCK faster than a device allows.

fn tck_hazards(report: &RunReport) -> Vec<BoardEvent> {
    report
        .hazards
        .iter()
        .filter(|h| {
            matches!(
                h.event,
                BoardEvent::TckTooFast { .. } | BoardEvent::TckStopNotAllowed { .. }
            )
        })
        .map(|h| h.event.clone())
        .collect()
}

#[test]
fn a_port_clocked_above_its_slowest_device_is_a_hazard() {
    // The demo BSDL files give TAP_SCAN_CLOCK 10 MHz for the QM3310 (U2,
    // U5) and QM2040 (U4) on J2_AUX, 25 and 20 MHz for QM7420 (U1) and
    // QM5508 (U3) on J1_MAIN. U2 is the first slowest device from TDI.
    let board = demo();
    let fast = svf(
        "FREQUENCY 2E7 HZ;\nSTATE RESET;\nSIR 17 TDI(1FFFF);\n",
        "J2_AUX",
    );
    let (report, _) = run(&board, &fast);
    assert_eq!(
        tck_hazards(&report),
        [BoardEvent::TckTooFast {
            port: "J2_AUX".into(),
            cycle: 0,
            hz: 20_000_000,
            max_hz: 10_000_000,
            device: "U2".into(),
            part: "QM3310".into(),
        }]
    );
    // At the limit, and at 20 MHz on J1_MAIN, nothing.
    let at_limit = svf(
        "FREQUENCY 1E7 HZ;\nSTATE RESET;\nSIR 17 TDI(1FFFF);\n",
        "J2_AUX",
    );
    assert_eq!(tck_hazards(&run(&board, &at_limit).0), []);
    let j1 = svf(
        "FREQUENCY 2E7 HZ;\nSTATE RESET;\nSIR 12 TDI(FFF);\n",
        "J1_MAIN",
    );
    assert_eq!(tck_hazards(&run(&board, &j1).0), []);
    // Raised once where a later FREQUENCY goes too fast, at that cycle.
    let later = svf(
        "FREQUENCY 1E7 HZ;\nSTATE RESET;\nFREQUENCY 2.1E7 HZ;\nSIR 12 TDI(FFF);\nSIR 12 TDI(FFF);\n",
        "J1_MAIN",
    );
    let events = tck_hazards(&run(&board, &later).0);
    assert_eq!(events.len(), 1, "{events:?}");
    assert!(
        matches!(&events[0], BoardEvent::TckTooFast { cycle: 5, device, max_hz: 20_000_000, .. } if device == "U3"),
        "{events:?}"
    );
}

#[test]
fn stopping_tck_high_where_a_device_allows_only_low_is_a_hazard() {
    // TAP_SCAN_CLOCK (…, LOW): TCK may be stopped only low (IEEE 1149.1
    // Annex B, from memory). Every J2_AUX part says LOW; J1_MAIN's say BOTH.
    let board = demo();
    let dir = repo().join("scenarios/programs");
    let text = |port: &str| {
        format!("tck_stop: high\nsteps:\n  - {{ port: {port}, reset: tms }}\n  - {{ port: {port}, idle: 3 }}\n")
    };
    let j2 = parse_native(&text("J2_AUX"), &dir.join("x.yaml"), &board).unwrap();
    let devices: Vec<String> = tck_hazards(&run(&board, &j2).0)
        .into_iter()
        .map(|e| match e {
            BoardEvent::TckStopNotAllowed { device, .. } => device,
            other => panic!("{other:?}"),
        })
        .collect();
    assert_eq!(devices, ["U2", "U5", "U4"]);
    let j1 = parse_native(&text("J1_MAIN"), &dir.join("x.yaml"), &board).unwrap();
    assert_eq!(tck_hazards(&run(&board, &j1).0), []);
}

// ---------------------------------------------------------------------------
// 5. Scan length against the chain.

#[test]
fn a_scan_shorter_than_the_chain_is_a_hazard_even_with_nothing_compared() {
    // J1_MAIN's IR path is U1's 4 bits and U3's 8 (the demo BSDL files):
    // 12. An 11-bit SIR with no TDO compares nothing and used to pass.
    let board = demo();
    let program = svf("STATE RESET;\nSIR 11 TDI(7FF);\n", "J1_MAIN");
    let (report, _) = run(&board, &program);
    let events: Vec<&BoardEvent> = report
        .hazards
        .iter()
        .map(|h| &h.event)
        .filter(|e| matches!(e, BoardEvent::ScanLength { .. }))
        .collect();
    assert_eq!(events.len(), 1, "{:?}", report.hazards);
    let BoardEvent::ScanLength {
        port,
        register,
        given,
        path_length,
        path,
        origin,
        ..
    } = events[0]
    else {
        unreachable!()
    };
    assert_eq!(
        (port.as_str(), register.as_str(), *given, *path_length),
        ("J1_MAIN", "IR", 11, 12)
    );
    assert_eq!(path, "U1 (QM7420) IR 4, U3 (QM5508) IR 8");
    assert!(origin.ends_with(":2 SIR"), "{origin}");
    // The right length raises nothing; nor does a deliberate chain-length
    // check that compares the bits flushed through past the path.
    let right = svf("STATE RESET;\nSIR 12 TDI(FFF);\n", "J1_MAIN");
    assert!(run(&board, &right).0.hazards.is_empty());
    let measure = svf(
        "STATE RESET;\nSIR 12 TDI(FFF);\nSDR 10 TDI(001) TDO(004) MASK(3FF);\n",
        "J1_MAIN",
    );
    let (report, _) = run(&board, &measure);
    assert!(report.passed() && report.hazards.is_empty(), "{report:?}");
}

#[test]
fn an_svf_file_on_a_board_of_several_ports_needs_its_port() {
    let board = demo();
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().to_path_buf();
    let bare = dir.join("bare.svf");
    std::fs::write(&bare, "STATE RESET;\nSIR 12 TDI(FFF);\n").unwrap();
    let e = load_program(&bare, &board, None).unwrap_err();
    assert_eq!(
        *e.kind,
        ProgramErrorKind::SvfPortNeeded(vec!["J1_MAIN".into(), "J2_AUX".into()])
    );
    // About the file as a whole: `path: message`, no `:0:0` place.
    assert!(
        e.to_string().starts_with(&format!(
            "{}: an SVF file drives one TAP port",
            bare.display()
        )),
        "{e}"
    );
    assert!(e.to_string().contains("J1_MAIN, J2_AUX"), "{e}");
    // The header the SVF writer puts names the port; --port wins over it.
    let named = dir.join("named.svf");
    std::fs::write(
        &named,
        "! program: x\n! TAP port: J2_AUX\nSTATE RESET;\nSIR 17 TDI(1FFFF);\n",
    )
    .unwrap();
    let p = load_program(&named, &board, None).unwrap();
    assert!(p.steps.iter().all(|s| s.port == "J2_AUX"));
    let p = load_program(&named, &board, Some("J1_MAIN")).unwrap();
    assert!(p.steps.iter().all(|s| s.port == "J1_MAIN"));
    let _ = std::fs::remove_dir_all(&dir);
}

// ---------------------------------------------------------------------------
// 6. SAMPLE is not a preload where PRELOAD has an opcode of its own.

#[test]
fn a_separate_sample_does_not_count_as_a_preload() {
    // IEEE 1149.1-2001 (clause 8, from memory) separates SAMPLE and PRELOAD
    // and does not require SAMPLE's Update-DR to load the update latches.
    // U3 (QM5508) has SAMPLE 01 and PRELOAD 02; U1 (QM7420) shares one
    // opcode, 1, between them: one instruction, SAMPLE/PRELOAD. The IR path
    // is U1's 4 bits then U3's 8 (nearest TDO): TDI(1 01) puts SAMPLE in
    // both, TDI(1 02) PRELOAD in U3; TDI(000) is EXTEST in both. The
    // boundary path is 90 bits (the demo's interconnect export).
    let board = demo();
    let unloaded = |ir: &str| {
        let program = svf(
            &format!("STATE RESET;\nSIR 12 TDI({ir});\nSDR 90 TDI(0);\nSIR 12 TDI(000);\n"),
            "J1_MAIN",
        );
        let (report, _) = run(&board, &program);
        report
            .hazards
            .iter()
            .filter_map(|h| match &h.event {
                BoardEvent::ExtestWithoutPreload { device, .. } => Some(device.clone()),
                _ => None,
            })
            .collect::<Vec<_>>()
    };
    assert_eq!(unloaded("101"), ["U3"]);
    assert_eq!(unloaded("102"), Vec::<String>::new());
}

// ---------------------------------------------------------------------------
// 9. A short between nets driven to opposite levels is contention.

#[test]
fn a_short_between_opposite_drivers_is_reported_as_contention() {
    // Two strong drivers at opposite levels on one conductor fight, whatever
    // made the conductor (common practice; the reason shorts damage drivers).
    // The demo interconnect program gives LB_D0 and LB_D1 different
    // modified-counting codes, so some vector drives them apart.
    let good = demo();
    let spec = virtual_board::DefectSpec {
        short: Some(vec!["LB_D0".into(), "LB_D1".into()]),
        ..Default::default()
    };
    let faulty = good
        .with_defects(&[spec], &mut bsdl_files_beside(&good.path))
        .unwrap_or_else(|e| panic!("{e}"));
    // Programs are compiled for the board as designed, then run on the faulty one.
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        &good,
        None,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let mut board = faulty.board.clone();
    let report = Runner::new(&mut board, RunOptions::default()).run(&program);
    let fights: Vec<_> = report
        .hazards
        .iter()
        .filter_map(|h| match &h.event {
            BoardEvent::Contention { net, drivers, .. } => Some((net.clone(), drivers.clone())),
            _ => None,
        })
        .collect();
    assert!(!fights.is_empty(), "{:?}", report.hazards);
    for (net, drivers) in &fights {
        assert!(net.contains("LB_D0") || net.contains("LB_D1"), "{net}");
        assert!(drivers.iter().any(|d| d.level) && drivers.iter().any(|d| !d.level));
    }
    // The good board raises none.
    let mut board = good.board.clone();
    let report = Runner::new(&mut board, RunOptions::default()).run(&program);
    assert!(report.hazards.is_empty(), "{:?}", report.hazards);
}

#[test]
fn a_floating_read_by_a_self_monitoring_output_cell_names_that_cell() {
    // A BC_9 cell on a three-state output captures the pad itself in EXTEST
    // (IEEE 1149.1-2001 cell BC_9, from memory: a self-monitoring output).
    // Demo QM5508 with its cell 49 (PC(0), OUTPUT3, control cell 41,
    // disable value 1) made a BC_9, alone on net N0 that floats high. With
    // the driver disabled, the compared bit 49 reads the floating net: the
    // hazard must name cell 49 (the pad has no input cell; cell 0 was named
    // before, whose bit is not compared, so the hazard was dropped).
    let dir = repo().join("scenarios/devices");
    let yaml = r#"
name: bc9
float: high
devices:
  U3: { bsdl: qm5508_bc9.bsd, outputs: off }
tap_ports:
  - { name: P, chain: [U3] }
nets:
  N0: [U3.PC(0)]
"#;
    let loaded = load_board_text(yaml, &dir.join("bc9.yaml"), &mut |p: &Path| {
        let real = dir.join("qm5508_port_controller.bsd");
        let text = std::fs::read_to_string(&real).expect("demo BSDL present");
        let changed = text.replace("\"49   (BC_1,  PC(0),", "\"49   (BC_9,  PC(0),");
        assert_ne!(changed, text, "cell 49 of the demo file");
        Ok((changed, dir.join(p)))
    })
    .unwrap_or_else(|e| panic!("{e}"));
    // PRELOAD (02) with only cell 41 set (PC disabled), EXTEST (00), then
    // compare bit 49 only: 1, the float level.
    let program = svf(
        "STATE RESET;\nSIR 8 TDI(02);\nSDR 50 TDI(0020000000000);\nSIR 8 TDI(00);\n\
         SDR 50 TDI(0020000000000) TDO(2000000000000) MASK(2000000000000);\n",
        "P",
    );
    let (report, _) = run(&loaded, &program);
    assert!(report.passed(), "{:?}", report.scans);
    let floating: Vec<(String, u32, Option<String>)> = report
        .hazards
        .iter()
        .filter_map(|h| match &h.event {
            BoardEvent::FloatingCapture {
                device, cell, net, ..
            } => Some((device.clone(), *cell, net.clone())),
            _ => None,
        })
        .collect();
    assert_eq!(floating, [("U3".to_string(), 49, Some("N0".to_string()))]);
}

// ---------------------------------------------------------------------------
// Idle cycles in a stable state are a count (issue 19): nothing changes in
// Run-Test/Idle with TMS low (IEEE 1149.1 clause 6, from memory), so the
// board counts them instead of clocking each one.

/// Forwards to the board and counts the periods clocked one by one.
struct Counting {
    board: virtual_board::Board,
    clocked: u64,
}

impl virtual_board::TapTarget for Counting {
    fn port_count(&self) -> usize {
        self.board.port_count()
    }
    fn port_names(&self) -> Vec<String> {
        self.board.port_names()
    }
    fn clock(
        &mut self,
        port: usize,
        pins: virtual_board::TapPins,
    ) -> Result<Option<bool>, virtual_board::TargetError> {
        self.clocked += 1;
        self.board.clock(port, pins)
    }
    fn idle(
        &mut self,
        port: usize,
        tms: bool,
        count: u64,
    ) -> Result<(), virtual_board::TargetError> {
        self.board.idle(port, tms, count)
    }
}

#[test]
fn a_long_runtest_is_counted_not_clocked_one_by_one() {
    let board = demo();
    let program = svf(
        "STATE RESET;\nSTATE IDLE;\nRUNTEST 4000000000 TCK;\n",
        "J1_MAIN",
    );
    let mut target = Counting {
        board: board.board.clone(),
        clocked: 0,
    };
    let report = Runner::new(&mut target, RunOptions::default()).run(&program);
    assert_eq!(report.error, None);
    // 5 (reset) + 1 (to Run-Test/Idle) + 4e9 in Run-Test/Idle.
    assert_eq!(report.tck_cycles, 5 + 1 + 4_000_000_000);
    assert_eq!(target.board.total_cycles(), 5 + 1 + 4_000_000_000);
    // Only the 6 moving periods went through `clock` here; the board's own
    // idle clocks one reference period and counts the rest.
    assert_eq!(target.clocked, 6);
}
