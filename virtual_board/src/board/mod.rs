//! `Board`: devices on TAP ports, joined by nets, answering every TCK edge.

mod chain_shift;
mod cluster;
mod event_view;
mod events;
mod net;
mod reach;

use std::sync::{Arc, OnceLock};

pub use cluster::{Cluster, ClusterKind, ClusterPin};
pub use event_view::{EventGroup, EventPlace, EventView, FloatingGroup};
pub use events::EVENTS_KEPT;
pub use net::{BoardEvent, DriverLevel, FloatPolicy, Net, PinName, ShortResolve, ShortRule};

use crate::device::{Device, DeviceFaults, Drive, NetRead, PinControl, PinView, Quiet, Selected};
use crate::register::Bits;
use crate::rng::Rng;
use crate::tap::TapState;
use crate::target::{
    check_ports, CellPlace, EventCounts, HeldInstruction, PathSegment, PortId, TapPins, TapTarget,
    TargetError, TckLimit,
};
use crate::ClockStop;
use events::{EventStore, Kind, Record, CLUSTER_SLOT, RAIL_SLOT};
use reach::Reach;

/// How strongly a net is held.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Strength {
    /// A strong driver (or a rail, or a stuck defect).
    Strong,
    /// Only weak levels (disable results WEAK/PULL, pull resistors).
    Weak,
    /// Only a bus keeper.
    Keeper,
    /// Nothing.
    Float,
}

/// A TAP port: a chain of devices from TDI to TDO.
#[derive(Clone, Debug, PartialEq)]
pub struct TapPort {
    /// Port name.
    pub name: String,
    /// Device indices, TDI first.
    pub chain: Vec<usize>,
    /// True when the port's TRST* reaches the devices that have one.
    pub trst_wired: bool,
    /// TCK cycles clocked on this port.
    pub cycles: u64,
    /// Defect: the TDO-to-TDI link after the device at this chain position
    /// is broken (the next TDI, or the port's TDO, floats and reads 1).
    pub broken_after: Option<usize>,
    /// Defect: TRST* stuck active: the devices that have it stay in reset.
    pub trst_stuck: bool,
    /// The tester holds TRST* low ([`TapTarget::set_trst`]).
    pub trst_low: bool,
}

impl TapPort {
    /// True while TRST* holds the port's devices that have the pin in
    /// Test-Logic-Reset: the tester drives it low on a wired port, or a
    /// defect holds it.
    pub fn trst_active(&self) -> bool {
        (self.trst_low && self.trst_wired) || self.trst_stuck
    }
}

impl TapPort {
    /// A healthy port.
    pub fn new(name: String, chain: Vec<usize>, trst_wired: bool) -> TapPort {
        TapPort {
            name,
            chain,
            trst_wired,
            cycles: 0,
            broken_after: None,
            trst_stuck: false,
            trst_low: false,
        }
    }
}

/// Everything needed to assemble a board (the board file's loader fills it).
#[derive(Clone, Debug, Default)]
pub struct BoardParts {
    /// Board name.
    pub name: String,
    /// Devices.
    pub devices: Vec<Device>,
    /// TAP ports.
    pub ports: Vec<TapPort>,
    /// Nets, in an order where a net followed by system logic comes after the net it follows.
    pub nets: Vec<Net>,
    /// For each device, the net of each pad (its first connected pin).
    pub pad_net: Vec<Vec<Option<u32>>>,
    /// For each device, every net each pad drives (a pad bonded to several pins).
    pub pad_nets: Vec<Vec<Vec<u32>>>,
    /// What contention resolves to.
    pub short_rule: ShortRule,
    /// Policy of a pin on no net.
    pub unconnected: FloatPolicy,
    /// Seed of the random float policy.
    pub seed: u64,
    /// Non-scan clusters.
    pub clusters: Vec<Cluster>,
}

/// A virtual board.
#[derive(Clone, Debug)]
pub struct Board {
    name: String,
    devices: Vec<Device>,
    ports: Vec<TapPort>,
    nets: Arc<Vec<Net>>,
    pad_net: Arc<Vec<Vec<Option<u32>>>>,
    reads: Vec<NetRead>,
    last_driven: Vec<bool>,
    contention: Vec<bool>,
    short_rule: ShortRule,
    unconnected: NetRead,
    unconnected_policy: FloatPolicy,
    rng: Rng,
    events: EventStore,
    /// Per device: the flat index of its cell 0 in the event counters (one
    /// more entry: the total).
    cell_base: Arc<Vec<usize>>,
    /// Per device and pad: how a pad on no net reads (its own one-pin net).
    lone: Vec<Vec<NetRead>>,
    /// Per device and pad on no net: the last level it drove (for a keeper).
    lone_last: Vec<Vec<bool>>,
    clusters: Arc<Vec<Cluster>>,
    /// Per net: hazards already reported while the condition lasts (bit 0
    /// scan on rail, bit 1 scan against cluster).
    hazard_state: Vec<u8>,
    /// How strongly each net is held now.
    strength: Vec<Strength>,
    /// True when some cluster drives a net it also reads through other
    /// nets (a transceiver): resolution repeats until it settles.
    settle: bool,
    /// The net levels before a settling pass (room kept between calls).
    settle_before: Vec<NetRead>,
    /// Per port: true when [`Board::uniform_state`] holds (a healthy chain,
    /// every device in one state), so the quiet path may run its periods.
    /// Kept up to date by every change of faults, TRST* or chain, and after
    /// every reference period.
    quiet_ports: Vec<bool>,
    /// False on the reference: every period takes both edges device by device.
    quiet_path: bool,
    /// False on the reference: a scan of a chain with faults clocks bit by
    /// bit (see `chain_shift.rs`).
    chain_fault_words: bool,
    /// Per device and pad: the pin as events name it (`U1.7 (DATA(0))`),
    /// written the first time an event needs one, shared by clones.
    pin_labels: Arc<OnceLock<Vec<Vec<String>>>>,
    /// Per device: its boundary cells placed ([`Board::cell_places`]),
    /// built the first time a layout needs them, shared by clones.
    placed: Arc<OnceLock<Vec<Arc<[CellPlace]>>>>,
    /// Which nets a change can touch (built with the board, shared by clones).
    reach: Arc<Reach>,
    /// Devices whose pins may have changed since the nets were last resolved.
    changed: Vec<u32>,
    /// True when something other than a TCK edge (a defect, TRST* stuck, a
    /// broken link) changed the board since the last full resolution: the
    /// next resolution resolves every net.
    all_dirty: bool,
    /// Per net: waiting to be resolved again (room kept between calls).
    dirty: Vec<bool>,
    /// False on the reference: every resolution after an edge resolves
    /// every net ([`Board::set_changed_nets_only`]).
    changed_nets_only: bool,
}

