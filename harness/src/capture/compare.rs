//! `compare`: a simulated run against a real tester's captured scans, scan by scan, with each differing TDO bit placed on the board.

use std::fmt;

use serde::Serialize;
use virtual_board::Bits;

use super::log::MAX_SCAN_BITS;
use crate::report::table::TextTable;
use crate::run::{locate, RunReport, ScanRecord, ScanResult};

/// A scan-level difference between the run and the capture.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum ScanIssue {
    /// The run has the scan, the capture does not.
    Missing {
        /// TAP port.
        port: String,
        /// The simulated scan's index.
        sim_scan: usize,
        /// `IR` or `DR`.
        register: String,
        /// Bits.
        length: usize,
    },
    /// The capture has a scan the run does not.
    Extra {
        /// TAP port.
        port: String,
        /// The captured scan's index.
        real_scan: usize,
        /// `IR` or `DR`.
        register: String,
        /// Bits.
        length: usize,
    },
    /// The two scans differ in register or length, so no bit is compared.
    Shape {
        /// TAP port.
        port: String,
        /// The simulated scan's index.
        sim_scan: usize,
        /// The captured scan's index.
        real_scan: usize,
        /// Simulated register.
        sim_register: String,
        /// Captured register.
        real_register: String,
        /// Simulated length.
        sim_length: usize,
        /// Captured length.
        real_length: usize,
    },
    /// The tester shifted other bits in than the run did.
    Tdi {
        /// TAP port.
        port: String,
        /// The simulated scan's index.
        sim_scan: usize,
        /// The captured scan's index.
        real_scan: usize,
        /// Bit positions (0 = first shifted) where TDI differs.
        bits: Vec<usize>,
    },
    /// A bit string that is not hexadecimal of the scan's length.
    Unreadable {
        /// TAP port.
        port: String,
        /// The simulated scan's index.
        sim_scan: usize,
        /// The captured scan's index.
        real_scan: usize,
        /// Which side and field (`real tdo`, `simulated mask`, …).
        field: String,
    },
}

/// One TDO bit where the capture differs from the run, placed on the board
/// with the simulated scan's layout.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct BitDifference {
    /// TAP port.
    pub tap_port: String,
    /// The simulated scan's index.
    pub sim_scan: usize,
    /// The captured scan's index.
    pub real_scan: usize,
    /// Bit position in the scan (0 = first out of TDO).
    pub bit: usize,
    /// The run's TDO bit.
    pub simulated: bool,
    /// The captured TDO bit.
    pub real: bool,
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
    /// The program compares this bit (its scan has an expected value and
    /// the mask holds the bit). A scan the program does not compare is
    /// compared bit for bit here, since the capture and the model should
    /// still agree; `play` and `diagnose` count only the program's bits.
    pub program_compares: bool,
}

/// The result of [`compare`].
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Comparison {
    /// The simulated program's name.
    pub program: String,
    /// Scan pairs whose TDO bits were compared.
    pub scans_compared: usize,
    /// TDO bits compared, all scans.
    pub bits_compared: usize,
    /// Of those, the bits the program itself compares (the ones `play`
    /// checks and `diagnose` counts).
    pub program_bits_compared: usize,
    /// Scan-level differences, port by port in scan order.
    pub issues: Vec<ScanIssue>,
    /// Every differing TDO bit, by simulated scan then bit.
    pub bits: Vec<BitDifference>,
}

impl Comparison {
    /// True when the capture holds the run's scans and every compared bit agrees.
    pub fn is_match(&self) -> bool {
        self.issues.is_empty() && self.bits.is_empty()
    }
}

