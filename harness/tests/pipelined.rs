//! Pipelined interconnect programs against the two-scan form: one DR scan per
//! TAP port per vector, the TCK cycles worked out from the TAP state diagram,
//! and the same fault coverage, class by class and fault by fault, on the
//! demo board and on random generated boards.
//!
//! The theory: in every DR scan Capture-DR comes before Update-DR (IEEE
//! 1149.1-2001 clause 6, the TAP state diagram), so one scan can read the
//! response to vector k and apply vector k+1; the two-scan form spends an
//! apply scan and a capture scan on a port that both drives and receives.

#[path = "support/demo.rs"]
mod demo;
#[path = "support/random_generated.rs"]
mod random_generated;

use std::collections::BTreeMap;

use harness::campaign::{self, CampaignResult, UniverseOptions};
use harness::generate::{interconnect_test, InterconnectTest, Method};
use harness::program::net_level::Schedule;
use harness::program::tck_bound::tck_bound;
use harness::program::{Action, Program, ScanKind};
use harness::run::{RunOptions, RunReport, Runner};
use virtual_board::{LoadedBoard, Rng, TapState};

fn program(test: &InterconnectTest, loaded: &LoadedBoard, schedule: Schedule) -> Program {
    let mut test = test.clone();
    test.patterns.schedule = schedule;
    test.program(loaded).unwrap_or_else(|e| panic!("{e}"))
}

fn run(loaded: &LoadedBoard, program: &Program) -> RunReport {
    Runner::new(&mut loaded.board.clone(), RunOptions::default()).run(program)
}

/// DR scans made while the vectors are applied, per TAP port.
fn vector_scans(program: &Program) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    for s in &program.steps {
        if matches!(&s.action, Action::Scan(x) if x.kind == ScanKind::Dr)
            && s.origin.vector.is_some()
        {
            *out.entry(s.port.clone()).or_default() += 1;
        }
    }
    out
}

fn paused(program: &Program) -> usize {
    program
        .steps
        .iter()
        .filter(|s| matches!(&s.action, Action::Scan(x) if x.end == TapState::PauseDr))
        .count()
}

fn campaign_of(loaded: &LoadedBoard, program: &Program) -> CampaignResult {
    let faults = campaign::universe(loaded, &UniverseOptions::default());
    campaign::run_campaign(loaded, program, &faults, 2, (1, 1), &|_| {})
        .unwrap_or_else(|e| panic!("{e}"))
}

/// Both campaigns give every fault the same verdict (and so the same counts
/// per class) and the same ambiguity groups. The responses' bits come in
/// another order, so the flipped positions themselves differ.
fn assert_same_coverage(a: &CampaignResult, b: &CampaignResult, what: &str) {
    assert_eq!(a.by_class, b.by_class, "{what}: counts per class");
    assert_eq!(a.ambiguity_groups, b.ambiguity_groups, "{what}: groups");
    assert_eq!(a.results.len(), b.results.len(), "{what}");
    for (x, y) in a.results.iter().zip(&b.results) {
        assert_eq!(x.fault, y.fault, "{what}");
        assert_eq!(
            (&x.verdict, x.flips.as_ref().map(Vec::len)),
            (&y.verdict, y.flips.as_ref().map(Vec::len)),
            "{what}: {}",
            x.fault.label
        );
    }
}

