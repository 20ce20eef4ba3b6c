//! `TapTarget`: something with TAP ports that a test program can drive.
//!
//! The virtual board implements it; a remote board or a real adapter could.
//! Programs never know which. The bit level (`clock`) is required; the scan
//! level (`shift`) has a bit-by-bit default that is the reference every
//! faster implementation must equal.

use std::sync::Arc;

use serde::{Deserialize, Serialize};

use crate::board::{BoardEvent, EventGroup, EventView};
use crate::register::Bits;

/// Index of a TAP port of a target.
pub type PortId = usize;

/// Levels a tester drives on one TAP port for one TCK period.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TapPins {
    /// TMS, sampled on the rising edge.
    pub tms: bool,
    /// TDI, sampled on the rising edge.
    pub tdi: bool,
    /// TRST* level (active low); `true` = not asserted.
    pub trst_n: bool,
}

impl TapPins {
    /// TMS and TDI with TRST* released.
    pub const fn new(tms: bool, tdi: bool) -> TapPins {
        TapPins {
            tms,
            tdi,
            trst_n: true,
        }
    }
}

/// Why a target could not do what was asked.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum TargetError {
    /// No TAP port with this index.
    #[error("there is no TAP port number {0}")]
    NoSuchPort(PortId),
    /// A device was given an instruction the model does not simulate.
    #[error("{device}: instruction {instruction} is not modelled ({why}); the virtual board cannot run it")]
    NotModelled {
        /// Device designator.
        device: String,
        /// Instruction name.
        instruction: String,
        /// Why it is not modelled.
        why: &'static str,
    },
    /// The target cannot do this (e.g. drive TRST* without a TCK edge).
    #[error("the target cannot {0}")]
    Unsupported(&'static str),
    /// The target is unreachable (a remote board).
    #[error("target unreachable: {0}")]
    Link(String),
    /// A remote target refused, in its own words (the message the board
    /// at the other end gave, so a run reads as it would in process).
    #[error("{0}")]
    Remote(String),
    /// [`TapTarget::clock_ports`] named one TAP port twice for one TCK period.
    #[error("TAP port number {0} is named twice in one TCK period")]
    PortTwice(PortId),
    /// The target cannot clock TCK at the frequency asked, in its own
    /// words (naming the nearest it can).
    #[error("{0}")]
    Frequency(String),
}

/// One boundary cell as the board places it: cell, function, port, pin, net.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct CellPlace {
    /// Cell number in the device's boundary register.
    pub cell: u32,
    /// Cell function (INPUT, OUTPUT3 …), as BSDL writes it.
    pub function: String,
    /// Port element, if the cell has one.
    pub port: Option<String>,
    /// Physical pin, if any.
    pub pin: Option<String>,
    /// Board net of the pin, if any.
    pub net: Option<String>,
}

/// A device's TCK limits, from its BSDL `TAP_SCAN_CLOCK`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TckLimit {
    /// Device designator.
    pub device: String,
    /// Its part (BSDL entity).
    pub part: String,
    /// Highest TCK frequency, Hz, when the BSDL gives one.
    pub max_hz: Option<f64>,
    /// True when TCK may stop only low (`LOW`); false for `BOTH` or unknown.
    pub stop_low_only: bool,
}

/// One device's register in the TDI–TDO path of a scan.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct PathSegment {
    /// Device designator.
    pub device: String,
    /// Its part (BSDL entity).
    pub part: String,
    /// Register name (`IR`, `BYPASS`, `DEVICE_ID`, `BOUNDARY`, a user register).
    pub register: String,
    /// Its length in bits.
    pub length: usize,
    /// For the boundary register: each bit's cell (index = bit = cell
    /// number); shared by every layout of the same device (the board places
    /// its cells once).
    #[serde(with = "shared_cells")]
    pub cells: Arc<[CellPlace]>,
}

/// [`PathSegment::cells`] in serde's form: a plain list.
mod shared_cells {
    use std::sync::Arc;

    use serde::{Deserialize, Deserializer, Serialize, Serializer};

    use super::CellPlace;

    pub fn serialize<S: Serializer>(cells: &Arc<[CellPlace]>, s: S) -> Result<S::Ok, S::Error> {
        cells[..].serialize(s)
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Arc<[CellPlace]>, D::Error> {
        Vec::<CellPlace>::deserialize(d).map(Arc::from)
    }
}

/// One instruction as a device's instruction register holds it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct InstructionView {
    /// Its name in the BSDL opcode table; `None` for an opcode the table
    /// does not list.
    pub name: Option<String>,
    /// The opcode, MSB first as BSDL writes it (the rightmost bit is IR bit 0,
    /// nearest TDO).
    pub opcode: String,
    /// The data register it selects, as scan layouts name it.
    pub register: String,
}

