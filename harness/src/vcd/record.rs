//! `Recorder`: a `TapTarget` wrapper that records every TCK period it forwards.

use virtual_board::{
    Bits, BoardEvent, EventCounts, EventView, HeldInstruction, PathSegment, PortId, TapPins,
    TapTarget, TargetError, TckLimit,
};

/// One TCK period on one TAP port, as the tester saw it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Cycle {
    /// The port that was clocked.
    pub port: PortId,
    /// TMS driven for this period's rising edge.
    pub tms: bool,
    /// TDI driven for this period's rising edge.
    pub tdi: bool,
    /// TRST* level (active low); `true` = not asserted.
    pub trst_n: bool,
    /// TDO sampled on this period's rising edge; `None` = high-impedance.
    pub tdo: Option<bool>,
    /// False for a period in which TCK does not rise: only the lines change
    /// (TRST* asserted or released on its own, [`TapTarget::set_trst`]).
    pub tck: bool,
}

/// Forwards every call to the inner target and records each TCK period.
///
/// [`TapTarget::shift`] goes to the inner target's own (fast) `shift`; the
/// recorder then adds the periods that scan stands for (TMS low except on
/// the last bit, the TDI bits, the TDO bits as returned), so recording does
/// not slow scans down to one call per bit.
///
/// A call that returns an error records nothing: the target may not have
/// clocked at all, and what TDO it gave is unknown.
#[derive(Clone, Debug)]
pub struct Recorder<T> {
    inner: T,
    cycles: Vec<Cycle>,
    /// TRST* level per port as last driven (`true` = released); ports not
    /// yet driven are released.
    trst_n: Vec<bool>,
}

impl<T> Recorder<T> {
    /// Wraps `inner` with an empty recording.
    pub fn new(inner: T) -> Recorder<T> {
        Recorder {
            inner,
            cycles: Vec::new(),
            trst_n: Vec::new(),
        }
    }

    /// The wrapped target, dropping the recording.
    pub fn into_inner(self) -> T {
        self.inner
    }

    /// The wrapped target.
    pub fn inner(&self) -> &T {
        &self.inner
    }

    /// The wrapped target, mutably. Periods clocked through it directly are
    /// not recorded.
    pub fn inner_mut(&mut self) -> &mut T {
        &mut self.inner
    }

    /// Every period recorded so far, oldest first.
    pub fn cycles(&self) -> &[Cycle] {
        &self.cycles
    }

    fn trst_n(&self, port: PortId) -> bool {
        self.trst_n.get(port).copied().unwrap_or(true)
    }

    fn hold_trst(&mut self, port: PortId, trst_n: bool) {
        if self.trst_n.len() <= port {
            self.trst_n.resize(port + 1, true);
        }
        self.trst_n[port] = trst_n;
    }

    /// The recording so far; the recorder starts a new, empty one.
    pub fn take_cycles(&mut self) -> Vec<Cycle> {
        std::mem::take(&mut self.cycles)
    }
}

impl<T: TapTarget> TapTarget for Recorder<T> {
    fn port_count(&self) -> usize {
        self.inner.port_count()
    }

    fn port_names(&self) -> Vec<String> {
        self.inner.port_names()
    }

    fn take_events(&mut self) -> Vec<BoardEvent> {
        self.inner.take_events()
    }

    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        self.inner.drain_events(f);
    }

    fn event_counts(&self) -> EventCounts {
        self.inner.event_counts()
    }

    fn peek_tdo(&self, port: PortId) -> Result<Option<bool>, TargetError> {
        self.inner.peek_tdo(port)
    }

    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        self.inner.scan_layout(port, ir)
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.inner.tck_limits(port)
    }

    fn instructions(&self, port: PortId) -> Option<Vec<HeldInstruction>> {
        self.inner.instructions(port)
    }

    fn tck_for(&self, hz: f64) -> Result<f64, TargetError> {
        self.inner.tck_for(hz)
    }

    fn set_tck(&mut self, hz: f64) -> Result<(), TargetError> {
        self.inner.set_tck(hz)
    }

    fn flush(&mut self) -> Result<(), TargetError> {
        self.inner.flush()
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        self.inner.set_trst(port, asserted)?;
        self.hold_trst(port, !asserted);
        // TDO is high-impedance: TRST* leaves no device in a Shift state.
        self.cycles.push(Cycle {
            port,
            tms: true,
            tdi: true,
            trst_n: !asserted,
            tdo: None,
            tck: false,
        });
        Ok(())
    }

    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        let tdo = self.inner.clock(port, pins)?;
        self.cycles.push(Cycle {
            port,
            tms: pins.tms,
            tdi: pins.tdi,
            trst_n: pins.trst_n && self.trst_n(port),
            tdo,
            tck: true,
        });
        Ok(tdo)
    }

    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        let tdo = self.inner.shift(port, tdi)?;
        let n = tdi.len();
        let trst_n = self.trst_n(port);
        self.cycles.reserve(n);
        self.cycles.extend((0..n).map(|i| Cycle {
            port,
            tms: i + 1 == n,
            tdi: tdi.get(i),
            trst_n,
            tdo: Some(tdo.get(i)),
            tck: true,
        }));
        Ok(tdo)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use virtual_board::reference_shift;

    /// A one-port target whose TDO is the TDI of the period before (a
    /// one-bit shift register, driven only in Shift-xR-like use), so the
    /// recorder has real values to keep.
    struct Delay {
        last: Option<bool>,
    }

    impl TapTarget for Delay {
        fn port_count(&self) -> usize {
            1
        }

        fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
            if port != 0 {
                return Err(TargetError::NoSuchPort(port));
            }
            Ok(self.last.replace(pins.tdi))
        }
    }

    #[test]
    fn clock_is_forwarded_and_recorded() {
        let mut r = Recorder::new(Delay { last: None });
        assert_eq!(r.clock(0, TapPins::new(true, false)), Ok(None));
        assert_eq!(r.clock(0, TapPins::new(false, true)), Ok(Some(false)));
        assert_eq!(
            r.clock(1, TapPins::new(false, true)),
            Err(TargetError::NoSuchPort(1))
        );
        assert_eq!(r.port_count(), 1);
        let cycle = |tms, tdi, tdo| Cycle {
            port: 0,
            tms,
            tdi,
            trst_n: true,
            tdo,
            tck: true,
        };
        assert_eq!(
            r.cycles(),
            [cycle(true, false, None), cycle(false, true, Some(false))]
        );
        assert_eq!(r.take_cycles().len(), 2);
        assert!(r.cycles().is_empty());
        assert_eq!(r.into_inner().last, Some(true));
    }

    #[test]
    fn shift_records_what_the_reference_would() {
        let tdi = Bits::from_bools(&[true, false, true, true]);
        let mut fast = Recorder::new(Delay { last: Some(false) });
        let out = fast.shift(0, &tdi).unwrap();
        let mut slow = Recorder::new(Delay { last: Some(false) });
        let reference = reference_shift(&mut slow, 0, &tdi).unwrap();
        assert_eq!(out, reference);
        assert_eq!(out.to_bools(), [false, true, false, true]);
        assert_eq!(fast.cycles(), slow.cycles());
        assert_eq!(fast.inner().last, Some(true));
    }
}
