//! A capture laid against the good run: which compared bits the recording
//! holds, scan by scan, so a recording of part of a board (one TAP port's
//! VCD, a log of some ports) is compared only where it has data.

use serde::Serialize;
use virtual_board::Bits;

use crate::run::{RunReport, ScanRecord};

/// A scan of the run that the recording does not hold.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct UnrecordedScan {
    /// The scan's index in the run.
    pub index: usize,
    /// TAP port.
    pub port: String,
    /// `IR` or `DR`.
    pub register: String,
    /// Bits.
    pub length: usize,
}

/// The capture, bit by bit against the good run's compared bits.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Recorded {
    /// For each compared bit of the good run (in the order of
    /// [`crate::campaign::response_of`]): the captured value, `None` when
    /// the recording has no such scan or the scan was cut off before it.
    pub bits: Vec<Option<bool>>,
    /// The captured TDO of each scan of the run (by index), when recorded.
    pub tdo: Vec<Option<Bits>>,
    /// Scans of the run with no recording.
    pub unrecorded: Vec<UnrecordedScan>,
}

impl Recorded {
    /// Pairs the captured scans with the run's: per TAP port, in order (the
    /// k-th scan of a port in the run with the k-th captured scan of that
    /// port, as `compare` pairs them). A port the recording never mentions,
    /// or scans past the end of a port's recording, are unrecorded.
    pub fn new(good: &RunReport, real: &[ScanRecord]) -> Recorded {
        Recorded::of_parts(good, &[(good.scans.len(), real)])
    }

    /// The same for a run of several programs one after the other, each
    /// with its own recording: `parts` gives, in order, how many scans of
    /// the run each program made and what was recorded while it ran. Each
    /// recording is paired only with its own program's scans, so a
    /// recording cut short never shifts the next one.
    pub fn of_parts(good: &RunReport, parts: &[(usize, &[ScanRecord])]) -> Recorded {
        let mut out = Recorded::default();
        let mut start = 0;
        for &(count, real) in parts {
            let end = (start + count).min(good.scans.len());
            out.pair(&good.scans[start..end], real);
            start = end;
        }
        out.pair(&good.scans[start..], &[]);
        out
    }

    fn pair(&mut self, scans: &[crate::run::ScanResult], real: &[ScanRecord]) {
        let mut next_of_port: std::collections::HashMap<&str, usize> = Default::default();
        for s in scans {
            let r = &s.record;
            let k = next_of_port.entry(r.port.as_str()).or_default();
            let captured = real.iter().filter(|x| x.port == r.port).nth(*k);
            *k += 1;
            let tdo = captured.and_then(|c| c.tdo_bits());
            if tdo.is_none() {
                self.unrecorded.push(UnrecordedScan {
                    index: r.index,
                    port: r.port.clone(),
                    register: r.register.clone(),
                    length: r.length,
                });
            }
            if let Some(mask) = r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)) {
                for i in (0..r.length).filter(|&i| mask.get(i)) {
                    self.bits
                        .push(tdo.as_ref().filter(|t| i < t.len()).map(|t| t.get(i)));
                }
            }
            self.tdo.push(tdo);
        }
    }

    /// Compared bits the recording holds.
    pub fn held(&self) -> usize {
        self.bits.iter().filter(|b| b.is_some()).count()
    }

    /// Recorded bits where `response` differs from the capture (a bit the
    /// response lacks differs).
    pub fn distance(&self, response: &Bits) -> usize {
        self.bits
            .iter()
            .enumerate()
            .filter(|(i, b)| match b {
                Some(v) => *i >= response.len() || response.get(*i) != *v,
                None => false,
            })
            .count()
    }

    /// Recorded TDO bits that differ from the good run in the scans the
    /// program does not compare (no mask): the bits `compare` counts and
    /// diagnosis leaves out. `self` must come from this run.
    pub fn uncompared_differing(&self, good: &RunReport) -> usize {
        good.scans
            .iter()
            .zip(&self.tdo)
            .filter(|(s, _)| s.record.mask.is_none())
            .filter_map(|(s, real)| Some((s.record.tdo_bits()?, real.as_ref()?)))
            .map(|(sim, real)| {
                (0..sim.len().min(real.len()))
                    .filter(|&i| sim.get(i) != real.get(i))
                    .count()
            })
            .sum()
    }

    /// Positions of the recorded bits where the capture differs from `good`.
    pub fn failing(&self, good: &Bits) -> Vec<usize> {
        self.bits
            .iter()
            .enumerate()
            .filter(|(i, b)| matches!(b, Some(v) if *i >= good.len() || good.get(*i) != *v))
            .map(|(i, _)| i)
            .collect()
    }
}