impl PartialEq for Board {
    /// Equal when devices, port cycle counts and net levels (the one-pin
    /// nets of pads on no net included) are.
    fn eq(&self, o: &Board) -> bool {
        self.devices == o.devices
            && self.ports == o.ports
            && self.reads == o.reads
            && self.lone == o.lone
            && self.events == o.events
    }
}

impl Board {
    /// Assembles a board from its parts and resolves every net once, as at power-up.
    pub fn new(parts: BoardParts) -> Board {
        let n = parts.nets.len();
        let unconnected = float_read(parts.unconnected, false);
        let mut cell_base = vec![0];
        for d in &parts.devices {
            cell_base.push(cell_base.last().copied().unwrap_or(0) + d.model().boundary_length);
        }
        let lone: Vec<Vec<NetRead>> = parts
            .pad_net
            .iter()
            .map(|pads| vec![unconnected; pads.len()])
            .collect();
        let lone_last = parts
            .pad_net
            .iter()
            .map(|pads| vec![false; pads.len()])
            .collect();
        let settle = parts
            .clusters
            .iter()
            .any(|c| c.kind == ClusterKind::Transceiver);
        let reach = Reach::new(
            &parts.nets,
            &parts.devices,
            &parts.clusters,
            &parts.pad_net,
            settle,
        );
        let mut b = Board {
            name: parts.name,
            devices: parts.devices,
            ports: parts.ports,
            nets: Arc::new(parts.nets),
            pad_net: Arc::new(parts.pad_net),
            reads: vec![NetRead::default(); n],
            last_driven: vec![false; n],
            contention: vec![false; n],
            short_rule: parts.short_rule,
            unconnected,
            unconnected_policy: parts.unconnected,
            rng: Rng::new(parts.seed),
            events: EventStore::default(),
            cell_base: Arc::new(cell_base),
            lone,
            lone_last,
            settle,
            clusters: Arc::new(parts.clusters),
            hazard_state: vec![0; n],
            strength: vec![Strength::Float; n],
            settle_before: Vec::new(),
            quiet_ports: Vec::new(),
            quiet_path: true,
            chain_fault_words: true,
            pin_labels: Arc::default(),
            placed: Arc::default(),
            reach: Arc::new(reach),
            changed: Vec::new(),
            all_dirty: true,
            dirty: vec![false; n],
            changed_nets_only: true,
        };
        b.resolve(None);
        b.note_all_quiet();
        b
    }

    /// The non-scan clusters.
    pub fn clusters(&self) -> &[Cluster] {
        &self.clusters
    }

    /// The TAP port and chain position of device `d`.
    pub fn chain_position(&self, d: usize) -> Option<(PortId, usize)> {
        self.ports
            .iter()
            .enumerate()
            .find_map(|(p, port)| port.chain.iter().position(|&x| x == d).map(|k| (p, k)))
    }

    /// Defect: breaks the TDO-to-TDI link after chain position `k` of port `p`.
    pub fn set_broken_link(&mut self, p: PortId, k: usize) {
        self.ports[p].broken_after = Some(k);
        self.note_all_quiet();
    }

    /// Defect: TRST* of port `p` stuck active.
    pub fn set_trst_stuck(&mut self, p: PortId) {
        self.ports[p].trst_stuck = true;
        for k in 0..self.ports[p].chain.len() {
            let d = self.ports[p].chain[k];
            if self.devices[d].model().tap.trst.is_some() {
                self.devices[d].trst();
            }
        }
        self.note_all_quiet();
    }

    /// Defect: changes the faults of device `d`.
    pub fn update_faults(&mut self, d: usize, f: impl FnOnce(&mut DeviceFaults)) {
        let mut faults = self.devices[d].faults();
        f(&mut faults);
        self.devices[d].set_faults(faults);
        self.note_all_quiet();
    }

    /// Defect: another IDCODE in device `d` (a wrong part of the same family).
    pub fn force_idcode(&mut self, d: usize, value: u64) {
        self.devices[d].force_idcode(value);
    }

    /// Defect: a cluster pin stuck or open.
    ///
    /// # Errors
    /// An unknown cluster or pin, by name.
    pub fn set_cluster_pin(
        &mut self,
        cluster: &str,
        pin: &str,
        stuck: Option<bool>,
        open: bool,
    ) -> Result<(), String> {
        let clusters = Arc::make_mut(&mut self.clusters);
        let c = clusters
            .iter_mut()
            .find(|c| c.name == cluster)
            .ok_or_else(|| format!("unknown cluster `{cluster}`"))?;
        let mut found = false;
        for p in c
            .inputs
            .iter_mut()
            .chain(c.outputs.iter_mut())
            .filter(|p| p.name == pin)
        {
            p.stuck = stuck;
            p.open = open;
            found = true;
        }
        if !found {
            let names: Vec<&str> = c
                .inputs
                .iter()
                .chain(&c.outputs)
                .map(|p| p.name.as_str())
                .collect();
            return Err(format!(
                "cluster {cluster} has no pin `{pin}` (it has: {})",
                names.join(", ")
            ));
        }
        // The nets the cluster drives now carry a defect.
        let driven: Vec<u32> = c.outputs.iter().filter_map(|p| p.net).collect();
        let nets = Arc::make_mut(&mut self.nets);
        for n in driven {
            nets[n as usize].defect = true;
        }
        // The nets changed: cells are placed anew when next asked, and every
        // net is resolved at the next resolution.
        self.placed = Arc::default();
        self.all_dirty = true;
        Ok(())
    }

    /// Re-resolves every net after defects were applied, and forgets the
    /// events that produced (the state at power-up).
    pub fn refresh(&mut self) {
        self.resolve(None);
        self.events.clear_all();
        self.note_all_quiet();
    }

    /// Word-at-a-time Shift-DR of long data registers on (the default) or
    /// off (the reference, bit by bit), on every device.
    pub fn set_word_shifts(&mut self, on: bool) {
        for d in &mut self.devices {
            d.set_word_shifts(on);
        }
    }

