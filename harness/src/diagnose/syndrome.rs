//! Syndrome-based interconnect diagnosis: each receiving net's captured
//! sequence read against the codes the vectors sent.
//!
//! The reasoning follows the interconnect-diagnosis literature (N. Jarwala
//! and C. W. Yau, "A new framework for analyzing test generation and
//! diagnosis algorithms for wiring interconnects", ITC 1989; W.-T. Cheng,
//! J. L. Lewandowski and E. Wu, "Optimal diagnostic methods for wiring
//! interconnects", IEEE TCAD 1992 — both from memory):
//! - nets of one wired-AND or wired-OR short all read the same sequence, the
//!   AND or OR of their codes: failing nets with one syndrome form a short
//!   group of any size, anywhere on the board, and a net whose own code
//!   equals that syndrome may be in the group too (aliasing);
//! - under a dominant short the other nets read the dominant net's code;
//! - a net reading a constant is stuck, or open and reading its float level;
//! - a net whose receivers disagree has an open receiving pin.
//!
//! Each class of failing nets (one syndrome) gets every explanation that
//! fits it; [`combinations`] joins one explanation per class. Nothing here
//! is reported before the reference simulation confirms it.

use std::collections::{BTreeMap, BTreeSet};

use virtual_board::{Bits, DefectSpec, FloatPolicy, LoadedBoard, ShortRule};

use super::net_view::NetView;
use super::recording::Recorded;

/// At most this many aliased or dominant partners per class.
const PARTNERS: usize = 8;
/// At most this many joined explanations to verify.
pub const COMBINATIONS: usize = 48;

/// Every explanation found for failing nets that share one syndrome.
#[derive(Clone, Debug, Default)]
pub struct Class {
    /// Each explanation: one or more defects.
    pub options: Vec<Vec<DefectSpec>>,
}

/// A sequence over the vectors: `None` where unknown.
type Seq = Vec<Option<bool>>;

struct Ctx<'a> {
    loaded: &'a LoadedBoard,
    view: &'a NetView,
}

impl Ctx<'_> {
    /// The net's name in the board file (a joined net by its first member).
    fn name(&self, n: usize) -> String {
        let net = &self.loaded.board.nets()[n];
        net.members.first().unwrap_or(&net.name).clone()
    }

    /// The level of a short group in each vector: the strong members'
    /// levels, resolved by `rule` when they disagree.
    fn wired(&self, members: &[usize], rule: ShortRule) -> Seq {
        (0..self.view.vectors)
            .map(|v| {
                let mut levels = members
                    .iter()
                    .filter(|&&m| self.view.strong[m].get(v))
                    .map(|&m| self.view.value[m].get(v));
                let first = levels.next()?;
                Some(if levels.all(|l| l == first) {
                    first
                } else {
                    rule.resolve()
                })
            })
            .collect()
    }

    /// The level under a short where `d`'s drivers win.
    fn dominated(&self, d: usize, others: &[usize]) -> Seq {
        let rest = self.wired(others, self.loaded.file.shorts);
        (0..self.view.vectors)
            .map(|v| {
                if self.view.strong[d].get(v) {
                    Some(self.view.value[d].get(v))
                } else {
                    rest[v]
                }
            })
            .collect()
    }

    /// True when `code` (a net's strong levels) agrees with `y` wherever `y` is known.
    fn code_fits(&self, n: usize, y: &Seq) -> bool {
        y.iter().enumerate().all(|(v, b)| match b {
            Some(b) => self.view.strong[n].get(v) && self.view.value[n].get(v) == *b,
            None => true,
        })
    }
}

fn fits(pred: &Seq, y: &Seq) -> bool {
    y.iter()
        .zip(pred)
        .all(|(y, p)| y.is_none() || (p.is_some() && p == y))
}

fn consistent(a: &Seq, b: &Seq) -> bool {
    let mut overlap = false;
    for (x, y) in a.iter().zip(b) {
        if let (Some(x), Some(y)) = (x, y) {
            if x != y {
                return false;
            }
            overlap = true;
        }
    }
    overlap
}

fn short(names: Vec<String>, rule: Option<ShortRule>, dominant: Option<String>) -> DefectSpec {
    DefectSpec {
        short: Some(names),
        behaviour: rule,
        dominant,
        ..Default::default()
    }
}

