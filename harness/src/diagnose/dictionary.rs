//! Fault-dictionary diagnosis: simulate each candidate defect, keep its
//! response, and rank the candidates by how well they explain a failing
//! board's capture (exact matches first, then the nearest; pairs of faults
//! among the nets involved when no single fault explains it).

use std::collections::BTreeSet;
use std::path::Path;

use serde::Serialize;
use virtual_board::{Bits, BsdlError, DefectSpec, LoadedBoard};

use crate::campaign::{self, Fault, UniverseOptions};
use crate::program::Program;
use crate::run::{locate, RunOptions, RunReport, Runner, ScanRecord};

/// One explanation of a capture.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Candidate {
    /// The defects (one, or a pair).
    pub defects: Vec<DefectSpec>,
    /// In repair words.
    pub words: String,
    /// Compared bits where the candidate's response and the capture differ.
    pub distance: usize,
}

/// What diagnosis found.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Diagnosis {
    /// Compared bits where the capture differs from the good board.
    pub failing_bits: usize,
    /// Nets those bits read (as designed).
    pub nets_involved: Vec<String>,
    /// Candidates whose response equals the capture: an ambiguity group.
    pub exact: Vec<Candidate>,
    /// The nearest other candidates, best first.
    pub nearest: Vec<Candidate>,
    /// Faults simulated.
    pub simulated: usize,
}

/// The capture's values at the bits the program compares, in the good run's
/// order (scans paired per TAP port, in order); bits the capture lacks read 1,
/// as a floating TDO would.
pub fn real_response(good: &RunReport, real: &[ScanRecord]) -> Bits {
    let mut out = Bits::zeros(0);
    let mut used = vec![false; real.len()];
    for s in &good.scans {
        let r = &s.record;
        // Every simulated scan takes the next captured scan of its port.
        let pick = real
            .iter()
            .enumerate()
            .position(|(k, x)| !used[k] && x.port == r.port);
        let tdo = pick.and_then(|k| {
            used[k] = true;
            real[k].tdo_bits()
        });
        let Some(mask) = r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)) else {
            continue;
        };
        for i in 0..r.length {
            if mask.get(i) {
                out.push(
                    tdo.as_ref()
                        .map(|t| i < t.len() && t.get(i))
                        .unwrap_or(true),
                );
            }
        }
    }
    out
}

fn distance(a: &Bits, b: &Bits) -> usize {
    let n = a.len().max(b.len());
    (0..n)
        .filter(|&i| {
            (i < a.len() && a.get(i)) != (i < b.len() && b.get(i)) || i >= a.len() || i >= b.len()
        })
        .count()
}

/// Repair words for a defect on this board: "open at U5 pin A3", "chain
/// breaks between U1 and U3".
pub fn repair_words(loaded: &LoadedBoard, d: &DefectSpec) -> String {
    let board = &loaded.board;
    if let Some(dev) = &d.broken_link {
        if let Some((p, k)) = board
            .device_index(dev)
            .and_then(|i| board.chain_position(i))
        {
            let chain = &board.ports()[p].chain;
            return match chain.get(k + 1) {
                Some(&next) => format!(
                    "chain breaks between {dev} and {}",
                    board.devices()[next].designator()
                ),
                None => format!(
                    "chain breaks after {dev} (its TDO to the {} connector)",
                    board.ports()[p].name
                ),
            };
        }
    }
    if let Some(what) = &d.open {
        if let Some((dev, pin)) = what.split_once('.') {
            if board.device_index(dev).is_some() {
                return format!("open at {dev} pin {pin}");
            }
        }
    }
    d.describe()
}

fn source_for(
    loaded: &LoadedBoard,
) -> impl FnMut(&Path) -> Result<(String, std::path::PathBuf), BsdlError> {
    virtual_board::bsdl_files_beside(&loaded.path)
}

fn response_with(loaded: &LoadedBoard, program: &Program, defects: &[DefectSpec]) -> Option<Bits> {
    let faulty = loaded.with_defects(defects, &mut source_for(loaded)).ok()?;
    let mut board = faulty.board;
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    Some(campaign::response_of(&report))
}

