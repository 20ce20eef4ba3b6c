//! The fast evaluation of a campaign: net-level responses with fault-local
//! re-evaluation.
//!
//! One good run records, before each scan, how every net reads and how
//! strongly it is held, and which net each compared bit reads. A net-level
//! fault (stuck-at, open net, short) then changes only the compared bits on
//! the nets it touches, computed from those snapshots — no TCK is simulated.
//! Where that would not equal the cycle-level reference (a net that feeds a
//! non-scan part or a pass-through, a bidirectional pin reading its own
//! drive on an open net, an open net that floats to its previous or a random
//! level, a short with no strong member), `evaluate` returns `None` and the
//! campaign runs the reference for that fault. `harness/tests/fast_campaign.rs`
//! proves the two equal on random boards, programs and faults.

use std::collections::BTreeSet;

use virtual_board::{Bits, Board, FloatPolicy, LoadedBoard, ShortRule, Strength};

use super::universe::Fault;
use crate::program::Program;
use crate::run::{locate, RunOptions, Runner};

/// How one net reads before a scan.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct NetSnap {
    value: bool,
    strength: Strength,
    /// Strong drivers disagree on the net (its value is the board's rule).
    fight: bool,
}

/// The good run, reduced to what net-level faults can change.
#[derive(Clone, Debug)]
pub struct FastModel {
    /// The good response (compared bits in order).
    pub good: Bits,
    /// For each compared bit: the snapshot it was captured under and the net
    /// its cell reads (`None`: the bit does not read a net).
    bits: Vec<(usize, Option<usize>)>,
    /// Net states before each scan that compares.
    snaps: Vec<Vec<NetSnap>>,
    /// Net names → index.
    names: std::collections::HashMap<String, usize>,
    /// Nets whose level other drivers depend on (cluster inputs, followed nets).
    feeds: BTreeSet<usize>,
    /// Nets with a pad that both drives and reads.
    bidir: BTreeSet<usize>,
    /// Nets a non-scan part drives (an open net keeps those drivers).
    cluster_driven: BTreeSet<usize>,
    /// For each net, the compared bits that read it.
    bits_of_net: std::collections::HashMap<usize, Vec<u32>>,
    /// Pull and float policy of each net.
    pull: Vec<Option<bool>>,
    float: Vec<FloatPolicy>,
    short_rule: ShortRule,
}

fn snapshot(b: &Board) -> Vec<NetSnap> {
    (0..b.nets().len())
        .map(|i| NetSnap {
            value: b.net_read(i).value,
            strength: b.net_strength(i),
            fight: b.net_in_contention(i),
        })
        .collect()
}