/// The instruction a device holds (the latched side of its instruction
/// register), and the one the program last loaded when a reset has replaced it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct HeldInstruction {
    /// Device designator.
    pub device: String,
    /// The instruction in effect now.
    pub now: InstructionView,
    /// True when Test-Logic-Reset set it (at power-up or since the last
    /// Update-IR): IDCODE, or BYPASS without an identification register.
    pub by_reset: bool,
    /// The instruction the last Update-IR loaded, when a reset replaced it.
    pub replaced: Option<InstructionView>,
}

/// Something with TAP ports.
pub trait TapTarget {
    /// Number of TAP ports.
    fn port_count(&self) -> usize;

    /// Names of the TAP ports, by index. Default: `port0`, `port1`, …
    fn port_names(&self) -> Vec<String> {
        (0..self.port_count()).map(|i| format!("port{i}")).collect()
    }

    /// Events since the last call (contention, floating captures), each
    /// with its names resolved. Default: none.
    ///
    /// # Bounded store
    /// A target that keeps events between calls keeps them as small plain
    /// records (ids, cycle, kind), not text, and keeps at most a fixed
    /// number of them in full (the first ones since the last call; the
    /// board keeps [`EVENTS_KEPT`](crate::EVENTS_KEPT)). Past that it only
    /// counts them, per kind and place ([`TapTarget::event_counts`]), so its
    /// memory stays flat however long a program runs without calling this.
    fn take_events(&mut self) -> Vec<BoardEvent> {
        Vec::new()
    }