/// Diagnoses a capture of a failing board.
///
/// # Errors
/// The program fails on the good board, or the campaign cannot run.
pub fn diagnose(
    loaded: &LoadedBoard,
    program: &Program,
    real: &[ScanRecord],
    jobs: usize,
) -> Result<Diagnosis, String> {
    let mut good_board = loaded.board.clone();
    let good = Runner::new(&mut good_board, RunOptions::default()).run(program);
    let good_response = campaign::response_of(&good);
    let capture = real_response(&good, real);
    let mut out = Diagnosis {
        failing_bits: distance(&good_response, &capture),
        ..Diagnosis::default()
    };
    if out.failing_bits == 0 {
        return Ok(out);
    }
    // The nets the differing bits read, as designed.
    let mut nets = BTreeSet::new();
    let mut bit = 0;
    for s in &good.scans {
        let r = &s.record;
        let Some(mask) = r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)) else {
            continue;
        };
        for i in 0..r.length {
            if !mask.get(i) {
                continue;
            }
            let differs = bit >= capture.len() || capture.get(bit) != good_response.get(bit);
            if differs {
                if let Some(net) = s
                    .layout
                    .as_deref()
                    .and_then(|l| locate(l, i))
                    .and_then(|(seg, k)| seg.cells.get(k))
                    .and_then(|c| c.net.clone())
                {
                    nets.insert(net);
                }
            }
            bit += 1;
        }
    }
    out.nets_involved = nets.iter().cloned().collect();
    // The universe, with every short also as wired-OR and with each net
    // dominant: which way a bridge resolves depends on the drivers.
    let mut faults: Vec<Fault> = campaign::universe(loaded, &UniverseOptions::default());
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
    let result = campaign::run_campaign(loaded, program, &faults, jobs, (1, 1), &|_| {})?;
    out.simulated = result.faults;
    // Distances as symmetric differences of flip sets: the capture's flips
    // against each candidate's.
    let capture_flips: BTreeSet<u32> = campaign::flips_of(&good_response, &capture)
        .into_iter()
        .collect();
    let mut ranked: Vec<Candidate> = result
        .results
        .iter()
        .filter(|r| r.verdict == "detected")
        .filter_map(|r| {
            let flips: BTreeSet<u32> = r.flips.as_ref()?.iter().copied().collect();
            let distance = flips.symmetric_difference(&capture_flips).count();
            Some(Candidate {
                words: repair_words(loaded, &r.fault.defect),
                defects: vec![r.fault.defect.clone()],
                distance,
            })
        })
        .collect();
    ranked.sort_by(|a, b| a.distance.cmp(&b.distance).then(a.words.cmp(&b.words)));
    out.exact = ranked.iter().filter(|c| c.distance == 0).cloned().collect();
    if out.exact.is_empty() {
        // Pairs of single faults that touch the nets involved.
        let touches = |d: &DefectSpec| {
            let names: Vec<&String> = d
                .short
                .iter()
                .flatten()
                .chain(&d.stuck)
                .chain(&d.open)
                .collect();
            names.iter().any(|n| {
                nets.contains(n.as_str()) || nets.iter().any(|x| n.starts_with(&format!("{x}.")))
            })
        };
        let near: Vec<&Candidate> = ranked
            .iter()
            .filter(|c| touches(&c.defects[0]))
            .take(24)
            .collect();
        let mut pairs = Vec::new();
        for (i, a) in near.iter().enumerate() {
            for b in &near[i + 1..] {
                let defects = vec![a.defects[0].clone(), b.defects[0].clone()];
                if let Some(resp) = response_with(loaded, program, &defects) {
                    out.simulated += 1;
                    let distance = distance(&resp, &capture);
                    pairs.push(Candidate {
                        words: format!("{}, and {}", a.words, b.words),
                        defects,
                        distance,
                    });
                }
            }
        }
        pairs.sort_by(|a, b| a.distance.cmp(&b.distance).then(a.words.cmp(&b.words)));
        out.exact = pairs.iter().filter(|c| c.distance == 0).cloned().collect();
        ranked.extend(pairs.into_iter().filter(|c| c.distance > 0));
        ranked.sort_by(|a, b| a.distance.cmp(&b.distance).then(a.words.cmp(&b.words)));
    }
    out.nearest = ranked
        .into_iter()
        .filter(|c| c.distance > 0)
        .take(5)
        .collect();
    Ok(out)
}
