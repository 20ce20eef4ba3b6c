//! Fault-dictionary diagnosis, for captures that are not an interconnect
//! failure (chain faults, non-scan parts) or that the syndrome cannot
//! explain: simulate each fault of the universe, keep its response, and rank
//! the faults by how well they explain the capture; pairs of faults among
//! the nets involved when no single fault does.

use std::collections::BTreeSet;

use virtual_board::{Bits, DefectSpec, LoadedBoard};

use super::diagnosis::{DiagnoseOptions, Explanation};
use super::recording::Recorded;
use super::syndrome::places;
use super::verify::verify;
use crate::campaign::{self, CampaignError, Fault, FaultClass};
use crate::program::Program;

/// The universe, with every short also as wired-OR and with each net
/// dominant (which way a bridge resolves depends on the drivers), and with
/// chain faults, each device dead.
fn universe(loaded: &LoadedBoard, options: &DiagnoseOptions<'_>) -> Vec<Fault> {
    let mut faults: Vec<Fault> = campaign::universe(loaded, &options.universe);
    if options.universe.classes.contains(&FaultClass::Chain) {
        for dev in loaded.board.devices() {
            let defect = DefectSpec {
                dead: Some(dev.designator().to_string()),
                ..Default::default()
            };
            faults.push(Fault {
                class: FaultClass::Chain,
                label: defect.describe(),
                defect,
                untestable: None,
            });
        }
    }
    let shorts: Vec<Fault> = faults
        .iter()
        .filter(|f| f.defect.short.is_some())
        .cloned()
        .collect();
    for f in shorts {
        let nets = f.defect.short.clone().unwrap_or_default();
        let mut variants = vec![DefectSpec {
            behaviour: Some(virtual_board::ShortRule::WiredOr),
            ..f.defect.clone()
        }];
        variants.extend(nets.iter().map(|n| DefectSpec {
            dominant: Some(n.clone()),
            ..f.defect.clone()
        }));
        for v in variants {
            faults.push(Fault {
                label: v.describe(),
                defect: v,
                ..f.clone()
            });
        }
    }
    faults
}

/// Ranks the universe's single faults against the capture (distance over
/// the recorded bits), then, when none fits exactly, pairs of the nearest
/// faults that touch the nets involved and not each other's nets.
///
/// # Errors
/// The campaign cannot run.
pub fn rank(
    loaded: &LoadedBoard,
    program: &Program,
    good: &Bits,
    recorded: &Recorded,
    involved: &BTreeSet<String>,
    options: &DiagnoseOptions<'_>,
) -> Result<(Vec<Explanation>, usize), CampaignError> {
    let faults = universe(loaded, options);
    let total = faults.len();
    let progress = |n: usize| (options.progress)("simulating the fault dictionary", n, total);
    let result = campaign::run_campaign(loaded, program, &faults, options.jobs, (1, 1), &progress)?;
    let mut simulated = result.faults;
    let capture_flips: BTreeSet<usize> = recorded.failing(good).into_iter().collect();
    let held = |k: usize| matches!(recorded.bits.get(k), Some(Some(_)));
    let mut ranked: Vec<Explanation> = result
        .results
        .iter()
        .filter(|r| r.verdict == "detected")
        .filter_map(|r| {
            let flips: BTreeSet<usize> = r
                .flips
                .as_ref()?
                .iter()
                .map(|&k| k as usize)
                .filter(|&k| held(k))
                .collect();
            (!flips.is_empty()).then(|| Explanation {
                distance: flips.symmetric_difference(&capture_flips).count(),
                defects: vec![r.fault.defect.clone()],
            })
        })
        .collect();
    ranked.sort_by_key(|c| c.distance);
    if ranked.iter().any(|c| c.distance == 0) {
        return Ok((ranked, simulated));
    }
    // Pairs of single faults that touch the nets involved, never two
    // faults on one net (a net cannot be stuck at 0 and at 1, and an open
    // and a stuck-at on one net are one explanation).
    let touches = |d: &DefectSpec| !places(loaded, d).is_disjoint(involved);
    let near: Vec<&Explanation> = ranked
        .iter()
        .filter(|c| touches(&c.defects[0]))
        .take(24)
        .collect();
    let mut pairs = Vec::new();
    for (i, a) in near.iter().enumerate() {
        for b in &near[i + 1..] {
            if places(loaded, &a.defects[0]).is_disjoint(&places(loaded, &b.defects[0])) {
                pairs.push(vec![a.defects[0].clone(), b.defects[0].clone()]);
            }
        }
    }
    let checked = verify(
        loaded,
        program,
        recorded,
        pairs,
        options,
        "simulating pairs of faults",
    );
    simulated += checked.len();
    ranked.extend(checked);
    ranked.sort_by_key(|c| c.distance);
    Ok((ranked, simulated))
}