    /// Hands each event since the last call to `f` as a borrowed
    /// [`EventView`], then forgets them, as [`TapTarget::take_events`] does.
    /// A runner looks at each event's kind and place and names only those it
    /// keeps ([`EventView::to_event`]); the board names nothing else, so
    /// draining allocates nothing. Default: [`TapTarget::take_events`], each
    /// event viewed as it came (a wrapper passes this on to what it wraps).
    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        for e in self.take_events() {
            f(&EventView::named(&e));
        }
    }

    /// [`TapTarget::drain_events`], with a device's floating captures of
    /// one Capture-DR handed out together ([`EventGroup::Floating`]): a
    /// runner checks each captured cell against the scan's mask in a tight
    /// loop, not one call per event. Default: every event on its own
    /// ([`EventGroup::One`]) from [`TapTarget::drain_events`] (a wrapper
    /// passes this on to what it wraps).
    fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        self.drain_events(&mut |e| f(&EventGroup::One(*e)));
    }

    /// How many events of each kind each place raised since the target was
    /// built, and how many events [`TapTarget::take_events`] could not keep
    /// in full. Default: none counted.
    fn event_counts(&self) -> EventCounts {
        EventCounts::default()
    }

    /// The registers between TDI and TDO of `port` for an IR (`ir` true) or
    /// DR scan under the present instructions, in the order the bits leave
    /// TDO (the segment nearest TDO first). `None` when the target cannot say.
    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        let _ = (port, ir);
        None
    }

    /// The instruction each device on `port` holds, TDI end first. `None`
    /// when the target cannot say (the default).
    fn instructions(&self, port: PortId) -> Option<Vec<HeldInstruction>> {
        let _ = port;
        None
    }

    /// The TCK limits of each device on `port`, TDI end first. Default:
    /// none known.
    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        let _ = port;
        Vec::new()
    }

    /// One TCK period on `port`: the rising edge samples `pins`, the falling
    /// edge follows. Returns TDO as the tester samples it on this period's
    /// rising edge, `None` while TDO is high-impedance.
    ///
    /// # Errors
    /// An unknown port, or an instruction the target cannot honour.
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError>;

    /// One TCK period on several TAP ports that share one TCK line, each
    /// with its own TMS, TDI and TRST*: every port's rising edge (captures,
    /// shifts, state changes) happens before any port's falling edge
    /// (updates), as on the hardware and in an HDL model of the board. So a
    /// port in Capture-DR captures the level its nets had before another
    /// port's Update-DR in the same period drives new ones. `tdo[k]` gets
    /// the TDO of `pins[k]`'s port, as [`TapTarget::clock`] returns it.
    ///
    /// The default clocks the ports one after another with
    /// [`TapTarget::clock`], in the order given: the same answer wherever no
    /// port's update in this period reaches another port's capture. A
    /// target that models nets must override it.
    ///
    /// # Errors
    /// As [`TapTarget::clock`]; [`TargetError::PortTwice`] when a port is
    /// named twice; `tdo` shorter than `pins` is
    /// [`TargetError::Unsupported`].
    fn clock_ports(
        &mut self,
        pins: &[(PortId, TapPins)],
        tdo: &mut [Option<bool>],
    ) -> Result<(), TargetError> {
        check_ports(pins, tdo.len())?;
        for (k, &(port, p)) in pins.iter().enumerate() {
            tdo[k] = self.clock(port, p)?;
        }
        Ok(())
    }

    /// TDO of `port` now, between TCK periods: the level the last falling
    /// edge left on it and the tester will sample on the next rising edge
    /// (`None` while high-impedance). Reading it changes nothing.
    ///
    /// The default refuses: a target must say how it reads the line.
    ///
    /// # Errors
    /// An unknown port; [`TargetError::Unsupported`] where the target can
    /// give TDO only with a TCK period.
    fn peek_tdo(&self, port: PortId) -> Result<Option<bool>, TargetError> {
        let _ = port;
        Err(TargetError::Unsupported("read TDO between TCK periods"))
    }

    /// Asserts (`asserted` true: TRST* low) or releases TRST* of `port`,
    /// with no TCK edge. TRST* is asynchronous: asserting it puts every
    /// device of the port that has the pin in Test-Logic-Reset at once,
    /// while devices without it stay where they are (IEEE 1149.1 clause 6,
    /// from memory). The level holds until the next call, whatever
    /// [`TapPins::trst_n`] later periods carry: the line is low while either
    /// says so.
    ///
    /// The default refuses: a target must say how it drives the line.
    ///
    /// # Errors
    /// An unknown port; [`TargetError::Unsupported`] where the target has
    /// no way to drive TRST* on its own.
    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        let _ = (port, asserted);
        Err(TargetError::Unsupported("drive TRST* without a TCK edge"))
    }

    /// `count` TCK periods on `port` with TMS at `tms` and TDI high, TDO not
    /// sampled: a wait in a stable state (Run-Test/Idle or a Pause state
    /// with TMS low, Test-Logic-Reset with TMS high).
    ///
    /// The default is one `clock` per period: the reference. A target may
    /// count the periods instead where it can show that nothing changes in
    /// them (the state is stable and no defect or running self-test acts
    /// on TCK).
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        for _ in 0..count {
            self.clock(port, TapPins::new(tms, true))?;
        }
        Ok(())
    }

    /// The TCK frequency the target clocks at when a program allows at most
    /// `hz` (SVF's FREQUENCY is a highest allowed frequency). A model has
    /// no clock of its own and keeps `hz`: the default. An adapter gives
    /// the fastest it can make at or below `hz`.
    ///
    /// # Errors
    /// [`TargetError::Frequency`] for a frequency the target cannot make,
    /// naming the nearest it can.
    fn tck_for(&self, hz: f64) -> Result<f64, TargetError> {
        Ok(hz)
    }

    /// Clocks TCK at [`TapTarget::tck_for`]`(hz)` from the next period on,
    /// every port. The default has nothing to set.
    ///
    /// # Errors
    /// As [`TapTarget::tck_for`]; a link failure.
    fn set_tck(&mut self, hz: f64) -> Result<(), TargetError> {
        let _ = hz;
        Ok(())
    }

    /// TCK periods on `port` with TMS from `tms` in order, TDI high and
    /// TRST* at `trst_n` (as [`TapPins::trst_n`]), TDO not wanted: moves
    /// from state to state. A target behind a link may hold them and send
    /// them with the next call that reads TDO, or at
    /// [`TapTarget::flush`], so that moves cost no round trip of their
    /// own; an error they raise may then come from that later call.
    ///
    /// The default is one [`TapTarget::clock`] per period, at once: the
    /// reference.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    fn moves(&mut self, port: PortId, tms: &[bool], trst_n: bool) -> Result<(), TargetError> {
        clock_moves(self, port, tms, trst_n)
    }

    /// [`TapTarget::shift`], then `after` as [`TapTarget::moves`] with
    /// TRST* released: a scan and the moves out of Exit1-xR, in one
    /// exchange where the target can (an adapter: one write and one read,
    /// with any moves still held before it). Returns the shift's TDO.
    ///
    /// The default is the two calls: the reference.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    fn shift_then_move(
        &mut self,
        port: PortId,
        tdi: &Bits,
        after: &[bool],
    ) -> Result<Bits, TargetError> {
        let tdo = self.shift(port, tdi)?;
        self.moves(port, after, true)?;
        Ok(tdo)
    }

    /// Sends whatever the target holds (moves, waits, TRST*, a new TCK
    /// setting) and returns once it has been done. The default holds
    /// nothing.
    ///
    /// # Errors
    /// A link failure, or an error a held move raised.
    fn flush(&mut self) -> Result<(), TargetError> {
        Ok(())
    }

    /// Shifts `tdi` (bit 0 enters first) from Shift-xR with TMS low, and TMS
    /// high on the last bit (so the TAP ends in Exit1-xR). Returns TDO for
    /// each bit (high-impedance reads as 1, as a tester's pull-up would).
    ///
    /// The default is one `clock` per bit: the reference.
    ///
    /// # Errors
    /// As [`TapTarget::clock`].
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        let n = tdi.len();
        let mut out = Bits::zeros(n);
        for i in 0..n {
            let tdo = self.clock(port, TapPins::new(i + 1 == n, tdi.get(i)))?;
            out.set(i, tdo.unwrap_or(true));
        }
        Ok(out)
    }
}

