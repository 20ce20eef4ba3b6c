//! Faults 64 to a machine word (each bit one faulty board) give what the
//! one-at-a-time net-level evaluation and the cycle-level reference give,
//! on random boards, random programs (both scan schedules) and random
//! faults; a campaign's result is the same with the words on and off; and
//! on a counting-sequence test the flips are the ones interconnect-test
//! theory predicts.

#[path = "../benches/support/counting.rs"]
mod counting;
#[path = "support/net_faults.rs"]
mod net_faults;
#[path = "support/random_board.rs"]
mod random_board;
#[path = "support/random_generated.rs"]
mod random_generated;

use std::path::Path;

use harness::campaign::{
    self, run_campaign_with, Evaluation, FastModel, Fault, FaultClass, UniverseOptions,
};
use harness::program::net_level::Schedule;
use harness::program::Program;
use harness::run::{RunOptions, Runner};
use proptest::prelude::*;
use virtual_board::{load_board_text, Bits, LoadedBoard, Rng, ShortRule};

use counting::counting_program;
use random_generated::generated_board;

/// Reads a device's BSDL file for a board rebuilt with a defect.
type Source<'a> =
    &'a mut dyn FnMut(&Path) -> Result<(String, std::path::PathBuf), virtual_board::BsdlError>;

/// A pattern set of `vectors` random vectors over `nets`, compiled with
/// `schedule`.
fn compiled(
    loaded: &LoadedBoard,
    nets: &[String],
    vectors: usize,
    rng: &mut Rng,
    schedule: Schedule,
) -> Option<Program> {
    let vectors = (0..vectors)
        .map(|_| counting::vector(nets, |_| (rng.next_u64() & 1) as u8))
        .collect();
    counting::compile(loaded, "random", "random", vectors, schedule).ok()
}

/// A random net-level program (1–5 vectors over up to 8 nets that have a
/// scan driver and a receiver, taken in random order where the compiler
/// can drive them together), compiled with `schedule`; `None` when the
/// good board does not pass it.
fn random_program(loaded: &LoadedBoard, rng: &mut Rng, schedule: Schedule) -> Option<Program> {
    let vectors = 1 + (rng.next_u64() % 5) as usize;
    program_of(loaded, rng, schedule, vectors)
}

/// [`random_program`] with `vectors` vectors.
fn program_of(
    loaded: &LoadedBoard,
    rng: &mut Rng,
    schedule: Schedule,
    vectors: usize,
) -> Option<Program> {
    let mut candidates: Vec<String> = loaded
        .board
        .nets()
        .iter()
        .filter(|n| !n.drivers.is_empty() && !n.receivers.is_empty())
        .map(|n| n.name.clone())
        .collect();
    for i in (1..candidates.len()).rev() {
        candidates.swap(i, (rng.next_u64() % (i as u64 + 1)) as usize);
    }
    let mut nets = Vec::new();
    for n in candidates {
        nets.push(n);
        if compiled(loaded, &nets, 1, rng, schedule).is_none() {
            nets.pop();
        }
        if nets.len() == 8 {
            break;
        }
    }
    if nets.is_empty() {
        return None;
    }
    let program = compiled(loaded, &nets, vectors, rng, schedule)?;
    let mut board = loaded.board.clone();
    Runner::new(&mut board, RunOptions::default())
        .run(&program)
        .passed()
        .then_some(program)
}

