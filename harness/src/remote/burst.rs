//! A burst of TCK periods on a server's board, as fast as the board allows.
//!
//! The reference is one [`TapTarget::clock`] per period. Inside a burst, a
//! Shift stretch — the port in Shift-DR or Shift-IR, TMS low for some
//! periods and then high once (to Exit1), TRST* released throughout — is
//! exactly what [`TapTarget::shift`] does, so it goes to the board's
//! whole-scan word path when [`Board::word_shift_state`] says the board
//! takes it (a healthy chain, every device in the same Shift state; there
//! every TDO bit is driven). Every other period is one `clock`.
//! `harness/tests/remote_burst.rs` checks the two equal on random boards,
//! defects and bursts: TDO, high impedance, the board afterwards and its
//! hazards.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{Bits, Board, PortId, TapPins, TapTarget, TargetError};

/// The shortest Shift stretch sent to the word path; shorter ones cost
/// less one period at a time than the shift's set-up.
const MIN_STRETCH: usize = 8;

/// What a burst gave: TDO per period, and whether it was driven (a period
/// with TDO high-impedance has `tdo` 1 and `driven` 0).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BurstOut {
    /// TDO as sampled on each period's rising edge.
    pub tdo: Bits,
    /// 1 where TDO was driven.
    pub driven: Bits,
}

/// Clocks a burst on `port`: period `i` drives `tms[i]`, `tdi[i]` and
/// `trst_n[i]`. Shift stretches take the word path (see the module text),
/// with the same result as one `clock` per period.
///
/// # Errors
/// The three vectors differ in length; otherwise as [`TapTarget::clock`]
/// (the periods before the refused one have been applied).
pub fn clock_burst(
    board: &mut Board,
    port: PortId,
    tms: &Bits,
    tdi: &Bits,
    trst_n: &Bits,
) -> Result<BurstOut, TargetError> {
    let n = tms.len();
    if tdi.len() != n || trst_n.len() != n {
        return Err(TargetError::Link(
            "a burst's TMS, TDI and TRST* differ in length".into(),
        ));
    }
    let mut out = BurstOut {
        tdo: Bits::zeros(0),
        driven: Bits::zeros(0),
    };
    // The first TMS-high period found at or after some earlier period: still
    // the first at or after `i` while it is not behind `i` (kept so a long
    // TMS-low wait costs one search, not one per period).
    let mut high: Option<Option<usize>> = None;
    // Likewise the first period with TRST* asserted.
    let mut low: Option<Option<usize>> = None;
    let mut i = 0;
    while i < n {
        if !tms.get(i) && board.word_shift_state(port).is_some() {
            let exit = first_from(&mut high, tms, i, true);
            let reset = first_from(&mut low, trst_n, i, false);
            if let Some(len) = shift_stretch(exit, reset, i) {
                let shifted = board.shift(port, &tdi.slice(i, len))?;
                out.tdo.extend(&shifted);
                out.driven.extend(&Bits::ones(len));
                i += len;
                continue;
            }
        }
        let pins = TapPins {
            tms: tms.get(i),
            tdi: tdi.get(i),
            trst_n: trst_n.get(i),
        };
        let level = board.clock(port, pins)?;
        out.tdo.push(level.unwrap_or(true));
        out.driven.push(level.is_some());
        i += 1;
    }
    Ok(out)
}

/// The length of the Shift stretch starting at period `i` (TMS low there,
/// the board ready for the word path) through `exit`, the first period
/// with TMS high; `None` when the word path cannot take it: the burst ends
/// first, TRST* is asserted in it (first at `reset`), or it is shorter
/// than [`MIN_STRETCH`].
fn shift_stretch(exit: Option<usize>, reset: Option<usize>, i: usize) -> Option<usize> {
    let exit = exit?;
    let len = exit - i + 1;
    if len < MIN_STRETCH || reset.is_some_and(|z| z <= exit) {
        return None;
    }
    Some(len)
}

/// The first index at or after `i` where `bits` is `level`, through
/// `cache`: a search from an earlier index still answers while what it
/// found is not behind `i`.
fn first_from(
    cache: &mut Option<Option<usize>>,
    bits: &Bits,
    i: usize,
    level: bool,
) -> Option<usize> {
    match *cache {
        Some(found) if found.is_none_or(|f| f >= i) => found,
        _ => *cache.insert(next_level(bits, i, level)),
    }
}

/// The first index at or after `from` where `bits` is `level`, read 64 at a time.
fn next_level(bits: &Bits, from: usize, level: bool) -> Option<usize> {
    let n = bits.len();
    let mut at = from;
    while at < n {
        let word = if level {
            bits.word_at(at)
        } else {
            !bits.word_at(at)
        };
        let valid = n - at;
        let word = if valid < 64 {
            word & ((1u64 << valid) - 1)
        } else {
            word
        };
        if word != 0 {
            return Some(at + word.trailing_zeros() as usize);
        }
        at += 64;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn next_level_finds_ones_and_zeros_across_words() {
        let mut b = Bits::zeros(200);
        b.set(130, true);
        assert_eq!(next_level(&b, 0, true), Some(130));
        assert_eq!(next_level(&b, 130, true), Some(130));
        assert_eq!(next_level(&b, 131, true), None);
        assert_eq!(next_level(&Bits::ones(70), 3, false), None);
        let mut c = Bits::ones(70);
        c.set(69, false);
        assert_eq!(next_level(&c, 5, false), Some(69));
        assert_eq!(next_level(&c, 70, false), None);
    }
}
