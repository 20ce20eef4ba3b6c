//! The board as verification runs see it: every TCK answered by the board,
//! without the per-scan layout of which cell each bit is.
//!
//! The runner asks its target for the layout of every scan, to place
//! failing bits on the board and to check scan lengths; building it walks
//! every boundary cell of the chain, and on a large board it costs more
//! than the scan. A verification run keeps only the captured bits, so this
//! target says it cannot tell the layout (as any target may) and the
//! runner skips that work. Every other call goes to the board unchanged,
//! so every captured bit is the board's own
//! (`harness/tests/diagnose_unplaced.rs` checks them equal on random boards,
//! programs and defects).

use virtual_board::{Bits, Board, BoardEvent, PortId, TapPins, TapTarget, TargetError, TckLimit};

/// A board whose scans are not placed cell by cell.
pub struct Unplaced<'a>(pub &'a mut Board);

impl TapTarget for Unplaced<'_> {
    fn port_count(&self) -> usize {
        self.0.port_count()
    }

    fn port_names(&self) -> Vec<String> {
        TapTarget::port_names(self.0)
    }

    fn take_events(&mut self) -> Vec<BoardEvent> {
        TapTarget::take_events(self.0)
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.0.tck_limits(port)
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        self.0.set_trst(port, asserted)
    }

    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        self.0.clock(port, pins)
    }

    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        self.0.idle(port, tms, count)
    }

    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        self.0.shift(port, tdi)
    }
}