/// Short groups of `members` and at most [`PARTNERS`] of `partners` per
/// behaviour whose level fits the syndrome `y`: wired-AND, wired-OR, and a
/// partner dominant.
fn search(
    cx: &Ctx<'_>,
    members: &[usize],
    partners: &[usize],
    y: &Seq,
    options: &mut Vec<Vec<DefectSpec>>,
) {
    let names = |g: &[usize]| g.iter().map(|&m| cx.name(m)).collect::<Vec<_>>();
    for rule in [ShortRule::WiredAnd, ShortRule::WiredOr] {
        let alone = vec![short(names(members), Some(rule), None)];
        if members.len() >= 2 && fits(&cx.wired(members, rule), y) && !options.contains(&alone) {
            options.push(alone);
        }
        let mut found = 0;
        for &p in partners {
            if found == PARTNERS {
                break;
            }
            let mut g = members.to_vec();
            g.push(p);
            if fits(&cx.wired(&g, rule), y) {
                options.push(vec![short(names(&g), Some(rule), None)]);
                found += 1;
            }
        }
    }
    let mut found = 0;
    for &d in partners {
        if found == PARTNERS {
            break;
        }
        if fits(&cx.dominated(d, members), y) {
            let mut g = vec![d];
            g.extend(members.iter().copied());
            options.push(vec![short(names(&g), None, Some(cx.name(d)))]);
            found += 1;
        }
    }
}

/// The classes of failing nets and their explanations; `None` when a
/// failing bit reads no net (not an interconnect failure).
pub fn classes(
    loaded: &LoadedBoard,
    view: &NetView,
    recorded: &Recorded,
    good: &Bits,
) -> Option<Vec<Class>> {
    let failing = recorded.failing(good);
    if failing.is_empty()
        || failing
            .iter()
            .any(|&k| view.bits.get(k).and_then(|b| b.as_ref()).is_none())
    {
        return None;
    }
    let cx = Ctx { loaded, view };
    let nets_n = loaded.board.nets().len();
    // Observed sequence per net and per receiving pin (recorded bits only).
    let mut obs: BTreeMap<usize, Seq> = BTreeMap::new();
    let mut pins: BTreeMap<usize, BTreeMap<&str, Seq>> = BTreeMap::new();
    let mut recorded_nets = vec![false; nets_n];
    for (k, read) in view.bits.iter().enumerate() {
        let (Some(read), Some(Some(c))) = (read, recorded.bits.get(k)) else {
            continue;
        };
        recorded_nets[read.net] = true;
        obs.entry(read.net)
            .or_insert_with(|| vec![None; view.vectors])[read.vector] = Some(*c);
        pins.entry(read.net)
            .or_default()
            .entry(read.pin.as_str())
            .or_insert_with(|| vec![None; view.vectors])[read.vector] = Some(*c);
    }
    let failing_nets: BTreeSet<usize> = failing
        .iter()
        .filter_map(|&k| view.bits[k].as_ref().map(|r| r.net))
        .collect();
    let good_seq = |n: usize| -> Seq {
        (0..view.vectors)
            .map(|v| Some(view.value[n].get(v)))
            .collect()
    };
    // A net whose receivers read differently: open receiving pins.
    let mut out = Vec::new();
    let mut net_level = Vec::new();
    for &n in &failing_nets {
        let by_pin = &pins[&n];
        let agree = by_pin.values().all(|s| {
            by_pin.values().all(|t| {
                s.iter()
                    .zip(t)
                    .all(|(a, b)| a.is_none() || b.is_none() || a == b)
            })
        });
        let all_fail = by_pin.values().all(|s| {
            !s.iter()
                .zip(good_seq(n))
                .all(|(a, b)| a.is_none() || *a == b)
        });
        if agree && all_fail {
            net_level.push(n);
            continue;
        }
        let lifted: Vec<DefectSpec> = by_pin
            .iter()
            .filter(|(_, s)| {
                !s.iter()
                    .zip(good_seq(n))
                    .all(|(a, b)| a.is_none() || *a == b)
            })
            .map(|(pin, _)| DefectSpec {
                open: Some(pin.to_string()),
                ..Default::default()
            })
            .collect();
        out.push(Class {
            options: vec![lifted],
        });
    }
    let mut covered = BTreeSet::new();
    for &n in &net_level {
        if covered.contains(&n) {
            continue;
        }
        let members: Vec<usize> = net_level
            .iter()
            .copied()
            .filter(|m| !covered.contains(m) && (*m == n || consistent(&obs[&n], &obs[m])))
            .collect();
        covered.extend(members.iter().copied());
        let mut y: Seq = vec![None; view.vectors];
        for m in &members {
            for (v, b) in obs[m].iter().enumerate() {
                if b.is_some() {
                    y[v] = *b;
                }
            }
        }
        let mut options: Vec<Vec<DefectSpec>> = Vec::new();
        // Nets that may be in the group though their reading is right: a
        // net read where recorded whose own code equals the syndrome
        // (aliasing); and, only when nothing else fits, a net that nothing
        // recorded reads.
        let open_to = |p: &usize| {
            !members.contains(p)
                && !failing_nets.contains(p)
                && loaded.board.nets()[*p].rail.is_none()
        };
        let aliased: Vec<usize> = (0..nets_n)
            .filter(|p| open_to(p) && recorded_nets[*p] && cx.code_fits(*p, &y))
            .collect();
        search(&cx, &members, &aliased, &y, &mut options);
        // A constant reading: stuck, or open at its float level.
        let known: Vec<bool> = y.iter().flatten().copied().collect();
        if let Some(&v) = known.first().filter(|&&v| known.iter().all(|&b| b == v)) {
            let per_net = |m: usize| {
                let net = &loaded.board.nets()[m];
                let mut alts = vec![DefectSpec {
                    stuck: Some(cx.name(m)),
                    value: Some(u8::from(v)),
                    ..Default::default()
                }];
                // A non-scan part driving the net: its output pin stuck.
                for &(c, o) in &net.cluster_drivers {
                    let cluster = &loaded.board.clusters()[c];
                    alts.push(DefectSpec {
                        stuck: Some(format!("{}.{}", cluster.name, cluster.outputs[o].name)),
                        value: Some(u8::from(v)),
                        ..Default::default()
                    });
                }
                let floats_to = net.pull.or(match net.float {
                    FloatPolicy::High => Some(true),
                    FloatPolicy::Low => Some(false),
                    _ => None,
                });
                if floats_to.is_none_or(|f| f == v) {
                    if !net.drivers.is_empty() {
                        alts.push(DefectSpec {
                            open: Some(cx.name(m)),
                            ..Default::default()
                        });
                    }
                    for &(c, o) in &net.cluster_drivers {
                        let cluster = &loaded.board.clusters()[c];
                        alts.push(DefectSpec {
                            open: Some(format!("{}.{}", cluster.name, cluster.outputs[o].name)),
                            ..Default::default()
                        });
                    }
                    if let [(_, _, k)] = net.receivers.as_slice() {
                        let pin = &net.pins[*k];
                        alts.push(DefectSpec {
                            open: Some(format!("{}.{}", pin.device, pin.pin)),
                            ..Default::default()
                        });
                    }
                }
                alts
            };
            if members.len() == 1 {
                options.extend(per_net(members[0]).into_iter().map(|d| vec![d]));
            } else if options.is_empty() {
                // Several nets stuck alike: one defect per net (the first alternative).
                options.push(members.iter().map(|&m| per_net(m).remove(0)).collect());
            }
        }
        if options.is_empty() {
            let hidden: Vec<usize> = (0..nets_n)
                .filter(|p| open_to(p) && !recorded_nets[*p] && view.strong[*p].count_ones() > 0)
                .collect();
            search(&cx, &members, &hidden, &y, &mut options);
        }
        out.push(Class { options });
    }
    Some(out)
}

