//! The quiet TCK periods of a device: those whose edges touch nothing on
//! the board, so the board may run them without resolving a net or
//! raising an event.

use super::{Device, PinControl, Selected};
use crate::tap::TapState;

/// Whether a TCK period from a state with a TMS level is quiet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Quiet {
    /// Its edges at most shift one bit, capture the instruction register,
    /// move the state and set TDO.
    Yes,
    /// Quiet unless the boundary register is selected: Capture-DR reads the
    /// pins through it.
    UnlessBoundary,
    /// Update-DR: quiet unless the boundary register is selected while its
    /// latches drive the pins (EXTEST, CLAMP, INTEST); under SAMPLE or
    /// PRELOAD the latches load and no pin moves.
    UnlessLatchesDrive,
    /// It updates the instruction (the pins may change) or enters
    /// Test-Logic-Reset: the reference runs it.
    No,
}

const fn classify(from: TapState, tms: bool) -> Quiet {
    let to = from.next(tms);
    if matches!(to, TapState::UpdateIr)
        || (matches!(to, TapState::TestLogicReset) && !matches!(from, TapState::TestLogicReset))
    {
        Quiet::No
    } else if matches!(from, TapState::CaptureDr) {
        Quiet::UnlessBoundary
    } else if matches!(to, TapState::UpdateDr) {
        Quiet::UnlessLatchesDrive
    } else {
        Quiet::Yes
    }
}

/// [`classify`] for every state (in `TapState` order) and TMS, worked out
/// at compile time.
const TABLE: [[Quiet; 2]; 16] = {
    let mut t = [[Quiet::No; 2]; 16];
    let mut i = 0;
    while i < 16 {
        t[i] = [
            classify(TapState::ALL[i], false),
            classify(TapState::ALL[i], true),
        ];
        i += 1;
    }
    t
};

impl Quiet {
    /// How quiet a period from `from` with this TMS is. Staying in
    /// Test-Logic-Reset is quiet: the reset already happened when the
    /// state was entered, and repeating it changes nothing.
    #[inline]
    pub(crate) fn of(from: TapState, tms: bool) -> Quiet {
        TABLE[from as usize][tms as usize]
    }
}

impl Device {
    /// True when the boundary register is the selected data register.
    #[inline]
    pub(crate) fn boundary_selected(&self) -> bool {
        matches!(self.selected, Selected::Boundary)
    }

    /// True when the boundary register is selected and its latches drive
    /// the pins: an Update-DR then moves them.
    #[inline]
    pub(crate) fn latches_drive(&self) -> bool {
        self.boundary_selected() && self.pin_control == PinControl::Latches
    }

    /// Both edges of a quiet TCK period ([`Quiet::of`] is `Yes`, or
    /// `UnlessBoundary` with another register selected), on a device with
    /// no fault: exactly what [`Device::rising`] then [`Device::falling`]
    /// do there, without the checks. Returns the TDO the device drove
    /// before the period (what its downstream neighbour, or the tester,
    /// samples on this rising edge): with no fault, [`Device::tdo`] is the
    /// plain field.
    #[inline]
    pub(crate) fn quiet_period(&mut self, tms: bool, tdi: bool) -> Option<bool> {
        debug_assert!(!self.faults.any());
        let before = self.tdo;
        debug_assert!(match Quiet::of(self.state, tms) {
            Quiet::Yes => true,
            Quiet::UnlessBoundary => !self.boundary_selected(),
            Quiet::UnlessLatchesDrive => !self.latches_drive(),
            Quiet::No => false,
        });
        // The stay in Shift-DR, the commonest period by far: one bit
        // gathered, and the TDO bit read `pending` places on (still inside
        // the register: fewer than `lazy_room` bits gathered once this one is).
        if self.state == TapState::ShiftDr && !tms && self.pending.1 + 1 < self.lazy_room {
            let (bits, n) = &mut self.pending;
            *bits |= u64::from(tdi) << *n;
            *n += 1;
            let at = *n as usize;
            self.tdo = Some(self.data_register_ref().get(at));
            return before;
        }
        match self.state {
            TapState::ShiftDr | TapState::ShiftIr => {
                self.shift_bit(tdi);
                self.move_state(tms);
            }
            TapState::CaptureDr | TapState::CaptureIr => self.quiet_capture(tms),
            // Nothing to shift or capture, and no bits pending outside
            // Shift-DR: only the state moves; into Update-DR the boundary
            // latches load as `falling` loads them (no pin follows them).
            from => {
                debug_assert_eq!(self.pending.1, 0);
                self.state = from.next(tms);
                if self.state == TapState::UpdateDr && self.boundary_selected() {
                    self.load_latches();
                }
            }
        }
        // The falling edge: TDO shows the register's bit in a Shift state.
        self.tdo = self.shift_tdo();
        before
    }

    /// The rising edge of a quiet period in Capture-DR (a register off
    /// the board) or Capture-IR: few per scan, kept out of the loop.
    #[inline(never)]
    fn quiet_capture(&mut self, tms: bool) {
        if self.state == TapState::CaptureDr {
            self.capture_off_board();
        } else {
            self.capture_ir();
        }
        self.move_state(tms);
    }
}
