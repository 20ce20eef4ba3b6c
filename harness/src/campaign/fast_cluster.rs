//! Net faults next to non-scan parts, in the net-level model: a stuck-at
//! or an open on a net that feeds a part, an open on a net a part drives,
//! a part's pin stuck or open, re-evaluated over the fault's neighbourhood
//! only.
//!
//! The neighbourhood is the faulted net (or the nets the faulted part
//! drives) and every net a part drives from it, part after part (the board orders its nets so that a part's inputs
//! resolve before its outputs). Before every step of the good run the
//! model knows each pad's drive and each net's level, so the faulty level
//! of each net of the neighbourhood follows, step by step from power-up,
//! as the board resolves it: the fault (stuck level; an open net keeps its
//! pulls and the parts driving it, its pads drive it no more; a faulted
//! part evaluated with its pin stuck or open, a lifted input floating by
//! its net's policy), then strong
//! drivers (pads, rails, the parts' truth tables over their inputs'
//! faulty or good levels; disagreeing: the board's rule), weak levels
//! (pulling both ways: floating), a keeper's and a `previous` float's last
//! level (0 at power-up), the float policy. A series resistor passes no
//! level from a floating net. Transceivers (two-way parts, settled by
//! repetition), pass-through pins, rails on an open net and random floats
//! are left to the reference (`None`).

use std::collections::{BTreeSet, HashMap};

use virtual_board::{Board, Cluster, ClusterKind, Drive, FloatPolicy, Strength};

use super::{FastModel, NetSnap};

/// What a fault does to its net.
#[derive(Clone, Copy)]
pub(super) enum Change {
    /// Stuck at a level.
    Stuck(bool),
    /// Cut from its pads.
    Open,
}

/// The non-scan parts, and the good level of every net before every step
/// (kept only on boards that have parts).
#[derive(Clone, Debug, Default)]
pub(super) struct Parts {
    clusters: Vec<Cluster>,
    /// Net → the parts with an input on it.
    readers: HashMap<usize, Vec<usize>>,
    /// Net → the (part, output) pairs that drive it.
    drivers: HashMap<usize, Vec<(usize, usize)>>,
    /// Nets a pass-through pin copies.
    followed: BTreeSet<usize>,
    rail: Vec<Option<bool>>,
    /// Step → net → level before the step.
    levels: Vec<Vec<NetSnap>>,
}

impl Parts {
    /// The parts of board `b` (as at power-up) and the net levels before
    /// every step of the good run.
    pub(super) fn new(b: &Board, before: &[Vec<NetSnap>]) -> Parts {
        if b.clusters().is_empty() {
            return Parts::default();
        }
        let mut readers: HashMap<usize, Vec<usize>> = HashMap::new();
        for (c, cluster) in b.clusters().iter().enumerate() {
            for p in &cluster.inputs {
                if let Some(n) = p.net {
                    readers.entry(n as usize).or_default().push(c);
                }
            }
        }
        let mut drivers = HashMap::new();
        for (i, n) in b.nets().iter().enumerate() {
            if !n.cluster_drivers.is_empty() {
                drivers.insert(i, n.cluster_drivers.clone());
            }
        }
        let mut followed = BTreeSet::new();
        for d in b.devices() {
            for s in d.system() {
                if let virtual_board::SystemDrive::Follow(n) = s {
                    followed.insert(*n as usize);
                }
            }
        }
        Parts {
            clusters: b.clusters().to_vec(),
            readers,
            drivers,
            followed,
            rail: b.nets().iter().map(|n| n.rail).collect(),
            levels: before.to_vec(),
        }
    }
}

/// A level as a part's input sees it: value, and whether it floats.
type Read = (bool, bool);

/// The fault as the sweep sees it: on a net, or on a part's pin (the part
/// with the fault in place).
struct Local {
    net: Option<(usize, Change)>,
    part: Option<(usize, Cluster)>,
}

impl FastModel {
    /// The flips of `change` on net `n` through the parts it feeds, or
    /// `None` where only the reference can say (see the module comment).
    pub(super) fn through_parts(&self, n: usize, change: Change) -> Option<Vec<u32>> {
        if matches!(change, Change::Open) && self.parts.rail[n].is_some() {
            return None;
        }
        let local = Local {
            net: Some((n, change)),
            part: None,
        };
        self.sweep(&[n], &local)
    }

    /// The flips of pin `pin` of part `name` stuck (`stuck`) or open, or
    /// `None` where only the reference can say.
    pub(super) fn part_pin_flips(
        &self,
        name: &str,
        pin: &str,
        stuck: Option<bool>,
        open: bool,
    ) -> Option<Vec<u32>> {
        let c = self.parts.clusters.iter().position(|c| c.name == name)?;
        let mut part = self.parts.clusters[c].clone();
        let mut found = false;
        for p in part
            .inputs
            .iter_mut()
            .chain(part.outputs.iter_mut())
            .filter(|p| p.name == pin)
        {
            p.stuck = stuck;
            p.open = open;
            found = true;
        }
        if !found || part.kind == ClusterKind::Transceiver {
            return None;
        }
        let seeds: Vec<usize> = part
            .outputs
            .iter()
            .filter_map(|p| p.net.map(|n| n as usize))
            .collect();
        let local = Local {
            net: None,
            part: Some((c, part)),
        };
        self.sweep(&seeds, &local)
    }

