//! Adaptive diagnosis: the follow-up test that tells an ambiguity group
//! apart.
//!
//! When several explanations give the capture bit for bit, the test's codes
//! cannot tell them apart: aliasing (a faulty net reads another net's good
//! code) or confounding (two faults give one response) in the words of
//! N. Jarwala and C. W. Yau, "A new framework for analyzing test generation
//! and diagnosis algorithms for wiring interconnects", ITC 1989. The remedy
//! of the adaptive methods (W.-T. Cheng, J. L. Lewandowski and E. Wu,
//! "Optimal diagnostic methods for wiring interconnects", IEEE TCAD 1992;
//! both from memory) is a second, short test over the suspect nets only,
//! made after the first one's result.
//!
//! Here the suspect nets are those the group names that the interconnect
//! test (the drivers `generate` chooses) can drive. The vectors tried are
//! every combination of their levels when they are few (at most
//! [`EXHAUSTIVE`]), else the all-0, all-1, walking-ones and walking-zeros
//! vectors over them; every other net of the test is held at 0. Each
//! explanation of the group is simulated on the cycle-level board with all
//! the vectors tried, and a vector tells two explanations apart when their
//! captures in it differ. The follow-up is the fewest vectors that tell
//! every pair apart that any vector tried does: an exhaustive search over
//! small sets first, greedy set cover (the usual logarithmic approximation,
//! D. S. Johnson, 1974, from memory) where that search would be too long.
//! The chosen vectors are compiled on their own and every explanation is
//! simulated again on them, so what the follow-up is said to tell apart is
//! what the reference gives.

use std::collections::{BTreeMap, BTreeSet};

use serde::Serialize;
use virtual_board::{Bits, DefectSpec, LoadedBoard};

use super::diagnosis::{Candidate, DiagnoseOptions};
use super::error::DiagnoseError;
use super::follow_up_text::{notes, readings};
use super::syndrome::places;
use super::verify::responses;
use crate::generate::{interconnect_test, InterconnectTest, Method};
use crate::program::net_level::{PatternSet, Schedule, Vector};
use crate::program::{Action, Program};

/// Up to this many suspect nets, every combination of their levels is
/// tried (2^6 = 64 vectors).
pub const EXHAUSTIVE: usize = 6;
/// The search for the fewest vectors looks at no more sets than this.
const SUBSETS: usize = 200_000;

/// A follow-up test and what it tells apart.
#[derive(Clone, Debug, Serialize)]
pub struct FollowUp {
    /// The explanations of the group, in repair words.
    pub group: Vec<String>,
    /// The nets the vectors set (every other net of the test is held at 0).
    pub nets: Vec<String>,
    /// Vectors tried.
    pub tried: usize,
    /// How the suspect nets are set in each vector of the follow-up.
    pub vectors: Vec<BTreeMap<String, u8>>,
    /// True when no fewer of the vectors tried tell the same pairs apart
    /// (proven by trying every smaller set); false when greedy set cover chose.
    pub fewest: bool,
    /// Pairs of explanations in the group.
    pub pairs: usize,
    /// Pairs the follow-up tells apart (checked by simulation).
    pub told_apart: usize,
    /// Pairs no vector tried tells apart (by their pins and nets alike to
    /// every net-level test, such as a net stuck at 1 and the same net open
    /// and floating high).
    pub alike: Vec<(String, String)>,
    /// What the suspect nets read under each explanation.
    pub readings: Vec<Reading>,
    /// Explanation runs simulated.
    pub simulated: usize,
    /// The program (for the station; the same as the text).
    #[serde(skip)]
    pub program: Program,
    #[serde(skip)]
    pub(super) test: Option<InterconnectTest>,
    #[serde(skip)]
    pub(super) patterns: Option<PatternSet>,
    #[serde(skip)]
    pub(super) notes: Vec<String>,
}

/// What one explanation makes the suspect nets read in the follow-up.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Reading {
    /// The explanation.
    pub explanation: String,
    /// Per vector: each suspect net and what its receivers read (`0`, `1`,
    /// or `mixed` when they disagree).
    pub reads: Vec<BTreeMap<String, String>>,
}

/// The levels of the suspect nets in each vector tried.
fn pool(k: usize) -> Vec<Vec<bool>> {
    if k <= EXHAUSTIVE {
        return (0..1usize << k)
            .map(|c| (0..k).map(|i| (c >> i) & 1 == 1).collect())
            .collect();
    }
    let mut out = vec![vec![false; k], vec![true; k]];
    out.extend((0..k).map(|w| (0..k).map(|i| i == w).collect()));
    out.extend((0..k).map(|w| (0..k).map(|i| i != w).collect()));
    out
}

