//! Generated interconnect and infrastructure tests: vector counts against the published formulas, and the generated programs run on the demo board, good and with defects.
//!
//! The board is the invented HC-210 demo (`scenarios/boards/harbor_controller.yaml`).
//! Its scan-accessible nets (a scan driver and a scan receiver, rails
//! aside) are 49; EXPB_READY is left out, because its only driver (U5 READY)
//! shares control cell 4 with U5 IRQ_N, which would drive IRQ_EXP_N
//! against U2 IRQ_N. So 48 read nets are coded, and 3 nets that only feed
//! non-scan parts whose outputs are read (51 codes in all).
//!
//! CAUTION, for anyone repeating these on a real board: the generated
//! interconnect programs run EXTEST, which drives the pins (on the HC-210 the
//! contactor enables are driven to their safe values). Follow the board
//! maker's procedures, the lock-out procedure and local electrical codes;
//! use a current-limited supply and an ESD-safe bench.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

use harness::generate::{
    codes, infrastructure_program, infrastructure_yaml, interconnect_test, write_native,
    GenerateError, InterconnectTest, Method,
};
use harness::program::native::{load_program, parse_native};
use harness::program::net_level::compile_patterns;
use harness::program::PatternError;
use harness::program::{Action, Program};
use harness::run::{failures_of, RunOptions, RunReport, Runner};
use virtual_board::{
    load_board, load_board_text, BsdlError, BsdlErrorKind, DefectSpec, LoadedBoard, ShortRule,
};

// ---- helpers -------------------------------------------------------------

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the workspace root")
        .to_path_buf()
}

fn board_path() -> PathBuf {
    repo().join("scenarios/boards/harbor_controller.yaml")
}

fn demo() -> &'static LoadedBoard {
    static DEMO: OnceLock<LoadedBoard> = OnceLock::new();
    DEMO.get_or_init(|| load_board(&board_path()).unwrap_or_else(|e| panic!("{e}")))
}

fn with_defect(defect: DefectSpec) -> LoadedBoard {
    let base = repo().join("scenarios/boards");
    let mut source = |p: &Path| {
        let full = base.join(p);
        std::fs::read_to_string(&full)
            .map(|t| (t, full.clone()))
            .map_err(|e| BsdlError {
                path: Some(full.clone()),
                span: Default::default(),
                kind: BsdlErrorKind::Io(e.to_string()),
            })
    };
    demo()
        .with_defects(&[defect], &mut source)
        .unwrap_or_else(|e| panic!("{e}"))
}

fn stuck(net: &str, value: u8) -> DefectSpec {
    DefectSpec {
        stuck: Some(net.into()),
        value: Some(value),
        ..Default::default()
    }
}

fn wired_or(a: &str, b: &str) -> DefectSpec {
    DefectSpec {
        short: Some(vec![a.into(), b.into()]),
        behaviour: Some(ShortRule::WiredOr),
        ..Default::default()
    }
}

fn test_of(method: Method) -> InterconnectTest {
    interconnect_test(&demo().board, method).unwrap_or_else(|e| panic!("{method}: {e}"))
}

/// The generated native text, read back as a user's file would be.
fn program_of(test: &InterconnectTest) -> Program {
    let path = repo().join("scenarios/programs/generated.yaml");
    parse_native(&test.native_yaml(), &path, demo()).unwrap_or_else(|e| panic!("{e}"))
}

/// Runs `program` on `board`; failing bits placed by the board as designed.
fn run(board: &LoadedBoard, program: &Program) -> RunReport {
    let mut b = board.board.clone();
    let mut report = Runner::new(&mut b, RunOptions::default()).run(program);
    assert_eq!(report.error, None, "{}", program.name);
    let mut good = demo().board.clone();
    report.use_layouts_of(&Runner::new(&mut good, RunOptions::default()).run(program));
    report
}

/// Steps without their origins.
fn actions(p: &Program) -> Vec<(String, Action)> {
    p.steps
        .iter()
        .map(|s| (s.port.clone(), s.action.clone()))
        .collect()
}