    /// The quiet path of [`TapTarget::clock`] on (the default) or off (the
    /// reference: both edges of every period device by device, as before
    /// the quiet path existed). Both give the same answers;
    /// `tests/quiet_path.rs` checks it on random boards.
    pub fn set_quiet_path(&mut self, on: bool) {
        self.quiet_path = on;
        self.note_all_quiet();
    }

    /// Resolution of only the nets a TCK edge's changes can reach (the
    /// default, see `reach.rs`) or (off) of every net after every edge that
    /// changes a pin: the reference. Both give the same answers;
    /// `tests/quiet_path.rs` checks it on random boards.
    pub fn set_changed_nets_only(&mut self, on: bool) {
        self.changed_nets_only = on;
        self.all_dirty = true;
    }

    /// The whole-scan path on chains with faults (a broken link, a stuck
    /// TDO, TCK or TMS open, a dead device, TRST* stuck) on (the default) or
    /// off (the reference: such a scan clocks bit by bit). Both give the
    /// same answers; `tests/fast_path.rs` checks it on random boards.
    pub fn set_chain_fault_words(&mut self, on: bool) {
        self.chain_fault_words = on;
    }

    /// Board name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The devices, in board-file order.
    pub fn devices(&self) -> &[Device] {
        &self.devices
    }

    /// Index of the device with this designator.
    pub fn device_index(&self, designator: &str) -> Option<usize> {
        self.devices
            .iter()
            .position(|d| d.designator() == designator)
    }

    /// The TAP ports.
    pub fn ports(&self) -> &[TapPort] {
        &self.ports
    }

    /// Index of the TAP port with this name.
    pub fn port_index(&self, name: &str) -> Option<PortId> {
        self.ports.iter().position(|p| p.name == name)
    }

    /// The nets.
    pub fn nets(&self) -> &[Net] {
        &self.nets
    }

    /// Index of the net with this name, or of the net it was joined into
    /// (a loopback plug, a short).
    pub fn net_index(&self, name: &str) -> Option<usize> {
        self.nets.iter().position(|n| n.name == name).or_else(|| {
            self.nets
                .iter()
                .position(|n| n.members.iter().any(|m| m == name))
        })
    }

    /// True while strong drivers disagree on net `i` (a defect's own fights included only on a good board).
    pub fn net_in_contention(&self, i: usize) -> bool {
        self.contention[i]
    }

    /// How strongly net `i` is held now.
    pub fn net_strength(&self, i: usize) -> Strength {
        self.strength[i]
    }

    /// How net `i` reads now (without drawing a random value).
    pub fn net_read(&self, i: usize) -> NetRead {
        self.reads[i]
    }

    /// Events since the last call (contention, floating captures), the
    /// first [`EVENTS_KEPT`] of them; their names are looked up now.
    pub fn take_events(&mut self) -> Vec<BoardEvent> {
        let out = self
            .events
            .kept()
            .iter()
            .map(|r| self.resolve_event(r))
            .collect();
        self.events.clear_kept();
        out
    }

