//! Drivers on several TAP ports: which pads a boundary vector turns on, and
//! the order of scans that keeps them from fighting while the ports are
//! updated one after another.
//!
//! Every device on one TAP port takes a new vector at the same Update-DR
//! edge, but two ports are updated one scan after the other. Between those
//! scans one port already drives its new vector while the other still drives
//! the old one, or still runs its system logic (before EXTEST and after the
//! reset). The net-level compiler therefore:
//!
//! - enters EXTEST with every control cell at its disable value, so a port in
//!   EXTEST drives nothing a port still in normal mode could fight;
//! - hands a net from one port's driver to another's break-before-make
//!   (common practice): the ports that take nothing over are updated first;
//!   where two ports take nets over from each other, each first scans a
//!   *release* vector (its new vector with those drivers still off), so the
//!   old drivers let go before the new ones start;
//! - orders the ports around the outputs no control cell can turn off
//!   (two-state outputs, BSDL `OUTPUT2`): the ports enter EXTEST in an order
//!   in which no such output meets a device still under its system logic,
//!   and leave in the reverse order.

use std::collections::{BTreeMap, BTreeSet};

use virtual_board::{Bits, Board, SystemDrive};

/// The pads of device `d` that drive their pins in EXTEST when `latches` is
/// in its update latches: an output without a control cell always, a
/// three-state or bidirectional output while its control cell holds the
/// enable value (IEEE 1149.1-2001 clause 11, from memory).
pub(super) fn enabled_pads<'a>(
    board: &'a Board,
    d: usize,
    latches: &'a Bits,
) -> impl Iterator<Item = usize> + 'a {
    board.devices()[d]
        .pads()
        .iter()
        .enumerate()
        .filter(move |(_, pad)| {
            pad.output.is_some()
                && pad
                    .control
                    .is_none_or(|c| latches.get(c.cell as usize) != c.disable_value)
        })
        .map(|(p, _)| p)
}

/// A pad of the board: (device index, pad index).
pub(super) type PadId = (usize, usize);

/// A fight: the net, and two pads driving it to opposite levels.
pub(super) type Fight = (usize, PadId, PadId);

/// The nets each pad of each device can drive.
fn nets_of_pads(board: &Board) -> BTreeMap<PadId, Vec<usize>> {
    let mut out: BTreeMap<PadId, Vec<usize>> = BTreeMap::new();
    for (i, net) in board.nets().iter().enumerate() {
        for &(d, p, _) in &net.drivers {
            let nets = out.entry((d, p)).or_default();
            if !nets.contains(&i) {
                nets.push(i);
            }
        }
    }
    out
}

/// The TAP port of device `d`.
fn port_of(board: &Board, d: usize) -> Option<usize> {
    board.chain_position(d).map(|(p, _)| p)
}

/// Two pads that would drive one net to opposite levels while `vectors` is
/// in the update latches. A device
/// whose entry is `None` is not in EXTEST: its pads drive what its system
/// logic drives (a pass-through may drive either level).
pub(super) fn opposing_drivers(board: &Board, vectors: &[Option<Bits>]) -> Option<Fight> {
    let nets = nets_of_pads(board);
    // Each pad that drives, with its level (`None`: either).
    let mut driving: Vec<(PadId, Option<bool>)> = Vec::new();
    for (d, v) in vectors.iter().enumerate() {
        let device = &board.devices()[d];
        match v {
            Some(v) => driving.extend(enabled_pads(board, d, v).filter_map(|p| {
                let out = device.pads()[p].output?;
                Some(((d, p), Some(v.get(out as usize))))
            })),
            None => driving.extend(device.system().iter().enumerate().filter_map(
                |(p, s)| match s {
                    SystemDrive::Low => Some(((d, p), Some(false))),
                    SystemDrive::High => Some(((d, p), Some(true))),
                    SystemDrive::Follow(_) => Some(((d, p), None)),
                    SystemDrive::Off | SystemDrive::OffData(_) => None,
                },
            )),
        }
    }
    let mut level: BTreeMap<usize, Vec<(PadId, Option<bool>)>> = BTreeMap::new();
    for (pad, value) in driving {
        for &n in nets.get(&pad).into_iter().flatten() {
            let on_net = level.entry(n).or_default();
            let scan = |pad: PadId| vectors[pad.0].is_some();
            let fight = on_net.iter().find(|(other, was)| {
                (scan(pad) || scan(*other)) && (was.is_none() || value.is_none() || *was != value)
            });
            if let Some(&(other, _)) = fight {
                return Some((n, other, pad));
            }
            on_net.push((pad, value));
        }
    }
    None
}

/// How the drivers move from one vector to the next.
pub(super) struct Handover {
    /// Each device's next vector with the drivers that take a net over from
    /// another TAP port still off.
    pub release: Vec<Option<Bits>>,
    /// Each TAP port that takes a net over, and the ports it takes nets from.
    pub takes_from: BTreeMap<usize, BTreeSet<usize>>,
}