/// ⌈log2 x⌉ by doubling: the smallest k with 2^k >= x.
fn bits_for(x: usize) -> usize {
    let mut k = 0;
    while (1usize << k) < x {
        k += 1;
    }
    k
}

// ---- vector counts -------------------------------------------------------

#[test]
fn vector_counts_follow_the_published_formulas() {
    for n in 1..=40 {
        // Counting sequence: ceil(log2 N) (W. H. Kautz, "Testing for faults
        // in wiring networks", IEEE Trans. Computers C-23, 1974; from memory, verify).
        // Modified counting: ceil(log2(N + 2)) (P. Goel and M. T. McMahon,
        // "Electronic chip-in-place test", ITC 1982; from memory, verify).
        // True/complement: 2 ceil(log2(N + 2)) (P. T. Wagner, "Interconnect
        // testing with boundary scan", ITC 1987; the count as tabulated in
        // Bushnell and Agrawal, 2000, from memory, verify).
        // Walking ones and walking zeros: N (common practice).
        let expected = [
            (Method::Counting, bits_for(n)),
            (Method::ModifiedCounting, bits_for(n + 2)),
            (Method::TrueComplement, 2 * bits_for(n + 2)),
            (Method::WalkingOnes, n),
            (Method::WalkingZeros, n),
        ];
        for (method, count) in expected {
            let vectors = codes(method, n);
            assert_eq!(vectors.len(), count, "{method}, N = {n}");
            assert!(vectors.iter().all(|v| v.len() == n), "{method}, N = {n}");
        }
    }
    // Spot values worked by hand from the formulas: N = 5 gives 3 / 3 / 6 / 5,
    // N = 6 gives 3 / 3 / 6 (6 + 2 = 8 = 2^3), N = 7 gives 3 / 4 / 8.
    let at = |n| {
        Method::ALL
            .iter()
            .map(|m| codes(*m, n).len())
            .collect::<Vec<_>>()
    };
    assert_eq!(at(5), vec![3, 3, 6, 5, 5]);
    assert_eq!(at(6), vec![3, 3, 6, 6, 6]);
    assert_eq!(at(7), vec![3, 4, 8, 7, 7]);
}

// ---- the demo board's interconnect test ------------------------------------

#[test]
fn demo_board_nets_and_vector_counts() {
    for method in Method::ALL {
        let test = test_of(method);
        assert_eq!(test.nets.len(), 48, "{method}");
        let left: Vec<&str> = test.left_out.iter().map(|l| l.net.as_str()).collect();
        assert_eq!(left, vec!["EXPB_READY"], "{method}");
        assert!(
            test.left_out[0].reason.contains("shared control cell 4")
                && test.left_out[0].reason.contains("IRQ_EXP_N"),
            "{}",
            test.left_out[0].reason
        );
        // Three more nets are coded that no scan cell reads: LB_CS0_N,
        // LB_WR_N and LB_A3, the inputs of U30, R64 and U31, whose outputs
        // U2 reads (see `nets_through_non_scan_parts_follow_their_truth_tables`).
        let feeders: Vec<&str> = test.into_clusters.iter().map(|n| n.net.as_str()).collect();
        assert_eq!(feeders, vec!["LB_A3", "LB_CS0_N", "LB_WR_N"], "{method}");
        assert_eq!(test.vector_count(), method.vector_count(51));
    }
    let counts: Vec<usize> = Method::ALL
        .iter()
        .map(|m| test_of(*m).vector_count())
        .collect();
    // 51 coded nets: ceil(log2 51) = 6, ceil(log2 53) = 6, 2 x 6, 51, 51.
    assert_eq!(counts, vec![6, 6, 12, 51, 51]);
    // The drivers chosen where a net has two: HOST_D from U1 (so U3's PA port
    // stays off and BERTH_LAMP5..8 can be driven by U5 and read by U3).
    let test = test_of(Method::ModifiedCounting);
    let from = |net: &str| test.patterns.from[net].as_str();
    assert_eq!(from("HOST_D0"), "U1");
    assert_eq!(from("BERTH_LAMP5_N"), "U5");
    assert_eq!(from("IRQ_BRG_N"), "U3");
    assert_eq!(from("IRQ_EXP_N"), "U2");
}

