//! `decode_jtag`: the TCK, TMS, TDI, TDO (and TRST*) wires of a recording turned back into IR and DR scans.
//!
//! The decoder follows the TAP state machine ([`TapState::next`], IEEE 1149.1
//! clause 6) on every rising TCK edge, a change of TCK from 0 to 1:
//! - TMS and TDI are taken at the edge's time stamp, after every change
//!   written at that time (what a logic analyzer's sample at the edge shows).
//! - TDO is taken *before* the edge's time stamp: it changes on the falling
//!   edge and the tester samples it on the rising one (IEEE 1149.1 clause 6,
//!   from memory), so a TDO change stamped with the edge belongs to the
//!   next bit.
//! - Undriven TMS and TDI (`x`, `z`) read as 1, the level of the inputs'
//!   pull-ups (IEEE 1149.1 clause 6, from memory). TDO `x` or `z` in a scan
//!   is recorded as 1 and counted in `undriven_tdo_bits`.
//! - TRST* low puts the TAP in Test-Logic-Reset at once, without TCK.
//!
//! Any number of samples per TCK period, uneven time steps and other signals
//! in the file do not matter: only changes of the named wires count.
//!
//! A scan starts on the edge that leaves Capture-xR and ends on the edge
//! that enters Update-xR; every Shift-xR edge between adds one bit. A scan
//! still open when the recording ends (in Shift, Exit1, Pause or Exit2), cut
//! by TRST*, or begun before a given start state, is kept with `partial`.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use serde::Serialize;
use virtual_board::{Bits, TapState};

use super::error::{CaptureError, CaptureErrorKind};
use super::vcd_read::{Level, Signal, Vcd};
use crate::program::ScanKind;
use crate::run::ScanRecord;

/// Which signals of a recording are one TAP port's wires.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct JtagSignals {
    /// The TAP port the wires belong to; the decoded records carry it.
    pub port: String,
    /// TCK.
    pub tck: String,
    /// TMS.
    pub tms: String,
    /// TDI.
    pub tdi: String,
    /// TDO.
    pub tdo: String,
    /// TRST* (active low), when the recording has it.
    pub trst: Option<String>,
}

impl JtagSignals {
    /// The wires `harness::vcd::write_vcd` writes for TAP port `port`:
    /// `<port>_TCK`, `_TMS`, `_TDI`, `_TDO` and `_TRST_N`.
    pub fn for_port(port: &str) -> JtagSignals {
        JtagSignals {
            port: port.to_string(),
            tck: format!("{port}_TCK"),
            tms: format!("{port}_TMS"),
            tdi: format!("{port}_TDI"),
            tdo: format!("{port}_TDO"),
            trst: Some(format!("{port}_TRST_N")),
        }
    }
}

/// One scan rebuilt from the wires.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct DecodedScan {
    /// The scan: index counts this port's scans from 0; no expectation or
    /// mask, `passed` true.
    #[serde(flatten)]
    pub record: ScanRecord,
    /// True when the recording does not hold the whole scan: it ends before
    /// Update-xR, TRST* cut the scan, or the scan began before the given
    /// start state.
    pub partial: bool,
    /// Bits whose TDO was `x` or `z` when sampled (recorded as 1).
    pub undriven_tdo_bits: usize,
    /// Time of the edge that left Capture-xR (or of the first edge seen).
    pub start_time: u64,
    /// Time of the scan's last edge.
    pub end_time: u64,
}

/// What the decoder found.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Decoded {
    /// The scans, in order.
    pub scans: Vec<DecodedScan>,
    /// Rising TCK edges in the recording, before the TAP state was known too.
    pub rising_edges: u64,
    /// When the first Test-Logic-Reset was reached; `None` when the start
    /// state was given and no reset came.
    pub reset_time: Option<u64>,
    /// The TAP state after the last edge.
    pub end_state: TapState,
}

impl Decoded {
    /// The scan records alone.
    pub fn records(&self) -> Vec<ScanRecord> {
        self.scans.iter().map(|s| s.record.clone()).collect()
    }
}

/// Wire positions in the decoder's arrays.
const TCK: usize = 0;
const TMS: usize = 1;
const TDI: usize = 2;
const TDO: usize = 3;
const TRST: usize = 4;

/// Rising TCK edges with TMS high that reach Test-Logic-Reset from any
/// state (IEEE 1149.1 clause 6, from memory).
const RESET_EDGES: u32 = 5;