/// The faults the words take: stuck-at, open nets, open pins (left to the
/// scalar path), adjacent and all-pairs shorts, each short given a random
/// rule or dominant net.
fn net_faults(loaded: &LoadedBoard, rng: &mut Rng) -> Vec<Fault> {
    let classes = [
        FaultClass::Stuck,
        FaultClass::OpenNet,
        FaultClass::OpenPin,
        FaultClass::AdjacentShort,
        FaultClass::AnyShort,
    ];
    let options = UniverseOptions {
        classes: classes.into_iter().collect(),
    };
    let mut faults = campaign::universe(loaded, &options);
    for f in &mut faults {
        if let Some(members) = f.defect.short.clone() {
            match rng.next_u64() % 5 {
                0 => f.defect.behaviour = Some(ShortRule::WiredOr),
                1 => f.defect.behaviour = Some(ShortRule::WiredAnd),
                2 => f.defect.dominant = members.first().cloned(),
                3 => f.defect.dominant = members.last().cloned(),
                _ => {}
            }
        }
    }
    faults
}

/// The flips the cycle-level reference gives: the faulty board rebuilt from
/// its file and clocked through the program.
fn reference_flips(
    loaded: &LoadedBoard,
    program: &Program,
    good: &Bits,
    fault: &Fault,
    source: Source<'_>,
) -> Vec<u32> {
    let faulty = loaded
        .with_defects(std::slice::from_ref(&fault.defect), source)
        .unwrap();
    let mut board = faulty.board;
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    campaign::flips_of(good, &campaign::response_of(&report))
}

/// Checks one board with `program`: every fault the words take equals the
/// scalar answer, and up to `sampled` of them the reference's. Returns
/// (taken, faults).
fn check_board(
    loaded: &LoadedBoard,
    rng: &mut Rng,
    program: Option<Program>,
    sampled: usize,
    source: Source<'_>,
) -> Result<(usize, usize), TestCaseError> {
    let Some(program) = program else {
        return Ok((0, 0));
    };
    let Some(model) = FastModel::build(loaded, &program) else {
        return Ok((0, 0));
    };
    let faults = net_faults(loaded, rng);
    let words = model.flips_in_words(&faults, 1 + (rng.next_u64() % 2) as usize);
    prop_assert_eq!(words.len(), faults.len());
    let mut taken = Vec::new();
    for (f, w) in faults.iter().zip(&words) {
        if let Some(w) = w {
            let scalar = model.flips(f);
            prop_assert_eq!(Some(w), scalar.as_ref(), "{}", f.label);
            taken.push((f, w));
        }
    }
    for _ in 0..sampled.min(taken.len()) {
        let (f, w) = taken[(rng.next_u64() % taken.len() as u64) as usize];
        let reference = reference_flips(loaded, &program, &model.good, f, source);
        prop_assert_eq!(w, &reference, "{}", f.label);
    }
    Ok((taken.len(), faults.len()))
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    /// Random boards of the demo devices (bidirectional pads, keepers,
    /// pulls, `previous` floats, two TAP ports), both schedules: the words'
    /// flips equal the scalar path's for every fault they take, and the
    /// cycle-level reference's for a sample.
    #[test]
    fn words_equal_scalar_and_reference_on_demo_device_boards(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board::random_board(&mut rng);
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let program = random_program(&loaded, &mut rng, schedule);
        check_board(&loaded, &mut rng, program, 12, &mut random_board::source())?;
    }

    /// Random boards of generated devices (nets read by two inputs: two
    /// compared bits a net in one scan), both schedules.
    #[test]
    fn words_equal_scalar_and_reference_on_generated_boards(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let (_dir, loaded) = random_generated::generated(&mut rng);
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let mut source = virtual_board::bsdl_files_beside(&loaded.path);
        let program = random_program(&loaded, &mut rng, schedule);
        check_board(&loaded, &mut rng, program, 12, &mut source)?;
    }

    /// Programs of 65 to 140 vectors: more than 64 snapshots, so the
    /// words run over several blocks of snapshots.
    #[test]
    fn words_equal_scalar_and_reference_over_many_blocks(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let (_dir, loaded) = random_generated::generated(&mut rng);
        let schedule = if seed % 2 == 0 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let vectors = 65 + (rng.next_u64() % 76) as usize;
        let program = program_of(&loaded, &mut rng, schedule, vectors);
        let mut source = virtual_board::bsdl_files_beside(&loaded.path);
        let (taken, _) = check_board(&loaded, &mut rng, program, 3, &mut source)?;
        prop_assert!(taken > 0);
    }

    /// A whole campaign (default universe and all-pairs shorts) gives the
    /// same verdicts, flips, counts, ambiguity groups and paths with the
    /// words on (two threads) and off (one thread).
    #[test]
    fn campaign_is_the_same_with_words_on_and_off(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        // Generated boards live on disk, so faults the net-level model
        // leaves to the reference can rebuild them; boards of the demo
        // devices do not, so their campaign keeps the faults the model
        // answers (and the untestable).
        let (_dir, loaded) = if seed % 2 == 0 {
            let (d, l) = random_generated::generated(&mut rng);
            (Some(d), l)
        } else {
            (None, random_board::random_board(&mut rng))
        };
        let schedule = if seed % 4 < 2 { Schedule::Pipelined } else { Schedule::ApplyThenCapture };
        let Some(program) = random_program(&loaded, &mut rng, schedule) else { return Ok(()) };
        let mut options = UniverseOptions::default();
        options.classes.insert(FaultClass::AnyShort);
        options.classes.remove(&FaultClass::Chain);
        let mut faults = campaign::universe(&loaded, &options);
        if _dir.is_none() {
            let Some(model) = FastModel::build(&loaded, &program) else { return Ok(()) };
            faults.retain(|f| f.untestable.is_some() || model.flips(f).is_some());
        }
        let on = run_campaign_with(&loaded, &program, &faults, 2, (1, 1), &|_| {}, Evaluation { bit_parallel: true }).unwrap();
        let off = run_campaign_with(&loaded, &program, &faults, 1, (1, 1), &|_| {}, Evaluation { bit_parallel: false }).unwrap();
        prop_assert_eq!(&on.results, &off.results);
        prop_assert_eq!((on.faults, on.detected, on.undetected, on.untestable), (off.faults, off.detected, off.undetected, off.untestable));
        prop_assert_eq!(&on.by_class, &off.by_class);
        prop_assert_eq!(&on.ambiguity_groups, &off.ambiguity_groups);
        prop_assert_eq!(&on.paths, &off.paths);
    }
}

