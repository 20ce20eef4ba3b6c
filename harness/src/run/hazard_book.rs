//! `HazardBook`: the board's events as a run keeps them, one hazard per
//! kind and place (its first occurrence in full, then a count), and a
//! floating capture only where the program compares the captured bit.
//!
//! The events come as borrowed views ([`TapTarget::drain_event_groups`],
//! a device's floating captures of one Capture-DR together); only the
//! first of each place is named, so a program that reads the same floating
//! pins on every scan costs one lookup per event, not a report line.
//!
//! [`TapTarget::drain_event_groups`]: virtual_board::TapTarget::drain_event_groups

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use virtual_board::{BoardEvent, EventPlace, EventView, PathSegment};

use super::record::Hazard;

/// The hazards of one run so far, indexed by place.
#[derive(Default)]
pub(super) struct HazardBook {
    /// Floating captures, the commonest event by far: per device, per
    /// cell, the index of their hazard plus one (0: none yet).
    floating: Vec<Vec<u32>>,
    /// Other places the target gave as ids, and the index of their hazard.
    by_id: HashMap<EventPlace, usize, BuildHasherDefault<IdHasher>>,
    /// Places of events that came named (a remote target), by name.
    by_name: HashMap<String, usize>,
}

impl HazardBook {
    /// Counts `event` against its place: a new hazard (tied to `scan`) for
    /// a place not seen in this run, one more repeat otherwise.
    /// `place` is the event's [`EventView::place`], asked once by the caller.
    pub fn note(
        &mut self,
        hazards: &mut Vec<Hazard>,
        scan: Option<usize>,
        event: &EventView<'_>,
        place: Option<EventPlace>,
    ) {
        let known = match place {
            Some(p) if p.kind == EventPlace::FLOATING_CAPTURE => {
                return self.note_floating(hazards, scan, p.ids[0], p.ids[1], || *event);
            }
            Some(p) => self.by_id.get(&p).copied(),
            None => None,
        };
        if let Some(i) = known {
            hazards[i].repeats += 1;
            return;
        }
        let named = event.to_event();
        let name = match place {
            Some(_) => None,
            None => place_name(&named),
        };
        if let Some(&i) = name.as_ref().and_then(|n| self.by_name.get(n)) {
            hazards[i].repeats += 1;
            return;
        }
        let i = hazards.len();
        hazards.push(Hazard::once(scan, named));
        match (place, name) {
            (Some(p), _) => {
                self.by_id.insert(p, i);
            }
            (None, Some(n)) => {
                self.by_name.insert(n, i);
            }
            (None, None) => {}
        }
    }

    /// Counts a floating capture of `device`'s (board order) cell `cell`:
    /// a new hazard named from `event` the first time, a repeat after.
    #[inline]
    pub fn note_floating<'e>(
        &mut self,
        hazards: &mut Vec<Hazard>,
        scan: Option<usize>,
        device: u32,
        cell: u32,
        event: impl FnOnce() -> EventView<'e>,
    ) {
        let (d, c) = (device as usize, cell as usize);
        let known = self
            .floating
            .get(d)
            .and_then(|cells| cells.get(c))
            .and_then(|&i| (i as usize).checked_sub(1));
        if let Some(i) = known {
            hazards[i].repeats += 1;
            return;
        }
        let i = hazards.len();
        hazards.push(Hazard::once(scan, event().to_event()));
        if self.floating.len() <= d {
            self.floating.resize(d + 1, Vec::new());
        }
        let cells = &mut self.floating[d];
        if cells.len() <= c {
            cells.resize(c + 1, 0);
        }
        cells[c] = i as u32 + 1;
    }
}

/// The place of a named event as text, for events of the kinds the board
/// raises; `None` for the others (each kept on its own line).
fn place_name(e: &BoardEvent) -> Option<String> {
    let kind = e.kind();
    let place = match e {
        BoardEvent::Contention { net, .. } => net.clone(),
        BoardEvent::FloatingCapture { device, cell, .. } => format!("{device}\0{cell}"),
        BoardEvent::ScanDrivesRail { net, driver, .. } => format!("{net}\0{driver}"),
        BoardEvent::ScanMeetsCluster {
            net,
            driver,
            cluster,
            ..
        } => format!("{net}\0{driver}\0{cluster}"),
        BoardEvent::ExtestWithoutPreload { device, .. } => device.clone(),
        _ => return None,
    };
    Some(format!("{kind}\0{place}"))
}