    /// The flips of a fault whose effect starts on nets `seeds`: their
    /// neighbourhood resolved step by step.
    fn sweep(&self, seeds: &[usize], local: &Local) -> Option<Vec<u32>> {
        let parts = &self.parts;
        if parts.levels.len() != self.drives.len() {
            return None;
        }
        // The neighbourhood, in the board's resolution order.
        let mut near: BTreeSet<usize> = seeds.iter().copied().collect();
        let mut queue = seeds.to_vec();
        while let Some(m) = queue.pop() {
            if parts.followed.contains(&m) {
                return None;
            }
            for &c in parts.readers.get(&m).map(Vec::as_slice).unwrap_or(&[]) {
                let cluster = &parts.clusters[c];
                if cluster.kind == ClusterKind::Transceiver {
                    return None;
                }
                for out in cluster.outputs.iter().filter_map(|p| p.net) {
                    let out = out as usize;
                    if out <= m {
                        return None;
                    }
                    if near.insert(out) {
                        queue.push(out);
                    }
                }
            }
        }
        let near: Vec<usize> = near.into_iter().collect();
        let mut last = vec![false; near.len()];
        // Step → level of each net of the neighbourhood before it.
        let mut faulty: Vec<Vec<Read>> = Vec::with_capacity(self.drives.len());
        for step in 0..self.drives.len() {
            let mut now: Vec<Read> = Vec::with_capacity(near.len());
            for (j, &m) in near.iter().enumerate() {
                let read = self.faulty_read(m, local, step, &near, &now, last[j])?;
                if !read.1 {
                    last[j] = read.0;
                }
                now.push(read);
            }
            faulty.push(now);
        }
        let mut flips = Vec::new();
        for (j, &m) in near.iter().enumerate() {
            for &k in self.bits_of_net.get(&m).map(Vec::as_slice).unwrap_or(&[]) {
                let step = self.snap_step[self.bits[k as usize].0];
                if faulty[step][j].0 != self.good.get(k as usize) {
                    flips.push(k);
                }
            }
        }
        flips.sort_unstable();
        Some(flips)
    }

    /// The last level net `p` held, not floating, up to and including
    /// the resolution before `step` on the good board (0 at power-up).
    fn last_held(&self, p: usize, step: usize) -> bool {
        self.parts.levels[..=step]
            .iter()
            .rev()
            .find(|l| l[p].strength != Strength::Float)
            .is_some_and(|l| l[p].value)
    }

    /// How net `m` of the neighbourhood `near` reads before `step` under
    /// the fault `local` (`now`: the levels of the nets before it in
    /// `near` at this step; `last`: the level it last held).
    fn faulty_read(
        &self,
        m: usize,
        local: &Local,
        step: usize,
        near: &[usize],
        now: &[Read],
        last: bool,
    ) -> Option<Read> {
        let parts = &self.parts;
        let on_net = local.net.filter(|&(n, _)| n == m).map(|(_, c)| c);
        if let Some(Change::Stuck(v)) = on_net {
            return Some((v, false));
        }
        let (mut high, mut low) = (false, false);
        let mut strong = |v: bool| {
            if v {
                high = true;
            } else {
                low = true;
            }
        };
        if let Some(v) = parts.rail[m] {
            strong(v);
        }
        let mut weak: Option<bool> = self.pull[m];
        let mut weak_conflict = false;
        let mut keeper = false;
        // An open net's pads drive it no more.
        if on_net.is_none() {
            let total = self.drives[step].len();
            let start = self.slot_start[m] as usize;
            let end = self.slot_start.get(m + 1).map_or(total, |&e| e as usize);
            for d in &self.drives[step][start..end] {
                match *d {
                    Drive::Strong(v) => strong(v),
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
        // The parts driving the net, from their inputs' levels now.
        let level_of = |p: usize| -> Read {
            match near.iter().position(|&x| x == p).and_then(|j| now.get(j)) {
                Some(&r) => r,
                None => {
                    let s = parts.levels[step][p];
                    (s.value, s.strength == Strength::Float)
                }
            }
        };
        for &(c, o) in parts.drivers.get(&m).map(Vec::as_slice).unwrap_or(&[]) {
            let cluster = match &local.part {
                Some((f, part)) if *f == c => part,
                _ => &parts.clusters[c],
            };
            let passive = cluster.kind == ClusterKind::Resistor;
            let inputs: Vec<Option<bool>> = (0..cluster.inputs.len())
                .map(|i| {
                    let net = cluster.inputs[i].net.map(|p| p as usize);
                    let level = net
                        .map(level_of)
                        .filter(|&(_, floating)| !(passive && floating))
                        .map(|(v, _)| v);
                    // A lifted input floats by its net's policy (the last
                    // level held for `previous` and `random`), as the board
                    // evaluates it.
                    let open_level = net.map(|p| match self.float[p] {
                        FloatPolicy::High => true,
                        FloatPolicy::Low => false,
                        FloatPolicy::Previous | FloatPolicy::Random => self.last_held(p, step),
                    });
                    cluster.input_level(i, level, open_level)
                })
                .collect();
            if let Some(v) = cluster.output(o, &inputs) {
                strong(v);
            }
        }
        if weak_conflict {
            weak = None;
        }
        let strong_level = match (high, low) {
            (false, false) => None,
            (true, true) => Some(self.short_rule.resolve()),
            (h, _) => Some(h),
        };
        if let Some(v) = strong_level.or(weak) {
            return Some((v, false));
        }
        if keeper {
            return Some((last, false));
        }
        match self.float[m] {
            FloatPolicy::High => Some((true, true)),
            FloatPolicy::Low => Some((false, true)),
            FloatPolicy::Previous => Some((last, true)),
            FloatPolicy::Random => None,
        }
    }
}
