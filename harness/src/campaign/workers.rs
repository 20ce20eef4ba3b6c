//! The campaign's workers: a pool of `jobs` threads (rayon) over the
//! faults — net-level answers in chunks, board runs one fault at a time,
//! and the results collected straight into one vector in the universe's
//! order, with no lock or shared counter per fault.

use std::collections::{BTreeMap, BTreeSet};
use std::sync::atomic::{AtomicUsize, Ordering};

use rayon::prelude::*;
use virtual_board::{Bits, LoadedBoard};

use super::campaign_error::CampaignError;
use super::chain_only::ChainOnly;
use super::fast::bit_parallel::word_flips;
use super::fast::FastModel;
use super::simulate::{simulate_one, verdict_of, why_missed, FaultResult};
use super::universe::{Fault, FaultClass};
use crate::program::Program;

/// Faults a worker takes at a time on the net-level path.
const CHUNK: usize = 1024;

/// How a campaign evaluates its faults. The default is the fastest; every
/// choice gives the same result.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Evaluation {
    /// Stuck-at, open-net and two-net short faults 64 to a machine word
    /// (each bit one faulty board); off: one fault at a time.
    pub bit_parallel: bool,
}

impl Default for Evaluation {
    fn default() -> Evaluation {
        Evaluation { bit_parallel: true }
    }
}

/// Runs `work` on a pool of `jobs` threads (on the caller's pool where a
/// new one cannot be built).
pub(super) fn on_threads<R: Send>(jobs: usize, work: impl FnOnce() -> R + Send) -> R {
    match rayon::ThreadPoolBuilder::new()
        .num_threads(jobs.max(1))
        .build()
    {
        Ok(pool) => pool.install(work),
        Err(_) => work(),
    }
}

/// Which evaluation gave a fault's result.
#[derive(Clone, Copy)]
enum Path {
    /// The fast model (`fast.rs`, `fast/bit_parallel.rs`).
    NetLevel,
    /// A faulty board run through the program.
    Board,
    /// A chain fault run on the board's chains without its nets
    /// (`chain_only.rs`).
    ChainOnly,
    /// Untestable: classified without a run.
    Classified,
}

impl Path {
    const ALL: [Path; 4] = [
        Path::NetLevel,
        Path::Board,
        Path::ChainOnly,
        Path::Classified,
    ];

    fn name(self) -> &'static str {
        match self {
            Path::NetLevel => "net-level",
            Path::Board => "board",
            Path::ChainOnly => "chains-only",
            Path::Classified => "classified",
        }
    }
}

/// Faults per path and class, as a campaign result says them: path →
/// class → faults, the paths and classes with faults only.
pub(super) type Paths = BTreeMap<String, BTreeMap<String, usize>>;

/// What every worker of a campaign reads.
pub(super) struct Campaign<'a> {
    /// The good board.
    pub loaded: &'a LoadedBoard,
    /// The program.
    pub program: &'a Program,
    /// The faults, in the universe's order.
    pub faults: &'a [Fault],
    /// The good response.
    pub good: &'a Bits,
    /// Nets the good run compares, each with its expected values.
    pub expected: &'a BTreeMap<String, BTreeSet<bool>>,
    /// The net-level model, where the program allows one.
    pub fast: Option<&'a FastModel>,
    /// The board's chains without its nets, for chain faults that cut the
    /// chain, where the program allows it.
    pub chains: Option<&'a ChainOnly>,
}