/// [`TapTarget::moves`] as one [`TapTarget::clock`] per period, at once
/// (TDI high): the trait's default, and what a target that holds moves
/// falls back to when it cannot hold them.
///
/// # Errors
/// As [`TapTarget::clock`].
pub fn clock_moves<T: TapTarget + ?Sized>(
    target: &mut T,
    port: PortId,
    tms: &[bool],
    trst_n: bool,
) -> Result<(), TargetError> {
    for &t in tms {
        target.clock(
            port,
            TapPins {
                tms: t,
                tdi: true,
                trst_n,
            },
        )?;
    }
    Ok(())
}

/// A boxed target is the target: every call goes to it, so a wrapper (a
/// recorder) can take a target whose type is chosen at run time.
impl<T: TapTarget + ?Sized> TapTarget for Box<T> {
    fn port_count(&self) -> usize {
        (**self).port_count()
    }
    fn port_names(&self) -> Vec<String> {
        (**self).port_names()
    }
    fn take_events(&mut self) -> Vec<BoardEvent> {
        (**self).take_events()
    }
    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        (**self).drain_events(f)
    }
    fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        (**self).drain_event_groups(f)
    }
    fn event_counts(&self) -> EventCounts {
        (**self).event_counts()
    }
    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        (**self).scan_layout(port, ir)
    }
    fn instructions(&self, port: PortId) -> Option<Vec<HeldInstruction>> {
        (**self).instructions(port)
    }
    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        (**self).tck_limits(port)
    }
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        (**self).clock(port, pins)
    }
    fn clock_ports(
        &mut self,
        pins: &[(PortId, TapPins)],
        tdo: &mut [Option<bool>],
    ) -> Result<(), TargetError> {
        (**self).clock_ports(pins, tdo)
    }
    fn peek_tdo(&self, port: PortId) -> Result<Option<bool>, TargetError> {
        (**self).peek_tdo(port)
    }
    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        (**self).set_trst(port, asserted)
    }
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        (**self).idle(port, tms, count)
    }
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        (**self).shift(port, tdi)
    }
    fn tck_for(&self, hz: f64) -> Result<f64, TargetError> {
        (**self).tck_for(hz)
    }
    fn set_tck(&mut self, hz: f64) -> Result<(), TargetError> {
        (**self).set_tck(hz)
    }
    fn moves(&mut self, port: PortId, tms: &[bool], trst_n: bool) -> Result<(), TargetError> {
        (**self).moves(port, tms, trst_n)
    }
    fn shift_then_move(
        &mut self,
        port: PortId,
        tdi: &Bits,
        after: &[bool],
    ) -> Result<Bits, TargetError> {
        (**self).shift_then_move(port, tdi, after)
    }
    fn flush(&mut self) -> Result<(), TargetError> {
        (**self).flush()
    }
}

/// Checks the arguments of [`TapTarget::clock_ports`]: room for every TDO,
/// no port named twice.
///
/// # Errors
/// [`TargetError::Unsupported`] when `tdo_len` is short,
/// [`TargetError::PortTwice`] for a repeated port.
pub fn check_ports(pins: &[(PortId, TapPins)], tdo_len: usize) -> Result<(), TargetError> {
    if tdo_len < pins.len() {
        return Err(TargetError::Unsupported(
            "clock several ports with fewer TDO slots than ports",
        ));
    }
    for (k, &(port, _)) in pins.iter().enumerate() {
        if pins[..k].iter().any(|&(p, _)| p == port) {
            return Err(TargetError::PortTwice(port));
        }
    }
    Ok(())
}

/// Events counted per kind and place, and how many a bounded store could
/// not keep in full ([`TapTarget::event_counts`]).
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct EventCounts {
    /// One line per kind and place, in the order the places first raised one.
    pub tallies: Vec<EventTally>,
    /// Events counted but not kept in full for [`TapTarget::take_events`].
    pub dropped: u64,
}

impl EventCounts {
    /// Events counted, all kinds and places.
    pub fn total(&self) -> u64 {
        self.tallies.iter().map(|t| t.count).sum()
    }
}

/// How many events of one kind one place raised.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct EventTally {
    /// The kind, as [`BoardEvent::kind`] names it.
    pub kind: &'static str,
    /// The place: a net, a device's pin and cell, or a device.
    pub place: String,
    /// How many.
    pub count: u64,
}