#[test]
fn the_demo_test_takes_one_dr_scan_per_port_per_vector() {
    let loaded = demo::demo();
    let test = interconnect_test(&loaded.board, Method::ModifiedCounting).unwrap();
    assert_eq!(test.vector_count(), 6);
    let old = program(&test, loaded, Schedule::ApplyThenCapture);
    let new = program(&test, loaded, Schedule::Pipelined);
    // Both TAP ports drive and receive in every vector: the two-scan form
    // makes an apply and a capture scan on each, the pipelined form one.
    let per_port =
        |n: usize| BTreeMap::from([("J1_MAIN".to_string(), n), ("J2_AUX".to_string(), n)]);
    assert_eq!(vector_scans(&old), per_port(12));
    assert_eq!(vector_scans(&new), per_port(6));
    let (old_run, new_run) = (run(loaded, &old), run(loaded, &new));
    assert!(old_run.passed() && new_run.passed());
    // Every device of both chains is in EXTEST: the DR lengths are the
    // boundary registers' lengths (J1_MAIN 90 bits, J2_AUX 70, from the
    // demo's BSDL files).
    let dr_length = |port: &str| -> usize {
        let b = &loaded.board;
        let p = b.port_index(port).unwrap();
        b.ports()[p]
            .chain
            .iter()
            .map(|&d| b.devices()[d].model().boundary_length)
            .sum()
    };
    assert_eq!((dr_length("J1_MAIN"), dr_length("J2_AUX")), (90, 70));
    // A DR scan from Run-Test/Idle back to it: Select-DR-Scan, Capture-DR,
    // Shift-DR, one TCK per bit (the last leaves for Exit1-DR), Update-DR,
    // Run-Test/Idle: length + 5. A scan held in Pause-DR and updated later
    // takes two more (Pause-DR, Exit2-DR). The pipelined form saves one
    // scan per port per vector and holds one scan per round (J2_AUX's
    // capture before J1_MAIN's, or the other way) in Pause-DR.
    assert_eq!(
        old_run.tck_cycles, 2484,
        "measured before the pipelined form"
    );
    let saved = 6 * ((90 + 5) + (70 + 5));
    assert_eq!(paused(&new), 6);
    assert_eq!(new_run.tck_cycles, 2484 - saved + 2 * 6);
    assert_eq!(new_run.tck_cycles, 1476);
    // The bound: the set-up as the program has it, plus one scan per port
    // per vector. The two-scan form is 1,020 TCK above it; the pipelined
    // one only by its five paused scans inside the vectors (the sixth, in
    // the closing safe vector, counts as set-up).
    let old_bound = tck_bound(&old, old_run.tck_cycles).unwrap();
    let new_bound = tck_bound(&new, new_run.tck_cycles).unwrap();
    assert_eq!((old_bound.bound_scans, old_bound.vector_scans), (12, 24));
    assert_eq!((new_bound.bound_scans, new_bound.vector_scans), (12, 12));
    assert_eq!(old_bound.tck - old_bound.bound, saved);
    assert_eq!(new_bound.tck - new_bound.bound, 2 * 5);
    assert_eq!(new_bound.paused, 5);
    // The same bits are compared, each against the vector it expects.
    let compared = |r: &RunReport| -> usize {
        r.scans
            .iter()
            .filter_map(|s| s.record.mask.as_deref())
            .map(|m| {
                m.chars()
                    .map(|c| c.to_digit(16).unwrap_or(0).count_ones() as usize)
                    .sum::<usize>()
            })
            .sum()
    };
    assert_eq!(compared(&old_run), compared(&new_run));
}

#[test]
fn the_demo_campaign_covers_the_same_faults_either_way() {
    let loaded = demo::demo();
    let test = interconnect_test(&loaded.board, Method::ModifiedCounting).unwrap();
    let old = campaign_of(loaded, &program(&test, loaded, Schedule::ApplyThenCapture));
    let new = campaign_of(loaded, &program(&test, loaded, Schedule::Pipelined));
    assert_same_coverage(&old, &new, "demo");
    // The figures of the two-scan form, measured before this change.
    assert_eq!((old.faults, old.detected), (485, 344));
}

/// Random boards of generated devices on one or two TAP ports, every method:
/// the same verdict for every fault of the default universe either way, and
/// at most one DR scan per TAP port per vector.
#[test]
fn random_generated_boards_keep_their_coverage() {
    let methods = [
        Method::ModifiedCounting,
        Method::TrueComplement,
        Method::WalkingOnes,
        Method::Counting,
    ];
    let mut two_port_boards = 0;
    for seed in 0..12u64 {
        let mut rng = Rng::new(0x9e11_0000 + seed);
        let (_guard, loaded) = random_generated::generated(&mut rng);
        let method = methods[seed as usize % methods.len()];
        let Ok(test) = interconnect_test(&loaded.board, method) else {
            continue;
        };
        let old = program(&test, &loaded, Schedule::ApplyThenCapture);
        let new = program(&test, &loaded, Schedule::Pipelined);
        let vectors = test.vector_count();
        let ports = loaded.board.ports().len();
        two_port_boards += usize::from(ports == 2);
        let scans: usize = vector_scans(&new).values().sum();
        assert!(scans <= vectors * ports, "seed {seed}: {scans} scans");
        assert!(
            scans < vector_scans(&old).values().sum::<usize>(),
            "seed {seed}"
        );
        let what = format!("seed {seed} ({method}, {ports} ports)");
        assert_same_coverage(
            &campaign_of(&loaded, &old),
            &campaign_of(&loaded, &new),
            &what,
        );
    }
    assert!(two_port_boards >= 3, "{two_port_boards} two-port boards");
}
