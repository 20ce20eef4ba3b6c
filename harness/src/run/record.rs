//! `ScanRecord`: what one scan did, the shape of a capture log line.

use serde::{Deserialize, Serialize};
use virtual_board::{Bits, BoardEvent};

use crate::program::ScanKind;

/// One scan as a tester records it: a line of a capture log (JSON Lines).
///
/// Bit strings are hexadecimal, most significant digit first, as SVF writes
/// them: bit 0 (the first bit shifted, nearest TDO) is the lowest bit of the
/// last digit.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct ScanRecord {
    /// Position of the scan in the run, from 0.
    pub index: usize,
    /// TAP port name.
    pub port: String,
    /// `IR` or `DR`.
    pub register: String,
    /// Number of bits.
    pub length: usize,
    /// Bits shifted in (hex).
    pub tdi: String,
    /// Bits captured out of TDO (hex).
    pub tdo: String,
    /// Bits expected (hex), when the scan compares.
    #[serde(default)]
    pub expected: Option<String>,
    /// Compare mask (hex, 1 = compared), when the scan compares.
    #[serde(default)]
    pub mask: Option<String>,
    /// True when every compared bit matched.
    pub passed: bool,
    /// Bit positions (0 = first out of TDO) that did not match.
    #[serde(default)]
    pub failing_bits: Vec<usize>,
}

impl ScanRecord {
    /// Builds the record of one scan.
    pub fn new(
        index: usize,
        port: &str,
        kind: ScanKind,
        tdi: &Bits,
        tdo: &Bits,
        expect: Option<&Bits>,
        mask: &Bits,
    ) -> ScanRecord {
        let failing_bits: Vec<usize> = match expect {
            Some(e) => (0..tdo.len())
                .filter(|&i| mask.get(i) && e.get(i) != tdo.get(i))
                .collect(),
            None => Vec::new(),
        };
        ScanRecord {
            index,
            port: port.to_string(),
            register: kind.as_str().to_string(),
            length: tdi.len(),
            tdi: tdi.to_hex(),
            tdo: tdo.to_hex(),
            expected: expect.map(Bits::to_hex),
            mask: expect.map(|_| mask.to_hex()),
            passed: failing_bits.is_empty(),
            failing_bits,
        }
    }

    /// The captured bits.
    pub fn tdo_bits(&self) -> Option<Bits> {
        Bits::from_hex(&self.tdo, self.length)
    }
}

/// A hazard seen during a run, tied to the scan (or step) it happened in.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Hazard {
    /// Index of the last scan started when it happened (`None`: before any scan).
    pub scan: Option<usize>,
    /// What happened.
    #[serde(flatten)]
    pub event: BoardEvent,
}
