//! `EventView`: one event as [`TapTarget::drain_events`] hands it out, a
//! borrowed view that names nothing until asked.
//!
//! A runner keeps few of the events a program raises (a floating capture
//! of a bit the program masks harms nothing; a place that repeats is one
//! line with a count), so it looks at the kind, the place and the
//! capturing device and cell first, and names only the events it keeps.
//!
//! [`TapTarget::drain_events`]: crate::TapTarget::drain_events

use super::events::{Kind, Record};
use super::{Board, BoardEvent};

/// One event, borrowed from the target that raised it.
#[derive(Clone, Copy, Debug)]
pub struct EventView<'a>(Inner<'a>);

#[derive(Clone, Copy, Debug)]
enum Inner<'a> {
    /// An event the target already named (the default of `drain_events`).
    Named(&'a BoardEvent),
    /// A record of the board's store, named on request.
    Record(&'a Board, &'a Record),
}

/// Where an event happened, as small ids: equal for two events of the same
/// kind at the same place (a net, a device, a boundary cell, a scan driver)
/// of the same board, whatever their ports and cycles.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct EventPlace {
    /// The kind, as a small number.
    pub kind: u8,
    /// The ids of the place (net, device, cell, driver, as the kind uses them).
    pub ids: [u32; 3],
}

impl EventPlace {
    /// [`EventPlace::kind`] of a contention; `ids`: the net.
    pub const CONTENTION: u8 = 0;
    /// Of a floating capture; `ids`: the device (board order) and its cell.
    pub const FLOATING_CAPTURE: u8 = 1;
    /// Of a scan output on a rail; `ids`: the net and the driving pin.
    pub const SCAN_DRIVES_RAIL: u8 = 2;
    /// Of a scan output against a non-scan output; `ids`: the net, the
    /// driving pin and the cluster output.
    pub const SCAN_MEETS_CLUSTER: u8 = 3;
    /// Of EXTEST without PRELOAD; `ids`: the device.
    pub const EXTEST_WITHOUT_PRELOAD: u8 = 4;
}

impl<'a> EventView<'a> {
    /// A view of an event already named.
    pub fn named(event: &'a BoardEvent) -> EventView<'a> {
        EventView(Inner::Named(event))
    }

    pub(super) fn record(board: &'a Board, record: &'a Record) -> EventView<'a> {
        EventView(Inner::Record(board, record))
    }

    /// A short name of the kind, as [`BoardEvent::kind`] gives it.
    pub fn kind(&self) -> &'static str {
        match self.0 {
            Inner::Named(e) => e.kind(),
            Inner::Record(_, r) => match r.kind {
                Kind::Contention => "contention",
                Kind::FloatingCapture => "floating capture",
                Kind::ScanDrivesRail => "scan output on a rail",
                Kind::ScanMeetsCluster => "scan output against a non-scan output",
                Kind::ExtestWithoutPreload => "EXTEST without PRELOAD",
            },
        }
    }

    /// For a floating capture: the capturing device's designator and its
    /// boundary cell. `None` for other kinds.
    pub fn floating_capture(&self) -> Option<(&'a str, u32)> {
        match self.0 {
            Inner::Named(BoardEvent::FloatingCapture { device, cell, .. }) => {
                Some((device.as_str(), *cell))
            }
            Inner::Named(_) => None,
            Inner::Record(b, r) => (r.kind == Kind::FloatingCapture)
                .then(|| (b.devices[r.a as usize].designator(), r.b)),
        }
    }

    /// The place as ids, when the target keeps events as ids (the board
    /// does); `None` for an event that came named (compare names then).
    pub fn place(&self) -> Option<EventPlace> {
        let Inner::Record(_, r) = self.0 else {
            return None;
        };
        let (kind, ids) = match r.kind {
            Kind::Contention => (EventPlace::CONTENTION, [r.a, 0, 0]),
            // The pad follows from the cell.
            Kind::FloatingCapture => (EventPlace::FLOATING_CAPTURE, [r.a, r.b, 0]),
            Kind::ScanDrivesRail => (EventPlace::SCAN_DRIVES_RAIL, [r.a, r.b, 0]),
            Kind::ScanMeetsCluster => (EventPlace::SCAN_MEETS_CLUSTER, [r.a, r.b, r.c]),
            Kind::ExtestWithoutPreload => (EventPlace::EXTEST_WITHOUT_PRELOAD, [r.a, 0, 0]),
        };
        Some(EventPlace { kind, ids })
    }

    /// The event with its names: the form reports and the network carry.
    pub fn to_event(&self) -> BoardEvent {
        match self.0 {
            Inner::Named(e) => e.clone(),
            Inner::Record(b, r) => b.resolve_event(r),
        }
    }
}

/// The events since the last drain, as [`TapTarget::drain_event_groups`]
/// hands them: one event, or a device's floating captures of one
/// Capture-DR together.
///
/// [`TapTarget::drain_event_groups`]: crate::TapTarget::drain_event_groups
#[derive(Clone, Copy, Debug)]
pub enum EventGroup<'a> {
    /// One event.
    One(EventView<'a>),
    /// Floating captures of one device on one Capture-DR.
    Floating(FloatingGroup<'a>),
}

/// One device's floating captures on one Capture-DR (one per boundary
/// cell that read a floating level): a capture of a long register with
/// floating pins raises hundreds, and a runner looks at each cell's bit in
/// a tight loop instead of one call per event.
#[derive(Clone, Copy, Debug)]
pub struct FloatingGroup<'a> {
    board: &'a Board,
    /// Consecutive floating-capture records of one device, port and cycle.
    records: &'a [Record],
}

impl<'a> FloatingGroup<'a> {
    pub(super) fn new(board: &'a Board, records: &'a [Record]) -> FloatingGroup<'a> {
        debug_assert!(records.iter().all(|r| r.kind == Kind::FloatingCapture
            && (r.a, r.port, r.cycle) == (records[0].a, records[0].port, records[0].cycle)));
        FloatingGroup { board, records }
    }

    /// The capturing device's designator.
    pub fn device(&self) -> &'a str {
        self.board.devices[self.device_id() as usize].designator()
    }

    /// The capturing device, by board order: the id
    /// [`EventView::place`] gives it.
    pub fn device_id(&self) -> u32 {
        self.records.first().map_or(0, |r| r.a)
    }

    /// How many floating captures (cells).
    pub fn len(&self) -> usize {
        self.records.len()
    }

    /// True with none.
    pub fn is_empty(&self) -> bool {
        self.records.is_empty()
    }

    /// The boundary cell of capture `k`.
    #[inline]
    pub fn cell(&self, k: usize) -> u32 {
        self.records[k].b
    }

    /// Capture `k` as an event of its own.
    pub fn event(&self, k: usize) -> EventView<'a> {
        EventView::record(self.board, &self.records[k])
    }
}
