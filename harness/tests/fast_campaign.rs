//! The fast campaign evaluation equals the cycle-level reference, on random
//! boards, random net-level programs and random faults.

#[path = "../benches/support/counting.rs"]
#[allow(dead_code)]
mod counting;
#[path = "support/demo.rs"]
mod demo;
#[path = "support/random_board.rs"]
mod random_board;

use harness::campaign::{self, FastModel, FaultClass, UniverseOptions};
use harness::program::net_level::Schedule;
use harness::program::Program;
use harness::run::{RunOptions, Runner};
use proptest::prelude::*;
use random_board::{random_board, random_board_on, random_board_with_parts, source};
use virtual_board::{LoadedBoard, Rng};

/// A random net-level program over nets that have a scan driver and
/// receiver, compiled with `schedule`.
fn random_program(loaded: &LoadedBoard, rng: &mut Rng, schedule: Schedule) -> Option<Program> {
    let b = &loaded.board;
    let mut nets: Vec<String> = b
        .nets()
        .iter()
        .filter(|n| !n.drivers.is_empty() && !n.receivers.is_empty())
        .map(|n| n.name.clone())
        .collect();
    nets.retain(|_| !rng.next_u64().is_multiple_of(3));
    nets.truncate(6);
    if nets.is_empty() {
        return None;
    }
    let count = 1 + rng.next_u64() % 4;
    let vectors = (0..count)
        .map(|_| counting::vector(&nets, |_| (rng.next_u64() & 1) as u8))
        .collect();
    let program = counting::compile(loaded, "random", "random", vectors, schedule).ok()?;
    // The good board must pass it (a shared control cell can drive a net the
    // pattern expects otherwise): such programs are not campaign material.
    let mut board = loaded.board.clone();
    Runner::new(&mut board, RunOptions::default())
        .run(&program)
        .passed()
        .then_some(program)
}

fn reference(
    loaded: &LoadedBoard,
    program: &Program,
    fault: &campaign::Fault,
) -> virtual_board::Bits {
    let faulty = loaded
        .with_defects(std::slice::from_ref(&fault.defect), &mut source())
        .unwrap();
    let mut board = faulty.board;
    campaign::response_of(&Runner::new(&mut board, RunOptions::default()).run(program))
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn fast_responses_equal_the_reference(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        // Both schedules: pipelined programs hold scans in Pause-DR and
        // update them in the next step of their port, which the fast model
        // takes (it refuses only a scan that starts from a Pause state).
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some(program) = random_program(&loaded, &mut rng, schedule) else { return Ok(()) };
        let model = FastModel::build(&loaded, &program);
        prop_assert!(model.is_some() || schedule == Schedule::ApplyThenCapture);
        let Some(model) = model else { return Ok(()) };
        let options = UniverseOptions { classes: [FaultClass::Stuck, FaultClass::OpenNet, FaultClass::AdjacentShort, FaultClass::AnyShort].into_iter().collect() };
        let faults = campaign::universe(&loaded, &options);
        for _ in 0..12 {
            let mut f = faults[(rng.next_u64() % faults.len() as u64) as usize].clone();
            if f.defect.short.is_some() {
                match rng.next_u64() % 3 {
                    0 => f.defect.behaviour = Some(virtual_board::ShortRule::WiredOr),
                    1 => f.defect.dominant = f.defect.short.as_ref().and_then(|s| s.first().cloned()),
                    _ => {}
                }
                f.label = f.defect.describe();
            }
            if let Some(fast) = model.evaluate(&f) {
                prop_assert_eq!(fast, reference(&loaded, &program, &f), "{}", f.label);
            }
        }
    }
}

