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
            Some(e) => failing(tdo, e, mask),
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

/// The positions below `tdo.len()` where `mask` is 1 and `tdo` differs
/// from `expect`, in order: a word at a time (the bits past a vector's
/// length read 0).
fn failing(tdo: &Bits, expect: &Bits, mask: &Bits) -> Vec<usize> {
    let mut out = Vec::new();
    for (w, &got) in tdo.words().iter().enumerate() {
        let at = w * 64;
        let mut diff = (got ^ expect.word_at(at)) & mask.word_at(at);
        let left = tdo.len() - at;
        if left < 64 {
            diff &= (1u64 << left) - 1;
        }
        while diff != 0 {
            out.push(at + diff.trailing_zeros() as usize);
            diff &= diff - 1;
        }
    }
    out
}

/// A hazard seen during a run, tied to the scan (or step) it first
/// happened in. The board's events of one kind at one place (a net, a
/// device, a boundary cell, a scan driver) are one hazard: the first in
/// full, and how many times it happened in all.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Hazard {
    /// Index of the last scan started when it first happened (`None`:
    /// before any scan).
    pub scan: Option<usize>,
    /// What happened, the first time.
    #[serde(flatten)]
    pub event: BoardEvent,
    /// How many times it happened in the run, the first included (1: once).
    pub repeats: u64,
}

impl Hazard {
    /// A hazard that happened once.
    pub fn once(scan: Option<usize>, event: BoardEvent) -> Hazard {
        Hazard {
            scan,
            event,
            repeats: 1,
        }
    }

    /// `×N` when it happened N > 1 times, else empty: for the tables.
    pub fn times(&self) -> String {
        if self.repeats > 1 {
            format!("×{}", self.repeats)
        } else {
            String::new()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        /// The word-wise failing bits equal a bit-by-bit compare (a
        /// round-trip test of the two ways of counting, not an outside check).
        #[test]
        fn failing_bits_equal_bit_by_bit(
            bits in proptest::collection::vec((any::<bool>(), any::<bool>(), any::<bool>()), 0..300),
        ) {
            let tdo = Bits::from_bools(&bits.iter().map(|b| b.0).collect::<Vec<_>>());
            let expect = Bits::from_bools(&bits.iter().map(|b| b.1).collect::<Vec<_>>());
            let mask = Bits::from_bools(&bits.iter().map(|b| b.2).collect::<Vec<_>>());
            let slow: Vec<usize> = (0..bits.len())
                .filter(|&i| bits[i].2 && bits[i].0 != bits[i].1)
                .collect();
            let record = ScanRecord::new(0, "P", ScanKind::Dr, &tdo, &tdo, Some(&expect), &mask);
            prop_assert_eq!(&record.failing_bits, &slow);
            prop_assert_eq!(record.passed, slow.is_empty());
        }
    }
}