/// Evaluates every fault on `jobs` threads: net-level answers first (64 a
/// word where `evaluation` says so, else one by one), then the board runs
/// (and the untestable, classified) one fault at a time, then the results
/// in the faults' order. `progress` hears how many faults are done.
///
/// # Errors
/// [`CampaignError::Fault`]: a fault does not fit the board.
pub(super) fn evaluate_all(
    c: &Campaign<'_>,
    jobs: usize,
    evaluation: Evaluation,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<(Vec<FaultResult>, Paths), CampaignError> {
    on_threads(jobs, || evaluate_on_pool(c, evaluation, progress))
}

/// [`evaluate_all`] on the current pool.
fn evaluate_on_pool(
    c: &Campaign<'_>,
    evaluation: Evaluation,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<(Vec<FaultResult>, Paths), CampaignError> {
    let n = c.faults.len();
    let done = AtomicUsize::new(0);
    let mut quick: Vec<Option<Vec<u32>>> = match c.fast {
        Some(model) if evaluation.bit_parallel => word_flips(model, c.faults),
        _ => vec![None; n],
    };
    // The net-level answers the words left, one fault at a time.
    quick
        .par_chunks_mut(CHUNK)
        .zip(c.faults.par_chunks(CHUNK))
        .for_each(|(part, faults)| {
            let mut answered = 0;
            for (slot, fault) in part.iter_mut().zip(faults) {
                if slot.is_none() && fault.untestable.is_none() {
                    *slot = c.fast.and_then(|m| m.flips(fault));
                }
                answered += usize::from(slot.is_some());
            }
            progress(done.fetch_add(answered, Ordering::Relaxed) + answered);
        });
    // The rest one at a time: a chain fault that cuts the chain on the
    // chains alone, the others on a faulty board (or classified, when
    // untestable).
    let board: Vec<usize> = (0..n).filter(|&i| quick[i].is_none()).collect();
    let ran: Vec<(Result<FaultResult, CampaignError>, Path)> = board
        .par_iter()
        .with_max_len(1)
        .map(|&i| {
            let r = run_one(c, &c.faults[i]);
            progress(done.fetch_add(1, Ordering::Relaxed) + 1);
            r
        })
        .collect();
    let mut ran_paths = ran.iter().map(|(_, p)| *p);
    let mut counts = [[0usize; FaultClass::ALL.len()]; Path::ALL.len()];
    for (slot, fault) in quick.iter().zip(c.faults) {
        let path = match slot {
            Some(_) => Path::NetLevel,
            None => ran_paths.next().unwrap_or(Path::Board),
        };
        let class = FaultClass::ALL
            .iter()
            .position(|&x| x == fault.class)
            .unwrap_or(0);
        counts[path as usize][class] += 1;
    }
    // The results, written straight into one vector by the pool. (A fault
    // without a net-level answer is in `board`, at the place its run
    // holds in `ran`.)
    // The first error in the faults' order, as a run of one thread finds it.
    let ran: Vec<FaultResult> = ran.into_iter().map(|(r, _)| r).collect::<Result<_, _>>()?;
    let mut results = Vec::with_capacity(n);
    quick
        .par_iter_mut()
        .zip(c.faults.par_iter())
        .enumerate()
        .map(|(i, (slot, fault))| match slot.take() {
            Some(flips) => net_level_result(fault, flips, c.expected),
            None => ran[board.partition_point(|&b| b < i)].clone(),
        })
        .collect_into_vec(&mut results);
    let mut paths = Paths::new();
    for (path, each) in Path::ALL.iter().zip(counts) {
        for (class, k) in FaultClass::ALL.iter().zip(each) {
            if k > 0 {
                paths
                    .entry(path.name().to_string())
                    .or_default()
                    .insert(class.name().to_string(), k);
            }
        }
    }
    Ok((results, paths))
}

/// One fault the net-level model did not answer, and the path it took.
fn run_one(c: &Campaign<'_>, fault: &Fault) -> (Result<FaultResult, CampaignError>, Path) {
    if fault.untestable.is_some() {
        let r = simulate_one(c.loaded, c.program, fault, c.good, c.expected);
        return (r, Path::Classified);
    }
    let cut = c
        .chains
        .filter(|_| fault.class == FaultClass::Chain)
        .and_then(|chains| chains.run(c.program, &fault.defect));
    match cut {
        Some(report) => (
            Ok(verdict_of(fault, &report, c.good, c.expected)),
            Path::ChainOnly,
        ),
        None => (
            simulate_one(c.loaded, c.program, fault, c.good, c.expected),
            Path::Board,
        ),
    }
}

/// A fault's result from its net-level flips.
fn net_level_result(
    fault: &Fault,
    flips: Vec<u32>,
    expected: &BTreeMap<String, BTreeSet<bool>>,
) -> FaultResult {
    FaultResult {
        verdict: if flips.is_empty() {
            "undetected"
        } else {
            "detected"
        }
        .into(),
        reason: flips.is_empty().then(|| why_missed(fault, expected)),
        flips: Some(flips),
        fault: fault.clone(),
    }
}