/// The vectors over every net of `test`: `nets` at the given levels, the
/// others at 0; each expects what it drives.
fn patterns(test: &InterconnectTest, nets: &[String], levels: &[&Vec<bool>]) -> PatternSet {
    let vectors = levels
        .iter()
        .enumerate()
        .map(|(k, l)| {
            let values: BTreeMap<String, u8> = test
                .nets
                .iter()
                .map(|n| {
                    let at = nets.iter().position(|x| *x == n.net);
                    (n.net.clone(), u8::from(at.is_some_and(|i| l[i])))
                })
                .collect();
            Vector {
                name: Some(format!("follow-up {}", k + 1)),
                drive: values.clone(),
                expect: values,
            }
        })
        .collect();
    PatternSet {
        name: "follow-up".into(),
        from: test.patterns.from.clone(),
        vectors,
        schedule: Schedule::ApplyThenCapture,
    }
}

/// For each compared bit of `program` (response order): the index of the
/// follow-up vector whose capture holds it (`None`: an instruction capture).
/// A capture scan is known by the note `compile_patterns` gives it
/// (`NAME: LABEL: capture`), with the names [`patterns`] gives.
pub(super) fn vector_of_bits(program: &Program, count: usize) -> Vec<Option<usize>> {
    let labels: Vec<String> = (1..=count)
        .map(|k| format!("follow-up: follow-up {k}: capture"))
        .collect();
    let mut out = Vec::new();
    for s in &program.steps {
        let Action::Scan(x) = &s.action else { continue };
        if x.expect.is_none() {
            continue;
        }
        let v = labels.iter().position(|l| *l == s.origin.note);
        out.extend(std::iter::repeat_n(v, x.mask.count_ones()));
    }
    out
}

/// The bits of `response` captured in vector `v`.
fn slice(response: &Bits, of: &[Option<usize>], v: usize) -> Vec<Option<bool>> {
    of.iter()
        .enumerate()
        .filter(|(_, x)| **x == Some(v))
        .map(|(k, _)| (k < response.len()).then(|| response.get(k)))
        .collect()
}

/// The fewest vectors whose covers (sets of pair indices) hold `want`, and
/// whether no fewer exist among them.
fn fewest(covers: &[BTreeSet<usize>], want: &BTreeSet<usize>) -> (Vec<usize>, bool) {
    // Greedy set cover: the vector that tells most pairs still together apart.
    let mut left = want.clone();
    let mut greedy = Vec::new();
    while !left.is_empty() {
        let Some(best) = (0..covers.len())
            .max_by_key(|&v| (covers[v].intersection(&left).count(), std::cmp::Reverse(v)))
        else {
            break;
        };
        if covers[best].is_disjoint(&left) {
            break;
        }
        left.retain(|p| !covers[best].contains(p));
        greedy.push(best);
    }
    greedy.sort_unstable();
    // Every smaller set, while there are few enough.
    let n = covers.len();
    let mut proven = true;
    for size in 1..greedy.len() {
        if binomial(n, size) > SUBSETS {
            proven = false;
            break;
        }
        let mut pick: Vec<usize> = (0..size).collect();
        loop {
            let covered: BTreeSet<usize> = pick
                .iter()
                .flat_map(|&v| covers[v].iter().copied())
                .collect();
            if want.is_subset(&covered) {
                return (pick, true);
            }
            // The next set of `size` indices in lexical order.
            let Some(i) = (0..size).rev().find(|&i| pick[i] < n - size + i) else {
                break;
            };
            pick[i] += 1;
            for j in i + 1..size {
                pick[j] = pick[j - 1] + 1;
            }
        }
    }
    (greedy, proven)
}

fn binomial(n: usize, k: usize) -> usize {
    (0..k).fold(1usize, |acc, i| acc.saturating_mul(n - i) / (i + 1))
}

/// Index pairs (a < b) of `m` explanations.
fn pairs(m: usize) -> Vec<(usize, usize)> {
    (0..m)
        .flat_map(|a| (a + 1..m).map(move |b| (a, b)))
        .collect()
}