/// Not vacuous: on random boards of the demo devices (no non-scan parts,
/// no random floats) the words take every testable stuck-at and open-net
/// fault, many shorts (those with a strong driver in every compared scan),
/// and none of the open pins.
#[test]
fn words_take_the_net_faults() {
    let mut rng = Rng::new(20);
    let mut by_class: std::collections::BTreeMap<&str, (usize, usize)> = Default::default();
    for _ in 0..80 {
        let loaded = random_board::random_board(&mut rng);
        let Some(program) = random_program(&loaded, &mut rng, Schedule::Pipelined) else {
            continue;
        };
        let Some(model) = FastModel::build(&loaded, &program) else {
            continue;
        };
        let faults = net_faults(&loaded, &mut rng);
        for (f, w) in faults.iter().zip(model.flips_in_words(&faults, 2)) {
            if f.untestable.is_none() {
                let c = by_class.entry(f.class.name()).or_default();
                c.0 += usize::from(w.is_some());
                c.1 += 1;
            }
        }
    }
    let (stuck, open, pins) = (
        by_class["stuck"],
        by_class["open-net"],
        by_class["open-pin"],
    );
    let shorts = (
        by_class["adjacent-short"].0 + by_class["any-short"].0,
        by_class["adjacent-short"].1 + by_class["any-short"].1,
    );
    assert!(stuck.1 > 80 && stuck.0 == stuck.1, "{by_class:?}");
    assert!(open.1 > 20 && open.0 == open.1, "{by_class:?}");
    assert!(pins.1 > 40 && pins.0 == 0, "{by_class:?}");
    assert!(shorts.0 > 500 && shorts.0 * 4 > shorts.1, "{by_class:?}");
}