/// Where each device's boundary register sits in a scan's bits, for
/// telling whether a floating capture's bit is compared. Devices the
/// target gives ids for are remembered by id (a number, not a string
/// compare, per event); a device named only is remembered as the last one.
pub(super) struct BoundaryBits<'a> {
    layout: &'a [PathSegment],
    /// Per device id: `None` until looked up, then where its register
    /// starts (`Some(None)`: not in the scan's path).
    by_id: Vec<Option<Option<usize>>>,
    /// The last device looked up by name alone, and where it starts.
    last_named: Option<(&'a str, Option<usize>)>,
}

impl<'a> BoundaryBits<'a> {
    /// Over the scan's layout (TDO end first).
    pub fn new(layout: &'a [PathSegment]) -> BoundaryBits<'a> {
        BoundaryBits {
            layout,
            by_id: Vec::new(),
            last_named: None,
        }
    }

    /// The scan bit of the boundary cell a floating capture `e` read
    /// (`place`: its [`EventView::place`]), when that register is in the
    /// scan's path; `None` for other events.
    pub fn bit(&mut self, e: &EventView<'_>, place: Option<EventPlace>) -> Option<usize> {
        let (device, cell) = e.floating_capture()?;
        let id = match place {
            Some(p) if p.kind == EventPlace::FLOATING_CAPTURE => Some(p.ids[0]),
            Some(_) => return None,
            None => None,
        };
        Some(self.start(id, || device)? + cell as usize)
    }

    /// The scan bit where `device`'s boundary register starts (`id`: the
    /// target's id for it, when its events carry ids), when that register
    /// is in the scan's path.
    /// `device` gives its name, asked only when not found by id.
    #[inline]
    pub fn start<'d>(
        &mut self,
        id: Option<u32>,
        device: impl FnOnce() -> &'d str,
    ) -> Option<usize> {
        let Some(id) = id.map(|i| i as usize) else {
            let device = device();
            if let Some((name, at)) = self.last_named {
                if name == device {
                    return at;
                }
            }
            let (name, at) = self.find(device);
            self.last_named = name.map(|n| (n, at));
            return at;
        };
        if let Some(&Some(at)) = self.by_id.get(id) {
            return at;
        }
        let (_, at) = self.find(device());
        if self.by_id.len() <= id {
            self.by_id.resize(id + 1, None);
        }
        self.by_id[id] = Some(at);
        at
    }

    /// The layout's name for `device`, when it has the device, and where
    /// its boundary register starts, when that is in the path.
    fn find(&self, device: &str) -> (Option<&'a str>, Option<usize>) {
        let mut at = 0;
        let mut name = None;
        for seg in self.layout {
            if seg.device == device {
                name = Some(seg.device.as_str());
                if seg.register == "BOUNDARY" {
                    return (name, Some(at));
                }
            }
            at += seg.length;
        }
        (name, None)
    }
}

/// A hasher for small ids (FxHash's multiply and rotate, common practice
/// for integer keys): the places of a run are few and not chosen by anyone
/// hostile, so a keyed hash buys nothing here.
#[derive(Default)]
pub(super) struct IdHasher(u64);

impl Hasher for IdHasher {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for chunk in bytes.chunks(8) {
            let mut word = [0u8; 8];
            word[..chunk.len()].copy_from_slice(chunk);
            self.write_u64(u64::from_le_bytes(word));
        }
    }

    fn write_u8(&mut self, n: u8) {
        self.write_u64(u64::from(n));
    }

    fn write_u32(&mut self, n: u32) {
        self.write_u64(u64::from(n));
    }

    fn write_usize(&mut self, n: usize) {
        self.write_u64(n as u64);
    }

    fn write_u64(&mut self, n: u64) {
        self.0 = (self.0.rotate_left(5) ^ n).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
}