/// Rebuilds the IR and DR scans of one TAP port from a recording.
///
/// Without `start` the decoder waits for the first Test-Logic-Reset (five
/// rising edges with TMS high, or TRST* low) and ignores the edges before
/// it; with `start`, the TAP is in that state before the first edge.
///
/// # Errors
/// `MissingSignal` naming a wire the file lacks (and listing the signals it
/// has), `AmbiguousSignal`, `NotOneBit` for a wire declared wider than one
/// bit, `TckNeverRises` when TCK has no rising edge, and `NoReset` when no
/// Test-Logic-Reset is found and no `start` was given.
pub fn decode_jtag(
    vcd: &Vcd,
    names: &JtagSignals,
    start: Option<TapState>,
) -> Result<Decoded, CaptureError> {
    let one_bit = |name: &str| -> Result<&Signal, CaptureError> {
        let s = vcd.find(name)?;
        if s.width != 1 {
            return Err(CaptureError {
                path: vcd.path().to_path_buf(),
                span: Some(s.span),
                kind: CaptureErrorKind::NotOneBit {
                    name: name.to_string(),
                    width: s.width,
                },
            });
        }
        Ok(s)
    };
    let tck = one_bit(&names.tck)?;
    let tms = one_bit(&names.tms)?;
    let tdi = one_bit(&names.tdi)?;
    let tdo = one_bit(&names.tdo)?;
    let trst = match &names.trst {
        Some(name) => vcd.changes(one_bit(name)?),
        None => &[],
    };
    // Each wire's changes, in TCK, TMS, TDI, TDO, TRST order; no TRST* is
    // a wire that never changes (and so is never low).
    let wires: [&[(u64, Level)]; 5] = [
        vcd.changes(tck),
        vcd.changes(tms),
        vcd.changes(tdi),
        vcd.changes(tdo),
        trst,
    ];

    let mut walk = Walk::new(&names.port, start);
    let mut next = [0usize; 5];
    let mut now = [Level::Unknown; 5];
    loop {
        let t = wires
            .iter()
            .zip(&next)
            .filter_map(|(w, &i)| w.get(i).map(|c| c.0))
            .min();
        let Some(t) = t else { break };
        let before = now;
        for ((w, i), level) in wires.iter().zip(next.iter_mut()).zip(now.iter_mut()) {
            while let Some(&(time, l)) = w.get(*i) {
                if time != t {
                    break;
                }
                *level = l;
                *i += 1;
            }
        }
        let rising = before[TCK] == Level::Low && now[TCK] == Level::High;
        if now[TRST] == Level::Low {
            // TRST* holds the TAP in Test-Logic-Reset, edges or not.
            walk.trst(t);
            walk.edges += u64::from(rising);
        } else if rising {
            walk.edge(t, pulled_up(now[TMS]), pulled_up(now[TDI]), before[TDO]);
        }
    }

    let fail = |span, kind| CaptureError {
        path: vcd.path().to_path_buf(),
        span,
        kind,
    };
    if walk.edges == 0 {
        return Err(fail(
            Some(tck.span),
            CaptureErrorKind::TckNeverRises {
                name: names.tck.clone(),
            },
        ));
    }
    let Some(end_state) = walk.state else {
        return Err(fail(None, CaptureErrorKind::NoReset));
    };
    walk.close(true);
    Ok(Decoded {
        scans: walk.scans,
        rising_edges: walk.edges,
        reset_time: walk.reset_time,
        end_state,
    })
}

/// An undriven TAP input reads 1.
fn pulled_up(level: Level) -> bool {
    level != Level::Low
}

/// A scan being shifted.
struct Open {
    kind: ScanKind,
    tdi: Bits,
    tdo: Bits,
    undriven: usize,
    start_time: u64,
    end_time: u64,
    begun_before: bool,
}

/// The TAP as the decoder follows it.
struct Walk<'a> {
    port: &'a str,
    /// `None` until the first Test-Logic-Reset (when no start was given).
    state: Option<TapState>,
    /// Rising edges with TMS high in a row, before the state is known.
    ones: u32,
    edges: u64,
    reset_time: Option<u64>,
    open: Option<Open>,
    scans: Vec<DecodedScan>,
}