#[test]
fn every_method_passes_on_the_good_board_without_hazards() {
    for method in Method::ALL {
        let test = test_of(method);
        let program = program_of(&test);
        // The text reads back as the program built directly.
        let direct = test.program(demo()).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(actions(&program), actions(&direct), "{method}");
        let report = run(demo(), &program);
        assert!(
            report.passed(),
            "{method}: {} failed scans",
            report.failed_scans()
        );
        assert!(report.hazards.is_empty(), "{method}: {:?}", report.hazards);
        // Per TAP port: SAMPLE/PRELOAD, the safe vector, EXTEST; then per
        // vector one DR scan on each port (both ports drive and receive in
        // every vector; each scan captures the vector before), then the
        // safe vector again on each port, capturing the last vector, before
        // the resets.
        assert_eq!(report.scans.len(), 8 + 2 * test.vector_count(), "{method}");
    }
}

#[test]
fn modified_counting_finds_stuck_nets() {
    let program = program_of(&test_of(Method::ModifiedCounting));
    for net in ["LB_D0", "HOST_A6", "CLK_25M_A", "HOST_D2", "IRQ_EXP_N"] {
        for value in [0, 1] {
            let report = run(&with_defect(stuck(net, value)), &program);
            assert!(!report.passed(), "{net} stuck at {value} passed");
            let nets: BTreeSet<String> = report
                .scans
                .iter()
                .flat_map(failures_of)
                .filter_map(|f| f.net)
                .collect();
            assert_eq!(
                nets,
                BTreeSet::from([net.to_string()]),
                "{net} stuck at {value}"
            );
        }
    }
}

/// Nets that fail in `report`, by name.
fn failing_nets(report: &RunReport) -> BTreeSet<String> {
    report
        .scans
        .iter()
        .flat_map(failures_of)
        .filter_map(|f| f.net)
        .collect()
}

#[test]
fn static_nets_are_the_pulled_nets_nothing_drives() {
    // Worked out by hand from the board file's `pulls:` list: of its 30
    // pulled nets, these 12 have a scan receiver and no driver at all (no
    // scan output, no non-scan part): the board-ID and expander address
    // straps, the bridge's port-controller enable and the reset line. Each
    // holds its pull's level. No input of the demo is strapped to a rail.
    let test = test_of(Method::ModifiedCounting);
    let got: Vec<(String, bool, &str)> = test
        .static_nets
        .iter()
        .map(|n| (n.net.clone(), n.level, n.held_by))
        .collect();
    let want: BTreeSet<(&str, bool)> = BTreeSet::from([
        ("BRD_ID0", false),
        ("BRD_ID1", true),
        ("BRD_ID2", false),
        ("BRD_ID3", false),
        ("EXPA_ADDR0", false),
        ("EXPA_ADDR1", false),
        ("EXPA_ADDR2", false),
        ("EXPB_ADDR0", true),
        ("EXPB_ADDR1", false),
        ("EXPB_ADDR2", false),
        ("PC_OE_N", false),
        ("SYS_RESET_N", true),
    ]);
    let got_set: BTreeSet<(&str, bool)> = got.iter().map(|(n, l, _)| (n.as_str(), *l)).collect();
    assert_eq!(got_set, want);
    for (net, level, held_by) in &got {
        assert_eq!(
            *held_by,
            if *level { "pull-up" } else { "pull-down" },
            "{net}"
        );
    }
    // A static net is no coded net: it gets a constant code, which the
    // modified counting sequence never gives a driven net (Goel and
    // McMahon, ITC 1982, from memory: all-0 and all-1 codes are kept out so
    // that a stuck-at cannot look like a good code).
    let coded: BTreeSet<&str> = test.nets.iter().map(|n| n.net.as_str()).collect();
    assert!(want.iter().all(|(n, _)| !coded.contains(n)));
}

