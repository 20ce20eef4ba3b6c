//! The board's event store: events as small plain records, counted per kind
//! and place, the first few kept in full, names looked up only when taken.
//!
//! Raising an event on a TCK edge allocates nothing and formats nothing: a
//! record is ids and a cycle. Counters are dense (one per net, device or
//! boundary cell), sized on the first event of their kind. Kept records stop
//! at [`EVENTS_KEPT`] until the next take; later ones are only counted, so
//! memory stays flat however long a program runs between takes.

use super::{Board, BoardEvent, DriverLevel};
use crate::target::{EventCounts, EventTally, PortId};

/// How many events the board keeps in full between two
/// [`take_events`](crate::TapTarget::take_events); later ones are counted.
pub const EVENTS_KEPT: usize = 4096;

/// No TAP port (an event at load, or from a resolution no edge caused).
const NO_PORT: u32 = u32::MAX;

/// The kinds of event the board itself raises.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Kind {
    /// Strong drivers disagree on net `a`.
    Contention,
    /// Device `a`'s cell `b` (pad `c`) captured a floating level.
    FloatingCapture,
    /// A scan driver (net `a`, pin index `b`) on a rail.
    ScanDrivesRail,
    /// A scan driver (net `a`, pin index `b`) against cluster output `c`.
    ScanMeetsCluster,
    /// Device `a` entered EXTEST without a PRELOAD.
    ExtestWithoutPreload,
}

/// One event as the hot path records it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Record {
    pub kind: Kind,
    /// TAP port, or [`NO_PORT`].
    pub port: u32,
    pub cycle: u64,
    pub a: u32,
    pub b: u32,
    pub c: u32,
    /// Contention: the drivers' slots and levels, `levels[from..to]`.
    pub levels: (u32, u32),
}

impl Record {
    /// A record with no drivers.
    pub fn new(kind: Kind, port: Option<PortId>, cycle: u64, a: u32, b: u32, c: u32) -> Record {
        Record {
            kind,
            port: port.map_or(NO_PORT, |p| p as u32),
            cycle,
            a,
            b,
            c,
            levels: (0, 0),
        }
    }
}

/// A contention driver's slot: the rail, a pad driver of the net (its index
/// in `Net::drivers`), or a non-scan output (index in `Net::cluster_drivers`).
pub(crate) const RAIL_SLOT: u32 = u32::MAX;
/// Marks a non-scan output's slot.
pub(crate) const CLUSTER_SLOT: u32 = 1 << 31;

/// Kept records and counters.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct EventStore {
    kept: Vec<Record>,
    /// Driver slots and levels of kept contention records.
    levels: Vec<(u32, bool)>,
    /// Events counted but not kept since the store was built.
    dropped: u64,
    /// Per net: contention, scan on rail, scan against cluster.
    per_net: [Vec<u64>; 3],
    /// Per device: EXTEST without PRELOAD.
    per_device: Vec<u64>,
    /// Per boundary cell of every device (`cell_base[d] + cell`): floating captures.
    per_cell: Vec<u64>,
}

fn bump(counts: &mut Vec<u64>, i: usize, len: usize) {
    if counts.is_empty() {
        counts.resize(len, 0);
    }
    if let Some(c) = counts.get_mut(i) {
        *c += 1;
    }
}

impl EventStore {
    /// True when a new record would be kept.
    #[inline]
    pub fn has_room(&self) -> bool {
        self.kept.len() < EVENTS_KEPT
    }

    /// Counts `r` against its place (`sizes`: nets, devices, cells; `cell`:
    /// the flat index of a floating capture's cell), and keeps it when there
    /// is room. Contention drivers come separately ([`EventStore::push_level`]
    /// before this call, when kept).
    #[inline]
    pub fn raise(&mut self, mut r: Record, sizes: (usize, usize, usize), cell: usize) {
        match r.kind {
            Kind::Contention => bump(&mut self.per_net[0], r.a as usize, sizes.0),
            Kind::ScanDrivesRail => bump(&mut self.per_net[1], r.a as usize, sizes.0),
            Kind::ScanMeetsCluster => bump(&mut self.per_net[2], r.a as usize, sizes.0),
            Kind::ExtestWithoutPreload => bump(&mut self.per_device, r.a as usize, sizes.1),
            Kind::FloatingCapture => bump(&mut self.per_cell, cell, sizes.2),
        }
        if self.has_room() {
            if r.kind == Kind::Contention {
                r.levels.1 = self.levels.len() as u32;
            }
            self.kept.push(r);
        } else {
            self.dropped += 1;
        }
    }

    /// Marks where a kept contention record's drivers start.
    #[inline]
    pub fn levels_start(&self) -> u32 {
        self.levels.len() as u32
    }

    /// One driver of the contention record about to be raised.
    #[inline]
    pub fn push_level(&mut self, slot: u32, level: bool) {
        self.levels.push((slot, level));
    }

    /// Drops the kept records (their counts stay).
    pub fn clear_kept(&mut self) {
        self.kept.clear();
        self.levels.clear();
    }

    /// Forgets everything, counts included.
    pub fn clear_all(&mut self) {
        *self = EventStore::default();
    }

    /// The kept records, oldest first.
    pub fn kept(&self) -> &[Record] {
        &self.kept
    }

