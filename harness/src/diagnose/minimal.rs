//! No redundant explanations: a multi-defect explanation is reported only
//! when every one of its defects is needed.
//!
//! Two defects on one net never form an explanation (`syndrome::places`
//! keeps them apart: a net cannot be stuck at 0 and at 1, and an open and a
//! stuck-at on one net are one explanation). Here each exact explanation
//! of several defects is checked by simulating it with each defect left
//! out: when what is left still gives the capture bit for bit, the defect
//! changed no recorded bit and the smaller explanation takes its place.

use virtual_board::LoadedBoard;

use super::diagnosis::{DiagnoseOptions, Explanation};
use super::recording::Recorded;
use super::verify::verify;
use crate::program::Program;

/// `explanations` with every exact multi-defect one reduced to the defects
/// it needs; returns them and the number of extra simulations.
pub fn minimal(
    loaded: &LoadedBoard,
    program: &Program,
    recorded: &Recorded,
    mut explanations: Vec<Explanation>,
    options: &DiagnoseOptions<'_>,
) -> (Vec<Explanation>, usize) {
    let mut simulated = 0;
    let mut needed: Vec<Vec<virtual_board::DefectSpec>> = Vec::new();
    let next = |explanations: &[Explanation], needed: &[Vec<virtual_board::DefectSpec>]| {
        explanations.iter().position(|e| {
            e.distance == 0
                && e.defects.len() > 1
                && !needed.iter().any(|n| same_set(n, &e.defects))
        })
    };
    while let Some(at) = next(&explanations, &needed) {
        let whole = explanations[at].defects.clone();
        let smaller: Vec<Vec<_>> = (0..whole.len())
            .map(|skip| {
                whole
                    .iter()
                    .enumerate()
                    .filter(|(i, _)| *i != skip)
                    .map(|(_, d)| d.clone())
                    .collect()
            })
            .collect();
        simulated += smaller.len();
        let fits: Vec<Explanation> = verify(
            loaded,
            program,
            recorded,
            smaller,
            options,
            "checking that every defect is needed",
        )
        .into_iter()
        .filter(|e| e.distance == 0)
        .collect();
        if fits.is_empty() {
            needed.push(whole);
        } else {
            explanations.remove(at);
            for f in fits {
                if !explanations
                    .iter()
                    .any(|e| same_set(&e.defects, &f.defects))
                {
                    explanations.push(f);
                }
            }
        }
    }
    (explanations, simulated)
}

fn same_set<T: PartialEq>(a: &[T], b: &[T]) -> bool {
    a.len() == b.len() && a.iter().all(|x| b.contains(x))
}
