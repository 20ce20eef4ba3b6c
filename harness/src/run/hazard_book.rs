//! `HazardBook`: the board's events as a run keeps them, one hazard per
//! kind and place (its first occurrence in full, then a count), and a
//! floating capture only where the program compares the captured bit.
//!
//! The events come as borrowed views ([`TapTarget::drain_events`]); only
//! the first of each place is named, so a program that reads the same
//! floating pins on every scan costs one lookup per event, not a report line.
//!
//! [`TapTarget::drain_events`]: virtual_board::TapTarget::drain_events

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
    pub fn note(&mut self, hazards: &mut Vec<Hazard>, scan: Option<usize>, event: &EventView<'_>) {
        let place = event.place();
        let known = match place {
            Some(p) if p.kind == EventPlace::FLOATING_CAPTURE => self
                .floating
                .get(p.ids[0] as usize)
                .and_then(|cells| cells.get(p.ids[1] as usize))
                .and_then(|&i| (i as usize).checked_sub(1)),
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
            (Some(p), _) if p.kind == EventPlace::FLOATING_CAPTURE => {
                let (d, c) = (p.ids[0] as usize, p.ids[1] as usize);
                if self.floating.len() <= d {
                    self.floating.resize(d + 1, Vec::new());
                }
                let cells = &mut self.floating[d];
                if cells.len() <= c {
                    cells.resize(c + 1, 0);
                }
                cells[c] = i as u32 + 1;
            }
            (Some(p), _) => {
                self.by_id.insert(p, i);
            }
            (None, Some(n)) => {
                self.by_name.insert(n, i);
            }
            (None, None) => {}
        }
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
/// telling whether a floating capture's bit is compared; remembers the
/// last device found (a capture's events come device by device).
pub(super) struct BoundaryBits<'a> {
    layout: &'a [PathSegment],
    last: Option<(&'a str, usize)>,
}

impl<'a> BoundaryBits<'a> {
    /// Over the scan's layout (TDO end first).
    pub fn new(layout: &'a [PathSegment]) -> BoundaryBits<'a> {
        BoundaryBits { layout, last: None }
    }

    /// The scan bit of `device`'s boundary cell `cell`, when the device's
    /// boundary register is in the scan's path.
    pub fn bit(&mut self, device: &str, cell: u32) -> Option<usize> {
        let at = match self.last {
            Some((d, at)) if d == device => at,
            _ => {
                let mut at = 0;
                let mut found = None;
                for seg in self.layout {
                    if seg.device == device && seg.register == "BOUNDARY" {
                        found = Some((seg.device.as_str(), at));
                        break;
                    }
                    at += seg.length;
                }
                let (d, at) = found?;
                self.last = Some((d, at));
                at
            }
        };
        Some(at + cell as usize)
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
