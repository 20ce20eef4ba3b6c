//! The campaign's workers: faults handed to threads in chunks, each thread
//! keeping its own results, joined in the universe's order at the end — no
//! lock or shared counter per fault.

use std::collections::{BTreeMap, BTreeSet};
use std::ops::Range;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;

use virtual_board::{Bits, LoadedBoard};

use super::campaign_error::CampaignError;
use super::fast::bit_parallel::word_flips;
use super::fast::FastModel;
use super::simulate::{simulate_one, why_missed, FaultResult};
use super::universe::{Fault, FaultClass};
use crate::program::Program;

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

/// Runs `work` on `jobs` threads, each taking the next piece from `next`
/// until none is left; the results come back in the order of the pieces'
/// keys.
fn run_workers<W: Send, R: Send>(
    jobs: usize,
    next: impl Fn() -> Option<(usize, W)> + Sync,
    work: impl Fn(W) -> R + Sync,
) -> Vec<R> {
    let mut all: Vec<(usize, R)> = Vec::new();
    if jobs <= 1 {
        while let Some((k, w)) = next() {
            all.push((k, work(w)));
        }
    } else {
        std::thread::scope(|s| {
            let handles: Vec<_> = (0..jobs)
                .map(|_| {
                    s.spawn(|| {
                        let mut mine = Vec::new();
                        while let Some((k, w)) = next() {
                            mine.push((k, work(w)));
                        }
                        mine
                    })
                })
                .collect();
            for h in handles {
                match h.join() {
                    Ok(mine) => all.extend(mine),
                    Err(panic) => std::panic::resume_unwind(panic),
                }
            }
        });
    }
    all.sort_unstable_by_key(|(k, _)| *k);
    all.into_iter().map(|(_, r)| r).collect()
}

/// Runs `work` over `0..len` in ranges of `chunk` on `jobs` threads; the
/// results come back in the ranges' order.
pub(super) fn ranges_in_parallel<R: Send>(
    len: usize,
    chunk: usize,
    jobs: usize,
    work: impl Fn(Range<usize>) -> R + Sync,
) -> Vec<R> {
    let chunk = chunk.max(1);
    let next_start = AtomicUsize::new(0);
    let next = || {
        let start = next_start.fetch_add(chunk, Ordering::Relaxed);
        (start < len).then(|| (start, start..(start + chunk).min(len)))
    };
    run_workers(jobs.min(len.div_ceil(chunk)), next, work)
}

/// Runs `work(start, part)` over `items` in parts of `chunk` on `jobs`
/// threads (`start`: the part's first index); the results come back in the
/// parts' order.
pub(super) fn chunks_in_parallel<T: Send, R: Send>(
    items: &mut [T],
    chunk: usize,
    jobs: usize,
    work: impl Fn(usize, &mut [T]) -> R + Sync,
) -> Vec<R> {
    let chunk = chunk.max(1);
    let count = items.len().div_ceil(chunk);
    let queue = Mutex::new(items.chunks_mut(chunk).enumerate());
    let next = || {
        let (k, part) = queue.lock().ok()?.next()?;
        Some((k, (k * chunk, part)))
    };
    run_workers(jobs.min(count), next, |(start, part)| work(start, part))
}

/// Which evaluation gave a fault's result.
#[derive(Clone, Copy)]
enum Path {
    /// The fast model (`fast.rs`, `fast/bit_parallel.rs`).
    NetLevel,
    /// A faulty board run through the program.
    Board,
    /// Untestable: classified without a run.
    Classified,
}

impl Path {
    const ALL: [Path; 3] = [Path::NetLevel, Path::Board, Path::Classified];

    fn name(self) -> &'static str {
        match self {
            Path::NetLevel => "net-level",
            Path::Board => "board",
            Path::Classified => "classified",
        }
    }
}

/// Faults per path and class: `[path][class]`, in the order of
/// [`Path::ALL`] and [`FaultClass::ALL`].
type PathCounts = [[usize; FaultClass::ALL.len()]; 3];

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
}

/// Evaluates every fault: net-level answers first (64 a word where
/// `evaluation` says so, else one by one), then the board runs one fault at
/// a time, then the results in the faults' order. `progress` hears how
/// many faults are done.
///
/// # Errors
/// [`CampaignError::Fault`]: a fault does not fit the board.
pub(super) fn evaluate_all(
    c: &Campaign<'_>,
    jobs: usize,
    evaluation: Evaluation,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<(Vec<FaultResult>, Paths), CampaignError> {
    let jobs = jobs.max(1);
    let n = c.faults.len();
    let done = AtomicUsize::new(0);
    let mut quick: Vec<Option<Vec<u32>>> = match c.fast {
        Some(model) if evaluation.bit_parallel => word_flips(model, c.faults, jobs),
        _ => vec![None; n],
    };
    // The net-level answers the words left, one fault at a time; what is
    // left after them needs a board run.
    let board: Vec<Vec<usize>> = chunks_in_parallel(&mut quick, 1024, jobs, |start, part| {
        let mut board = Vec::new();
        for (k, slot) in part.iter_mut().enumerate() {
            let fault = &c.faults[start + k];
            if slot.is_none() && fault.untestable.is_none() {
                *slot = c.fast.and_then(|m| m.flips(fault));
                if slot.is_none() {
                    board.push(start + k);
                }
            }
        }
        let answered = part.len() - board.len();
        progress(done.fetch_add(answered, Ordering::Relaxed) + answered);
        board
    });
    let mut board: Vec<usize> = board.into_iter().flatten().collect();
    let ran = chunks_in_parallel(&mut board, 1, jobs, |_, i| {
        let r = simulate_one(c.loaded, c.program, &c.faults[i[0]], c.good, c.expected);
        progress(done.fetch_add(1, Ordering::Relaxed) + 1);
        r
    });
    let ran: Vec<FaultResult> = ran.into_iter().collect::<Result<_, _>>()?;
    // The results in the faults' order, one contiguous part per thread.
    let per = n.div_ceil(jobs).max(1);
    let parts = chunks_in_parallel(&mut quick, per, jobs, |start, part| {
        let mut out = Vec::with_capacity(part.len());
        let mut counts: PathCounts = [[0; FaultClass::ALL.len()]; 3];
        let mut next_run = board.partition_point(|&i| i < start);
        for (k, slot) in part.iter_mut().enumerate() {
            let fault = &c.faults[start + k];
            let (result, path) = match slot.take() {
                Some(flips) => (net_level_result(fault, flips, c.expected), Path::NetLevel),
                // Untestable: classified, not run.
                None if fault.untestable.is_some() => (
                    simulate_one(c.loaded, c.program, fault, c.good, c.expected)?,
                    Path::Classified,
                ),
                None => {
                    next_run += 1;
                    (ran[next_run - 1].clone(), Path::Board)
                }
            };
            let class = FaultClass::ALL
                .iter()
                .position(|&x| x == fault.class)
                .unwrap_or(0);
            counts[path as usize][class] += 1;
            out.push(result);
        }
        Ok((out, counts))
    });
    let mut results: Vec<FaultResult> = Vec::new();
    let mut counts: PathCounts = [[0; FaultClass::ALL.len()]; 3];
    for part in parts {
        let (part, c) = part?;
        if results.is_empty() {
            results = part;
        } else {
            results.extend(part);
        }
        for (total, each) in counts.iter_mut().zip(c) {
            for (t, e) in total.iter_mut().zip(each) {
                *t += e;
            }
        }
    }
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
