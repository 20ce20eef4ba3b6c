//! `Recorder`: a `TapTarget` wrapper that records every TCK period it forwards.

use virtual_board::{
    clock_moves, Bits, BoardEvent, EventCounts, EventGroup, EventView, HeldInstruction,
    PathSegment, PortId, TapPins, TapState, TapTarget, TargetError, TckLimit,
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
/// [`TapTarget::moves`] goes to the inner target's own `moves` too (an
/// adapter holds them and sends them with its next read) when the recorder
/// knows that no period of the moves starts in Shift-IR or Shift-DR, so TDO
/// is high-impedance throughout (IEEE 1149.1 clause 6: TDO is active only
/// in the Shift states; from memory). It follows each port's TAP state
/// through the periods it records, from the first Test-Logic-Reset it sees
/// (five periods with TMS high; TRST* resets only a port that wires it, so
/// it makes the state unknown unless both agree); while the state is
/// unknown, and for moves through a Shift state, it clocks them one period
/// at a time.
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
    /// Per port: its TAP state after the periods recorded, where known, and
    /// how many periods in a row had TMS high.
    tap: Vec<(Option<TapState>, u8)>,
}

impl<T> Recorder<T> {
    /// Wraps `inner` with an empty recording.
    pub fn new(inner: T) -> Recorder<T> {
        Recorder {
            inner,
            cycles: Vec::new(),
            trst_n: Vec::new(),
            tap: Vec::new(),
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

    /// Follows `port`'s TAP state through one recorded period.
    fn follow(&mut self, port: PortId, c: &Cycle) {
        if self.tap.len() <= port {
            self.tap.resize(port + 1, (None, 0));
        }
        // TRST* asserted resets the TAP only where the port wires it: the
        // state stays known only where both cases agree.
        let reset = Some(TapState::TestLogicReset);
        let (state, highs) = &mut self.tap[port];
        if c.tck {
            *highs = if c.tms { highs.saturating_add(1) } else { 0 };
            let next = state.map(|s| s.next(c.tms));
            *state = if *highs >= 5 {
                reset
            } else if c.trst_n {
                next
            } else {
                next.filter(|s| Some(*s) == reset)
            };
        } else if !c.trst_n && *state != reset {
            *state = None;
        }
    }

    /// Records one period and follows the TAP state through it.
    fn record(&mut self, c: Cycle) {
        self.follow(c.port, &c);
        self.cycles.push(c);
    }

    /// True when `port`'s state is known and no period of `tms` from it
    /// starts in a Shift state (with TRST* asserted as well: a port that
    /// does not wire TRST* follows TMS).
    fn moves_tdo_off(&self, port: PortId, tms: &[bool]) -> bool {
        let Some(mut s) = self.tap.get(port).and_then(|t| t.0) else {
            return false;
        };
        for &t in tms {
            if matches!(s, TapState::ShiftDr | TapState::ShiftIr) {
                return false;
            }
            s = s.next(t);
        }
        true
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

    fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        self.inner.drain_event_groups(f);
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
        self.record(Cycle {
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
        self.record(Cycle {
            port,
            tms: pins.tms,
            tdi: pins.tdi,
            trst_n: pins.trst_n && self.trst_n(port),
            tdo,
            tck: true,
        });
        Ok(tdo)
    }

    fn moves(&mut self, port: PortId, tms: &[bool], trst_n: bool) -> Result<(), TargetError> {
        if !self.moves_tdo_off(port, tms) {
            return clock_moves(self, port, tms, trst_n);
        }
        self.inner.moves(port, tms, trst_n)?;
        let trst_n = trst_n && self.trst_n(port);
        self.cycles.reserve(tms.len());
        for &t in tms {
            self.record(Cycle {
                port,
                tms: t,
                tdi: true,
                trst_n,
                tdo: None,
                tck: true,
            });
        }
        Ok(())
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
        // The TAP state through the scan: TMS low reaches a state that TMS
        // low keeps within two periods (IEEE 1149.1 clause 6 state
        // diagram), so the first three low periods and the last, high one
        // give the state the whole scan leaves, without a step per bit.
        let start = self.cycles.len() - n;
        let lows = (n.saturating_sub(1)).min(3);
        for i in (start..start + lows).chain(start + n.saturating_sub(1)..start + n) {
            let c = self.cycles[i];
            self.follow(port, &c);
        }
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

    /// Forwards only `clock` (and TRST* without TCK): moves, scans and
    /// waits fall back to the trait's one-period-at-a-time defaults, the
    /// reference.
    struct ClockOnly(virtual_board::Board);

    impl TapTarget for ClockOnly {
        fn port_count(&self) -> usize {
            self.0.port_count()
        }
        fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
            self.0.clock(port, pins)
        }
        fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
            self.0.set_trst(port, asserted)
        }
    }

    /// Moves forwarded whole record the same periods (TDO high-impedance
    /// outside the Shift states) as moves clocked one period at a time
    /// through the recorder (`clock_moves`, the reference), on
    /// the demo board: random moves, some with TRST* held, TRST* pulses and
    /// scans, on both ports, from an unknown state.
    #[test]
    fn forwarded_moves_record_what_clocked_moves_would() {
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../scenarios/boards/harbor_controller.yaml"
        );
        let board = virtual_board::load_board(std::path::Path::new(path))
            .unwrap()
            .board;
        let mut forwarded = 0;
        for seed in 0..20 {
            let mut rng = virtual_board::Rng::new(seed);
            let mut fast = Recorder::new(board.clone());
            let mut slow = Recorder::new(ClockOnly(board.clone()));
            for _ in 0..60 {
                let port = (rng.next_u64() % 2) as usize;
                match rng.next_u64() % 4 {
                    0 | 1 => {
                        // A random walk that never captures the IR (a
                        // captured pattern may load an instruction the
                        // model refuses), so no call fails.
                        let mut at = fast.inner().port_state(port).unwrap();
                        let tms: Vec<bool> = (0..1 + rng.next_u64() % 9)
                            .map(|_| {
                                let t = rng.bit() || at == TapState::SelectIrScan;
                                at = at.next(t);
                                t
                            })
                            .collect();
                        let trst_n = !rng.next_u64().is_multiple_of(8);
                        forwarded += usize::from(fast.moves_tdo_off(port, &tms));
                        fast.moves(port, &tms, trst_n).unwrap();
                        clock_moves(&mut slow, port, &tms, trst_n).unwrap();
                    }
                    2 => {
                        let on = rng.bit();
                        fast.set_trst(port, on).unwrap();
                        slow.set_trst(port, on).unwrap();
                    }
                    _ => {
                        // Into Shift-DR or Shift-IR from where the board is,
                        // then a scan.
                        let want = if rng.bit() {
                            TapState::ShiftDr
                        } else {
                            TapState::ShiftIr
                        };
                        let from = fast.inner().port_state(port).unwrap();
                        let path = from.path_to(want);
                        fast.moves(port, &path, true).unwrap();
                        clock_moves(&mut slow, port, &path, true).unwrap();
                        // All ones in the IR: BYPASS everywhere.
                        let tdi: Vec<bool> = (0..1 + rng.next_u64() % 40)
                            .map(|_| want == TapState::ShiftIr || rng.bit())
                            .collect();
                        let tdi = Bits::from_bools(&tdi);
                        assert_eq!(fast.shift(port, &tdi), slow.shift(port, &tdi));
                    }
                }
                if let Some(i) = (0..fast.cycles().len().max(slow.cycles().len()))
                    .find(|&i| fast.cycles().get(i) != slow.cycles().get(i))
                {
                    panic!(
                        "seed {seed}: period {i} of {}: {:?} where clocked moves give {:?}",
                        slow.cycles().len(),
                        fast.cycles().get(i),
                        slow.cycles().get(i)
                    );
                }
            }
        }
        // Many random moves went whole to the board (109 of these seeds).
        assert!(forwarded > 50, "{forwarded} moves forwarded");
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