/// Compares a simulated run with captured scans.
///
/// Scans are paired per TAP port, in order: the k-th scan of a port in the
/// run with the k-th captured scan of that port (the records' `index`
/// fields are not used for pairing, so captures decoded port by port
/// compare as well as one merged log). A pair must agree in register and
/// length; then the TDI bits are compared, and the TDO bits where the
/// simulated scan's mask is 1 when it has one, else every bit. Each
/// differing TDO bit is placed with the simulated scan's layout
/// ([`locate`]).
pub fn compare(sim: &RunReport, real: &[ScanRecord]) -> Comparison {
    let mut out = Comparison {
        program: sim.program.clone(),
        ..Comparison::default()
    };
    let mut ports: Vec<&str> = Vec::new();
    let records = sim.scans.iter().map(|s| &s.record).chain(real);
    for r in records {
        if !ports.contains(&r.port.as_str()) {
            ports.push(&r.port);
        }
    }
    for port in ports {
        let sims: Vec<&ScanResult> = sim.scans.iter().filter(|s| s.record.port == port).collect();
        let reals: Vec<&ScanRecord> = real.iter().filter(|r| r.port == port).collect();
        for k in 0..sims.len().max(reals.len()) {
            match (sims.get(k), reals.get(k)) {
                (Some(s), Some(r)) => pair(s, r, &mut out),
                (Some(s), None) => out.issues.push(ScanIssue::Missing {
                    port: port.to_string(),
                    sim_scan: s.record.index,
                    register: s.record.register.clone(),
                    length: s.record.length,
                }),
                (None, Some(r)) => out.issues.push(ScanIssue::Extra {
                    port: port.to_string(),
                    real_scan: r.index,
                    register: r.register.clone(),
                    length: r.length,
                }),
                (None, None) => {}
            }
        }
    }
    out.bits.sort_by_key(|b| (b.sim_scan, b.bit));
    out
}

/// Compares one pair of scans into `out`.
fn pair(s: &ScanResult, r: &ScanRecord, out: &mut Comparison) {
    let sr = &s.record;
    let port = sr.port.clone();
    if sr.register != r.register || sr.length != r.length {
        out.issues.push(ScanIssue::Shape {
            port,
            sim_scan: sr.index,
            real_scan: r.index,
            sim_register: sr.register.clone(),
            real_register: r.register.clone(),
            sim_length: sr.length,
            real_length: r.length,
        });
        return;
    }
    let len = sr.length;
    let unreadable = |field: &str| ScanIssue::Unreadable {
        port: port.clone(),
        sim_scan: sr.index,
        real_scan: r.index,
        field: field.to_string(),
    };
    let read = |hex: &str| {
        (len <= MAX_SCAN_BITS)
            .then(|| Bits::from_hex(hex, len))
            .flatten()
    };
    let fields = [
        ("simulated tdi", read(&sr.tdi)),
        ("real tdi", read(&r.tdi)),
        ("simulated tdo", read(&sr.tdo)),
        ("real tdo", read(&r.tdo)),
    ];
    let mask = match sr.mask.as_deref() {
        None => Some(Bits::ones(len.min(MAX_SCAN_BITS))),
        Some(m) => read(m),
    };
    let bad: Vec<&str> = fields
        .iter()
        .filter(|(_, b)| b.is_none())
        .map(|(f, _)| *f)
        .chain(mask.is_none().then_some("simulated mask"))
        .collect();
    if !bad.is_empty() {
        out.issues.extend(bad.into_iter().map(unreadable));
        return;
    }
    let [(_, Some(sim_tdi)), (_, Some(real_tdi)), (_, Some(sim_tdo)), (_, Some(real_tdo))] = fields
    else {
        return;
    };
    let Some(mask) = mask else { return };
    let tdi = differing(&sim_tdi, &real_tdi, None);
    if !tdi.is_empty() {
        out.issues.push(ScanIssue::Tdi {
            port: port.clone(),
            sim_scan: sr.index,
            real_scan: r.index,
            bits: tdi,
        });
    }
    out.scans_compared += 1;
    out.bits_compared += mask.count_ones();
    if sr.mask.is_some() {
        out.program_bits_compared += mask.count_ones();
    }
    let layout = s.layout.as_deref();
    for bit in differing(&sim_tdo, &real_tdo, Some(&mask)) {
        let place = layout.and_then(|l| locate(l, bit));
        let cell = place.and_then(|(seg, k)| seg.cells.get(k));
        out.bits.push(BitDifference {
            tap_port: port.clone(),
            sim_scan: sr.index,
            real_scan: r.index,
            bit,
            simulated: sim_tdo.get(bit),
            real: real_tdo.get(bit),
            device: place.map(|(seg, _)| seg.device.clone()),
            register: place.map(|(seg, _)| seg.register.clone()),
            register_bit: place.map(|(_, k)| k),
            function: cell.map(|c| c.function.clone()),
            port: cell.and_then(|c| c.port.clone()),
            pin: cell.and_then(|c| c.pin.clone()),
            net: cell.and_then(|c| c.net.clone()),
            program_compares: sr.mask.is_some(),
        });
    }
}