/// The nets (and pins' nets) a defect touches.
pub fn places(loaded: &LoadedBoard, d: &DefectSpec) -> BTreeSet<String> {
    let board = &loaded.board;
    let mut out: BTreeSet<String> = d.short.iter().flatten().cloned().collect();
    for what in d.stuck.iter().chain(&d.open) {
        match what.split_once('.') {
            Some((dev, pin)) => {
                let net = board
                    .nets()
                    .iter()
                    .find(|n| n.pins.iter().any(|p| p.device == dev && p.pin == pin));
                out.insert(net.map(|n| n.name.clone()).unwrap_or_else(|| what.clone()));
            }
            None => {
                out.insert(what.clone());
            }
        }
    }
    for dev in d.devices_named() {
        out.insert(format!("device {dev}"));
    }
    out
}

/// One explanation per class, joined: every combination whose defects touch
/// no net twice (a net cannot be stuck at 0 and at 1, or shorted and open),
/// at most [`COMBINATIONS`].
pub fn combinations(loaded: &LoadedBoard, classes: &[Class]) -> Vec<Vec<DefectSpec>> {
    let mut out: Vec<Vec<DefectSpec>> = vec![Vec::new()];
    for c in classes {
        let mut next = Vec::new();
        for base in &out {
            let used: BTreeSet<String> = base.iter().flat_map(|d| places(loaded, d)).collect();
            for opt in &c.options {
                let here: BTreeSet<String> = opt.iter().flat_map(|d| places(loaded, d)).collect();
                if here.is_disjoint(&used) && next.len() < COMBINATIONS {
                    let mut joined = base.clone();
                    joined.extend(opt.iter().cloned());
                    next.push(joined);
                }
            }
        }
        out = next;
    }
    out.retain(|c| !c.is_empty());
    out
}