/// Makes the follow-up test that tells the explanations of `group` (the
/// exact matches of a diagnosis) apart.
///
/// # Errors
/// Fewer than two explanations, no interconnect test for the board, no net
/// of the group that the test drives, or a program that does not compile
/// ([`DiagnoseError`]).
pub fn follow_up(
    loaded: &LoadedBoard,
    group: &[Candidate],
    options: &DiagnoseOptions<'_>,
) -> Result<FollowUp, DiagnoseError> {
    if group.len() < 2 {
        return Err(DiagnoseError::NothingToTellApart);
    }
    let board = &loaded.board;
    let test = interconnect_test(board, Method::ModifiedCounting)?;
    let named: BTreeSet<usize> = group
        .iter()
        .flat_map(|c| &c.defects)
        .flat_map(|d| places(loaded, d))
        .filter_map(|n| board.net_index(&n))
        .collect();
    let nets: Vec<String> = test
        .nets
        .iter()
        .filter(|n| board.net_index(&n.net).is_some_and(|i| named.contains(&i)))
        .map(|n| n.net.clone())
        .collect();
    if nets.is_empty() {
        return Err(DiagnoseError::NoDrivenNet);
    }
    let sets: Vec<Vec<DefectSpec>> = group.iter().map(|c| c.defects.clone()).collect();
    let all_pairs = pairs(group.len());

    // Every vector tried, each explanation simulated on them all.
    let tried = pool(nets.len());
    let every: Vec<&Vec<bool>> = tried.iter().collect();
    let program = test.program_with(loaded, "follow-up", &patterns(&test, &nets, &every))?;
    let of = vector_of_bits(&program, tried.len());
    let got = responses(loaded, &program, &sets, options, "trying follow-up vectors");
    let mut simulated = sets.len();
    let covers: Vec<BTreeSet<usize>> = (0..tried.len())
        .map(|v| {
            all_pairs
                .iter()
                .enumerate()
                .filter(|(_, &(a, b))| match (&got[a], &got[b]) {
                    (Some(x), Some(y)) => slice(x, &of, v) != slice(y, &of, v),
                    _ => false,
                })
                .map(|(p, _)| p)
                .collect()
        })
        .collect();
    let want: BTreeSet<usize> = covers.iter().flatten().copied().collect();
    let (mut chosen, mut proven) = fewest(&covers, &want);
    if chosen.is_empty() {
        return Err(DiagnoseError::Indistinguishable { nets });
    }

    // The chosen vectors on their own, simulated again.
    let (program, finals) = loop {
        let levels: Vec<&Vec<bool>> = chosen.iter().map(|&v| &tried[v]).collect();
        let set = patterns(&test, &nets, &levels);
        let program = test.program_with(loaded, "follow-up", &set)?;
        let finals = responses(loaded, &program, &sets, options, "checking the follow-up");
        simulated += sets.len();
        let apart = |&(a, b): &(usize, usize)| finals[a].is_some() && finals[a] != finals[b];
        let lost = want.iter().any(|&p| !apart(&all_pairs[p]));
        if lost && chosen.len() < tried.len() {
            // A vector's capture depends on the ones before it (a kept level):
            // fall back on every vector tried, which tell them apart.
            chosen = (0..tried.len()).collect();
            proven = false;
            continue;
        }
        break ((program, set), finals);
    };
    let (program, set) = program;
    let told_apart = all_pairs
        .iter()
        .filter(|&&(a, b)| finals[a].is_some() && finals[a] != finals[b])
        .count();
    let alike: Vec<(String, String)> = all_pairs
        .iter()
        .enumerate()
        .filter(|(p, _)| !want.contains(p))
        .map(|(_, &(a, b))| (group[a].words.clone(), group[b].words.clone()))
        .collect();
    let readings = readings(loaded, &program, group, &finals, &nets, chosen.len());
    let vectors = chosen
        .iter()
        .map(|&v| {
            nets.iter()
                .zip(&tried[v])
                .map(|(n, &b)| (n.clone(), u8::from(b)))
                .collect()
        })
        .collect();
    let mut out = FollowUp {
        group: group.iter().map(|c| c.words.clone()).collect(),
        nets,
        tried: tried.len(),
        vectors,
        fewest: proven,
        pairs: all_pairs.len(),
        told_apart,
        alike,
        readings,
        simulated,
        program,
        test: None,
        patterns: None,
        notes: Vec::new(),
    };
    out.notes = notes(&out);
    out.test = Some(test);
    out.patterns = Some(set);
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn few_nets_try_every_combination() {
        assert_eq!(
            pool(2),
            vec![
                vec![false, false],
                vec![true, false],
                vec![false, true],
                vec![true, true]
            ]
        );
        assert_eq!(pool(EXHAUSTIVE).len(), 64);
        // Beyond: all-0, all-1, then k walking ones and k walking zeros.
        let p = pool(8);
        assert_eq!(p.len(), 2 + 16);
        assert!(p[2][0] && p[2][1..].iter().all(|b| !b));
        assert!(!p[10][0] && p[10][1..].iter().all(|b| *b));
    }

    #[test]
    fn the_fewest_covering_vectors() {
        let set = |v: &[usize]| v.iter().copied().collect::<BTreeSet<usize>>();
        // Greedy takes the largest cover {0,1,2,3} first and needs three
        // vectors; {0,1,2,4} and {3,5,6} cover every pair with two.
        let covers = vec![
            set(&[0, 1, 2, 3]),
            set(&[0, 1, 2, 4]),
            set(&[3, 5, 6]),
            set(&[4, 5]),
            set(&[6]),
        ];
        let want = set(&[0, 1, 2, 3, 4, 5, 6]);
        assert_eq!(fewest(&covers, &want), (vec![1, 2], true));
        // One vector that covers everything.
        let covers = vec![set(&[0]), set(&[0, 1, 2])];
        assert_eq!(fewest(&covers, &set(&[0, 1, 2])), (vec![1], true));
    }

    #[test]
    fn binomials() {
        assert_eq!(binomial(64, 2), 2016);
        assert_eq!(binomial(64, 3), 41664);
        assert_eq!(binomial(5, 0), 1);
    }
}