/// Positions where `a` and `b` (same length) differ, within `mask` if given:
/// a word at a time.
fn differing(a: &Bits, b: &Bits, mask: Option<&Bits>) -> Vec<usize> {
    let mut out = Vec::new();
    for (w, (x, y)) in a.words().iter().zip(b.words()).enumerate() {
        let m = mask.map_or(u64::MAX, |m| m.words().get(w).copied().unwrap_or(0));
        let mut diff = (x ^ y) & m;
        while diff != 0 {
            let bit = w * 64 + diff.trailing_zeros() as usize;
            if bit < a.len() {
                out.push(bit);
            }
            diff &= diff - 1;
        }
    }
    out
}

impl fmt::Display for Comparison {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "program {} against the captured scans", self.program)?;
        writeln!(
            f,
            "{} compared, {} compared ({} of them compared by the program)",
            crate::count(self.scans_compared, "scan pair"),
            crate::count(self.bits_compared, "TDO bit"),
            self.program_bits_compared
        )?;
        if !self.issues.is_empty() {
            writeln!(f, "\nscan differences")?;
            let mut t = TextTable::new(2);
            t.row(["TAP port", "sim scan", "real scan", "difference"]);
            for issue in &self.issues {
                let (port, sim, real, text) = issue_row(issue);
                t.row([port, sim, real, text]);
            }
            write!(f, "{t}")?;
        }
        if !self.bits.is_empty() {
            writeln!(f, "\ndiffering TDO bits")?;
            let mut t = TextTable::new(2);
            t.row([
                "TAP port",
                "sim scan",
                "real scan",
                "bit",
                "simulated",
                "real",
                "device",
                "register",
                "cell",
                "function",
                "port",
                "pin",
                "net",
                "in program",
            ]);
            let dash = |s: &Option<String>| s.clone().unwrap_or_else(|| "-".into());
            for b in &self.bits {
                t.row([
                    b.tap_port.clone(),
                    b.sim_scan.to_string(),
                    b.real_scan.to_string(),
                    b.bit.to_string(),
                    u8::from(b.simulated).to_string(),
                    u8::from(b.real).to_string(),
                    dash(&b.device),
                    dash(&b.register),
                    b.register_bit.map_or_else(|| "-".into(), |k| k.to_string()),
                    dash(&b.function),
                    dash(&b.port),
                    dash(&b.pin),
                    dash(&b.net),
                    if b.program_compares { "yes" } else { "no" }.to_string(),
                ]);
            }
            write!(f, "{t}")?;
        }
        if self.is_match() {
            writeln!(f, "\nMATCH")
        } else {
            let in_program = self.bits.iter().filter(|b| b.program_compares).count();
            writeln!(
                f,
                "\nDIFFERENT: {}, {} {} ({in_program} of them compared by the program)",
                crate::count(self.issues.len(), "scan difference"),
                crate::count(self.bits.len(), "TDO bit"),
                if self.bits.len() == 1 {
                    "differs"
                } else {
                    "differ"
                }
            )
        }
    }
}

/// Port, simulated scan, captured scan and the words of one issue.
/// One line: `TAP port J1_MAIN, simulated scan 3, captured scan -: …`.
impl fmt::Display for ScanIssue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let (port, sim, real, text) = issue_row(self);
        write!(
            f,
            "TAP port {port}, simulated scan {sim}, captured scan {real}: {text}"
        )
    }
}