    /// Hands each event since the last call to `f` as a borrowed view (ids,
    /// named only if `f` asks), then forgets them: [`Board::take_events`]
    /// without naming what the caller does not keep.
    pub fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        for r in self.events.kept() {
            f(&EventView::record(self, r));
        }
        self.events.clear_kept();
    }

    /// [`Board::drain_events`], with each device's floating captures of
    /// one Capture-DR handed out together.
    pub fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        let kept = self.events.kept();
        let mut i = 0;
        while i < kept.len() {
            let r = &kept[i];
            if r.kind != Kind::FloatingCapture {
                f(&EventGroup::One(EventView::record(self, r)));
                i += 1;
                continue;
            }
            let same = |o: &Record| {
                o.kind == Kind::FloatingCapture && (o.a, o.port, o.cycle) == (r.a, r.port, r.cycle)
            };
            let n = kept[i..].iter().take_while(|o| same(o)).count();
            f(&EventGroup::Floating(FloatingGroup::new(
                self,
                &kept[i..i + n],
            )));
            i += n;
        }
        self.events.clear_kept();
    }

    /// Events counted per kind and place since the board was built (or
    /// [`Board::refresh`]ed), and how many were not kept in full.
    pub fn event_counts(&self) -> EventCounts {
        self.count_events()
    }

    /// The register device `d` puts in the path of an IR or DR scan now.
    fn segment(&self, d: usize, ir: bool) -> PathSegment {
        let dev = &self.devices[d];
        let device = dev.designator().to_string();
        let part = dev.model().entity.clone();
        if ir {
            return PathSegment {
                device,
                part,
                register: "IR".into(),
                length: dev.model().ir_length,
                cells: Arc::default(),
            };
        }
        let (register, cells) = match dev.instruction().register {
            Selected::Bypass => ("BYPASS".to_string(), Arc::default()),
            Selected::Idcode => ("DEVICE_ID".to_string(), Arc::default()),
            Selected::Usercode => ("USERCODE".to_string(), Arc::default()),
            Selected::User(i) => (dev.user_register_names()[i].clone(), Arc::default()),
            Selected::Boundary => ("BOUNDARY".to_string(), self.placed_cells(d)),
        };
        PathSegment {
            device,
            part,
            register,
            length: dev.data_register_len(),
            cells,
        }
    }

    /// [`Board::cell_places`] of device `d`, placed once per board (and
    /// its clones) and shared.
    fn placed_cells(&self, d: usize) -> Arc<[CellPlace]> {
        let placed = self.placed.get_or_init(|| {
            (0..self.devices.len())
                .map(|d| Arc::from(self.cell_places(d)))
                .collect()
        });
        Arc::clone(&placed[d])
    }

    /// Every boundary cell of device `d` with its port, pin and net, by cell number.
    pub fn cell_places(&self, d: usize) -> Vec<CellPlace> {
        let dev = &self.devices[d];
        let m = dev.model();
        // The first pad of each port element, as a search in order finds it.
        let mut pad_of = std::collections::HashMap::new();
        for (i, pad) in dev.pads().iter().enumerate() {
            pad_of.entry(&pad.port).or_insert(i);
        }
        let mut places: Vec<CellPlace> = (0..m.boundary_length)
            .map(|i| CellPlace {
                cell: i as u32,
                function: String::new(),
                port: None,
                pin: None,
                net: None,
            })
            .collect();
        for c in &m.cells {
            let place = &mut places[c.num as usize];
            // A merged cell lists its observing function last in our reader's order; keep both names.
            place.function = if place.function.is_empty() {
                c.function.as_str().to_string()
            } else {
                format!("{}+{}", place.function, c.function.as_str())
            };
            if let Some(p) = &c.port {
                place.port = Some(p.to_string());
                let pad = pad_of.get(p).copied();
                place.pin = pad.and_then(|i| dev.pads()[i].pins.first().cloned());
                place.net = pad
                    .and_then(|i| self.pad_net[d].get(i).copied().flatten())
                    .map(|n| self.nets[n as usize].name.clone());
            }
        }
        places
    }

    /// Total TCK cycles over all ports.
    pub fn total_cycles(&self) -> u64 {
        self.ports.iter().map(|p| p.cycles).sum()
    }

    /// Resolves every net from what the pads, clusters, pulls and rails
    /// drive now, in an order where every net a driver depends on comes
    /// first; boards with transceivers repeat until nothing changes.
    fn resolve(&mut self, port: Option<PortId>) {
        self.changed.clear();
        self.all_dirty = false;
        if !self.settle {
            self.resolve_once(port);
            self.resolve_lone();
            return;
        }
        let passes = self.nets.len().clamp(2, 16);
        // The levels before each pass, in a buffer kept between calls.
        let mut before = std::mem::take(&mut self.settle_before);
        for _ in 0..passes {
            before.clone_from(&self.reads);
            self.resolve_once(port);
            if self.reads == before {
                break;
            }
        }
        self.settle_before = before;
        self.resolve_lone();
    }

    /// Each pad on no net is a one-pin net of its own: it reads what the
    /// pad itself drives (so a self-monitoring cell reads its own driver),
    /// holds it through a keeper, and floats by the board's policy for pins
    /// on no net when it drives nothing.
    fn resolve_lone(&mut self) {
        for d in 0..self.pad_net.len() {
            self.resolve_lone_of(d);
        }
    }

    /// [`Board::resolve_lone`] for the pads of device `d`.
    fn resolve_lone_of(&mut self, d: usize) {
        {
            let pads = &self.pad_net[d];
            for (p, net) in pads.iter().enumerate() {
                if net.is_some() {
                    continue;
                }
                let driven = |value| NetRead {
                    value,
                    floating: false,
                    random: false,
                };
                let read = match self.devices[d].drive(p) {
                    Drive::Strong(v) | Drive::Weak(v) => {
                        self.lone_last[d][p] = v;
                        driven(v)
                    }
                    Drive::Follow(n) => {
                        let v = self.reads[n as usize].value;
                        self.lone_last[d][p] = v;
                        driven(v)
                    }
                    Drive::Keeper => driven(self.lone_last[d][p]),
                    Drive::None => float_read(self.unconnected_policy, self.lone_last[d][p]),
                };
                self.lone[d][p] = read;
            }
        }
    }

    /// What output `o` of cluster `c` drives now.
    fn cluster_output(&self, c: usize, o: usize) -> Option<bool> {
        let cluster = &self.clusters[c];
        // A series resistor passes a level only when something drives its
        // `a` side: from a floating net, `b` is left undriven too.
        let passive = cluster.kind == ClusterKind::Resistor;
        let level = |i: usize| {
            let net = cluster.inputs[i].net.map(|n| n as usize);
            let level = net
                .map(|n| self.reads[n])
                .filter(|r| !(passive && r.floating))
                .map(|r| r.value);
            let open_level = net.map(|n| match self.nets[n].float {
                FloatPolicy::High => true,
                FloatPolicy::Low => false,
                FloatPolicy::Previous | FloatPolicy::Random => self.last_driven[n],
            });
            cluster.input_level(i, level, open_level)
        };
        // Gates have a handful of inputs: no allocation for up to eight.
        let n = cluster.inputs.len();
        if n <= 8 {
            let mut inputs = [None; 8];
            for (i, slot) in inputs.iter_mut().enumerate().take(n) {
                *slot = level(i);
            }
            cluster.output(o, &inputs[..n])
        } else {
            let inputs: Vec<Option<bool>> = (0..n).map(level).collect();
            cluster.output(o, &inputs)
        }
    }

    fn resolve_once(&mut self, port: Option<PortId>) {
        let nets = Arc::clone(&self.nets);
        for (i, net) in nets.iter().enumerate() {
            self.resolve_net(port, i, net);
        }
    }

    /// After an edge of `port`: resolves the nets the changed devices drive,
    /// and from each net whose level changed the nets that read it, in
    /// board order; then the changed devices' pads on no net. The full
    /// resolution where the board needs it (see `reach.rs`).
    fn resolve_changed(&mut self, port: PortId) {
        if self.all_dirty || !self.changed_nets_only || !self.reach.incremental {
            self.resolve(Some(port));
            return;
        }
        let reach = Arc::clone(&self.reach);
        let nets = Arc::clone(&self.nets);
        let mut first = usize::MAX;
        for &n in &reach.random_nets {
            self.dirty[n as usize] = true;
            first = first.min(n as usize);
        }
        for &d in &self.changed {
            for &n in &reach.device_nets[d as usize] {
                self.dirty[n as usize] = true;
                first = first.min(n as usize);
            }
        }
        for i in first..nets.len() {
            if !std::mem::take(&mut self.dirty[i]) {
                continue;
            }
            let before = (self.reads[i], self.last_driven[i]);
            self.resolve_net(Some(port), i, &nets[i]);
            if (self.reads[i], self.last_driven[i]) != before {
                for &m in &reach.dependents[i] {
                    self.dirty[m as usize] = true;
                }
            }
        }
        let mut changed = std::mem::take(&mut self.changed);
        for (d, &follows) in reach.lone_follows.iter().enumerate() {
            if follows {
                changed.push(d as u32);
            }
        }
        changed.sort_unstable();
        changed.dedup();
        for &d in &changed {
            self.resolve_lone_of(d as usize);
        }
        changed.clear();
        self.changed = changed;
    }

    /// Resolves net `i` from what drives it now.
    #[inline]
    fn resolve_net(&mut self, port: Option<PortId>, i: usize, net: &Net) {
        {
            // Strong drivers, split into the dominant ones of a short and
            // the rest; each set kept as which levels it holds.
            let dominant: &[usize] = match &net.short {
                Some(ShortResolve::Dominant(d)) => d,
                _ => &[],
            };
            let mut strong = Levels::default();
            let mut strong_dominant = Levels::default();
            let mut weak: Option<bool> = None;
            let mut weak_conflict = false;
            let mut keeper = false;
            let mut scan_driving = None;
            if let Some(v) = net.rail {
                strong.add(v);
            }
            for (k, &(d, p, pin)) in net.drivers.iter().enumerate() {
                let level = match self.devices[d].drive(p) {
                    Drive::Strong(v) => {
                        if self.devices[d].pin_control() == PinControl::Latches {
                            scan_driving.get_or_insert(pin);
                        }
                        Some(v)
                    }
                    Drive::Follow(n) => Some(self.reads[n as usize].value),
                    Drive::Weak(v) => {
                        weak_conflict |= weak.is_some_and(|w| w != v);
                        weak = Some(v);
                        None
                    }
                    Drive::Keeper => {
                        keeper = true;
                        None
                    }
                    Drive::None => None,
                };
                if let Some(v) = level {
                    if dominant.contains(&k) {
                        strong_dominant.add(v);
                    } else {
                        strong.add(v);
                    }
                }
            }
            let mut cluster_driving = None;
            for (j, &(c, o)) in net.cluster_drivers.iter().enumerate() {
                if let Some(v) = self.cluster_output(c, o) {
                    strong.add(v);
                    cluster_driving.get_or_insert((j, c, o));
                }
            }
            if let Some(v) = net.pull {
                weak_conflict |= weak.is_some_and(|w| w != v);
                weak = Some(v);
            }
            // Weak levels pulling both ways leave a level between the two:
            // no damage, but nothing an input can rely on, so it reads as
            // floating (common practice; a resistor divider).
            if weak_conflict {
                weak = None;
            }
            let rule = match &net.short {
                Some(ShortResolve::Wired(r)) => *r,
                _ => self.short_rule,
            };
            let conflict =
                (strong.high || strong_dominant.high) && (strong.low || strong_dominant.low);
            let strong_level = strong_dominant.wired(rule).or_else(|| strong.wired(rule));
            let driven = |value| NetRead {
                value,
                floating: false,
                random: false,
            };
            self.strength[i] = if net.stuck.is_some() || strong_level.is_some() {
                Strength::Strong
            } else if weak.is_some() {
                Strength::Weak
            } else if keeper {
                Strength::Keeper
            } else {
                Strength::Float
            };
            let read = if let Some(v) = net.stuck {
                driven(v)
            } else if let Some(v) = strong_level.or(weak) {
                driven(v)
            } else if keeper {
                driven(self.last_driven[i])
            } else {
                let mut r = float_read(net.float, self.last_driven[i]);
                if r.random {
                    r.value = self.rng.bit();
                }
                r
            };
            if !read.floating {
                self.last_driven[i] = read.value;
            }
            // A defect's drivers fighting raise no hazard (the program is not
            // at fault), except on a short: drivers at opposite levels joined
            // by a bridge are contention, as on the real board.
            let fight = conflict && (!net.defect || net.short.is_some());
            if fight && !self.contention[i] {
                self.raise_contention(port, i);
            }
            self.contention[i] = fight;
            self.reads[i] = read;
            self.check_hazards(port, i, scan_driving, cluster_driving);
        }
    }

    /// The cycle of `port` for an event (0 with no port: at load).
    fn cycle_of(&self, port: Option<PortId>) -> u64 {
        port.map_or(0, |p| self.ports[p].cycles)
    }

    /// Scan outputs on rails, and scan outputs against non-scan outputs:
    /// reported once each time the condition starts.
    fn check_hazards(
        &mut self,
        port: Option<PortId>,
        i: usize,
        scan: Option<usize>,
        cluster: Option<(usize, usize, usize)>,
    ) {
        let net = &self.nets[i];
        let on_rail = scan.is_some() && net.rail.is_some() && !net.defect;
        let against_cluster = scan.is_some() && cluster.is_some() && !net.defect;
        let state = self.hazard_state[i];
        if !on_rail && !against_cluster && state == 0 {
            return; // nothing to raise, nothing to clear: most nets, always
        }
        let cycle = self.cycle_of(port);
        let sizes = self.event_sizes();
        let pin = scan.unwrap_or(0) as u32;
        if on_rail && state & 1 == 0 {
            let r = Record::new(Kind::ScanDrivesRail, port, cycle, i as u32, pin, 0);
            self.events.raise(r, sizes, 0);
        }
        if against_cluster && state & 2 == 0 {
            let (_, c, o) = cluster.unwrap_or((0, 0, 0));
            let at = ((c as u32) << 16) | (o as u32 & 0xffff);
            let r = Record::new(Kind::ScanMeetsCluster, port, cycle, i as u32, pin, at);
            self.events.raise(r, sizes, 0);
        }
        self.hazard_state[i] = (on_rail as u8) | ((against_cluster as u8) << 1);
    }

    /// Net `i`'s strong drivers started to disagree: one record, with each
    /// driver's slot and level when the record is kept.
    fn raise_contention(&mut self, port: Option<PortId>, i: usize) {
        let mut r = Record::new(Kind::Contention, port, self.cycle_of(port), i as u32, 0, 0);
        if self.events.has_room() {
            r.levels.0 = self.events.levels_start();
            let nets = Arc::clone(&self.nets);
            let net = &nets[i];
            if let Some(v) = net.rail {
                self.events.push_level(RAIL_SLOT, v);
            }
            for (k, &(d, p, _)) in net.drivers.iter().enumerate() {
                let level = match self.devices[d].drive(p) {
                    Drive::Strong(v) => v,
                    Drive::Follow(n) => self.reads[n as usize].value,
                    _ => continue,
                };
                self.events.push_level(k as u32, level);
            }
            // Non-scan outputs fight too: named as the cluster hazard names them.
            for (j, &(c, o)) in net.cluster_drivers.iter().enumerate() {
                if let Some(level) = self.cluster_output(c, o) {
                    self.events.push_level(CLUSTER_SLOT | j as u32, level);
                }
            }
        }
        let sizes = self.event_sizes();
        self.events.raise(r, sizes, 0);
    }

    /// The floating reads device `d` made in its last capture, as events.
    fn collect_floating(&mut self, port: PortId, d: usize) {
        let sizes = self.event_sizes();
        let cycle = self.ports[port].cycles;
        let base = self.cell_base[d];
        let Board {
            devices, events, ..
        } = self;
        devices[d].drain_floating_reads(|pad, cell| {
            let r = Record::new(
                Kind::FloatingCapture,
                Some(port),
                cycle,
                d as u32,
                cell,
                pad as u32,
            );
            events.raise(r, sizes, base + cell as usize);
        });
    }

    /// The rising TCK edge on `port`: TRST* first, then every device
    /// samples TMS and its TDI, captures and shifts. Returns the TDO the
    /// tester samples on this edge, whether TRST* holds the port's devices
    /// that have it, and whether that reset may have changed the pins.
    ///
    /// # Errors
    /// An unknown port.
    #[inline]
    fn rising_edge(
        &mut self,
        port: PortId,
        pins: TapPins,
    ) -> Result<(Option<bool>, bool, bool), TargetError> {
        let Some(tap) = self.ports.get_mut(port) else {
            return Err(TargetError::NoSuchPort(port));
        };
        tap.cycles += 1;
        let trst_wired = tap.trst_wired;
        let Board {
            devices,
            ports,
            pad_net,
            reads,
            lone,
            unconnected,
            changed,
            ..
        } = self;
        let chain = &ports[port].chain;
        let broken_after = ports[port].broken_after;
        let Some(&last) = chain.last() else {
            return Ok((None, false, false));
        };
        // A broken link after the last device leaves the port's TDO floating.
        let sampled = if broken_after == Some(chain.len() - 1) {
            None
        } else {
            devices[last].tdo()
        };

        // TRST* low holds the devices that have it in Test-Logic-Reset, at
        // once and without TCK (IEEE 1149.1 clause 6, from memory); the
        // others on the port still see this TCK edge.
        let trst = (!pins.trst_n && trst_wired) || ports[port].trst_active();
        let held = |d: &Device| trst && d.model().tap.trst.is_some();
        let mut reset_changed = false;
        if trst {
            for &d in chain {
                if held(&devices[d]) && devices[d].trst() {
                    changed.push(d as u32);
                    reset_changed = true;
                }
            }
        }

        // Every device samples TMS and the TDO its upstream neighbour set
        // on the previous falling edge (high-impedance reads 1: IEEE 1149.1
        // requires a pull-up on TDI, from memory).
        let mut tdi = pins.tdi;
        let mut captured = false;
        for (k, &d) in chain.iter().enumerate() {
            // A broken link: the next TDI floats, and reads 1 by its pull-up.
            let out = if broken_after == Some(k) {
                None
            } else {
                devices[d].tdo()
            };
            if !held(&devices[d]) {
                captured |= devices[d].state() == TapState::CaptureDr;
                let view = PinView {
                    pad_net: &pad_net[d],
                    nets: reads,
                    lone: &lone[d],
                    unconnected: *unconnected,
                };
                devices[d].rising(pins.tms, tdi, &view);
            }
            tdi = out.unwrap_or(true);
        }
        if captured {
            for k in 0..self.ports[port].chain.len() {
                let d = self.ports[port].chain[k];
                self.collect_floating(port, d);
            }
        }
        Ok((sampled, trst, reset_changed))
    }

    /// The falling TCK edge on `port`: updates, reset, TDO. Returns whether
    /// the pins may have changed, and the first device error.
    #[inline]
    fn falling_edge(&mut self, port: PortId, trst: bool) -> (bool, Option<TargetError>) {
        let mut changed = false;
        let mut error = None;
        let sizes = self.event_sizes();
        let Board {
            devices,
            ports,
            events,
            changed: changed_devices,
            ..
        } = self;
        let tap = &ports[port];
        for &d in &tap.chain {
            let device = &mut devices[d];
            if trst && device.model().tap.trst.is_some() {
                continue;
            }
            let result = device.falling();
            if device.take_unpreloaded_extest() {
                let r = Record::new(
                    Kind::ExtestWithoutPreload,
                    Some(port),
                    tap.cycles,
                    d as u32,
                    0,
                    0,
                );
                events.raise(r, sizes, 0);
            }
            let pins_moved = match result {
                Ok(c) => c,
                Err(e) => {
                    error.get_or_insert(e);
                    true
                }
            };
            if pins_moved {
                changed_devices.push(d as u32);
                changed = true;
            }
        }
        self.note_quiet(port);
        (changed, error)
    }

    /// One TCK period through the reference: both edges device by device,
    /// then the nets resolved when the pins may have changed.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    #[inline(never)]
    fn reference_clock(
        &mut self,
        port: PortId,
        pins: TapPins,
    ) -> Result<Option<bool>, TargetError> {
        let (sampled, trst, reset_changed) = self.rising_edge(port, pins)?;
        let (changed, error) = self.falling_edge(port, trst);
        if changed || reset_changed {
            self.resolve_changed(port);
        }
        match error {
            Some(e) => Err(e),
            None => Ok(sampled),
        }
    }

    /// Whether the quiet path may run periods of `port` now.
    fn note_quiet(&mut self, port: PortId) {
        let quiet = self.quiet_path && self.uniform_state(port).is_some();
        if let Some(q) = self.quiet_ports.get_mut(port) {
            *q = quiet;
        }
    }

    /// [`Board::note_quiet`] for every port (after a fault or chain change).
    fn note_all_quiet(&mut self) {
        // Called after every change that is not a TCK edge's.
        self.all_dirty = true;
        self.quiet_ports = (0..self.ports.len())
            .map(|p| self.quiet_path && self.uniform_state(p).is_some())
            .collect();
    }

    /// The quiet path of [`TapTarget::clock`]: on a port where every device
    /// is healthy and in the same state, TRST* released, a period that
    /// neither reads nor changes the pins, updates the instruction nor
    /// resets ([`Quiet`]) only moves the TAP state, shifts or captures in
    /// registers off the board, and loads boundary latches that drive no
    /// pin (Update-DR under SAMPLE or PRELOAD). No net can change, no event
    /// can be raised. Returns `None` (nothing done) when the period needs
    /// the reference; `tests/quiet_path.rs` checks the two equal.
    #[inline]
    fn quiet_clock(&mut self, port: PortId, pins: TapPins) -> Option<Option<bool>> {
        if !*self.quiet_ports.get(port)? {
            return None;
        }
        let Board { devices, ports, .. } = self;
        let tap = &mut ports[port];
        if !pins.trst_n && tap.trst_wired {
            return None;
        }
        let &first = tap.chain.first()?;
        let quiet = match Quiet::of(devices[first].state(), pins.tms) {
            Quiet::Yes => true,
            Quiet::UnlessBoundary => !tap.chain.iter().any(|&d| devices[d].boundary_selected()),
            Quiet::UnlessLatchesDrive => !tap.chain.iter().any(|&d| devices[d].latches_drive()),
            Quiet::No => false,
        };
        if !quiet {
            return None;
        }
        tap.cycles += 1;
        // Each device's TDO from before the period feeds the next one's
        // TDI; the last one's is what the tester samples.
        let mut tdi = pins.tdi;
        let mut sampled = None;
        for &d in &tap.chain {
            sampled = devices[d].quiet_period(pins.tms, tdi);
            tdi = sampled.unwrap_or(true);
        }
        Some(sampled)
    }

    /// The state every device of the port is in, when the port is healthy
    /// (no broken link, TRST* released, no device fault: chain faults change
    /// what the chain does, so those ports take the reference path) and all
    /// its devices agree. The fast paths (`shift`, `idle`) start from here.
    fn uniform_state(&self, port: PortId) -> Option<TapState> {
        let tap = self.ports.get(port)?;
        let state = self.devices[*tap.chain.first()?].state();
        let healthy = tap.broken_after.is_none()
            && !tap.trst_active()
            && tap
                .chain
                .iter()
                .all(|&d| !self.devices[d].faults().any() && self.devices[d].state() == state);
        healthy.then_some(state)
    }

    /// The Shift state (Shift-DR or Shift-IR) from which
    /// [`TapTarget::shift`] takes the whole-scan word path on `port`, or
    /// `None` where it would clock bit by bit. On that path every device of
    /// the chain drives TDO, so every bit the shift returns was driven (none
    /// is a high-impedance line read as 1).
    pub fn word_shift_state(&self, port: PortId) -> Option<TapState> {
        self.uniform_state(port).filter(|s| s.is_shift())
    }

    /// Drives TMS through the shortest path from the port's present state
    /// to `target`, one TCK per step, TDI high.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    pub fn goto_state(&mut self, port: PortId, target: TapState) -> Result<(), TargetError> {
        let from = self.port_state(port).ok_or(TargetError::NoSuchPort(port))?;
        for tms in from.path_to(target) {
            self.clock(port, TapPins::new(tms, true))?;
        }
        Ok(())
    }

    /// Five TCK cycles with TMS high: Test-Logic-Reset from any state
    /// (IEEE 1149.1 clause 6, from memory).
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    pub fn reset_by_tms(&mut self, port: PortId) -> Result<(), TargetError> {
        for _ in 0..5 {
            self.clock(port, TapPins::new(true, true))?;
        }
        Ok(())
    }

    /// TRST* asserted, then released, with no TCK edge.
    ///
    /// # Errors
    /// As [`TapTarget::set_trst`].
    pub fn pulse_trst(&mut self, port: PortId) -> Result<(), TargetError> {
        self.set_trst(port, true)?;
        self.set_trst(port, false)
    }

    /// Scans the instruction registers of the port: to Shift-IR through
    /// Capture-IR ([`TapState::scan_entry`]), shift `tdi` (bit 0 first; it ends up nearest TDO),
    /// then to `end`. Returns the captured bits, bit 0 = first out of TDO.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    pub fn scan_ir(
        &mut self,
        port: PortId,
        tdi: &Bits,
        end: TapState,
    ) -> Result<Bits, TargetError> {
        self.scan(port, TapState::ShiftIr, tdi, end)
    }

    /// Scans the selected data registers of the port, as [`Board::scan_ir`].
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    pub fn scan_dr(
        &mut self,
        port: PortId,
        tdi: &Bits,
        end: TapState,
    ) -> Result<Bits, TargetError> {
        self.scan(port, TapState::ShiftDr, tdi, end)
    }

    fn scan(
        &mut self,
        port: PortId,
        shift: TapState,
        tdi: &Bits,
        end: TapState,
    ) -> Result<Bits, TargetError> {
        let from = self.port_state(port).ok_or(TargetError::NoSuchPort(port))?;
        for tms in from.scan_entry(shift == TapState::ShiftIr) {
            self.clock(port, TapPins::new(tms, true))?;
        }
        let out = self.shift(port, tdi)?;
        self.goto_state(port, end)?;
        Ok(out)
    }

    /// The TAP state of the port: that of its first device that follows the
    /// tester's TMS (all devices of a healthy chain share it). A device with
    /// TMS or TCK open, a dead one or one held by a stuck TRST* does not
    /// follow it, so it is skipped unless no device follows.
    pub fn port_state(&self, port: PortId) -> Option<TapState> {
        let tap = self.ports.get(port)?;
        let follows = |d: usize| {
            let f = self.devices[d].faults();
            let held = tap.trst_active() && self.devices[d].model().tap.trst.is_some();
            !(f.tms_open || f.tck_open || f.dead || held)
        };
        let d = tap
            .chain
            .iter()
            .copied()
            .find(|&d| follows(d))
            .or_else(|| tap.chain.first().copied())?;
        Some(self.devices[d].state())
    }
}

