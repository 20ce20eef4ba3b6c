//! The fast evaluation of a campaign: net-level responses with fault-local
//! re-evaluation.
//!
//! One good run records, before each scan, how every net reads and how
//! strongly it is held, and which net each compared bit reads. A net-level
//! fault (stuck-at, open net, short) then changes only the compared bits on
//! the nets it touches, computed from those snapshots — no TCK is simulated.
//! An open net keeps its receivers (bidirectional pins among them, which no
//! longer drive it), pulls and non-scan drivers, so every compared bit on it
//! reads the pull or the float level; an open pin reads alone (its own
//! drive, disable result or the float policy, followed through the drives
//! recorded before every step) and
//! its net resolves without it; a short whose members are not strongly
//! driven in every scan resolves from its members' pads. Where the net-level
//! answer would not equal the cycle-level reference (a net that feeds a
//! non-scan part or a pass-through, a net a non-scan part drives, a random
//! float, a pad that copies another net), `evaluate` returns `None` and the
//! campaign runs the reference for that fault. `harness/tests/fast_campaign.rs`
//! checks the two equal on random boards, programs and faults (property
//! tests of 32 to 48 random cases a run: evidence rather than proof).

pub(super) mod bit_parallel;

use std::collections::BTreeSet;

#[path = "fast_cluster.rs"]
mod cluster;

use virtual_board::{Bits, Board, Drive, FloatPolicy, LoadedBoard, ShortRule, Strength};

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
    /// For each compared bit whose cell reads a pin: the pin (`pins` index).
    bit_pin: Vec<Option<u32>>,
    /// Every pin on a net, as an open-pin defect names it (`U3.12`): its net
    /// and, when its pad can drive, its slot in `drives`.
    pins: std::collections::HashMap<String, (u32, usize, Option<u32>)>,
    /// The first pad slot of each net (its drivers follow in order).
    slot_start: Vec<u32>,
    /// Net states before each scan that compares.
    snaps: Vec<Vec<NetSnap>>,
    /// The program step each snapshot was taken before.
    snap_step: Vec<usize>,
    /// What every driving pad of the board drives before each step, by pad
    /// slot (the order of `Net::drivers`, net by net).
    drives: Vec<Vec<Drive>>,
    /// Net names → index.
    names: std::collections::HashMap<String, usize>,
    /// Nets whose level other drivers depend on (cluster inputs, followed nets).
    feeds: BTreeSet<usize>,
    /// Nets a non-scan part drives (an open net keeps those drivers).
    cluster_driven: BTreeSet<usize>,
    /// For each net, the compared bits that read it.
    bits_of_net: std::collections::HashMap<usize, Vec<u32>>,
    /// Pull and float policy of each net.
    pull: Vec<Option<bool>>,
    float: Vec<FloatPolicy>,
    short_rule: ShortRule,
    /// The neighbourhood of the non-scan parts (`fast_cluster.rs`).
    parts: cluster::Parts,
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

/// Nets resolved as one, for [`FastModel::group_level`].
struct Group<'a> {
    /// The nets (board indices).
    members: &'a [usize],
    /// A pad slot left out (an open pin).
    skip: Option<u32>,
    /// The member whose strong drivers win.
    dominant: Option<usize>,
    /// What disagreeing strong drivers give.
    rule: ShortRule,
    /// The group's pull.
    pull: Option<bool>,
    /// The group's float policy.
    float: FloatPolicy,
}

/// True when a scan of `program` starts on a port that waits in Pause-DR or
/// Pause-IR.
fn scan_from_pause(program: &Program) -> bool {
    use crate::program::Action;
    use virtual_board::TapState;
    let mut paused: std::collections::HashSet<&str> = std::collections::HashSet::new();
    for s in &program.steps {
        let end = match &s.action {
            Action::Scan(x) => {
                if paused.contains(s.port.as_str()) {
                    return true;
                }
                Some(x.end)
            }
            Action::Goto { end, .. } | Action::Idle { end, .. } => Some(*end),
            Action::ResetTms | Action::Trst(crate::program::TrstMode::On) => {
                Some(TapState::TestLogicReset)
            }
            Action::Trst(_) | Action::Frequency(_) => None,
        };
        match end {
            Some(TapState::PauseDr | TapState::PauseIr) => {
                paused.insert(s.port.as_str());
            }
            Some(_) => {
                paused.remove(s.port.as_str());
            }
            None => {}
        }
    }
    false
}

/// What every driving pad drives now, net by net in `Net::drivers` order.
fn pad_drives(b: &Board) -> Vec<Drive> {
    b.nets()
        .iter()
        .flat_map(|n| n.drivers.iter().map(|&(d, p, _)| b.devices()[d].drive(p)))
        .collect()
}