impl<'a> Walk<'a> {
    fn new(port: &'a str, start: Option<TapState>) -> Walk<'a> {
        Walk {
            port,
            state: start,
            ones: 0,
            edges: 0,
            reset_time: None,
            open: None,
            scans: Vec::new(),
        }
    }

    fn reset(&mut self, t: u64) {
        self.state = Some(TapState::TestLogicReset);
        self.reset_time.get_or_insert(t);
    }

    /// TRST* low at time `t`.
    fn trst(&mut self, t: u64) {
        self.close(true);
        self.reset(t);
    }

    /// A rising TCK edge at time `t`.
    fn edge(&mut self, t: u64, tms: bool, tdi: bool, tdo: Level) {
        self.edges += 1;
        let Some(state) = self.state else {
            self.ones = if tms { self.ones + 1 } else { 0 };
            if self.ones >= RESET_EDGES {
                self.reset(t);
            }
            return;
        };
        match state {
            TapState::CaptureIr | TapState::CaptureDr => {
                self.open = Some(Open::new(kind_of(state), t, false));
            }
            TapState::ShiftIr | TapState::ShiftDr => {
                let open = self
                    .open
                    .get_or_insert_with(|| Open::new(kind_of(state), t, true));
                open.tdi.push(tdi);
                open.tdo.push(tdo != Level::Low);
                open.undriven += usize::from(!matches!(tdo, Level::Low | Level::High));
            }
            _ => {}
        }
        if let Some(open) = &mut self.open {
            open.end_time = t;
        }
        let next = state.next(tms);
        self.state = Some(next);
        if matches!(next, TapState::UpdateIr | TapState::UpdateDr) {
            self.close(false);
        }
    }

    /// Ends the open scan, if any; `cut` marks it partial.
    fn close(&mut self, cut: bool) {
        let Some(open) = self.open.take() else { return };
        let index = self.scans.len();
        let mask = Bits::zeros(0);
        let record = ScanRecord::new(
            index, self.port, open.kind, &open.tdi, &open.tdo, None, &mask,
        );
        self.scans.push(DecodedScan {
            record,
            partial: cut || open.begun_before,
            undriven_tdo_bits: open.undriven,
            start_time: open.start_time,
            end_time: open.end_time,
        });
    }
}

impl Open {
    fn new(kind: ScanKind, t: u64, begun_before: bool) -> Open {
        Open {
            kind,
            tdi: Bits::zeros(0),
            tdo: Bits::zeros(0),
            undriven: 0,
            start_time: t,
            end_time: t,
            begun_before,
        }
    }
}

/// The register of a Capture-xR or Shift-xR state.
fn kind_of(state: TapState) -> ScanKind {
    match state {
        TapState::CaptureIr | TapState::ShiftIr => ScanKind::Ir,
        _ => ScanKind::Dr,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::capture::read_vcd;
    use std::fmt::Write;
    use std::path::Path;

    /// One TCK period of a hand-built recording: TMS, TDI, TDO (`None` = z).
    type Period = (bool, bool, Option<bool>);

    /// VCD text for `periods` on wires tck/tms/tdi/tdo/trst (codes `! " # $ %`):
    /// each period's inputs and TDO change at its start, TCK rises 5 later
    /// and falls 5 after that. `trst_low` lists periods with TRST* low.
    fn vcd(periods: &[Period], trst_low: &[usize]) -> String {
        let mut s = String::from(
            "$timescale 1 ns $end
$var wire 1 ! tck $end
$var wire 1 \" tms $end
$var wire 1 # tdi $end
$var wire 1 $ tdo $end
$var wire 1 % trst_n $end
$enddefinitions $end
#0 0! 1\" 1# z$ 1%
",
        );
        for (i, &(tms, tdi, tdo)) in periods.iter().enumerate() {
            let t = 10 + 10 * i as u64;
            let b = |v: bool| if v { '1' } else { '0' };
            let trst = if trst_low.contains(&i) { '0' } else { '1' };
            let tdo = tdo.map_or('z', b);
            writeln!(s, "#{t} 0! {}\" {}# {tdo}$ {trst}%", b(tms), b(tdi)).unwrap();
            writeln!(s, "#{} 1!", t + 5).unwrap();
        }
        s
    }

    fn names() -> JtagSignals {
        JtagSignals {
            port: "P".into(),
            tck: "tck".into(),
            tms: "tms".into(),
            tdi: "tdi".into(),
            tdo: "tdo".into(),
            trst: Some("trst_n".into()),
        }
    }

    fn decode(text: &str, start: Option<TapState>) -> Result<Decoded, CaptureError> {
        let vcd = read_vcd(text, Path::new("t.vcd")).unwrap();
        decode_jtag(&vcd, &names(), start)
    }

    /// Five TMS-high periods, then to Shift-IR: RTI, SelDR, SelIR, CapIR.
    fn reset_to_shift_ir() -> Vec<Period> {
        let mut p = vec![(true, true, None); 5];
        for tms in [false, true, true, false, false] {
            p.push((tms, true, None));
        }
        p
    }

    fn bits(b: &Bits) -> String {
        (0..b.len())
            .map(|i| if b.get(i) { '1' } else { '0' })
            .collect()
    }

    #[test]
    fn a_scan_is_rebuilt_bit_by_bit() {
        let mut p = reset_to_shift_ir();
        // Shift-IR: 4 bits in 1,0,1,1; out 1,0,0,z (z recorded as 1).
        p.push((false, true, Some(true)));
        p.push((false, false, Some(false)));
        p.push((false, true, Some(false)));
        p.push((true, true, None));
        // Exit1-IR → Update-IR → Run-Test/Idle.
        p.push((true, true, None));
        p.push((false, true, None));
        let d = decode(&vcd(&p, &[]), None).unwrap();
        assert_eq!(d.scans.len(), 1);
        let s = &d.scans[0];
        assert_eq!(s.record.register, "IR");
        assert_eq!(s.record.length, 4);
        assert_eq!(bits(&Bits::from_hex(&s.record.tdi, 4).unwrap()), "1011");
        assert_eq!(bits(&s.record.tdo_bits().unwrap()), "1001");
        assert_eq!(s.undriven_tdo_bits, 1);
        assert!(!s.partial);
        assert_eq!((s.record.port.as_str(), s.record.index), ("P", 0));
        assert_eq!((s.record.expected.as_ref(), s.record.passed), (None, true));
        // The capture edge is period 9 (t = 105); the edge into Update-IR
        // is period 14.
        assert_eq!((s.start_time, s.end_time), (105, 155));
        assert_eq!(d.reset_time, Some(55));
        assert_eq!(d.rising_edges, 16);
        assert_eq!(d.end_state, TapState::RunTestIdle);
    }

    #[test]
    fn pause_keeps_one_scan_and_a_cut_scan_is_partial() {
        let mut p = reset_to_shift_ir();
        p[7] = (false, true, None); // Select-DR-Scan → Capture-DR instead
        p.truncate(8);
        // Capture-DR → Shift-DR, 2 bits, Exit1 → Pause → Exit2 → Shift, 1 bit.
        p.push((false, true, None));
        p.push((false, false, Some(true)));
        p.push((true, true, Some(false)));
        p.push((false, true, None));
        p.push((true, true, None));
        p.push((false, true, None));
        p.push((true, false, Some(true)));
        let mut done = p.clone();
        done.push((true, true, None));
        let d = decode(&vcd(&done, &[]), None).unwrap();
        assert_eq!(d.scans.len(), 1);
        assert_eq!(d.scans[0].record.register, "DR");
        assert_eq!(
            bits(&Bits::from_hex(&d.scans[0].record.tdi, 3).unwrap()),
            "010"
        );
        assert_eq!(bits(&d.scans[0].record.tdo_bits().unwrap()), "101");
        assert!(!d.scans[0].partial);
        // The same without the edge into Update-DR: still in Exit1-DR.
        let d = decode(&vcd(&p, &[]), None).unwrap();
        assert_eq!(d.end_state, TapState::Exit1Dr);
        assert!(d.scans[0].partial);
        assert_eq!(d.scans[0].record.length, 3);
    }

    #[test]
    fn trst_resets_and_cuts_an_open_scan() {
        let mut p = reset_to_shift_ir();
        p.push((false, true, Some(true)));
        // TRST* low in the next period: the scan is cut, the TAP in reset.
        p.push((false, true, Some(true)));
        let d = decode(&vcd(&p, &[11]), None).unwrap();
        assert_eq!(d.scans.len(), 1);
        assert!(d.scans[0].partial);
        assert_eq!(d.scans[0].record.length, 1);
        assert_eq!(d.end_state, TapState::TestLogicReset);
        // TRST* alone is a reset: no five TMS-high edges needed.
        let p = vec![(false, true, None), (true, true, None), (false, true, None)];
        let d = decode(&vcd(&p, &[0]), None).unwrap();
        assert_eq!(d.reset_time, Some(10));
        // The edge in TRST* low counts but does not move the TAP; the next
        // two do (TMS 1 stays in Test-Logic-Reset, TMS 0 goes on).
        assert_eq!(d.end_state, TapState::RunTestIdle);
        assert_eq!(d.rising_edges, 3);
    }

    #[test]
    fn a_start_state_replaces_the_reset() {
        // From Run-Test/Idle: SelDR, SelIR, CapIR, Shift-IR, 2 bits, Exit1, Update.
        let p: Vec<Period> = vec![
            (true, true, None),
            (true, true, None),
            (false, true, None),
            (false, true, None),
            (false, false, Some(false)),
            (true, true, Some(true)),
            (true, true, None),
        ];
        let text = vcd(&p, &[]);
        assert_eq!(
            decode(&text, None).unwrap_err().kind,
            CaptureErrorKind::NoReset
        );
        let d = decode(&text, Some(TapState::RunTestIdle)).unwrap();
        assert_eq!(d.scans.len(), 1);
        assert_eq!(bits(&d.scans[0].record.tdo_bits().unwrap()), "01");
        assert_eq!(d.reset_time, None);
        // Starting in Shift-IR, the first bits belong to a scan begun before.
        let d = decode(&text, Some(TapState::ShiftIr)).unwrap();
        assert!(d.scans[0].partial);
    }

    #[test]
    fn missing_or_wide_wires_and_a_still_tck_are_errors() {
        let text = vcd(&reset_to_shift_ir(), &[]);
        let vcd_of = |t: &str| read_vcd(t, Path::new("t.vcd")).unwrap();
        let mut n = names();
        n.tdo = "TDO".into();
        let e = decode_jtag(&vcd_of(&text), &n, None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.vcd: the recording has no signal `TDO` (signals present: tck, tms, tdi, tdo, trst_n)"
        );
        let wide = text.replace("$var wire 1 # tdi", "$var wire 2 # tdi");
        let e = decode_jtag(&vcd_of(&wide), &names(), None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.vcd:4:1: `tdi` is 2 bits wide; a TAP wire is one bit"
        );
        let still: String = text
            .lines()
            .map(|l| l.replace(" 1!", " 0!"))
            .collect::<Vec<_>>()
            .join("\n");
        let e = decode_jtag(&vcd_of(&still), &names(), None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.vcd:2:1: TCK `tck` never rises from 0 to 1: the recording holds no TCK edges"
        );
    }

    #[test]
    fn tms_and_tdi_at_the_edge_tdo_before_it() {
        // Every value changes at the same time stamp as the rising edge.
        let text = "$var wire 1 ! tck $end $var wire 1 \" tms $end $var wire 1 # tdi $end
$var wire 1 $ tdo $end $enddefinitions $end
#0 0! 1\" 0# 0$
#1 1! #2 0! #3 1! #4 0! #5 1! #6 0! #7 1! #8 0! #9 1!
#10 0!
#11 1! 0\"
#12 0! 1\" #13 1! #14 0! #15 1! #16 0! 0\" #17 1! #18 0! #19 1!
#20 0! 1# 0$
#21 1! 1\" 0# 1$
#22 0!
#23 1!
";
        let vcd = read_vcd(text, Path::new("t.vcd")).unwrap();
        let mut n = names();
        n.trst = None;
        let d = decode_jtag(&vcd, &n, None).unwrap();
        // Edges #1-#9 reset. #11: TMS 0, written at the edge, takes the TAP
        // to Run-Test/Idle (read before the edge it would be 1 and stay in
        // Test-Logic-Reset). #13 Select-DR, #15 Select-IR, #17 Capture-IR,
        // #19 Shift-IR. #21 shifts TDI 0 (written at the edge) and TDO 0
        // (the level before #21; it turns 1 at the edge), TMS 1 → Exit1-IR;
        // #23 → Update-IR.
        assert_eq!(d.scans.len(), 1);
        let r = &d.scans[0].record;
        assert_eq!((r.length, r.tdi.as_str(), r.tdo.as_str()), (1, "0", "0"));
        assert_eq!(d.end_state, TapState::UpdateIr);
    }
}
