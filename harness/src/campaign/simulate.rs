//! Running a campaign: every fault of the universe simulated through every
//! TCK cycle of the program (the reference), classified, and grouped.

use super::campaign_error::CampaignError;
use super::merge_error::MergeError;
use std::collections::{BTreeMap, BTreeSet};
use std::time::Instant;

use serde::{Deserialize, Serialize};
use virtual_board::{Bits, LoadedBoard};

use super::universe::{Fault, FaultClass};
use super::workers::{evaluate_all, Campaign, Evaluation};
use crate::program::Program;
use crate::run::{RunOptions, RunReport, Runner};

/// What simulating one fault gave.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct FaultResult {
    /// The fault.
    pub fault: Fault,
    /// `detected`, `undetected` or `untestable`.
    pub verdict: String,
    /// Why it was not detected (or cannot be).
    #[serde(default)]
    pub reason: Option<String>,
    /// The response a fault dictionary keeps, as the positions of the
    /// compared bits (in scan order) that differ from the good board's.
    #[serde(default)]
    pub flips: Option<Vec<u32>>,
}

/// Counts for one class (or all).
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Counts {
    /// Faults simulated or classified.
    pub faults: usize,
    /// Caught by the program.
    pub detected: usize,
    /// Testable, not caught.
    pub undetected: usize,
    /// No scan cell can see it.
    pub untestable: usize,
}

/// A campaign's result: the JSON of `boardtwin campaign --json`.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct CampaignResult {
    /// Program name.
    pub program: String,
    /// `I/N`: which slice of the universe this is.
    pub shard: String,
    /// All faults of this result.
    pub faults: usize,
    /// Detected.
    pub detected: usize,
    /// Undetected.
    pub undetected: usize,
    /// Untestable.
    pub untestable: usize,
    /// Counts per fault class.
    pub by_class: BTreeMap<String, Counts>,
    /// Number of ambiguity groups of detected faults (faults with identical
    /// responses), and how many groups have each size.
    pub ambiguity_groups: AmbiguityGroups,
    /// How many faults of each class each evaluation took: `net-level`
    /// (the fast model), `chains-only` (a chain fault run on the board's
    /// chains without its nets), `board` (a faulty board run through the
    /// program), `classified` (untestable, not run). Path → class → faults.
    #[serde(default)]
    pub paths: BTreeMap<String, BTreeMap<String, usize>>,
    /// Faults simulated per second of wall time.
    pub faults_per_second: f64,
    /// Wall time.
    pub wall_seconds: f64,
    /// Every fault with its verdict and response.
    pub results: Vec<FaultResult>,
}

/// The diagnostic resolution of a campaign.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct AmbiguityGroups {
    /// Groups of detected faults with identical responses.
    pub count: usize,
    /// Group size → number of groups of that size.
    pub sizes: BTreeMap<usize, usize>,
    /// The largest group's size.
    pub largest: usize,
}

/// Positions where `response` differs from `good` (a missing bit differs).
pub fn flips_of(good: &Bits, response: &Bits) -> Vec<u32> {
    let n = good.len().max(response.len());
    (0..n)
        .filter(|&i| i >= good.len() || i >= response.len() || good.get(i) != response.get(i))
        .map(|i| i as u32)
        .collect()
}

/// The bits a program compares, in scan order: the response a fault changes.
pub fn response_of(report: &RunReport) -> Bits {
    let mut out = Bits::zeros(0);
    for s in &report.scans {
        let r = &s.record;
        let (Some(mask), Some(tdo)) = (
            r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)),
            r.tdo_bits(),
        ) else {
            continue;
        };
        for i in 0..r.length {
            if mask.get(i) {
                out.push(tdo.get(i));
            }
        }
    }
    out
}

