//! The whole-scan path on a chain with faults: a broken TDO-to-TDI link, a
//! stuck TDO, a device whose TCK or TMS is open, a dead device, TRST* stuck
//! active.
//!
//! On such a chain the devices that follow the tester's TMS all sit in one
//! Shift state while the others stand still for the whole scan: a device
//! with TCK open or a dead one sees no edge; one with TMS open reads TMS high
//! and stays in Test-Logic-Reset; one held by a stuck TRST* is reset on every
//! edge. A standing device's TDO (high-impedance read as 1 through the next
//! TDI's pull-up, IEEE 1149.1 clause 4, from memory) is one level for the
//! whole scan, a stuck TDO is its stuck level, a broken link gives the next
//! TDI (or the port's TDO) its pull-up level. So the scan is a chain of
//! stream copies, some of them replaced by a constant, as the bit-by-bit
//! reference gives; `tests/fast_path.rs` checks the two equal on
//! random boards with random chain faults.

use super::Board;
use crate::register::Bits;
use crate::tap::TapState;
use crate::target::PortId;

/// What one device does through a whole scan of a faulted chain.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Role {
    /// It follows TMS and shifts its selected register.
    Shifts,
    /// TCK open or dead: it sees no edge.
    Frozen,
    /// TMS open, in Test-Logic-Reset: every falling edge resets it again.
    Resets,
    /// Held in Test-Logic-Reset by an active TRST*.
    Held,
}

/// A stream of `n` bits of one level: a standing device's TDO (`None`,
/// high-impedance, reads 1).
fn level(tdo: Option<bool>, n: usize) -> Bits {
    if tdo.unwrap_or(true) {
        Bits::ones(n)
    } else {
        Bits::zeros(n)
    }
}

impl Board {
    /// The whole-scan path of [`crate::TapTarget::shift`] on a port whose
    /// chain has faults (see the module comment), or `None` (nothing done)
    /// where the devices that follow TMS are not all in one Shift state or a
    /// device with TMS open is not in Test-Logic-Reset: the reference then.
    /// A chain where no device follows TMS (all frozen, held or reset)
    /// gives its standing levels.
    pub(super) fn faulted_shift(&mut self, port: PortId, tdi: &Bits) -> Option<Bits> {
        if !self.chain_fault_words || tdi.is_empty() {
            return None;
        }
        let tap = self.ports.get(port)?;
        let trst = tap.trst_active();
        let mut shift = None;
        let mut roles = Vec::with_capacity(tap.chain.len());
        for &d in &tap.chain {
            let device = &self.devices[d];
            let f = device.faults();
            let role = if trst && device.model().tap.trst.is_some() {
                Role::Held
            } else if f.tck_open || f.dead {
                Role::Frozen
            } else if f.tms_open {
                if device.state() != TapState::TestLogicReset {
                    return None;
                }
                Role::Resets
            } else {
                let s = device.state();
                if !s.is_shift() || shift.is_some_and(|x| x != s) {
                    return None;
                }
                shift = Some(s);
                Role::Shifts
            };
            roles.push(role);
        }
        // With no device following TMS, every device stands: no register
        // is selected and the stream is the standing levels alone.
        let state = shift.unwrap_or(TapState::ShiftDr);
        let n = tdi.len();
        let broken = tap.broken_after;
        let mut changed = false;
        let mut stream = tdi.clone();
        for (k, &role) in roles.iter().enumerate() {
            let d = self.ports[port].chain[k];
            let device = &mut self.devices[d];
            let out = match role {
                Role::Held => {
                    // Reset at the first edge (the reference resets it at
                    // every edge; the first is the one that can change pins).
                    changed |= device.trst();
                    level(device.tdo(), n)
                }
                Role::Frozen => level(device.tdo(), n),
                Role::Resets => {
                    // Its TDO was set by the falling edge before the scan.
                    let out = level(device.tdo(), n);
                    changed |= device.falling().unwrap_or(true);
                    out
                }
                Role::Shifts => {
                    let register = if state == TapState::ShiftDr {
                        device.data_register()
                    } else {
                        device.instruction_register()
                    };
                    let shifted = register.shift_stream(&stream);
                    device.finish_shift();
                    match device.faults().tdo_stuck {
                        Some(v) => level(Some(v), n),
                        None => shifted,
                    }
                }
            };
            stream = if broken == Some(k) {
                Bits::ones(n)
            } else {
                out
            };
        }
        self.ports[port].cycles += n as u64;
        if changed {
            self.resolve(Some(port));
        }
        self.note_quiet(port);
        Some(stream)
    }
}