impl FastModel {
    /// Runs the program on the good board and keeps what the fast
    /// evaluation needs. `None` when the good run fails or stops.
    pub fn build(loaded: &LoadedBoard, program: &Program) -> Option<FastModel> {
        // A scan that starts from a Pause state passes Update on its way to
        // Capture, so the board changes after the snapshot: reference only.
        // (A scan held in Pause-DR and taken to Run-Test/Idle by the next
        // step of its port, as pipelined programs do, updates in that step,
        // before the next snapshot.)
        let pauses = scan_from_pause(program);
        if pauses {
            return None;
        }
        let mut board = loaded.board.clone();
        let mut before: Vec<Vec<NetSnap>> = Vec::new();
        let mut drives: Vec<Vec<Drive>> = Vec::new();
        let report =
            Runner::new(&mut board, RunOptions::default()).run_observed(program, &mut |_, b| {
                before.push(snapshot(b));
                drives.push(pad_drives(b));
            });
        if !report.passed() {
            return None;
        }
        let b = &loaded.board;
        let parts = cluster::Parts::new(b, &before);
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
        // Pad slots: the drivers of every net, net by net.
        let mut slot_of: std::collections::HashMap<(&str, &str), u32> =
            std::collections::HashMap::new();
        let mut slots = 0u32;
        let mut slot_start = Vec::with_capacity(b.nets().len());
        for n in b.nets() {
            slot_start.push(slots);
            for &(_, _, k) in &n.drivers {
                let pin = &n.pins[k];
                slot_of.insert((pin.device.as_str(), pin.pin.as_str()), slots);
                slots += 1;
            }
        }
        let mut pins = std::collections::HashMap::new();
        let mut pin_id: std::collections::HashMap<(&str, &str), u32> =
            std::collections::HashMap::new();
        for (i, n) in b.nets().iter().enumerate() {
            for p in &n.pins {
                let key = (p.device.as_str(), p.pin.as_str());
                let id = pins.len() as u32;
                pin_id.insert(key, id);
                pins.insert(
                    format!("{}.{}", p.device, p.pin),
                    (id, i, slot_of.get(&key).copied()),
                );
            }
        }
        // Net names → index as `Board::net_index` answers them (a net's own
        // name first, then the names it joins), looked up once per bit.
        let mut net_of: std::collections::HashMap<&str, usize> = std::collections::HashMap::new();
        for (i, n) in b.nets().iter().enumerate() {
            net_of.entry(n.name.as_str()).or_insert(i);
        }
        for (i, n) in b.nets().iter().enumerate() {
            for m in &n.members {
                net_of.entry(m.as_str()).or_insert(i);
            }
        }
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
        let mut bit_pin = Vec::new();
        let mut snaps = Vec::new();
        let mut snap_step = Vec::new();
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
            let step = *scan_steps.get(k)?;
            let snap = before.get(step)?.clone();
            let at = snaps.len();
            snaps.push(snap);
            snap_step.push(step);
            for i in 0..r.length {
                if !mask.get(i) {
                    continue;
                }
                good.push(tdo.get(i));
                let place = s
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
                        let net = *net_of.get(cell.net.as_deref()?)?;
                        let key = (seg.device.as_str(), cell.pin.as_deref()?);
                        Some((net, slot_of.get(&key).copied(), pin_id.get(&key).copied()))
                    });
                bits.push((at, place.map(|(n, _, _)| n)));
                bit_pin.push(place.and_then(|(_, _, q)| q));
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
            bit_pin,
            pins,
            slot_start,
            bits_of_net,
            snaps,
            snap_step,
            drives,
            names,
            feeds,
            cluster_driven: (0..b.nets().len())
                .filter(|&i| !b.nets()[i].cluster_drivers.is_empty())
                .collect(),
            pull: b.nets().iter().map(|n| n.pull).collect(),
            float: b.nets().iter().map(|n| n.float).collect(),
            short_rule: loaded.file.shorts,
            parts,
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
                return self.through_parts(n, cluster::Change::Stuck(v == 1));
            }
            touched.push((n, Box::new(move |_: &[NetSnap]| v == 1)));
        } else if let Some(n) = d.open.as_deref().and_then(net) {
            return self.open_net_flips(n);
        } else if let Some((part, pin)) = d
            .open
            .as_deref()
            .or(d.stuck.as_deref())
            .filter(|w| !self.pins.contains_key(*w) && net(w).is_none())
            .and_then(|w| w.split_once('.'))
        {
            let stuck = match (&d.stuck, d.value) {
                (Some(_), Some(v @ (0 | 1))) => Some(v == 1),
                (Some(_), _) => return None,
                (None, _) => None,
            };
            return self.part_pin_flips(part, pin, stuck, d.open.is_some());
        } else if let Some(&(pin, n, slot)) = d.open.as_deref().and_then(|p| self.pins.get(p)) {
            return self.open_pin_flips(pin, n, slot);
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
            // Every snapshot a member is compared in must have a strong
            // member, and no member may be fighting already (the short would
            // re-resolve each driver), or the members' pads must say. (A
            // snapshot without a compared bit on a member — an instruction
            // capture — cannot change a flip: strong drivers hold no history.)
            let resolve_by_pads = idx
                .iter()
                .flat_map(|i| self.bits_of_net.get(i).map_or(&[][..], Vec::as_slice))
                .map(|&k| &self.snaps[self.bits[k as usize].0])
                .any(|snap| {
                    !idx.iter().any(|&i| snap[i].strength == Strength::Strong)
                        || idx.iter().any(|&i| snap[i].fight)
                });
            if resolve_by_pads {
                return self.short_by_pads(&idx, dominant, rule);
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

    /// The flips of a short resolved from the drives of the members' pads
    /// (where some scan sees no strong member, or a fight): every bit on a
    /// member reads the joined net.
    fn short_by_pads(
        &self,
        idx: &[usize],
        dominant: Option<usize>,
        rule: ShortRule,
    ) -> Option<Vec<u32>> {
        if idx.iter().any(|i| self.cluster_driven.contains(i)) {
            return None;
        }
        // The joined net's pull and float policy: only where the members
        // agree (pulls both ways divide; the loader keeps one float policy).
        let mut pulls = idx.iter().filter_map(|&i| self.pull[i]);
        let pull = pulls.next();
        if pulls.any(|p| Some(p) != pull)
            || idx.iter().any(|&i| self.float[i] != self.float[idx[0]])
        {
            return None;
        }
        let group = Group {
            members: idx,
            skip: None,
            dominant,
            rule: if dominant.is_some() {
                self.short_rule
            } else {
                rule
            },
            pull,
            float: self.float[idx[0]],
        };
        let mut at_step: Vec<Option<Option<bool>>> = vec![None; self.drives.len()];
        let mut flips = Vec::new();
        for &i in idx {
            for &k in self.bits_of_net.get(&i).map(Vec::as_slice).unwrap_or(&[]) {
                let step = self.snap_step[self.bits[k as usize].0];
                let level = match at_step[step] {
                    Some(v) => v?,
                    None => {
                        let v = self.group_level(&group, step);
                        at_step[step] = Some(v);
                        v?
                    }
                };
                if level != self.good.get(k as usize) {
                    flips.push(k);
                }
            }
        }
        flips.sort_unstable();
        flips.dedup();
        Some(flips)
    }

    /// The flips of an open net: the net loses every driver (output-only
    /// pins go to nets of their own, bidirectional pins stay as receivers and
    /// drive nothing) and keeps its pulls and non-scan drivers, so every
    /// compared bit on it reads the pull or the float level. (Only input
    /// and bidirectional cells' bits are mapped to nets, see `build`.)
    fn open_net_flips(&self, n: usize) -> Option<Vec<u32>> {
        if self.feeds.contains(&n) || self.cluster_driven.contains(&n) {
            return self.through_parts(n, cluster::Change::Open);
        }
        // The cut net, drivers gone, was never driven since power-up: a
        // `previous` float reads the power-up level 0.
        let rest = match (self.pull[n], self.float[n]) {
            (Some(p), _) => Some(p),
            (None, FloatPolicy::High) => Some(true),
            (None, FloatPolicy::Low | FloatPolicy::Previous) => Some(false),
            (None, FloatPolicy::Random) => None,
        };
        let mut flips = Vec::new();
        for &k in self.bits_of_net.get(&n).map(Vec::as_slice).unwrap_or(&[]) {
            if rest? != self.good.get(k as usize) {
                flips.push(k);
            }
        }
        Some(flips)
    }

    /// The flips of one pin lifted from net `n`: the pin reads alone (its own
    /// drive, or the float policy), and when its pad could drive, the rest of
    /// the net resolves without it.
    fn open_pin_flips(&self, pin: u32, n: usize, slot: Option<u32>) -> Option<Vec<u32>> {
        if slot.is_some() && (self.feeds.contains(&n) || self.cluster_driven.contains(&n)) {
            return None;
        }
        let lone = match self.float[n] {
            FloatPolicy::High => Some(true),
            FloatPolicy::Low | FloatPolicy::Previous => Some(false),
            FloatPolicy::Random => None,
        };
        let mut flips = Vec::new();
        let mut rest: Vec<Option<Option<bool>>> = vec![None; self.drives.len()];
        for &k in self.bits_of_net.get(&n).map(Vec::as_slice).unwrap_or(&[]) {
            let (snap, _) = self.bits[k as usize];
            let step = self.snap_step[snap];
            let level = if self.bit_pin[k as usize] == Some(pin) {
                match slot {
                    Some(s) => self.own_level(s as usize, step, n)?,
                    None => lone?,
                }
            } else if let Some(s) = slot {
                match rest[step] {
                    Some(v) => v?,
                    None => {
                        let v = self.level_without(n, s, step);
                        rest[step] = Some(v);
                        v?
                    }
                }
            } else {
                continue;
            };
            if level != self.good.get(k as usize) {
                flips.push(k);
            }
        }
        Some(flips)
    }

    /// How net `n` reads before `step` with the pad in `skip` gone.
    fn level_without(&self, n: usize, skip: u32, step: usize) -> Option<bool> {
        let group = Group {
            members: std::slice::from_ref(&n),
            skip: Some(skip),
            dominant: None,
            rule: self.short_rule,
            pull: self.pull[n],
            float: self.float[n],
        };
        self.group_level(&group, step)
    }

    /// How a group of nets joined into one (a short; one net less a pad)
    /// reads before `step`, from the drives of their pads, pulls and float
    /// policy — the board's resolution: the dominant member's strong drivers
    /// win, then the other strong drivers (disagreeing: the rule), then weak
    /// levels (pulling both ways: floating), keepers and `previous` floats
    /// hold the last level the net had (0 at power-up).
    fn group_level(&self, g: &Group<'_>, step: usize) -> Option<bool> {
        let total = self.drives.first().map_or(0, Vec::len);
        let range = |n: usize| {
            let start = self.slot_start[n] as usize;
            let end = self.slot_start.get(n + 1).map_or(total, |&e| e as usize);
            start..end
        };
        let wired = |level: Option<bool>, fight: bool| {
            if fight {
                Some(g.rule.resolve())
            } else {
                level
            }
        };
        let mut last = false;
        let mut level = None;
        for drives in &self.drives[..=step] {
            let (mut dom, mut dom_fight) = (None::<bool>, false);
            let (mut rest, mut rest_fight) = (None::<bool>, false);
            let mut weak: Option<bool> = g.pull;
            let mut weak_conflict = false;
            let mut keeper = false;
            for &m in g.members {
                let is_dominant = g.dominant == Some(m);
                for slot in range(m) {
                    if g.skip == Some(slot as u32) {
                        continue;
                    }
                    match drives[slot] {
                        Drive::Strong(v) if is_dominant => {
                            dom_fight |= dom.is_some_and(|s| s != v);
                            dom = Some(v);
                        }
                        Drive::Strong(v) => {
                            rest_fight |= rest.is_some_and(|s| s != v);
                            rest = Some(v);
                        }
                        Drive::Weak(v) => {
                            weak_conflict |= weak.is_some_and(|w| w != v);
                            weak = Some(v);
                        }
                        Drive::Keeper => keeper = true,
                        Drive::Follow(_) => return None,
                        Drive::None => {}
                    }
                }
            }
            if weak_conflict {
                weak = None;
            }
            let strong = wired(dom, dom_fight).or(wired(rest, rest_fight));
            let driven = strong.or(weak);
            level = match driven {
                Some(v) => Some(v),
                None if keeper => Some(last),
                None => match g.float {
                    FloatPolicy::High => Some(true),
                    FloatPolicy::Low => Some(false),
                    FloatPolicy::Previous => Some(last),
                    FloatPolicy::Random => return None,
                },
            };
            if let Some(v) = driven {
                last = v;
            }
        }
        level
    }

    /// What a pad alone on a net of its own (float policy of net `n`) reads
    /// before `step`: its own strong or weak level; a keeper, or a `previous`
    /// float, holds the last level it drove (0 before any).
    fn own_level(&self, slot: usize, step: usize, n: usize) -> Option<bool> {
        let mut last = false;
        for drives in &self.drives[..=step] {
            match drives[slot] {
                Drive::Strong(v) | Drive::Weak(v) => last = v,
                Drive::Follow(_) => return None,
                Drive::None | Drive::Keeper => {}
            }
        }
        match self.drives[step][slot] {
            Drive::Strong(v) | Drive::Weak(v) => Some(v),
            Drive::Keeper => Some(last),
            Drive::Follow(_) => None,
            Drive::None => match self.float[n] {
                FloatPolicy::High => Some(true),
                FloatPolicy::Low => Some(false),
                FloatPolicy::Previous => Some(last),
                FloatPolicy::Random => None,
            },
        }
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