fn issue_row(issue: &ScanIssue) -> (String, String, String, String) {
    let dash = || "-".to_string();
    match issue {
        ScanIssue::Missing {
            port,
            sim_scan,
            register,
            length,
        } => (
            port.clone(),
            sim_scan.to_string(),
            dash(),
            format!(
                "{register} scan of {} missing from the capture",
                crate::count(*length, "bit")
            ),
        ),
        ScanIssue::Extra {
            port,
            real_scan,
            register,
            length,
        } => (
            port.clone(),
            dash(),
            real_scan.to_string(),
            format!(
                "{register} scan of {} not in the run",
                crate::count(*length, "bit")
            ),
        ),
        ScanIssue::Shape {
            port,
            sim_scan,
            real_scan,
            sim_register,
            real_register,
            sim_length,
            real_length,
        } => (
            port.clone(),
            sim_scan.to_string(),
            real_scan.to_string(),
            format!(
                "simulated {sim_register} of {sim_length} bits, captured {real_register} of {real_length} bits"
            ),
        ),
        ScanIssue::Tdi {
            port,
            sim_scan,
            real_scan,
            bits,
        } => (
            port.clone(),
            sim_scan.to_string(),
            real_scan.to_string(),
            format!(
                "TDI differs in {} (first: bit {})",
                crate::count(bits.len(), "bit"),
                bits.first().copied().unwrap_or(0)
            ),
        ),
        ScanIssue::Unreadable {
            port,
            sim_scan,
            real_scan,
            field,
        } => (
            port.clone(),
            sim_scan.to_string(),
            real_scan.to_string(),
            format!("{field} is not hex of the scan's length"),
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::program::ScanKind;
    use std::sync::Arc;
    use virtual_board::{CellPlace, PathSegment};

    /// A two-device DR layout: U9's 2-bit BYPASS-like register nearest TDO,
    /// then U8's 3-cell boundary register.
    fn layout() -> Vec<PathSegment> {
        let cell = |cell: u32, net: &str| CellPlace {
            cell,
            function: "INPUT".into(),
            port: Some(format!("IN({cell})")),
            pin: Some(format!("{}", 10 + cell)),
            net: Some(net.into()),
        };
        vec![
            PathSegment {
                device: "U9".into(),
                part: "QX9".into(),
                register: "USER2".into(),
                length: 2,
                cells: Arc::default(),
            },
            PathSegment {
                device: "U8".into(),
                part: "QX8".into(),
                register: "BOUNDARY".into(),
                length: 3,
                cells: Arc::from([cell(0, "N0"), cell(1, "N1"), cell(2, "N2")]),
            },
        ]
    }

    fn record(index: usize, port: &str, kind: ScanKind, tdo: u64, len: usize) -> ScanRecord {
        ScanRecord::new(
            index,
            port,
            kind,
            &Bits::from_u64(0, len),
            &Bits::from_u64(tdo, len),
            None,
            &Bits::ones(len),
        )
    }

    fn sim_scan(record: ScanRecord, mask: Option<u64>) -> ScanResult {
        let mut record = record;
        if let Some(m) = mask {
            record.expected = Some(record.tdo.clone());
            record.mask = Some(Bits::from_u64(m, record.length).to_hex());
        }
        ScanResult {
            record,
            origin: "test".into(),
            layout: Some(layout().into()),
        }
    }

    fn report(scans: Vec<ScanResult>) -> RunReport {
        RunReport {
            program: "unit".into(),
            scans,
            ..RunReport::default()
        }
    }

    #[test]
    fn equal_scans_match() {
        let sim = report(vec![
            sim_scan(record(0, "A", ScanKind::Dr, 0b10110, 5), None),
            sim_scan(record(1, "B", ScanKind::Ir, 0b01, 2), None),
        ]);
        let real = [
            record(7, "B", ScanKind::Ir, 0b01, 2),
            record(3, "A", ScanKind::Dr, 0b10110, 5),
        ];
        let c = compare(&sim, &real);
        assert!(c.is_match(), "{c}");
        // Neither scan has an expected value: every bit is compared, none
        // of them a bit the program compares.
        assert_eq!(
            (c.scans_compared, c.bits_compared, c.program_bits_compared),
            (2, 7, 0)
        );
        assert!(c.to_string().ends_with("\nMATCH\n"), "{c}");
    }

    #[test]
    fn differing_bits_are_placed_and_masked_bits_ignored() {
        // Bits 1 (U9 USER2 bit 1), 3 (U8 cell 1) and 4 (U8 cell 2) differ;
        // bit 4 is masked off.
        let sim = report(vec![sim_scan(
            record(0, "A", ScanKind::Dr, 0b00000, 5),
            Some(0b01111),
        )]);
        let real = [record(0, "A", ScanKind::Dr, 0b11010, 5)];
        let c = compare(&sim, &real);
        assert_eq!((c.bits_compared, c.program_bits_compared), (4, 4));
        assert!(c.bits.iter().all(|b| b.program_compares));
        let placed: Vec<_> = c
            .bits
            .iter()
            .map(|b| {
                (
                    b.bit,
                    b.simulated,
                    b.real,
                    b.device.as_deref(),
                    b.register.as_deref(),
                    b.register_bit,
                    b.net.as_deref(),
                    b.pin.as_deref(),
                )
            })
            .collect();
        assert_eq!(
            placed,
            [
                (
                    1,
                    false,
                    true,
                    Some("U9"),
                    Some("USER2"),
                    Some(1),
                    None,
                    None
                ),
                (
                    3,
                    false,
                    true,
                    Some("U8"),
                    Some("BOUNDARY"),
                    Some(1),
                    Some("N1"),
                    Some("11")
                ),
            ]
        );
        let text = c.to_string();
        assert!(text.contains("differing TDO bits"), "{text}");
        assert!(
            text.ends_with(
                "DIFFERENT: 0 scan differences, 2 TDO bits differ (2 of them compared by the program)\n"
            ),
            "{text}"
        );
    }

    #[test]
    fn missing_extra_and_shape_are_scan_issues() {
        let sim = report(vec![
            sim_scan(record(0, "A", ScanKind::Ir, 0, 4), None),
            sim_scan(record(1, "A", ScanKind::Dr, 0, 5), None),
            sim_scan(record(2, "A", ScanKind::Dr, 0, 5), None),
        ]);
        let real = [
            record(0, "A", ScanKind::Dr, 0, 4),
            record(1, "A", ScanKind::Dr, 0, 6),
            record(2, "A", ScanKind::Dr, 0, 5),
            record(3, "A", ScanKind::Dr, 0, 5),
            record(4, "C", ScanKind::Ir, 0, 3),
        ];
        let c = compare(&sim, &real);
        let shape = |sim_scan, sim_register: &str, sim_length, real_register: &str, real_length| {
            ScanIssue::Shape {
                port: "A".into(),
                sim_scan,
                real_scan: sim_scan,
                sim_register: sim_register.into(),
                real_register: real_register.into(),
                sim_length,
                real_length,
            }
        };
        assert_eq!(
            c.issues,
            [
                shape(0, "IR", 4, "DR", 4),
                shape(1, "DR", 5, "DR", 6),
                ScanIssue::Extra {
                    port: "A".into(),
                    real_scan: 3,
                    register: "DR".into(),
                    length: 5
                },
                ScanIssue::Extra {
                    port: "C".into(),
                    real_scan: 4,
                    register: "IR".into(),
                    length: 3
                },
            ]
        );
        assert_eq!(c.scans_compared, 1);
        let c = compare(&sim, &real[..1]);
        assert_eq!(
            c.issues[1..],
            [
                ScanIssue::Missing {
                    port: "A".into(),
                    sim_scan: 1,
                    register: "DR".into(),
                    length: 5
                },
                ScanIssue::Missing {
                    port: "A".into(),
                    sim_scan: 2,
                    register: "DR".into(),
                    length: 5
                },
            ]
        );
        let text = c.to_string();
        assert!(
            text.contains("DR scan of 5 bits missing from the capture"),
            "{text}"
        );
        assert!(
            text.contains("simulated IR of 4 bits, captured DR of 4 bits"),
            "{text}"
        );
    }

    #[test]
    fn other_tdi_and_bad_hex_are_reported() {
        let sim = report(vec![sim_scan(record(0, "A", ScanKind::Dr, 0, 5), None)]);
        let mut r = record(0, "A", ScanKind::Dr, 0, 5);
        r.tdi = Bits::from_u64(0b10100, 5).to_hex();
        let c = compare(&sim, std::slice::from_ref(&r));
        assert_eq!(
            c.issues,
            [ScanIssue::Tdi {
                port: "A".into(),
                sim_scan: 0,
                real_scan: 0,
                bits: vec![2, 4]
            }]
        );
        assert!(c.bits.is_empty());
        r.tdo = "zz".into();
        let c = compare(&sim, &[r]);
        assert_eq!(
            c.issues,
            [ScanIssue::Unreadable {
                port: "A".into(),
                sim_scan: 0,
                real_scan: 0,
                field: "real tdo".into()
            }]
        );
        assert!(!c.is_match());
    }

    #[test]
    fn differing_works_across_words() {
        let a = Bits::zeros(130);
        let mut b = Bits::zeros(130);
        for i in [0, 63, 64, 129] {
            b.set(i, true);
        }
        assert_eq!(differing(&a, &b, None), [0, 63, 64, 129]);
        let mut m = Bits::ones(130);
        m.set(64, false);
        assert_eq!(differing(&a, &b, Some(&m)), [0, 63, 129]);
    }

    #[test]
    fn a_comparison_serializes() {
        let sim = report(vec![sim_scan(record(0, "A", ScanKind::Dr, 0, 5), None)]);
        let c = compare(&sim, &[]);
        let v = serde_json::to_value(&c).unwrap();
        assert_eq!(v["issues"][0]["kind"], "missing");
        assert_eq!(v["issues"][0]["sim_scan"], 0);
        assert_eq!(v["bits_compared"], 0);
    }
}
