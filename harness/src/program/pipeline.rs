//! Pipelined interconnect scans: each DR scan captures the response to the vector before and applies the next one.
//!
//! A DR scan captures at Capture-DR and applies what it shifted in at
//! Update-DR (IEEE 1149.1-2001 clause 6, the TAP state diagram): one scan
//! can read the response to vector k and apply vector k+1. The vectors then
//! take one DR scan per TAP port each, and the safe vector that ends the
//! test captures the response to the last one.
//!
//! TAP ports are scanned one after another, so while one port's scan runs
//! the others hold what they last updated. The compiler follows what every
//! device's update latches hold at each Capture-DR, and compares a
//! receiver's bit only when the whole board holds the vector it expects:
//! the same state the two-scan form captures under, so every fault reads
//! the same response (coverage is identical, `harness/tests/pipelined.rs`).
//! To keep that true it orders each round's scans:
//!
//! 1. the ports that compare first, those whose bits do not change before
//!    those whose bits do; then the ports that only apply;
//! 2. a scan whose update would change the board before a later scan of the
//!    round captures stops in Pause-DR (two more TCK) and is updated after
//!    the round's last scan;
//! 3. break before make, as in the two-scan form: a port that takes a net
//!    over from another port's driver is updated after the others; where
//!    two ports take nets over from each other, each scans a release vector
//!    first (its next vector with those drivers off) and the next vector
//!    after the round.
//!
//! A port scans in a round only when its bits change or it compares, and
//! every port scans the safe vector at the end.

use virtual_board::{Bits, TapState};

use super::handover;
use super::net_level::{plain, Plan};
use super::{Action, PatternError, ScanKind, Step};

/// One port's scan in a round.
struct RoundScan {
    port: usize,
    /// Compares the response to the vector before.
    compares: bool,
    /// Its update changes what the port's devices drive.
    changes: bool,
    /// Takes a net over from another port's driver.
    taker: bool,
}

/// The vector phase of `plan` as pipelined scans, ending with the safe
/// vector in every port (which captures the last response).
///
/// # Errors
/// A capture that would see the board in a state other than the vector it
/// compares (a fault of this compiler; no pattern set gives it).
pub(super) fn pipelined(plan: &Plan<'_>) -> Result<Vec<Step>, PatternError> {
    let board = plan.board;
    let count = plan.vectors.len();
    let name = plan.name;
    // What each device's update latches hold (the safe vector, preloaded).
    let mut latched: Vec<Option<Bits>> = plan.safe.to_vec();
    let mut steps = Vec::new();
    for r in 0..=count {
        let closing = r == count;
        let target: &[Option<Bits>] = if closing { plan.safe } else { &plan.vectors[r] };
        let handover = handover::handover(board, &latched, target);
        let release = handover.needs_release();
        let first: &[Option<Bits>] = if release { &handover.release } else { target };
        let changes = |p: usize, to: &[Option<Bits>], latched: &[Option<Bits>]| {
            board.ports()[p]
                .chain
                .iter()
                .any(|&d| to[d].is_some() && to[d] != latched[d])
        };
        let compares = |p: usize| {
            r > 0
                && plan.receivers[r - 1]
                    .iter()
                    .any(|x| board.ports()[p].chain.contains(&x.0))
        };
        let order: &[usize] = if closing { plan.leave } else { plan.ports };
        let mut round: Vec<RoundScan> = order
            .iter()
            .map(|&p| {
                let taker = handover.takes_from.contains_key(&p);
                let to = if taker { first } else { target };
                RoundScan {
                    port: p,
                    compares: compares(p),
                    changes: changes(p, to, &latched),
                    taker,
                }
            })
            .filter(|s| closing || s.compares || s.changes)
            .collect();
        round.sort_by_key(|s| (!s.compares, s.changes, !s.taker));
        let label = |k: usize| plan.labels[k].as_str();
        let applies = if closing {
            "safe vector (drivers off)".to_string()
        } else {
            format!("{}: apply", label(r))
        };
        let vector = (!closing).then_some(r);
        let mut paused: Vec<(usize, bool)> = Vec::new();
        for (i, s) in round.iter().enumerate() {
            let to = if s.taker { first } else { target };
            let pause = s.changes && (s.taker || round[i + 1..].iter().any(|x| x.compares));
            let end = if pause {
                TapState::PauseDr
            } else {
                TapState::RunTestIdle
            };
            let tdi = plan.dr(s.port, to);
            let mut note = format!("{name}: {applies}");
            if release && s.taker {
                note.push_str(" (release: another port's driver lets go first)");
            }
            let scan = if s.compares {
                // What the board holds now is what this capture reads.
                let k = r - 1;
                if let Some(d) = (0..latched.len()).find(|&d| latched[d] != plan.vectors[k][d]) {
                    return Err(PatternError::Internal(format!(
                        "internal: the capture of {} on TAP port {} would see {} not holding {}",
                        label(k),
                        board.ports()[s.port].name,
                        board.devices()[d].designator(),
                        label(k)
                    )));
                }
                note.push_str(&format!("; capture {}", label(k)));
                plan.compared(s.port, k, tdi, end)
            } else {
                None
            }
            .unwrap_or_else(|| {
                let mut scan = plain(ScanKind::Dr, plan.dr(s.port, to));
                scan.end = end;
                scan
            });
            if pause {
                note.push_str(" (held in Pause-DR)");
                paused.push((s.port, s.taker));
            } else {
                latch(board, s.port, to, &mut latched);
            }
            steps.push(plan.step(s.port, Action::Scan(scan), note, vector));
        }
        // Break before make: the ports that take nothing over first.
        paused.sort_by_key(|&(_, taker)| taker);
        for (p, taker) in paused {
            let to = if taker { first } else { target };
            latch(board, p, to, &mut latched);
            let goto = Action::Goto {
                path: Vec::new(),
                end: TapState::RunTestIdle,
            };
            let note = format!("{name}: {applies}: update");
            steps.push(plan.step(p, goto, note, vector));
        }
        if release {
            for s in round.iter().filter(|s| s.taker) {
                let scan = plain(ScanKind::Dr, plan.dr(s.port, target));
                latch(board, s.port, target, &mut latched);
                let note = format!("{name}: {applies} (after the release)");
                steps.push(plan.step(s.port, Action::Scan(scan), note, vector));
            }
        }
    }
    Ok(steps)
}

/// Port `p`'s devices take `to` into their update latches.
fn latch(
    board: &virtual_board::Board,
    p: usize,
    to: &[Option<Bits>],
    latched: &mut [Option<Bits>],
) {
    for &d in &board.ports()[p].chain {
        if to[d].is_some() {
            latched[d].clone_from(&to[d]);
        }
    }
}