#[test]
fn static_nets_catch_what_the_codes_cannot_reach() {
    let program = program_of(&test_of(Method::ModifiedCounting));
    // The good board passes: each static net reads its pull's level.
    assert!(run(demo(), &program).passed());
    // BRD_ID0 (pull-down) stuck at 1 is seen on exactly that net; stuck at
    // its own level 0 is the good board's behaviour and cannot be seen.
    let high = run(&with_defect(stuck("BRD_ID0", 1)), &program);
    assert_eq!(failing_nets(&high), BTreeSet::from(["BRD_ID0".to_string()]));
    assert!(run(&with_defect(stuck("BRD_ID0", 0)), &program).passed());
    // An open at U3's BRD_ID0 pin: the input floats, and the board floats
    // high (`float: high`), against the pull-down's 0.
    let open = DefectSpec {
        open: Some("U3.56".into()),
        ..Default::default()
    };
    let report = run(&with_defect(open), &program);
    assert_eq!(
        failing_nets(&report),
        BTreeSet::from(["BRD_ID0".to_string()])
    );
    // The same open on SYS_RESET_N (pull-up, U3.57) floats to the pull's own
    // level: invisible, as expected.
    let open_up = DefectSpec {
        open: Some("U3.57".into()),
        ..Default::default()
    };
    assert!(run(&with_defect(open_up), &program).passed());
}

#[test]
fn nets_through_non_scan_parts_follow_their_truth_tables() {
    // The board file's clusters, read by hand: U30 is a buffer
    // (LB_CS0_N -> P3_CS0_N), R64 a series resistor (LB_WR_N -> P3_WR_N),
    // U31 a three-state buffer (LB_A3 -> P3_A3) enabled by LAMP_OE_N low,
    // with R66 pulling P3_A3 down while it is off. U2 reads all three
    // outputs and no scan cell drives them. So, vector by vector:
    // P3_CS0_N = LB_CS0_N, P3_WR_N = LB_WR_N, and P3_A3 = LB_A3 where
    // LAMP_OE_N is 0, else 0 (74-series truth tables, common practice).
    for method in Method::ALL {
        let test = test_of(method);
        let code = |net: &str| -> Vec<bool> {
            test.nets
                .iter()
                .chain(&test.into_clusters)
                .find(|n| n.net == net)
                .unwrap_or_else(|| panic!("{net} is coded"))
                .code
                .clone()
        };
        let through = |net: &str| -> Vec<Option<bool>> {
            test.cluster_nets
                .iter()
                .find(|n| n.net == net)
                .unwrap_or_else(|| panic!("{net} is checked through its part"))
                .expect
                .clone()
        };
        let some = |v: Vec<bool>| v.into_iter().map(Some).collect::<Vec<_>>();
        assert_eq!(through("P3_CS0_N"), some(code("LB_CS0_N")), "{method}");
        assert_eq!(through("P3_WR_N"), some(code("LB_WR_N")), "{method}");
        let a3: Vec<bool> = code("LB_A3")
            .iter()
            .zip(code("LAMP_OE_N"))
            .map(|(&a, oe_n)| a && !oe_n)
            .collect();
        assert_eq!(through("P3_A3"), some(a3), "{method}");
        assert_eq!(test.cluster_nets.len(), 3, "{method}");
    }
    // The program passes on the good board, and a fault inside a non-scan
    // part now shows: U30's output stuck at the opposite of what the first
    // vector expects fails on P3_CS0_N alone.
    let test = test_of(Method::ModifiedCounting);
    let program = program_of(&test);
    assert!(run(demo(), &program).passed());
    let first = test
        .cluster_nets
        .iter()
        .find(|n| n.net == "P3_CS0_N")
        .expect("P3_CS0_N");
    let level = first.expect[0].expect("compared in vector 1");
    let stuck_y = DefectSpec {
        stuck: Some("U30.y".into()),
        value: Some(u8::from(!level)),
        ..Default::default()
    };
    let report = run(&with_defect(stuck_y), &program);
    assert_eq!(
        failing_nets(&report),
        BTreeSet::from(["P3_CS0_N".to_string()])
    );
}

