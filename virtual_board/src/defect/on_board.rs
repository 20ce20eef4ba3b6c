//! Defects put on a built board: those that change no net and no device
//! model (chain faults, a dead device, another IDCODE, a cluster pin), so
//! the board need not be rebuilt from its file for them.

use super::{conflict, DefectError, DefectSpec};
use crate::board::Board;
use crate::board_file::{BoardFile, LoadedBoard};
use crate::device::DeviceFaults;

/// Puts defect `d` (entry `index` of its list, from 1) on board `b`; a
/// defect of another kind (a net or pin defect, a wrong device given by its
/// BSDL file) changes nothing here.
///
/// # Errors
/// An unknown device, port or cluster pin.
pub(super) fn apply(b: &mut Board, index: usize, d: &DefectSpec) -> Result<(), DefectError> {
    let fail = |message: String| DefectError { index, message };
    let value = d.value == Some(1);
    let dev = |name: &str| {
        b.device_index(name)
            .ok_or_else(|| fail(format!("unknown device `{name}`")))
    };
    if let Some(name) = &d.broken_link {
        let i = dev(name)?;
        let (p, k) = b
            .chain_position(i)
            .ok_or_else(|| fail(format!("{name} is on no TAP port")))?;
        b.set_broken_link(p, k);
    } else if let Some(name) = &d.tdo_stuck {
        let i = dev(name)?;
        b.update_faults(i, |f| f.tdo_stuck = Some(value));
    } else if let Some(name) = &d.tms_open {
        let i = dev(name)?;
        b.update_faults(i, |f| f.tms_open = true);
    } else if let Some(name) = &d.tck_open {
        let i = dev(name)?;
        b.update_faults(i, |f| f.tck_open = true);
    } else if let Some(name) = &d.dead {
        let i = dev(name)?;
        b.update_faults(i, |f: &mut DeviceFaults| f.dead = true);
    } else if let Some(port) = &d.trst_stuck {
        let p = b
            .port_index(port)
            .ok_or_else(|| fail(format!("unknown TAP port `{port}`")))?;
        b.set_trst_stuck(p);
    } else if let (Some(name), Some(code)) = (&d.wrong_device, d.idcode) {
        let i = dev(name)?;
        b.force_idcode(i, code);
    } else if let Some(what) = d.open.as_ref().or(d.stuck.as_ref()) {
        let (c, pin) = what.split_once('.').unwrap_or((what, ""));
        let stuck = d.stuck.is_some().then_some(value);
        b.set_cluster_pin(c, pin, stuck, d.open.is_some())
            .map_err(fail)?;
    }
    Ok(())
}

/// True when `d` is exactly one defect, well formed, of a kind [`apply`]
/// puts on a built board without anything else to check.
fn on_board_only(file: &BoardFile, d: &DefectSpec) -> bool {
    if d.kinds_given() != 1 {
        return false;
    }
    let value_ok = matches!(d.value, Some(0 | 1));
    let cluster_pin = |what: &String| {
        !file.nets.contains_key(what)
            && what
                .split_once('.')
                .is_some_and(|(c, _)| file.clusters.contains_key(c))
    };
    d.broken_link.is_some()
        || d.tms_open.is_some()
        || d.tck_open.is_some()
        || d.trst_stuck.is_some()
        || d.dead.is_some()
        || (d.tdo_stuck.is_some() && value_ok)
        || (d.wrong_device.is_some()
            && d.bsdl.is_none()
            && d.idcode.is_some_and(|c| c <= u64::from(u32::MAX)))
        || d.open.as_ref().is_some_and(cluster_pin)
        || (d.stuck.as_ref().is_some_and(cluster_pin) && value_ok)
}

impl LoadedBoard {
    /// [`LoadedBoard::with_defects`] without rebuilding the board from its
    /// file, for defects that change no net and no device model (chain
    /// faults, a dead device, another IDCODE, a cluster pin): they go on a
    /// copy of `self.board` as it stands, so for a board as loaded (at
    /// power-up) both give the same board. `None` when a defect needs the
    /// rebuild.
    ///
    /// # Errors
    /// As [`LoadedBoard::with_defects`].
    pub fn with_board_defects(&self, defects: &[DefectSpec]) -> Option<Result<Board, DefectError>> {
        if !defects.iter().all(|d| on_board_only(&self.file, d)) {
            return None;
        }
        if let Err(e) = conflict::check_consistent(defects) {
            return Some(Err(e));
        }
        let mut b = self.board.clone();
        for (k, d) in defects.iter().enumerate() {
            if let Err(e) = apply(&mut b, k + 1, d) {
                return Some(Err(e));
            }
        }
        b.refresh();
        Some(Ok(b))
    }
}