/// Which levels a set of strong drivers holds.
#[derive(Clone, Copy, Default)]
struct Levels {
    high: bool,
    low: bool,
}

impl Levels {
    fn add(&mut self, v: bool) {
        if v {
            self.high = true;
        } else {
            self.low = true;
        }
    }

    /// The level the set gives: its one level, or the wired rule's when
    /// the drivers disagree; `None` when nothing drives.
    fn wired(self, rule: ShortRule) -> Option<bool> {
        match (self.high, self.low) {
            (false, false) => None,
            (true, true) => Some(rule.resolve()),
            (high, _) => Some(high),
        }
    }
}

fn float_read(policy: FloatPolicy, last: bool) -> NetRead {
    match policy {
        FloatPolicy::High => NetRead {
            value: true,
            floating: true,
            random: false,
        },
        FloatPolicy::Low => NetRead {
            value: false,
            floating: true,
            random: false,
        },
        FloatPolicy::Previous => NetRead {
            value: last,
            floating: true,
            random: false,
        },
        FloatPolicy::Random => NetRead {
            value: false,
            floating: true,
            random: true,
        },
    }
}

impl TapTarget for Board {
    fn port_count(&self) -> usize {
        self.ports.len()
    }

    fn port_names(&self) -> Vec<String> {
        self.ports.iter().map(|p| p.name.clone()).collect()
    }

