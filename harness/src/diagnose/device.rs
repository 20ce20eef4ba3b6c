//! Device-level diagnosis: an IDCODE or instruction-capture mismatch at one
//! position of a chain is a wrong or missing device there.
//!
//! The IDCODE is version (bits 31:28) | part number (27:12) | manufacturer
//! identity (11:1) | 1 (IEEE 1149.1 clause 10, from memory); both the
//! expected and the captured value are decoded so the station sees which
//! field differs.

use serde::Serialize;
use virtual_board::{Bits, DefectSpec};

use super::recording::Recorded;
use crate::run::RunReport;

/// The fields of a 32-bit IDCODE.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct IdcodeValue {
    /// The whole code.
    pub value: u32,
    /// Bits 31:28.
    pub version: u32,
    /// Bits 27:12.
    pub part: u32,
    /// Bits 11:1.
    pub manufacturer: u32,
}

impl IdcodeValue {
    /// Splits a code into its fields.
    pub fn new(value: u32) -> IdcodeValue {
        IdcodeValue {
            value,
            version: value >> 28,
            part: (value >> 12) & 0xFFFF,
            manufacturer: (value >> 1) & 0x7FF,
        }
    }

    /// True when bit 0 is 1, as every IDCODE's is.
    pub fn is_idcode(self) -> bool {
        self.value & 1 == 1
    }
}

impl std::fmt::Display for IdcodeValue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "0x{:08X} (version 0x{:X}, part 0x{:04X}, manufacturer 0x{:03X})",
            self.value, self.version, self.part, self.manufacturer
        )
    }
}

/// What a register of one device read, against what the good board reads.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct DeviceFinding {
    /// The device.
    pub device: String,
    /// `DEVICE_ID` or `IR`.
    pub register: String,
    /// The scan's index in the run.
    pub scan: usize,
    /// Expected and captured IDCODE, for `DEVICE_ID`.
    pub idcode: Option<(IdcodeValue, IdcodeValue)>,
    /// Expected and captured bits (most significant first), for `IR`.
    pub capture: Option<(String, String)>,
    /// In repair words.
    pub words: String,
    /// Defects that would read this way, to verify by simulation.
    #[serde(skip)]
    pub candidates: Vec<DefectSpec>,
}

fn msb_first(bits: &Bits, at: usize, len: usize) -> String {
    (0..len)
        .rev()
        .map(|i| if bits.get(at + i) { '1' } else { '0' })
        .collect()
}

fn value(bits: &Bits, at: usize, len: usize) -> u32 {
    (0..len.min(32)).fold(0, |v, i| v | (u32::from(bits.get(at + i)) << i))
}

/// The devices whose IDCODE or instruction capture differs in a recorded
/// scan, when the difference stays inside that device's register.
pub fn device_findings(good: &RunReport, recorded: &Recorded) -> Vec<DeviceFinding> {
    let mut out = Vec::new();
    for (k, s) in good.scans.iter().enumerate() {
        let r = &s.record;
        let (Some(real), Some(sim), Some(mask), Some(layout)) = (
            recorded.tdo.get(k).cloned().flatten(),
            r.tdo_bits(),
            r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)),
            s.layout.as_deref(),
        ) else {
            continue;
        };
        let differs = |i: usize| mask.get(i) && i < real.len() && real.get(i) != sim.get(i);
        let failing: Vec<usize> = (0..r.length).filter(|&i| differs(i)).collect();
        if failing.is_empty() {
            continue;
        }
        let mut at = 0;
        // From the TDO end: past a device that answers with nothing, the
        // bits come through a broken path and say nothing of the rest.
        for seg in layout {
            if out.last().is_some_and(|f: &DeviceFinding| {
                f.scan == r.index
                    && f.idcode
                        .is_some_and(|(_, got)| !got.is_idcode() || got.value == u32::MAX)
            }) {
                break;
            }
            let inside = failing
                .iter()
                .filter(|&&i| i >= at && i < at + seg.length)
                .count();
            let whole = seg.length <= real.len().saturating_sub(at);
            if inside > 0 && whole {
                let device = seg.device.clone();
                let alone = inside == failing.len();
                match seg.register.as_str() {
                    "DEVICE_ID" if seg.length == 32 => {
                        let want = IdcodeValue::new(value(&sim, at, 32));
                        let got = IdcodeValue::new(value(&real, at, 32));
                        let (words, candidates) = if got.is_idcode() && got.value != u32::MAX {
                            let what = if got.manufacturer != want.manufacturer {
                                "another maker's part"
                            } else if got.part != want.part {
                                "another part of the same maker"
                            } else {
                                "the same part in another version"
                            };
                            (
                                format!("wrong device at {device}: IDCODE reads {got} where {want} is expected: {what}"),
                                vec![DefectSpec {
                                    wrong_device: Some(device.clone()),
                                    idcode: Some(u64::from(got.value)),
                                    ..Default::default()
                                }],
                            )
                        } else {
                            (
                                format!("{device} answers with no IDCODE (reads 0x{:08X} where {want} is expected): missing, dead or unpowered", got.value),
                                vec![DefectSpec {
                                    dead: Some(device.clone()),
                                    ..Default::default()
                                }],
                            )
                        };
                        out.push(DeviceFinding {
                            device,
                            register: seg.register.clone(),
                            scan: r.index,
                            idcode: Some((want, got)),
                            capture: None,
                            words,
                            candidates,
                        });
                    }
                    "IR" if alone => {
                        let want = msb_first(&sim, at, seg.length);
                        let got = msb_first(&real, at, seg.length);
                        out.push(DeviceFinding {
                            words: format!(
                                "the instruction capture of {device} reads {got} where {want} is expected (the rest of the chain reads right): another part, or the device missing or dead"
                            ),
                            device: device.clone(),
                            register: seg.register.clone(),
                            scan: r.index,
                            idcode: None,
                            capture: Some((want, got)),
                            candidates: vec![DefectSpec {
                                dead: Some(device),
                                ..Default::default()
                            }],
                        });
                    }
                    _ => {}
                }
            }
            at += seg.length;
        }
    }
    out
}
