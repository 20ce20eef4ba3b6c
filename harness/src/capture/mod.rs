//! The real-capture side of comparing a virtual run with a tester's recordings: capture logs, VCD files, JTAG decoding and the comparison.
//!
//! - `error`: [`CaptureError`], every failure here, placed at
//!   `path:line:column` where the input has a place for it.
//! - `log`: [`read_capture_log`], a capture log (JSON Lines of
//!   [`ScanRecord`](crate::run::ScanRecord)) read back and checked.
//! - `vcd_read`: [`read_vcd`] and [`Vcd`], the signals of a VCD file and
//!   their value changes (IEEE 1364 clause 18 subset).
//! - `decode`: [`decode_jtag`], one TAP port's wires back into IR and DR
//!   scans by following the TAP state machine.
//! - `compare`: [`compare`] and [`Comparison`], a run against captured
//!   scans, each differing TDO bit placed on the board.

mod compare;
mod decode;
mod error;
mod log;
mod real;
mod vcd_read;

pub use self::{
    compare::{compare, BitDifference, Comparison, ScanIssue},
    decode::{decode_jtag, Decoded, DecodedScan, JtagSignals},
    error::{CaptureError, CaptureErrorKind},
    log::{read_capture_log, read_capture_log_file, MAX_SCAN_BITS},
    real::{read_real_capture, WireNames},
    vcd_read::{read_vcd, read_vcd_file, Level, Signal, TimeUnit, Timescale, Vcd},
};