/// The property is not vacuous: on the board the benchmark style uses,
/// most faults take the fast path.
#[test]
fn most_net_faults_take_the_fast_path() {
    let mut rng = Rng::new(11);
    let mut fast = 0;
    let mut total = 0;
    for _ in 0..40 {
        let loaded = random_board(&mut rng);
        let Some(program) = random_program(&loaded, &mut rng, Schedule::ApplyThenCapture) else {
            continue;
        };
        let Some(model) = FastModel::build(&loaded, &program) else {
            continue;
        };
        let options = UniverseOptions {
            classes: [
                FaultClass::Stuck,
                FaultClass::OpenNet,
                FaultClass::AdjacentShort,
            ]
            .into_iter()
            .collect(),
        };
        for f in campaign::universe(&loaded, &options) {
            total += 1;
            if let Some(r) = model.evaluate(&f) {
                fast += 1;
                assert_eq!(r, reference(&loaded, &program, &f), "{}", f.label);
            }
        }
    }
    assert!(
        total > 200 && fast * 2 > total,
        "{fast} of {total} faults took the fast path"
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    /// Every open net, open pin and adjacent short of a random board
    /// (bidirectional pads, keepers, pulls, `previous` floats among them):
    /// the fast answer equals the reference.
    #[test]
    fn open_nets_equal_the_reference(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        // Both schedules: pipelined programs hold scans in Pause-DR and
        // update them in the next step of their port, which the fast model
        // takes (it refuses only a scan that starts from a Pause state).
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some(program) = random_program(&loaded, &mut rng, schedule) else { return Ok(()) };
        let model = FastModel::build(&loaded, &program);
        prop_assert!(model.is_some() || schedule == Schedule::ApplyThenCapture);
        let Some(model) = model else { return Ok(()) };
        let options = UniverseOptions { classes: [FaultClass::OpenNet, FaultClass::OpenPin, FaultClass::AdjacentShort].into_iter().collect() };
        for f in campaign::universe(&loaded, &options) {
            if let Some(fast) = model.evaluate(&f) {
                prop_assert_eq!(fast, reference(&loaded, &program, &f), "{}", f.label);
            }
        }
    }
}

/// Open nets whose pads both drive and read (the demo devices' BC_7 BIDIR
/// cells) take the fast path, and agree with the reference.
#[test]
fn open_nets_with_bidirectional_pads_take_the_fast_path() {
    let mut rng = Rng::new(23);
    let (mut fast, mut total) = (0, 0);
    for _ in 0..40 {
        let loaded = random_board(&mut rng);
        let Some(program) = random_program(&loaded, &mut rng, Schedule::ApplyThenCapture) else {
            continue;
        };
        let Some(model) = FastModel::build(&loaded, &program) else {
            continue;
        };
        let options = UniverseOptions {
            classes: [FaultClass::OpenNet].into_iter().collect(),
        };
        for f in campaign::universe(&loaded, &options) {
            let net = &loaded.board.nets()[loaded
                .board
                .net_index(f.defect.open.as_deref().unwrap())
                .unwrap()];
            let bidirectional = net
                .drivers
                .iter()
                .any(|d| net.receivers.iter().any(|r| (r.0, r.1) == (d.0, d.1)));
            if !bidirectional {
                continue;
            }
            total += 1;
            if let Some(r) = model.evaluate(&f) {
                fast += 1;
                assert_eq!(r, reference(&loaded, &program, &f), "{}", f.label);
            }
        }
    }
    assert!(
        total > 20 && fast * 10 > total * 9,
        "{fast} of {total} open bidirectional nets took the fast path"
    );
}

/// The reference verdict and failing bits of a chain fault: the board
/// rebuilt from its file with the defect, every scan of the faulted chain
/// clocked bit by bit.
fn chain_reference(
    loaded: &LoadedBoard,
    program: &Program,
    fault: &campaign::Fault,
) -> (String, Vec<u32>) {
    let mut good_board = loaded.board.clone();
    let good =
        campaign::response_of(&Runner::new(&mut good_board, RunOptions::default()).run(program));
    let faulty = loaded
        .with_defects(std::slice::from_ref(&fault.defect), &mut source())
        .unwrap();
    let mut board = faulty.board;
    board.set_chain_fault_words(false);
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    let flips = campaign::flips_of(&good, &campaign::response_of(&report));
    let detected = report.error.is_some() || !flips.is_empty() || !report.passed();
    let verdict = if detected { "detected" } else { "undetected" };
    (verdict.to_string(), flips)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    /// Every chain fault of a random board (broken links, TDO stuck at 0
    /// and 1, TMS and TCK open, TRST* stuck), both scan schedules: the
    /// campaign (the fault put on a copy of the good board, whole scans on
    /// the faulted chain) gives the reference's verdict and failing bits,
    /// fault by fault.
    #[test]
    fn chain_faults_equal_the_reference(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some(program) = random_program(&loaded, &mut rng, schedule) else { return Ok(()) };
        chain_campaign_equals_the_reference(&loaded, &program)?;
    }

    /// The same on boards of one TAP port, where most chain faults run on
    /// the board's chains without its nets (`chains-only`): the cut chain
    /// hides every net from the tester. Verdict and failing bits equal the
    /// reference's (the full board rebuilt with the defect, bit by bit),
    /// fault by fault, both scan schedules.
    #[test]
    fn chain_faults_on_one_port_equal_the_reference(seed in any::<u64>()) {
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some((loaded, program)) = one_port_case(seed, schedule) else { return Ok(()) };
        chain_campaign_equals_the_reference(&loaded, &program)?;
    }
}

/// A random one-port board and a random program that passes on it (most
/// random programs do not: a shared control cell drives a net the pattern
/// expects otherwise), from up to 16 boards drawn from `seed`.
fn one_port_case(seed: u64, schedule: Schedule) -> Option<(LoadedBoard, Program)> {
    let mut rng = Rng::new(seed);
    (0..16).find_map(|_| {
        let loaded = random_board_on(&mut rng, 1);
        let program = random_program(&loaded, &mut rng, schedule)?;
        Some((loaded, program))
    })
}

/// Every chain fault of `loaded` through `program` in a campaign: each
/// ran on a faulty board (whole or its chains alone) and gave the
/// reference's verdict and failing bits.
fn chain_campaign_equals_the_reference(
    loaded: &LoadedBoard,
    program: &Program,
) -> Result<(), TestCaseError> {
    let options = UniverseOptions {
        classes: [FaultClass::Chain].into_iter().collect(),
    };
    let faults = campaign::universe(loaded, &options);
    let result = campaign::run_campaign(loaded, program, &faults, 1, (1, 1), &|_| {}).unwrap();
    prop_assert_eq!(run_on_a_board(&result), faults.len());
    for r in &result.results {
        let (verdict, flips) = chain_reference(loaded, program, &r.fault);
        prop_assert_eq!(&r.verdict, &verdict, "{}", r.fault.label);
        prop_assert_eq!(r.flips.as_ref(), Some(&flips), "{}", r.fault.label);
    }
    Ok(())
}

/// Chain faults run on a faulty board: the whole board or its chains alone.
fn run_on_a_board(result: &campaign::CampaignResult) -> usize {
    ["board", "chains-only"]
        .iter()
        .filter_map(|p| result.paths.get(*p)?.get("chain"))
        .sum()
}

/// On one-port boards most chain faults take the chains-only path (a
/// broken link, TMS or TCK open, a TDO stuck at 1 all leave the devices
/// after the cut in BYPASS); those that load a capturing instruction after
/// the cut (a TDO stuck at 0 where all-zeros is EXTEST) run on the full
/// board.
#[test]
fn most_chain_faults_on_one_port_take_the_chains_only_path() {
    let (mut total, mut cut) = (0, 0);
    for seed in 0..8u64 {
        let Some((loaded, program)) = one_port_case(seed, Schedule::Pipelined) else {
            continue;
        };
        let options = UniverseOptions {
            classes: [FaultClass::Chain].into_iter().collect(),
        };
        let faults = campaign::universe(&loaded, &options);
        let result =
            campaign::run_campaign(&loaded, &program, &faults, 1, (1, 1), &|_| {}).unwrap();
        total += faults.len();
        cut += result
            .paths
            .get("chains-only")
            .and_then(|c| c.get("chain"))
            .copied()
            .unwrap_or(0);
    }
    assert!(
        total > 40 && cut * 2 > total,
        "{cut} of {total} chain faults took the chains-only path"
    );
}

proptest! {
    // Random programs code at most six nets, so most cases touch a part
    // only now and then: more cases than the other properties.
    #![proptest_config(ProptestConfig { cases: 160, ..ProptestConfig::default() })]

    /// Stuck-at, open-net and part-pin faults on random boards with random
    /// non-scan parts (gates, buffers, three-state buffers, series
    /// resistors), both scan schedules: wherever the net-level model
    /// answers (now also on the nets that feed a part or that a part
    /// drives, and on the parts' pins), its response equals the
    /// reference's (the board rebuilt with the defect and run through the
    /// program).
    #[test]
    fn faults_next_to_parts_equal_the_reference(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let (loaded, _) = random_board_with_parts(&mut rng);
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some(program) = random_program(&loaded, &mut rng, schedule) else { return Ok(()) };
        let Some(model) = FastModel::build(&loaded, &program) else { return Ok(()) };
        let options = UniverseOptions { classes: [FaultClass::Stuck, FaultClass::OpenNet, FaultClass::ClusterPin].into_iter().collect() };
        for f in campaign::universe(&loaded, &options) {
            if f.untestable.is_some() {
                continue;
            }
            if let Some(fast) = model.evaluate(&f) {
                prop_assert_eq!(fast, reference(&loaded, &program, &f), "{}", f.label);
            }
        }
    }
}

/// On the demo board, whose generated test drives through its buffer,
/// three-state buffer and series resistor, every stuck-at and open net
/// next to a part and every part-pin fault is answered by the net-level
/// model, and each answer equals the reference's, fault by fault.
#[test]
fn demo_faults_next_to_parts_take_the_net_level_path() {
    let loaded = demo::demo();
    let test = harness::generate::interconnect_test(
        &loaded.board,
        harness::generate::Method::ModifiedCounting,
    )
    .unwrap();
    let program = test.program(loaded).unwrap();
    let model = FastModel::build(loaded, &program).unwrap();
    let parts = [
        "LB_CS0_N",
        "P3_CS0_N",
        "LB_WR_N",
        "P3_WR_N",
        "LB_A3",
        "LAMP_OE_N",
        "P3_A3",
    ];
    let options = UniverseOptions {
        classes: [
            FaultClass::Stuck,
            FaultClass::OpenNet,
            FaultClass::ClusterPin,
        ]
        .into_iter()
        .collect(),
    };
    let (mut near, mut pins) = (0, 0);
    for f in campaign::universe(loaded, &options) {
        let net = f.defect.stuck.as_ref().or(f.defect.open.as_ref());
        let pin = f.class == FaultClass::ClusterPin;
        if f.untestable.is_some() || !(pin || net.is_some_and(|n| parts.contains(&n.as_str()))) {
            continue;
        }
        pins += usize::from(pin);
        near += 1;
        let fast = model.evaluate(&f);
        assert!(fast.is_some(), "{} left to the reference", f.label);
        assert_eq!(fast, Some(reference(loaded, &program, &f)), "{}", f.label);
    }
    assert!(
        near >= 20 && pins >= 12,
        "{near} faults next to parts, {pins} on their pins"
    );
}