impl FastModel {
    /// Runs the program on the good board and keeps what the fast
    /// evaluation needs. `None` when the good run fails or stops.
    pub fn build(loaded: &LoadedBoard, program: &Program) -> Option<FastModel> {
        // A scan that starts from a Pause state passes Update on its way to
        // Capture, so the board changes after the snapshot: reference only.
        let pauses = program.steps.iter().any(|s| match &s.action {
            crate::program::Action::Scan(x) => {
                x.end.is_stable()
                    && matches!(
                        x.end,
                        virtual_board::TapState::PauseDr | virtual_board::TapState::PauseIr
                    )
            }
            crate::program::Action::Goto { end, .. } | crate::program::Action::Idle { end, .. } => {
                matches!(
                    end,
                    virtual_board::TapState::PauseDr | virtual_board::TapState::PauseIr
                )
            }
            _ => false,
        });
        if pauses {
            return None;
        }
        let mut board = loaded.board.clone();
        let mut before: Vec<Vec<NetSnap>> = Vec::new();
        let report = Runner::new(&mut board, RunOptions::default())
            .run_observed(program, &mut |_, b| before.push(snapshot(b)));
        if !report.passed() {
            return None;
        }
        let b = &loaded.board;
        let names = (0..b.nets().len())
            .flat_map(|i| {
                let n = &b.nets()[i];
                std::iter::once((n.name.clone(), i))
                    .chain(n.members.iter().map(move |m| (m.clone(), i)))
            })
            .collect();
        let mut feeds = BTreeSet::new();
        for c in b.clusters() {
            feeds.extend(c.inputs.iter().filter_map(|p| p.net.map(|n| n as usize)));
        }
        for d in b.devices() {
            for s in d.system() {
                if let virtual_board::SystemDrive::Follow(n) = s {
                    feeds.insert(*n as usize);
                }
            }
        }
        let bidir = (0..b.nets().len())
            .filter(|&i| {
                let n = &b.nets()[i];
                n.drivers
                    .iter()
                    .any(|d| n.receivers.iter().any(|r| r.0 == d.0 && r.1 == d.1))
            })
            .collect();
        // Map every compared bit to its snapshot and net. Steps and scans
        // differ: the k-th scan is the step whose snapshot came before it.
        let scan_steps: Vec<usize> = program
            .steps
            .iter()
            .enumerate()
            .filter(
                |(_, s)| matches!(&s.action, crate::program::Action::Scan(x) if !x.tdi.is_empty()),
            )
            .map(|(i, _)| i)
            .collect();
        let mut bits = Vec::new();
        let mut snaps = Vec::new();
        let mut good = Bits::zeros(0);
        for (k, s) in report.scans.iter().enumerate() {
            let r = &s.record;
            let (Some(mask), Some(tdo)) = (
                r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)),
                r.tdo_bits(),
            ) else {
                continue;
            };
            if mask.count_ones() == 0 {
                continue;
            }
            let snap = before.get(*scan_steps.get(k)?)?.clone();
            let at = snaps.len();
            snaps.push(snap);
            for i in 0..r.length {
                if !mask.get(i) {
                    continue;
                }
                good.push(tdo.get(i));
                let net = s
                    .layout
                    .as_deref()
                    .and_then(|l| locate(l, i))
                    .and_then(|(seg, c)| {
                        let cell = seg.cells.get(c)?;
                        let reads_pin = ["INPUT", "CLOCK", "OBSERVE_ONLY", "BIDIR"]
                            .iter()
                            .any(|f| cell.function.split('+').any(|x| x == *f));
                        if !reads_pin {
                            return None;
                        }
                        b.net_index(cell.net.as_deref()?)
                    });
                bits.push((at, net));
            }
        }
        let mut bits_of_net: std::collections::HashMap<usize, Vec<u32>> =
            std::collections::HashMap::new();
        for (k, &(_, n)) in bits.iter().enumerate() {
            if let Some(n) = n {
                bits_of_net.entry(n).or_default().push(k as u32);
            }
        }
        Some(FastModel {
            good,
            bits,
            bits_of_net,
            snaps,
            names,
            feeds,
            bidir,
            cluster_driven: (0..b.nets().len())
                .filter(|&i| !b.nets()[i].cluster_drivers.is_empty())
                .collect(),
            pull: b.nets().iter().map(|n| n.pull).collect(),
            float: b.nets().iter().map(|n| n.float).collect(),
            short_rule: loaded.file.shorts,
        })
    }

    /// The compared bits (positions in the response) a fault flips, or
    /// `None` when only the reference can say.
    pub fn flips(&self, fault: &Fault) -> Option<Vec<u32>> {
        let d = &fault.defect;
        let net = |n: &str| self.names.get(n).copied();
        // level(snapshot, net) under the fault, for the nets it touches.
        type Rule<'a> = Box<dyn Fn(&[NetSnap]) -> bool + 'a>;
        let mut touched: Vec<(usize, Rule<'_>)> = Vec::new();
        if let (Some(n), Some(v)) = (d.stuck.as_deref().and_then(net), d.value) {
            if self.feeds.contains(&n) {
                return None;
            }
            touched.push((n, Box::new(move |_: &[NetSnap]| v == 1)));
        } else if let Some(n) = d.open.as_deref().and_then(net) {
            if self.feeds.contains(&n)
                || self.bidir.contains(&n)
                || self.cluster_driven.contains(&n)
            {
                return None;
            }
            let level = match (self.pull[n], self.float[n]) {
                (Some(p), _) => p,
                (None, FloatPolicy::High) => true,
                (None, FloatPolicy::Low) => false,
                _ => return None,
            };
            touched.push((n, Box::new(move |_: &[NetSnap]| level)));
        } else if let Some(members) = &d.short {
            let idx: Vec<usize> = members.iter().map(|m| net(m)).collect::<Option<_>>()?;
            if idx.iter().any(|i| self.feeds.contains(i)) {
                return None;
            }
            let rule = d.behaviour.unwrap_or(self.short_rule);
            let board_rule = self.short_rule;
            let dominant = d.dominant.as_deref().and_then(net);
            let wired = move |values: &[bool], rule: ShortRule| -> Option<bool> {
                let first = *values.first()?;
                Some(if values.iter().all(|&v| v == first) {
                    first
                } else {
                    rule.resolve()
                })
            };
            // Every snapshot must have a strong member, and no member may be
            // fighting already (the short would re-resolve each driver), or
            // only the reference can say.
            for snap in &self.snaps {
                if !idx.iter().any(|&i| snap[i].strength == Strength::Strong)
                    || idx.iter().any(|&i| snap[i].fight)
                {
                    return None;
                }
            }
            let idx2 = idx.clone();
            let level = move |snap: &[NetSnap]| -> bool {
                let strong = |list: &mut dyn Iterator<Item = &usize>| -> Vec<bool> {
                    list.filter(|&&i| snap[i].strength == Strength::Strong)
                        .map(|&i| snap[i].value)
                        .collect()
                };
                match dominant {
                    // The dominant net's drivers win; the board's own rule
                    // settles a fight among them (as the reference resolves).
                    Some(m) => {
                        let dom = strong(&mut std::iter::once(&m));
                        let rest = strong(&mut idx2.iter().filter(|&&i| i != m));
                        wired(&dom, board_rule)
                            .or_else(|| wired(&rest, board_rule))
                            .unwrap_or(false)
                    }
                    None => wired(&strong(&mut idx2.iter()), rule).unwrap_or(false),
                }
            };
            let shared = std::rc::Rc::new(level);
            for &i in &idx {
                let l = shared.clone();
                touched.push((i, Box::new(move |s: &[NetSnap]| l(s))));
            }
        } else {
            return None;
        }
        // Fault-local re-evaluation: only the bits of the touched nets.
        let mut flips = Vec::new();
        for (n, rule) in &touched {
            for &k in self.bits_of_net.get(n).map(Vec::as_slice).unwrap_or(&[]) {
                let (snap, _) = self.bits[k as usize];
                if rule(&self.snaps[snap]) != self.good.get(k as usize) {
                    flips.push(k);
                }
            }
        }
        flips.sort_unstable();
        flips.dedup();
        Some(flips)
    }

    /// The faulty response in full (the good one with the flips applied), or
    /// `None` when only the reference can say.
    pub fn evaluate(&self, fault: &Fault) -> Option<Bits> {
        let flips = self.flips(fault)?;
        let mut out = self.good.clone();
        for k in flips {
            out.set(k as usize, !out.get(k as usize));
        }
        Some(out)
    }
}