/// Nets the good run compares, each with the set of values expected there.
fn expected_per_net(good: &RunReport) -> BTreeMap<String, BTreeSet<bool>> {
    let mut out: BTreeMap<String, BTreeSet<bool>> = BTreeMap::new();
    for s in &good.scans {
        let r = &s.record;
        let (Some(mask), Some(exp), Some(layout)) = (
            r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)),
            r.expected
                .as_deref()
                .and_then(|e| Bits::from_hex(e, r.length)),
            s.layout.as_ref(),
        ) else {
            continue;
        };
        for i in 0..r.length {
            if !mask.get(i) {
                continue;
            }
            if let Some((seg, k)) = crate::run::locate(layout, i) {
                if let Some(net) = seg.cells.get(k).and_then(|c| c.net.clone()) {
                    out.entry(net).or_default().insert(exp.get(i));
                }
            }
        }
    }
    out
}

/// Why a testable fault went undetected, from what the program compares.
pub(super) fn why_missed(fault: &Fault, expected: &BTreeMap<String, BTreeSet<bool>>) -> String {
    let d = &fault.defect;
    let seen = |n: &str| expected.get(n);
    if let (Some(net), Some(v)) = (&d.stuck, d.value) {
        return match seen(net) {
            None => format!("no compared bit reads net {net}"),
            Some(vals) if vals.len() == 1 && vals.contains(&(v == 1)) => {
                format!("net {net} is expected at {v} in every compared bit")
            }
            Some(_) => "the fault does not change any compared bit".into(),
        };
    }
    if let Some(what) = &d.open {
        return match seen(what) {
            None if !what.contains('.') => format!("no compared bit reads net {what}"),
            Some(vals) if vals.len() == 1 => {
                format!("net {what} floats to the one value it is expected at")
            }
            _ => "the open does not change any compared bit".into(),
        };
    }
    if let Some(nets) = &d.short {
        let read: Vec<&String> = nets.iter().filter(|n| seen(n).is_some()).collect();
        if read.is_empty() {
            return format!("no compared bit reads {}", nets.join(" or "));
        }
        return format!(
            "{} carry values the short does not change",
            nets.join(" and ")
        );
    }
    "the fault does not change any compared bit".into()
}

/// Simulates every fault of `faults` (the reference: a faulty board, every
/// TCK cycle; the net-level model where it gives the same answer) on `jobs`
/// threads, calling `progress` with the number of faults done.
///
/// # Errors
/// [`CampaignError`]: the good board does not pass the program (a campaign
/// needs a program that passes on the good board), or a fault does not fit
/// the board.
pub fn run_campaign(
    loaded: &LoadedBoard,
    program: &Program,
    faults: &[Fault],
    jobs: usize,
    shard: (usize, usize),
    progress: &(dyn Fn(usize) + Sync),
) -> Result<CampaignResult, CampaignError> {
    run_campaign_with(
        loaded,
        program,
        faults,
        jobs,
        shard,
        progress,
        Evaluation::default(),
    )
}

/// [`run_campaign`] with the evaluation chosen (for tests that compare the
/// ways: every [`Evaluation`] gives the same result).
///
/// # Errors
/// As [`run_campaign`].
pub fn run_campaign_with(
    loaded: &LoadedBoard,
    program: &Program,
    faults: &[Fault],
    jobs: usize,
    shard: (usize, usize),
    progress: &(dyn Fn(usize) + Sync),
    evaluation: Evaluation,
) -> Result<CampaignResult, CampaignError> {
    let start = Instant::now();
    let mut good_board = loaded.board.clone();
    let good = Runner::new(&mut good_board, RunOptions::default()).run(program);
    if !good.passed() {
        return Err(CampaignError::GoodBoardFails {
            failed: good.failed_scans(),
            scans: good.scans.len(),
        });
    }
    let good_response = response_of(&good);
    let expected = expected_per_net(&good);
    let fast = super::fast::FastModel::build(loaded, program).filter(|m| m.good == good_response);
    let chains = super::chain_only::ChainOnly::build(loaded, program);
    let campaign = Campaign {
        loaded,
        program,
        faults,
        good: &good_response,
        expected: &expected,
        fast: fast.as_ref(),
        chains: chains.as_ref(),
    };
    let (results, paths) = evaluate_all(&campaign, jobs, evaluation, progress)?;
    let mut out = summarise(&program.name, results, shard);
    out.paths = paths;
    let wall = start.elapsed().as_secs_f64();
    out.wall_seconds = wall;
    out.faults_per_second = if wall > 0.0 {
        out.faults as f64 / wall
    } else {
        0.0
    };
    Ok(out)
}