/// A generated board of 4 devices of 100 cells (120 nets, one receiver
/// each) with the counting sequence: net i carries code i over 7 vectors.
fn counting_board() -> (LoadedBoard, Program, Vec<String>, usize) {
    let text = generated_board::bsdl(100);
    let yaml = generated_board::chain_board_yaml("counting", 4, 100);
    let loaded = load_board_text(&yaml, Path::new("generated.yaml"), &mut |_: &Path| {
        Ok((text.clone(), "gen.bsd".into()))
    })
    .unwrap();
    let nets: Vec<String> = loaded.file.nets.keys().cloned().collect();
    let (program, width) = counting_program(&loaded, &nets, 0, "counting");
    (loaded, program, nets, width)
}

// Interconnect-test theory: with the counting sequence (W. H. Kautz, 1974)
// net i carries the code i, one bit a vector; a net stuck at v reads v in
// every vector; two nets shorted read the AND of their codes under a
// wired-AND short and the OR under a wired-OR short (N. Jarwala and
// C. W. Yau, ITC 1989, from memory). The flips follow: a net's compared bit
// in vector k flips where its faulty code differs from its own code in bit
// k. Every stuck-at fault and every short of the 120 nets (7,140 pairs,
// both rules), evaluated 64 a word, is checked against that.
#[test]
fn counting_sequence_flips_follow_the_codes() {
    let (loaded, program, nets, width) = counting_board();
    let model = FastModel::build(&loaded, &program).unwrap();
    let at = |name: &str| nets.iter().position(|n| n == name).unwrap();
    let faults = net_faults::stuck_and_pair_shorts(&nets);
    let words = model.flips_in_words(&faults, 2);
    // Where each net's compared bit of vector k sits in the response, from
    // its two stuck-at faults together: between them they flip every bit
    // of the net (stuck at 0 the 1s of its code, stuck at 1 the 0s), one a
    // vector, in vector order. (The response also holds the instruction
    // captures, which no net fault touches.)
    let mut place = Vec::new();
    for (i, pair) in words[..2 * nets.len()].chunks(2).enumerate() {
        let mut all: Vec<u32> = pair.iter().flat_map(|w| w.clone().unwrap()).collect();
        all.sort_unstable();
        all.dedup();
        assert_eq!(all.len(), width, "{}", nets[i]);
        place.push(all);
    }
    let mut every: Vec<u32> = place.iter().flatten().copied().collect();
    every.sort_unstable();
    every.dedup();
    assert_eq!(every.len(), width * nets.len());
    let expected_flips = |faulty: &[(usize, usize)]| -> Vec<u32> {
        // (net, faulty code) → the bits where the code differs from its own.
        let mut out = Vec::new();
        for &(i, code) in faulty {
            for k in (0..width).filter(|k| ((code ^ i) >> k) & 1 == 1) {
                out.push(place[i][k]);
            }
        }
        out.sort_unstable();
        out
    };
    let all_ones = (1 << width) - 1;
    let mut checked = 0;
    for (f, w) in faults.iter().zip(&words) {
        let w = w
            .as_ref()
            .unwrap_or_else(|| panic!("{} not taken", f.label));
        let d = &f.defect;
        let want = match (&d.stuck, &d.short) {
            (Some(n), _) => {
                let code = if d.value == Some(1) { all_ones } else { 0 };
                expected_flips(&[(at(n), code)])
            }
            (_, Some(pair)) => {
                let (i, j) = (at(&pair[0]), at(&pair[1]));
                let code = match d.behaviour {
                    Some(ShortRule::WiredOr) => i | j,
                    _ => i & j,
                };
                expected_flips(&[(i, code), (j, code)])
            }
            _ => unreachable!(),
        };
        assert_eq!(w, &want, "{}", f.label);
        checked += 1;
    }
    assert_eq!(checked, 2 * nets.len() + nets.len() * (nets.len() - 1));
}