impl Handover {
    /// True when a port takes a net over from a port that takes one over
    /// too: no order of the two updates is safe, so the takers first scan
    /// their release vectors. Otherwise updating the ports that take
    /// nothing over first is enough.
    pub fn needs_release(&self) -> bool {
        self.takes_from
            .values()
            .flatten()
            .any(|q| self.takes_from.contains_key(q))
    }
}

/// The handover from `prev` to `next` (each device's boundary vector;
/// `None` for a device not in EXTEST): which of `next`'s drivers start on a
/// net that a driver on another TAP port holds under `prev`.
pub(super) fn handover(board: &Board, prev: &[Option<Bits>], next: &[Option<Bits>]) -> Handover {
    let nets = nets_of_pads(board);
    // The ports that drive each net under `prev`.
    let mut held: BTreeMap<usize, BTreeSet<usize>> = BTreeMap::new();
    for (d, v) in prev.iter().enumerate() {
        let (Some(v), Some(port)) = (v, port_of(board, d)) else {
            continue;
        };
        for p in enabled_pads(board, d, v) {
            for &n in nets.get(&(d, p)).into_iter().flatten() {
                held.entry(n).or_default().insert(port);
            }
        }
    }
    let mut release = next.to_vec();
    let mut takes_from: BTreeMap<usize, BTreeSet<usize>> = BTreeMap::new();
    for (d, v) in next.iter().enumerate() {
        let (Some(v), Some(port)) = (v, port_of(board, d)) else {
            continue;
        };
        for p in enabled_pads(board, d, v) {
            let from: BTreeSet<usize> = nets
                .get(&(d, p))
                .into_iter()
                .flatten()
                .filter_map(|n| held.get(n))
                .flatten()
                .copied()
                .filter(|&q| q != port)
                .collect();
            if from.is_empty() {
                continue;
            }
            let pad = &board.devices()[d].pads()[p];
            match (pad.control, release[d].as_mut()) {
                (Some(c), Some(r)) => {
                    r.set(c.cell as usize, c.disable_value);
                    takes_from.entry(port).or_default().extend(from);
                }
                // A two-state output has no control cell to hold off: it
                // drives under `prev` too, at the level of the other
                // port's driver (the compiler refused a fight there). When
                // its level changes, that driver must let go first.
                (None, _) => {
                    let level = |v: &Option<Bits>| {
                        v.as_ref().zip(pad.output).map(|(v, c)| v.get(c as usize))
                    };
                    if level(&prev[d]) != level(&next[d]) {
                        takes_from.entry(port).or_default().extend(from);
                    }
                }
                (Some(_), None) => {}
            }
        }
    }
    Handover {
        release,
        takes_from,
    }
}

/// An order to take `ports` into EXTEST in, with `safe` in the update
/// latches, and out again in the reverse order, so that at no point a pad in
/// EXTEST fights a device still (or again) under its system logic. Only
/// outputs that no control cell turns off (two-state outputs) drive in the
/// safe vector, so most boards take any order; the first that works, in
/// port order, is chosen.
///
/// # Errors
/// A fight that every order meets.
pub(super) fn entry_order(
    board: &Board,
    ports: &[usize],
    safe: &[Option<Bits>],
) -> Result<Vec<usize>, Fight> {
    let state = |mask: u128| -> Vec<Option<Bits>> {
        safe.iter()
            .enumerate()
            .map(|(d, v)| {
                let on = port_of(board, d)
                    .and_then(|p| ports.iter().position(|&x| x == p))
                    .is_some_and(|k| mask & (1 << k) != 0);
                if on {
                    v.clone()
                } else {
                    None
                }
            })
            .collect()
    };
    // Depth first over the sets of ports in EXTEST; `dead` holds the sets
    // from which no order goes on.
    let full: u128 = if ports.len() >= 128 {
        u128::MAX
    } else {
        (1u128 << ports.len()) - 1
    };
    let mut dead: BTreeSet<u128> = BTreeSet::new();
    let mut last_fight = None;
    let mut order = Vec::new();
    let mut stack: Vec<(u128, usize)> = vec![(0, 0)];
    while let Some(&(mask, next)) = stack.last() {
        if mask == full {
            return Ok(order);
        }
        let Some(k) = (next..ports.len().min(128)).find(|&k| mask & (1 << k) == 0) else {
            dead.insert(mask);
            stack.pop();
            order.pop();
            continue;
        };
        if let Some(top) = stack.last_mut() {
            top.1 = k + 1;
        }
        let grown = mask | (1 << k);
        if dead.contains(&grown) {
            continue;
        }
        match opposing_drivers(board, &state(grown)) {
            Some(fight) => {
                last_fight = Some(fight);
                dead.insert(grown);
            }
            None => {
                order.push(ports[k]);
                stack.push((grown, 0));
            }
        }
    }
    Err(last_fight.unwrap_or_default())
}