/// One fault on a faulty board through the program (an untestable one is
/// classified without a run).
pub(super) fn simulate_one(
    loaded: &LoadedBoard,
    program: &Program,
    fault: &Fault,
    good: &Bits,
    expected: &BTreeMap<String, BTreeSet<bool>>,
) -> Result<FaultResult, CampaignError> {
    if let Some(why) = &fault.untestable {
        return Ok(FaultResult {
            fault: fault.clone(),
            verdict: "untestable".into(),
            reason: Some(why.clone()),
            flips: None,
        });
    }
    let defect = std::slice::from_ref(&fault.defect);
    // Chain and cluster-pin faults change no net: they go on a copy of the
    // good board; the others rebuild the board from its file.
    let mut board = match loaded.with_board_defects(defect) {
        Some(built) => built,
        None => {
            let mut source = virtual_board::bsdl_files_beside(&loaded.path);
            loaded.with_defects(defect, &mut source).map(|l| l.board)
        }
    }
    .map_err(|error| CampaignError::Fault {
        fault: fault.label.clone(),
        error,
    })?;
    // Only the captured bits and the verdict count here: no chain layouts.
    let options = RunOptions {
        layouts: false,
        ..RunOptions::default()
    };
    let report = Runner::new(&mut board, options).run(program);
    Ok(verdict_of(fault, &report, good, expected))
}

/// The verdict and failing bits of a faulty board's run.
pub(super) fn verdict_of(
    fault: &Fault,
    report: &RunReport,
    good: &Bits,
    expected: &BTreeMap<String, BTreeSet<bool>>,
) -> FaultResult {
    let flips = flips_of(good, &response_of(report));
    let detected = report.error.is_some() || !flips.is_empty() || !report.passed();
    FaultResult {
        verdict: if detected { "detected" } else { "undetected" }.into(),
        reason: (!detected).then(|| why_missed(fault, expected)),
        flips: Some(flips),
        fault: fault.clone(),
    }
}

/// Counts, classes and ambiguity groups of a set of fault results (also
/// what `campaign-merge` computes over shards).
pub fn summarise(
    program: &str,
    results: Vec<FaultResult>,
    shard: (usize, usize),
) -> CampaignResult {
    let mut out = CampaignResult {
        program: program.to_string(),
        shard: format!("{}/{}", shard.0, shard.1),
        ..Default::default()
    };
    let mut by_class = [(); FaultClass::ALL.len()].map(|_| None::<Counts>);
    for r in &results {
        let class = FaultClass::ALL
            .iter()
            .position(|&x| x == r.fault.class)
            .unwrap_or(0);
        let c = by_class[class].get_or_insert_with(Counts::default);
        c.faults += 1;
        match r.verdict.as_str() {
            "detected" => {
                c.detected += 1;
                out.detected += 1;
            }
            "undetected" => {
                c.undetected += 1;
                out.undetected += 1;
            }
            _ => {
                c.untestable += 1;
                out.untestable += 1;
            }
        }
    }
    for (class, counts) in FaultClass::ALL.iter().zip(by_class) {
        if let Some(counts) = counts {
            out.by_class.insert(class.name().to_string(), counts);
        }
    }
    out.faults = results.len();
    out.ambiguity_groups = super::ambiguity::groups(&results);
    out.results = results;
    out
}

/// The faults of shard `i` of `n` (1-based): the i-th of `n` contiguous,
/// nearly equal slices of the universe's fixed order, so the shards are
/// disjoint, together the whole universe, and joined in shard order they
/// give the universe's order back.
pub fn shard_of(faults: Vec<Fault>, i: usize, n: usize) -> Vec<Fault> {
    let (start, end) = shard_range(faults.len(), i, n);
    faults.into_iter().skip(start).take(end - start).collect()
}