    fn take_events(&mut self) -> Vec<BoardEvent> {
        Board::take_events(self)
    }

    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        Board::drain_events(self, f);
    }

    fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        Board::drain_event_groups(self, f);
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        let Some(tap) = self.ports.get(port) else {
            return Vec::new();
        };
        tap.chain
            .iter()
            .map(|&d| {
                let m = self.devices[d].model();
                TckLimit {
                    device: self.devices[d].designator().to_string(),
                    part: m.entity.clone(),
                    max_hz: m.tap.tck_max_hz,
                    stop_low_only: m.tap.tck_stop == Some(ClockStop::Low),
                }
            })
            .collect()
    }

    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        let tap = self.ports.get(port)?;
        Some(
            tap.chain
                .iter()
                .rev()
                .map(|&d| self.segment(d, ir))
                .collect(),
        )
    }

    fn instructions(&self, port: PortId) -> Option<Vec<HeldInstruction>> {
        let tap = self.ports.get(port)?;
        Some(tap.chain.iter().map(|&d| self.devices[d].held()).collect())
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        let Some(tap) = self.ports.get_mut(port) else {
            return Err(TargetError::NoSuchPort(port));
        };
        tap.trst_low = asserted;
        if !tap.trst_active() {
            self.note_quiet(port);
            return Ok(());
        }
        let mut changed = false;
        for k in 0..self.ports[port].chain.len() {
            let d = self.ports[port].chain[k];
            if self.devices[d].model().tap.trst.is_some() && self.devices[d].trst() {
                self.changed.push(d as u32);
                changed = true;
            }
        }
        if changed {
            self.resolve_changed(port);
        }
        self.note_quiet(port);
        Ok(())
    }

    #[inline]
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        match self.quiet_clock(port, pins) {
            Some(sampled) => Ok(sampled),
            None => self.reference_clock(port, pins),
        }
    }

    /// Every port's rising edge, then every port's falling edge, then the
    /// nets resolved once: a capture on one port sees the levels from
    /// before another port's update in the same period, as on the board.
    fn clock_ports(
        &mut self,
        pins: &[(PortId, TapPins)],
        tdo: &mut [Option<bool>],
    ) -> Result<(), TargetError> {
        check_ports(pins, tdo.len())?;
        if let Some(&(port, _)) = pins.iter().find(|(p, _)| *p >= self.ports.len()) {
            return Err(TargetError::NoSuchPort(port));
        }
        // Whether each port's TRST* is active this period; on the stack for
        // the usual handful of ports.
        let mut small = [false; 16];
        let mut large = Vec::new();
        let trst: &mut [bool] = if pins.len() <= small.len() {
            &mut small[..pins.len()]
        } else {
            large.resize(pins.len(), false);
            &mut large
        };
        let mut changed_port = None;
        for (k, &(port, p)) in pins.iter().enumerate() {
            let (sampled, held, reset_changed) = self.rising_edge(port, p)?;
            tdo[k] = sampled;
            trst[k] = held;
            if reset_changed {
                changed_port.get_or_insert(port);
            }
        }
        let mut error = None;
        for (k, &(port, _)) in pins.iter().enumerate() {
            let (changed, e) = self.falling_edge(port, trst[k]);
            if changed {
                changed_port.get_or_insert(port);
            }
            if let Some(e) = e {
                error.get_or_insert(e);
            }
        }
        if let Some(port) = changed_port {
            self.resolve_changed(port);
        }
        error.map_or(Ok(()), Err)
    }

    fn peek_tdo(&self, port: PortId) -> Result<Option<bool>, TargetError> {
        let tap = self.ports.get(port).ok_or(TargetError::NoSuchPort(port))?;
        let Some(&last) = tap.chain.last() else {
            return Ok(None);
        };
        // A broken link after the last device leaves the port's TDO floating.
        if tap.broken_after == Some(tap.chain.len() - 1) {
            return Ok(None);
        }
        Ok(self.devices[last].tdo())
    }

    fn event_counts(&self) -> EventCounts {
        self.count_events()
    }

    /// The idle fast path: on a port with no chain fault and TRST* released,
    /// when every device is in the same state and `tms` keeps it there, a
    /// TCK period changes nothing but the cycle count (IEEE 1149.1 clause 6,
    /// from memory: no register acts in Run-Test/Idle, Pause or
    /// Test-Logic-Reset; RUNBIST, which would, is not modelled and stops the
    /// run at Update-IR). Otherwise the reference. `tests/fast_path.rs`
    /// checks the two equal.
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        if port >= self.ports.len() {
            return Err(TargetError::NoSuchPort(port));
        }
        let steady = self
            .uniform_state(port)
            .is_some_and(|s| s.is_stable() && s.next(tms) == s);
        if !steady || count == 0 {
            for _ in 0..count {
                self.clock(port, TapPins::new(tms, true))?;
            }
            return Ok(());
        }
        // One period through the reference (it settles anything pending on
        // the falling edge), then the rest counted.
        self.clock(port, TapPins::new(tms, true))?;
        self.ports[port].cycles += count - 1;
        Ok(())
    }

    /// The whole-scan fast path: when every device of the chain is in the
    /// same Shift state, the chain is one long shift register and the scan
    /// is a word-at-a-time stream copy; on a chain with faults, see
    /// `chain_shift.rs`. Otherwise it falls back to the reference. `tests/fast_path.rs` checks the two equal.
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        let Some(tap) = self.ports.get(port) else {
            return Err(TargetError::NoSuchPort(port));
        };
        let Some(state) = self
            .uniform_state(port)
            .filter(|s| s.is_shift() && !tdi.is_empty())
        else {
            return match self.faulted_shift(port, tdi) {
                Some(out) => Ok(out),
                None => reference_shift(self, port, tdi),
            };
        };
        let mut stream = tdi.clone();
        for k in 0..tap.chain.len() {
            let d = self.ports[port].chain[k];
            let device = &mut self.devices[d];
            let register = if state == TapState::ShiftDr {
                device.data_register()
            } else {
                device.instruction_register()
            };
            stream = register.shift_stream(&stream);
            device.finish_shift();
        }
        self.ports[port].cycles += tdi.len() as u64;
        Ok(stream)
    }
}

/// The bit-by-bit reference of [`TapTarget::shift`], callable by overriders.
///
/// # Errors
/// As [`TapTarget::clock`].
pub fn reference_shift<T: TapTarget + ?Sized>(
    t: &mut T,
    port: PortId,
    tdi: &Bits,
) -> Result<Bits, TargetError> {
    let n = tdi.len();
    let mut out = Bits::zeros(n);
    for i in 0..n {
        let tdo = t.clock(port, TapPins::new(i + 1 == n, tdi.get(i)))?;
        out.set(i, tdo.unwrap_or(true));
    }
    Ok(out)
}