    /// A kept contention record's drivers.
    pub fn levels_of(&self, r: &Record) -> &[(u32, bool)] {
        self.levels
            .get(r.levels.0 as usize..r.levels.1 as usize)
            .unwrap_or(&[])
    }
}

impl Board {
    /// Net, device and flat-cell counts, for the store's counters.
    pub(super) fn event_sizes(&self) -> (usize, usize, usize) {
        (
            self.nets.len(),
            self.devices.len(),
            self.cell_base.last().copied().unwrap_or(0),
        )
    }

    /// Resolves a record's ids to names: the form reports and the network
    /// carry.
    pub(super) fn resolve_event(&self, r: &Record) -> BoardEvent {
        // One copy of the port's name per event, moved into it.
        let port = (r.port != NO_PORT).then(|| self.ports[r.port as usize].name.clone());
        let (a, b, c) = (r.a as usize, r.b as usize, r.c as usize);
        match r.kind {
            Kind::Contention => {
                let net = &self.nets[a];
                let drivers = self
                    .events
                    .levels_of(r)
                    .iter()
                    .map(|&(slot, level)| DriverLevel {
                        driver: self.driver_name(a, slot),
                        level,
                    })
                    .collect();
                BoardEvent::Contention {
                    port,
                    cycle: r.cycle,
                    net: net.name.clone(),
                    drivers,
                }
            }
            Kind::FloatingCapture => {
                let device = &self.devices[a];
                let net = self.pad_net[a].get(c).copied().flatten();
                BoardEvent::FloatingCapture {
                    port: port.unwrap_or_default(),
                    cycle: r.cycle,
                    pin: self.pin_label(a, c).to_string(),
                    net: net.map(|n| self.nets[n as usize].name.clone()),
                    device: device.designator().to_string(),
                    cell: r.b,
                }
            }
            Kind::ScanDrivesRail => BoardEvent::ScanDrivesRail {
                port,
                cycle: r.cycle,
                net: self.nets[a].name.clone(),
                driver: self.nets[a].pins[b].to_string(),
            },
            Kind::ScanMeetsCluster => {
                let cluster = &self.clusters[c >> 16];
                BoardEvent::ScanMeetsCluster {
                    port,
                    cycle: r.cycle,
                    net: self.nets[a].name.clone(),
                    driver: self.nets[a].pins[b].to_string(),
                    cluster: format!("{}.{}", cluster.name, cluster.outputs[c & 0xffff].name),
                }
            }
            Kind::ExtestWithoutPreload => BoardEvent::ExtestWithoutPreload {
                port: port.unwrap_or_default(),
                cycle: r.cycle,
                device: self.devices[a].designator().to_string(),
            },
        }
    }

    /// Pad `p` of device `d` as a floating capture names it: designator,
    /// first pin, port (formatted once per board, then copied).
    fn pin_label(&self, d: usize, p: usize) -> &str {
        let labels = self.pin_labels.get_or_init(|| {
            self.devices
                .iter()
                .map(|device| {
                    device
                        .pads()
                        .iter()
                        .map(|pad| {
                            format!(
                                "{}.{} ({})",
                                device.designator(),
                                pad.pins.first().map(String::as_str).unwrap_or("?"),
                                pad.port
                            )
                        })
                        .collect()
                })
                .collect()
        });
        &labels[d][p]
    }

    /// The name of a contention driver's slot on net `n`.
    fn driver_name(&self, n: usize, slot: u32) -> String {
        let net = &self.nets[n];
        if slot == RAIL_SLOT {
            let power = net.rail.unwrap_or(false);
            return format!("{} rail", if power { "power" } else { "ground" });
        }
        if slot & CLUSTER_SLOT != 0 {
            let (c, o) = net.cluster_drivers[(slot & !CLUSTER_SLOT) as usize];
            let cluster = &self.clusters[c];
            return format!("{}.{}", cluster.name, cluster.outputs[o].name);
        }
        let (_, _, k) = net.drivers[slot as usize];
        net.pins[k].to_string()
    }

    /// Every count, resolved to names, and the dropped count.
    pub(super) fn count_events(&self) -> EventCounts {
        let mut tallies = Vec::new();
        let store = &self.events;
        let kinds = [
            "contention",
            "scan output on a rail",
            "scan output against a non-scan output",
        ];
        for (k, kind) in kinds.into_iter().enumerate() {
            for (n, &count) in store.per_net[k].iter().enumerate() {
                if count > 0 {
                    tallies.push(EventTally {
                        kind,
                        place: self.nets[n].name.clone(),
                        count,
                    });
                }
            }
        }
        for (d, &count) in store.per_device.iter().enumerate() {
            if count > 0 {
                tallies.push(EventTally {
                    kind: "EXTEST without PRELOAD",
                    place: self.devices[d].designator().to_string(),
                    count,
                });
            }
        }
        for (d, device) in self.devices.iter().enumerate() {
            let (from, to) = (self.cell_base[d], self.cell_base[d + 1]);
            for (cell, &count) in store
                .per_cell
                .get(from..to)
                .unwrap_or(&[])
                .iter()
                .enumerate()
            {
                if count > 0 {
                    tallies.push(EventTally {
                        kind: "floating capture",
                        place: format!("{} cell {cell}", device.designator()),
                        count,
                    });
                }
            }
        }
        EventCounts {
            tallies,
            dropped: store.dropped,
        }
    }
}
