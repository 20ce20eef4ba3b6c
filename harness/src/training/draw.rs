//! Drawing an exercise's defects from the board's fault universe, the same
//! defects for the same board, levels and seed.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::BTreeSet;

use virtual_board::{DefectSpec, LoadedBoard, PatternBit, Rng};

use super::error::TrainingError;
use super::level::Level;
use crate::campaign::{universe, Fault, FaultClass, UniverseOptions};

/// Draws tries before giving up on defects that do not fit together.
const TRIES: usize = 64;

/// Draws one defect per level (two for [`Level::Double`]) from `loaded`'s
/// fault universe, only faults some scan cell can see, never two on one
/// net or device; the same board, levels and seed give the same defects.
///
/// # Errors
/// A level with nothing to draw on this board, or no combination that
/// builds after many tries.
pub fn draw(
    loaded: &LoadedBoard,
    levels: &[Level],
    seed: u64,
) -> Result<Vec<DefectSpec>, TrainingError> {
    let faults: Vec<Fault> = universe(loaded, &UniverseOptions::default())
        .into_iter()
        .filter(|f| f.untestable.is_none())
        .collect();
    let mut rng = Rng::new(virtual_board::seed_for(seed, "exercise"));
    let mut last = String::new();
    for _ in 0..TRIES {
        let mut used: BTreeSet<String> = BTreeSet::new();
        let mut chosen = Vec::new();
        for &level in levels {
            let wanted: Vec<Level> = match level {
                Level::Double => {
                    let net_level = [
                        Level::Bridge,
                        Level::LiftedPin,
                        Level::CutNet,
                        Level::StuckNet,
                    ];
                    (0..2)
                        .map(|_| net_level[pick(&mut rng, net_level.len())])
                        .collect()
                }
                l => vec![l],
            };
            for l in wanted {
                let d = one(loaded, &faults, l, &used, &mut rng)?;
                used.extend(names_in(&d));
                chosen.push(d);
            }
        }
        let mut source = virtual_board::bsdl_files_beside(&loaded.path);
        match loaded.with_defects(&chosen, &mut source) {
            Ok(_) => return Ok(chosen),
            Err(e) => last = e.to_string(),
        }
    }
    Err(TrainingError::Board(format!(
        "no defects drawn for these levels fit the board together ({last})"
    )))
}

/// One defect of `level` not touching `used`.
fn one(
    loaded: &LoadedBoard,
    faults: &[Fault],
    level: Level,
    used: &BTreeSet<String>,
    rng: &mut Rng,
) -> Result<DefectSpec, TrainingError> {
    let none = |why: String| TrainingError::Draw {
        spec: level.name().into(),
        why,
    };
    if level == Level::WrongPart {
        let board = &loaded.board;
        let fitted: Vec<(String, u64)> = board
            .devices()
            .iter()
            .filter(|d| !used.contains(d.designator()))
            .filter_map(|d| {
                Some((
                    d.designator().to_string(),
                    idcode_value(d.model().idcode.as_ref()?)?,
                ))
            })
            .collect();
        if fitted.is_empty() {
            return Err(none("no scan device of this board has an IDCODE".into()));
        }
        let (designator, code) = &fitted[pick(rng, fitted.len())];
        // Another part number: IDCODE bits 27..12 are the part number
        // (IEEE 1149.1-2013 clause 12.1.1, from memory); flip one of them.
        let bit = 12 + pick(rng, 16) as u32;
        return Ok(DefectSpec {
            wrong_device: Some(designator.clone()),
            idcode: Some(code ^ (1 << bit)),
            ..Default::default()
        });
    }
    let class: FaultClass = level
        .class()
        .ok_or_else(|| none("a level drawn otherwise".into()))?;
    let candidates: Vec<&Fault> = faults
        .iter()
        .filter(|f| f.class == class)
        .filter(|f| names_in(&f.defect).is_disjoint(used))
        .collect();
    if candidates.is_empty() {
        return Err(none(format!(
            "this board has no fault a scan cell can see at level {} (or none left beside the others drawn)",
            level.name()
        )));
    }
    Ok(candidates[pick(rng, candidates.len())].defect.clone())
}

/// A uniform pick below `n` (`n` > 0).
fn pick(rng: &mut Rng, n: usize) -> usize {
    (rng.next_u64() % n.max(1) as u64) as usize
}

/// An IDCODE pattern as a value (bits not fixed read 0); `None` when it is
/// not 32 bits.
fn idcode_value(p: &virtual_board::BitPattern) -> Option<u64> {
    if p.len() != 32 {
        return None;
    }
    Some(
        p.bits()
            .iter()
            .enumerate()
            .filter(|(_, b)| **b == PatternBit::One)
            .fold(0u64, |v, (i, _)| v | 1 << i),
    )
}

/// Every net, pin or device a defect names (a pin `U1.17` also names `U1`
/// itself, so two defects never land on one part's same pin).
pub fn names_in(d: &DefectSpec) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    if let Some(nets) = &d.short {
        out.extend(nets.iter().cloned());
    }
    for x in [&d.open, &d.stuck, &d.dominant]
        .into_iter()
        .flatten()
        .chain(d.devices_named())
    {
        out.insert(x.clone());
    }
    out
}
