//! Failing bits mapped to where they are on the board: device, register,
//! cell, port, pin and net.

use serde::Serialize;
use virtual_board::PathSegment;

use super::runner::ScanResult;

/// One failing bit of a scan, placed on the board.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct BitFailure {
    /// Scan index.
    pub scan: usize,
    /// TAP port.
    pub tap_port: String,
    /// Bit position in the scan (0 = first out of TDO).
    pub bit: usize,
    /// Expected value.
    pub expected: bool,
    /// Captured value.
    pub captured: bool,
    /// Device whose register holds the bit.
    pub device: Option<String>,
    /// Register name.
    pub register: Option<String>,
    /// Bit within that register (the cell number for the boundary register).
    pub register_bit: Option<usize>,
    /// Cell function, for boundary cells.
    pub function: Option<String>,
    /// Port element.
    pub port: Option<String>,
    /// Pin.
    pub pin: Option<String>,
    /// Net.
    pub net: Option<String>,
}

/// Which segment and bit of a layout holds scan bit `bit`.
pub fn locate(layout: &[PathSegment], bit: usize) -> Option<(&PathSegment, usize)> {
    let mut at = 0;
    for seg in layout {
        if bit < at + seg.length {
            return Some((seg, bit - at));
        }
        at += seg.length;
    }
    None
}

/// Every failing bit of a scan, placed.
pub fn failures_of(scan: &ScanResult) -> Vec<BitFailure> {
    let r = &scan.record;
    let tdo = r.tdo_bits();
    let expected = r
        .expected
        .as_deref()
        .and_then(|e| virtual_board::Bits::from_hex(e, r.length));
    r.failing_bits
        .iter()
        .map(|&bit| {
            let captured = tdo.as_ref().is_some_and(|t| t.get(bit));
            let expected = expected.as_ref().is_some_and(|e| e.get(bit));
            let place = scan.layout.as_deref().and_then(|l| locate(l, bit));
            let cell = place.and_then(|(seg, k)| seg.cells.get(k));
            BitFailure {
                scan: r.index,
                tap_port: r.port.clone(),
                bit,
                expected,
                captured,
                device: place.map(|(s, _)| s.device.clone()),
                register: place.map(|(s, _)| s.register.clone()),
                register_bit: place.map(|(_, k)| k),
                function: cell.map(|c| c.function.clone()),
                port: cell.and_then(|c| c.port.clone()),
                pin: cell.and_then(|c| c.pin.clone()),
                net: cell.and_then(|c| c.net.clone()),
            }
        })
        .collect()
}