/// The positions `start..end` of shard `i` of `n` in a universe of `len`
/// faults (empty when `i` is not in `1..=n`).
pub fn shard_range(len: usize, i: usize, n: usize) -> (usize, usize) {
    if n == 0 || i == 0 || i > n {
        return (0, 0);
    }
    ((i - 1) * len / n, i * len / n)
}

/// The `I` of a shard written `I/N`.
fn shard_index(shard: &str) -> Option<usize> {
    shard.split_once('/')?.0.parse().ok()
}

/// Refuses a set of shards (`i/n`) that is not every shard of one `n`,
/// naming the missing ones: a merge of 1 of 2 shards is not a whole result.
fn check_complete(shards: &BTreeSet<String>) -> Result<(), MergeError> {
    let mut of = None;
    let mut have = BTreeSet::new();
    for s in shards {
        let parsed = s
            .split_once('/')
            .and_then(|(i, n)| Some((i.parse::<usize>().ok()?, n.parse::<usize>().ok()?)))
            .filter(|(i, n)| (1..=*n).contains(i));
        let Some((i, n)) = parsed else {
            return Err(MergeError::Shards(format!(
                "shard `{s}` is not i/n (a shard's own result)"
            )));
        };
        if of.is_some_and(|m| m != n) {
            return Err(MergeError::Shards(format!(
                "shards of different splits: {}/{} and {s}",
                have.first().copied().unwrap_or(0),
                of.unwrap_or(0)
            )));
        }
        of = Some(n);
        have.insert(i);
    }
    let n = of.unwrap_or(0);
    let missing: Vec<String> = (1..=n)
        .filter(|i| !have.contains(i))
        .map(|i| format!("{i}/{n}"))
        .collect();
    if missing.is_empty() {
        Ok(())
    } else {
        Err(MergeError::Missing {
            missing: missing.join(", "),
            of: n,
        })
    }
}

/// Joins shard results into one.
///
/// # Errors
/// Results of different programs, shards that overlap, or a set of shards
/// that is not every shard of one split.
pub fn merge(parts: Vec<CampaignResult>) -> Result<CampaignResult, MergeError> {
    let Some(first) = parts.first() else {
        return Err(MergeError::Empty);
    };
    let program = first.program.clone();
    // In shard order, the results come back in the universe's order.
    let mut parts = parts;
    parts.sort_by_key(|p| shard_index(&p.shard));
    let mut all = Vec::new();
    let mut seen_shards = BTreeSet::new();
    let mut wall: f64 = 0.0;
    let mut paths: BTreeMap<String, BTreeMap<String, usize>> = BTreeMap::new();
    for p in parts {
        for (path, classes) in &p.paths {
            for (class, n) in classes {
                *paths
                    .entry(path.clone())
                    .or_default()
                    .entry(class.clone())
                    .or_default() += n;
            }
        }
        if p.program != program {
            return Err(MergeError::Programs {
                first: program,
                other: p.program,
            });
        }
        if !seen_shards.insert(p.shard.clone()) {
            return Err(MergeError::ShardTwice(p.shard));
        }
        wall = wall.max(p.wall_seconds);
        all.extend(p.results);
    }
    let mut labels = BTreeSet::new();
    for r in &all {
        if !labels.insert((r.fault.label.clone(), r.fault.class)) {
            return Err(MergeError::FaultTwice(r.fault.label.clone()));
        }
    }
    check_complete(&seen_shards)?;
    let n = seen_shards.len();
    let mut out = summarise(&program, all, (n, n));
    out.shard = format!("merged {n}");
    out.paths = paths;
    out.wall_seconds = wall;
    out.faults_per_second = if wall > 0.0 {
        out.faults as f64 / wall
    } else {
        0.0
    };
    Ok(out)
}