#[test]
fn nets_read_back_only_at_their_driver_are_listed() {
    // LAMP_OE_N has one pin on a scan device, U3 PB(6): a BC_7 bidirectional
    // cell that captures its own pin (IEEE 1149.1 clause 11, the BC_7
    // self-monitoring cell, from memory). The driver is the only receiver,
    // so an open of the wire cannot be seen.
    let test = test_of(Method::ModifiedCounting);
    assert!(
        test.read_back_at_driver.contains(&"LAMP_OE_N".to_string()),
        "{:?}",
        test.read_back_at_driver
    );
    for name in &test.read_back_at_driver {
        let net = test.nets.iter().find(|n| &n.net == name).expect("coded");
        assert!(
            net.receivers
                .iter()
                .all(|(p, _)| p.device == net.driver.device && p.pin == net.driver.pin),
            "{name}: {:?} read by {:?}",
            net.driver,
            net.receivers
        );
    }
    // A net read through the wire is not listed: LB_D0 is driven by U1 and
    // also read by U5 (the rev B read-back).
    assert!(!test.read_back_at_driver.contains(&"LB_D0".to_string()));
    assert!(test
        .summary()
        .contains("read back at the driver only, opens not detectable"));
}

#[test]
fn counting_misses_a_stuck_at_0_on_the_all_zero_net() {
    // Kautz's counting sequence gives code 0 to the first net: it is driven to
    // 0 in every vector, so a stuck-at-0 on it reads exactly as expected.
    let counting = test_of(Method::Counting);
    let first = &counting.nets[0];
    assert!(first.code.iter().all(|b| !b), "{:?}", first.code);
    assert_eq!(first.net, "BERTH_LAMP5_N");
    let defect = || with_defect(stuck(&first.net, 0));
    let missed = run(&defect(), &program_of(&counting));
    assert!(
        missed.passed(),
        "the all-0 net stuck at 0 is not seen by counting"
    );
    // Stuck at 1 shows, and the modified counting sequence sees the stuck-at-0.
    assert!(!run(&with_defect(stuck(&first.net, 1)), &program_of(&counting)).passed());
    let modified = program_of(&test_of(Method::ModifiedCounting));
    assert!(!run(&defect(), &modified).passed());
}

#[test]
fn walking_ones_names_each_wired_or_short() {
    // Walking ones is free of aliasing and confounding for wired-OR shorts
    // (N. Jarwala and C. W. Yau, ITC 1989; from memory): a two-net short
    // fails exactly at each net's receivers in the other net's vector.
    let test = test_of(Method::WalkingOnes);
    let program = program_of(&test);
    let pairs = [
        ("LB_D0", "LB_D1"),
        ("LB_D1", "LB_D2"),
        ("LB_D0", "HOST_A6"),
        ("HOST_A6", "HOST_A7"),
        ("CLK_DIV0", "CLK_DIV1"),
        ("HOST_A0", "LB_A0"),
    ];
    let mut responses: Vec<Vec<String>> = Vec::new();
    for (a, b) in pairs {
        let report = run(&with_defect(wired_or(a, b)), &program);
        assert!(!report.passed(), "{a}-{b}");
        let failing: BTreeSet<(String, String)> = report
            .scans
            .iter()
            .flat_map(|s| {
                // The vector a scan captures (each scan captures the
                // response to the vector before the one it applies).
                let vector = s
                    .origin
                    .split_once("capture ")
                    .map_or("?", |(_, v)| v.split(" (").next().unwrap_or(v))
                    .trim_start_matches("walking 1 on ")
                    .to_string();
                failures_of(s)
                    .into_iter()
                    .map(move |f| (vector.clone(), f.net.unwrap_or_default()))
            })
            .collect();
        let expected = BTreeSet::from([
            (a.to_string(), b.to_string()),
            (b.to_string(), a.to_string()),
        ]);
        assert_eq!(failing, expected, "{a}-{b}");
        responses.push(report.scans.iter().map(|s| s.record.tdo.clone()).collect());
    }
    // The diagnosis-free form: the captured responses of any two of these
    // shorts differ.
    for i in 0..responses.len() {
        for j in i + 1..responses.len() {
            assert_ne!(
                responses[i], responses[j],
                "{:?} and {:?}",
                pairs[i], pairs[j]
            );
        }
    }
}

/// A small invented board: U2 takes no part in any coded net, and its LED
/// driver (system logic: high) shares net Y with U1 LB_A(0), which shares
/// control cell 28 with LB_A(1), the only driver of net Z.
const BYSTANDER_BOARD: &str = "
name: bystander check (invented)
devices:
  U1: { bsdl: ../devices/qm7420_bus_bridge.bsd, idcode: 0x27420A01 }
  U2: { bsdl: ../devices/qm3310_io_expander.bsd, outputs: high }
tap_ports:
  - { name: J1, chain: [U1, U2], trst: false }
nets:
  Y: [U2.LED_N(0), U1.LB_A(0)]
  Z: [U1.LB_A(1), U1.HOST_A(0)]
  W: [U1.HOST_D(0), U1.HOST_A(1)]
";

fn bystander_board() -> LoadedBoard {
    let base = repo().join("scenarios/boards");
    let mut source = |p: &Path| {
        let full = base.join(p);
        std::fs::read_to_string(&full)
            .map(|t| (t, full.clone()))
            .map_err(|e| BsdlError {
                path: Some(full.clone()),
                span: Default::default(),
                kind: BsdlErrorKind::Io(e.to_string()),
            })
    };
    load_board_text(BYSTANDER_BOARD, &base.join("bystander.yaml"), &mut source)
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn a_driver_that_would_meet_a_bystanders_system_output_is_not_chosen() {
    let board = bystander_board();
    let test =
        interconnect_test(&board.board, Method::ModifiedCounting).unwrap_or_else(|e| panic!("{e}"));
    let coded: Vec<&str> = test.nets.iter().map(|n| n.net.as_str()).collect();
    assert_eq!(coded, vec!["W"]);
    assert_eq!(test.left_out.len(), 1);
    assert_eq!(test.left_out[0].net, "Z");
    assert!(
        test.left_out[0].reason.contains("U2 takes no part")
            && test.left_out[0].reason.contains("net Y"),
        "{}",
        test.left_out[0].reason
    );
    let path = repo().join("scenarios/boards/bystander-test.yaml");
    let program =
        parse_native(&test.native_yaml(), &path, &board).unwrap_or_else(|e| panic!("{e}"));
    let mut b = board.board.clone();
    let report = Runner::new(&mut b, RunOptions::default()).run(&program);
    assert!(
        report.passed() && report.hazards.is_empty(),
        "{:?}",
        report.hazards
    );

    // Driving Z anyway: U1's LB_A(0) would fight U2's LED driver on Y, so
    // the compiler refuses, naming both drivers and the net.
    let mut patterns = test.patterns.clone();
    for v in &mut patterns.vectors {
        v.drive.insert("Z".into(), 1);
        v.expect.insert("Z".into(), 1);
    }
    let refused = compile_patterns(&patterns, &board).unwrap_err();
    assert!(matches!(refused, PatternError::Fight(_)), "{refused:?}");
    assert_eq!(
        refused.to_string(),
        "vector 1: U1.52 (LB_A(0)) and U2.24 (LED_N(0)) (system logic: the test leaves it in \
         normal mode) would drive net Y to opposite levels"
    );

    // One net coded: the counting sequence has no vector for it.
    assert_eq!(
        interconnect_test(&board.board, Method::Counting),
        Err(GenerateError::NoVectors {
            method: Method::Counting,
            nets: 1
        })
    );
}

// ---- infrastructure --------------------------------------------------------

#[test]
fn infrastructure_passes_and_finds_a_broken_link() {
    let program = infrastructure_program(&demo().board);
    let report = run(demo(), &program);
    assert!(report.passed());
    assert!(report.hazards.is_empty(), "{:?}", report.hazards);
    // Per port: IR capture, BYPASS, IR path length, IDCODE.
    assert_eq!(report.scans.len(), 8);

    let broken = DefectSpec {
        broken_link: Some("U1".into()),
        ..Default::default()
    };
    let report = run(&with_defect(broken), &program);
    let failed: Vec<(String, String, bool)> = report
        .scans
        .iter()
        .map(|s| {
            (
                s.record.port.clone(),
                s.record.register.clone(),
                s.record.passed,
            )
        })
        .collect();
    // Every J1_MAIN check sees the break after U1; J2_AUX is untouched.
    let j1 = |r: &str| ("J1_MAIN".to_string(), r.to_string(), false);
    let j2 = |r: &str| ("J2_AUX".to_string(), r.to_string(), true);
    assert_eq!(
        failed,
        vec![
            j1("IR"),
            j1("DR"),
            j1("IR"),
            j1("DR"),
            j2("IR"),
            j2("DR"),
            j2("IR"),
            j2("DR")
        ]
    );
}

#[test]
fn infrastructure_expects_what_the_standard_requires() {
    let program = infrastructure_program(&demo().board);
    let scans: Vec<_> = program
        .steps
        .iter()
        .filter_map(|s| match &s.action {
            Action::Scan(scan) => Some((s.port.as_str(), scan)),
            _ => None,
        })
        .collect();
    // IEEE 1149.1 clause 7 (from memory): every instruction register captures
    // 01 in its two bits nearest TDO. J1_MAIN: U3 (8 bits) nearest TDO, then
    // U1 (4 bits); J2_AUX: U4 (5), U5 (6), U2 (6).
    for (port, starts) in [("J1_MAIN", vec![0, 8]), ("J2_AUX", vec![0, 5, 11])] {
        let (_, ir) = scans
            .iter()
            .find(|(p, s)| *p == port && s.kind == harness::program::ScanKind::Ir)
            .expect("an IR capture scan");
        let expect = ir.expect.as_ref().expect("compared");
        for at in starts {
            assert!(ir.mask.get(at) && ir.mask.get(at + 1), "{port} bit {at}");
            assert!(expect.get(at) && !expect.get(at + 1), "{port} bit {at}");
        }
        assert_eq!(ir.tdi.count_ones(), ir.tdi.len(), "all ones is BYPASS");
    }
    // IEEE 1149.1 clause 10 (from memory): the bypass register captures 0;
    // the BYPASS scan's first bits out, one per device, are 0.
    let bypass: Vec<_> = scans
        .iter()
        .filter(|(_, s)| s.kind == harness::program::ScanKind::Dr)
        .step_by(2)
        .collect();
    for ((port, s), devices) in bypass.iter().zip([2, 3]) {
        let e = s.expect.as_ref().expect("compared");
        assert!((0..devices).all(|i| !e.get(i)), "{port}");
        assert!(
            e.get(devices),
            "{port}: the leading 1 comes out after {devices} bits"
        );
    }
}

#[test]
fn written_programs_read_back_as_the_same_steps() {
    // The generated infrastructure program, through the writer and the reader.
    let program = infrastructure_program(&demo().board);
    let path = repo().join("scenarios/programs/generated.yaml");
    let back =
        parse_native(&write_native(&program), &path, demo()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(actions(&back), actions(&program));
    assert_eq!(back.name, program.name);
    let with_header = parse_native(&infrastructure_yaml(&demo().board), &path, demo())
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(actions(&with_header), actions(&program));
    // A hand-written demo program, too.
    let demo_path = repo().join("scenarios/programs/infrastructure.yaml");
    let original = load_program(&demo_path, demo(), None).unwrap_or_else(|e| panic!("{e}"));
    let back = parse_native(&write_native(&original), &demo_path, demo())
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(actions(&back), actions(&original));
}

// ---- command line ----------------------------------------------------------

fn temp_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("generate-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the test's directory");
    dir
}

fn boardtwin(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .args(args)
        .output()
        .expect("boardtwin runs")
}

#[test]
fn cli_generates_a_program_that_plays_and_exports() {
    let dir = temp_dir("cli");
    let board = board_path();
    let board = board.to_str().expect("utf-8 path");
    let file = dir.join("ic.yaml");
    let svf = dir.join("svf");
    let out = boardtwin(&[
        "generate",
        "--board",
        board,
        "--method",
        "modified-counting",
        "-o",
        file.to_str().expect("utf-8"),
        "--svf",
        svf.to_str().expect("utf-8"),
    ]);
    // The program goes to its file, so the summary comes on stdout.
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(stdout.contains("51 nets coded, 6 vectors"), "{stdout}");
    assert!(
        stdout.contains("EXPB_READY: driving it from U5.C7"),
        "{stdout}"
    );
    assert!(
        stdout.contains("12 static nets checked at the level of their pull or rail"),
        "{stdout}"
    );
    // Per TAP port: SAMPLE/PRELOAD, the preload, EXTEST, one DR scan per
    // vector and the closing safe vector: 2 × (3 + 6 + 1).
    assert!(stdout.contains("20 scans"), "{stdout}");
    assert!(
        stdout.contains("1476 TCK cycles against a lower bound of 1466 (1.01x)"),
        "{stdout}"
    );
    // The two SVF files work only interleaved: the command says so.
    assert!(
        stdout
            .contains("warning: the 2 SVF files (TAP ports J1_MAIN, J2_AUX) work only interleaved"),
        "{stdout}"
    );
    // --json: the same summary as one object.
    let out = boardtwin(&[
        "generate",
        "--board",
        board,
        "--method",
        "modified-counting",
        "-o",
        file.to_str().expect("utf-8"),
        "--json",
    ]);
    assert!(out.status.success());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("one JSON object");
    assert_eq!(json["coded"].as_array().map(Vec::len), Some(48));
    assert_eq!(json["static"].as_array().map(Vec::len), Some(12));
    assert_eq!(json["static"][0]["net"], "BRD_ID0");
    assert_eq!(json["static"][0]["level"], false);
    assert_eq!(json["scans"], 20);
    assert_eq!(json["tck"]["tck"], 1476);
    assert_eq!(json["tck"]["bound"], 1466);
    assert!(json["read_back_at_driver"]
        .as_array()
        .is_some_and(|a| a.iter().any(|n| n == "LAMP_OE_N")));
    for f in ["ic.J1_MAIN.svf", "ic.J2_AUX.svf", "ic.replay.yaml"] {
        assert!(svf.join(f).is_file(), "{f}");
    }
    // The written program and its SVF replay both pass on the board.
    for program in [file.clone(), svf.join("ic.replay.yaml")] {
        let play = boardtwin(&[
            "play",
            "--board",
            board,
            "--strict",
            program.to_str().expect("utf-8"),
        ]);
        assert_eq!(play.status.code(), Some(0), "{}", program.display());
    }
    // With a defect the written program fails (exit 1).
    let play = boardtwin(&[
        "play",
        "--board",
        board,
        "--defect",
        "{stuck: LB_D3, value: 1}",
        file.to_str().expect("utf-8"),
    ]);
    assert_eq!(play.status.code(), Some(1));

    // No -o: the program goes to stdout; --infrastructure needs no method.
    let out = boardtwin(&["generate", "--board", board, "--infrastructure"]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.starts_with("# Infrastructure test of HC-210"),
        "{text}"
    );
    assert!(text.contains("scan_ir: { tdi: \"111111111111\", expect: \"0101000XXX01\" }"));

    // A method that does not exist is bad input (exit 2), with the choices.
    let out = boardtwin(&["generate", "--board", board, "--method", "gray-code"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("modified-counting"));

    // The two-scan form stays: an apply and a capture scan per port per
    // vector, 2 × (3 + 2 × 6 + 1) scans, in a program that says so.
    let two_scan = dir.join("two-scan.yaml");
    let two = two_scan.to_str().expect("utf-8");
    let args = [
        "generate",
        "--board",
        board,
        "--method",
        "modified-counting",
    ];
    let out = boardtwin(&[&args[..], &["--scans", "apply-then-capture", "-o", two]].concat());
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{stdout}");
    assert!(stdout.contains("32 scans"), "{stdout}");
    assert!(
        stdout.contains("2484 TCK cycles against a lower bound of 1464"),
        "{stdout}"
    );
    let text = std::fs::read_to_string(&two_scan).expect("written");
    assert!(text.contains("      scans: apply-then-capture\n"), "{text}");
    // A schedule that does not exist is bad input, with the choices.
    let out = boardtwin(&[&args[..], &["--scans", "sideways", "-o", two]].concat());
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("pipelined or apply-then-capture"),
        "{stderr}"
    );
}
