//! SVF statements → `Program` steps: the sticky rules, headers and trailers, end states and RUNTEST defaults.
//!
//! Rules from the SVF Specification Rev E, from memory:
//! - TDI, MASK and SMASK are remembered per command (SIR, SDR, HIR, HDR,
//!   TIR, TDR) and reused when omitted while the length stays the same; when
//!   the length changes TDI must be given again and MASK/SMASK become all
//!   ones. TDO is not remembered: without it the segment is not compared.
//! - A header or trailer (HIR/HDR/TIR/TDR) applies to every later scan until
//!   redefined; length 0 removes it.
//! - Each SIR/SDR is one scan of the whole chain, in wire order
//!   `header ++ data ++ trailer` (the header is shifted in first).
//!
//! The resulting [`Scan`] is in a canonical form: `mask` is 0 wherever no
//! TDO was given (all zeros and `expect: None` when none was), and `smask`
//! is `None` when the whole SMASK is ones, which is what no SMASK means.

use std::path::Path;

use virtual_board::{Bits, TapState};

use super::error::{Located, Place, SvfErrorKind};
use super::parser::{Body, Clock, RunTest, ScanCommand, ScanStatement, Statement};

/// The most scan bits one program may hold, summed over its scans (our own
/// limit: sticky TDI lets a short text ask for a great many bits).
pub(super) const MAX_PROGRAM_BITS: u64 = 1 << 30;
use crate::program::{Action, Origin, Program, Scan, ScanKind, Step, TrstMode};

/// An SVF file read into a program for one TAP port.
#[derive(Clone, Debug, PartialEq)]
pub struct SvfProgram {
    /// The program: every step on the port given to the reader.
    pub program: Program,
    /// For each step, the part it belongs to: the `N` of the last
    /// `! part N` comment line before its statement, 0 before the first.
    pub part_of_step: Vec<u32>,
}

/// What one of the six scan commands last said (a header, trailer or the
/// data segment itself).
#[derive(Clone, Debug)]
struct Segment {
    /// The last length; `None` before the command is first used.
    length: Option<usize>,
    /// TDI (sticky), `length` bits.
    tdi: Bits,
    /// TDO of the last statement (not sticky).
    tdo: Option<Bits>,
    /// MASK (sticky).
    mask: Bits,
    /// SMASK (sticky).
    smask: Bits,
}

impl Segment {
    fn new() -> Segment {
        Segment {
            length: None,
            tdi: Bits::zeros(0),
            tdo: None,
            mask: Bits::zeros(0),
            smask: Bits::zeros(0),
        }
    }

    /// The bits this segment puts on the wire (0 before first use).
    fn len(&self) -> usize {
        self.tdi.len()
    }
}

struct Lowerer<'a> {
    path: Option<&'a Path>,
    port: &'a str,
    /// Indexed by `ScanCommand::index`.
    segments: [Segment; 6],
    end_ir: TapState,
    end_dr: TapState,
    /// RUNTEST's remembered run_state and end state.
    run_state: TapState,
    run_end: TapState,
    /// Where the TAP is after the steps so far; `None` until a step says.
    current: Option<TapState>,
    /// FREQUENCY before the first step: the program's start frequency.
    frequency: Option<f64>,
    steps: Vec<Step>,
    parts: Vec<u32>,
    /// Scan bits so far, against `MAX_PROGRAM_BITS`.
    total_bits: u64,
}

/// Turns statements into a program for `port`.
///
/// # Errors
/// A rule that needs earlier statements: TDI missing after a length change,
/// a STATE path step that is not one TCK, more than `MAX_PROGRAM_BITS` of scans.
pub(super) fn lower(
    statements: &[Statement],
    path: Option<&Path>,
    port: &str,
) -> Result<SvfProgram, Located> {
    let mut l = Lowerer {
        path,
        port,
        segments: std::array::from_fn(|_| Segment::new()),
        // SVF Specification Rev E (from memory): ENDIR and ENDDR default to IDLE.
        end_ir: TapState::RunTestIdle,
        end_dr: TapState::RunTestIdle,
        // SVF Rev E (from memory): RUNTEST's run_state starts as IDLE.
        run_state: TapState::RunTestIdle,
        run_end: TapState::RunTestIdle,
        current: None,
        frequency: None,
        steps: Vec::new(),
        parts: Vec::new(),
        total_bits: 0,
    };
    for s in statements {
        l.statement(s)?;
    }
    let name = path
        .and_then(|p| p.file_stem())
        .map_or_else(|| "svf".to_string(), |s| s.to_string_lossy().into_owned());
    Ok(SvfProgram {
        program: Program {
            name,
            frequency: l.frequency,
            steps: l.steps,
            ..Program::default()
        },
        part_of_step: l.parts,
    })
}

impl Lowerer<'_> {
    fn push(&mut self, s: &Statement, action: Action) {
        self.current = match &action {
            Action::ResetTms => Some(TapState::TestLogicReset),
            Action::Trst(TrstMode::On) => Some(TapState::TestLogicReset),
            // Releasing or floating TRST* clocks nothing: the TAP stays put.
            Action::Trst(_) | Action::Frequency(_) => self.current,
            Action::Goto { end, .. } | Action::Idle { end, .. } => Some(*end),
            Action::Scan(scan) => Some(scan.end),
        };
        self.steps.push(Step {
            port: self.port.to_string(),
            action,
            origin: Origin {
                file: self.path.map(Path::to_path_buf),
                line: s.line,
                note: s.keyword.to_string(),
                vector: None,
            },
        });
        self.parts.push(s.part);
    }

    fn statement(&mut self, s: &Statement) -> Result<(), Located> {
        match &s.body {
            Body::Scan(scan) => self.scan(s, scan),
            Body::EndState { kind, state } => {
                match kind {
                    ScanKind::Ir => self.end_ir = *state,
                    ScanKind::Dr => self.end_dr = *state,
                }
                Ok(())
            }
            Body::State(states) => self.state(s, states),
            Body::RunTest(rt) => {
                self.runtest(s, rt);
                Ok(())
            }
            Body::Trst(mode) => {
                self.push(s, Action::Trst(*mode));
                Ok(())
            }
            Body::Frequency(hz) => {
                // From where it stands on; without an argument, full speed.
                // Before the first step it is the program's start frequency.
                if self.steps.is_empty() {
                    self.frequency = *hz;
                } else {
                    self.push(s, Action::Frequency(*hz));
                }
                Ok(())
            }
        }
    }

    /// Updates the command's sticky values and, for SIR/SDR, adds the scan.
    fn scan(&mut self, s: &Statement, st: &ScanStatement) -> Result<(), Located> {
        let len = st.length;
        let seg = &self.segments[st.command.index()];
        let changed = seg.length != Some(len);
        let tdi = match (&st.tdi, changed) {
            (Some(b), _) => b.clone(),
            (None, false) => seg.tdi.clone(),
            (None, true) if len == 0 => Bits::zeros(0),
            (None, true) => {
                return Err(Located {
                    place: s.place,
                    kind: SvfErrorKind::MissingTdi {
                        command: st.command.name(),
                        length: len,
                        previous: seg.length,
                    },
                })
            }
        };
        let sticky = |given: &Option<Bits>, old: &Bits| match given {
            Some(b) => b.clone(),
            None if changed => Bits::ones(len),
            None => old.clone(),
        };
        let mask = sticky(&st.mask, &seg.mask);
        let smask = sticky(&st.smask, &seg.smask);
        self.segments[st.command.index()] = Segment {
            length: Some(len),
            tdi,
            tdo: st.tdo.clone(),
            mask,
            smask,
        };
        let (header, data, trailer) = match st.command {
            ScanCommand::Sir => (ScanCommand::Hir, ScanCommand::Sir, ScanCommand::Tir),
            ScanCommand::Sdr => (ScanCommand::Hdr, ScanCommand::Sdr, ScanCommand::Tdr),
            _ => return Ok(()), // a header or trailer only changes what later scans add
        };
        let parts = [header, data, trailer].map(|c| &self.segments[c.index()]);
        let total: usize = parts.iter().map(|p| p.len()).sum();
        if total == 0 {
            return Ok(()); // nothing to shift: no step, the sticky values are kept
        }
        self.total_bits += total as u64;
        if self.total_bits > MAX_PROGRAM_BITS {
            return Err(Located {
                place: s.place,
                kind: SvfErrorKind::ProgramTooLarge {
                    max: MAX_PROGRAM_BITS,
                },
            });
        }
        let mut tdi = Bits::zeros(0);
        let mut expect = Bits::zeros(0);
        let mut mask = Bits::zeros(0);
        let mut smask = Bits::zeros(0);
        let mut compared = false;
        for p in parts {
            tdi.extend(&p.tdi);
            smask.extend(&p.smask);
            match &p.tdo {
                Some(tdo) if p.len() > 0 => {
                    compared = true;
                    expect.extend(tdo);
                    mask.extend(&p.mask);
                }
                _ => {
                    expect.extend(&Bits::zeros(p.len()));
                    mask.extend(&Bits::zeros(p.len()));
                }
            }
        }
        let kind = st.command.kind();
        // An end state of DRPAUSE/IRPAUSE leaves the scan in Pause with the
        // Update not yet done (SVF Specification Rev E, from memory). The
        // next scan starts through Exit2 → Update → … → Capture
        // (`TapState::scan_entry`, used by the runner), so it happens there.
        let end = match kind {
            ScanKind::Ir => self.end_ir,
            ScanKind::Dr => self.end_dr,
        };
        let scan = Scan {
            kind,
            tdi,
            expect: compared.then_some(expect),
            mask,
            smask: (smask.count_ones() != total).then_some(smask),
            end,
        };
        self.push(s, Action::Scan(scan));
        Ok(())
    }

    /// STATE: one state is the shortest path; more are an explicit path.
    fn state(&mut self, s: &Statement, states: &[(TapState, Place)]) -> Result<(), Located> {
        let Some(&(end, _)) = states.last() else {
            return Ok(()); // the parser never gives an empty list
        };
        if states.len() == 1 && end == TapState::TestLogicReset {
            // `STATE RESET;` from a state the tester may not know: five TCK
            // with TMS high reach Test-Logic-Reset from anywhere (IEEE 1149.1
            // clause 6, from memory; common practice for SVF players).
            self.push(s, Action::ResetTms);
            return Ok(());
        }
        if states.len() == 1 {
            self.push(s, Action::Goto { path: vec![], end });
            return Ok(());
        }
        // Each listed state must be one TCK from the one before it (SVF Rev E,
        // from memory; the IEEE 1149.1 clause 6 diagram is `TapState::next`).
        // The first is checked against where the TAP is, when that is known.
        let mut prev = self.current;
        for &(state, place) in states {
            if let Some(p) = prev {
                if p.next(false) != state && p.next(true) != state {
                    return Err(Located {
                        place,
                        kind: SvfErrorKind::IllegalStep { from: p, to: state },
                    });
                }
            }
            prev = Some(state);
        }
        let path = states.iter().map(|(st, _)| *st).collect();
        self.push(s, Action::Goto { path, end });
        Ok(())
    }

    /// RUNTEST with SVF's defaults for the parts left out.
    fn runtest(&mut self, s: &Statement, rt: &RunTest) {
        // run_state: the previous RUNTEST's, initially IDLE. End state: the
        // run_state when one is given, else the previous RUNTEST's end state
        // (SVF Specification Rev E, from memory; the end-state rule is the least sure).
        let state = rt.run_state.unwrap_or(self.run_state);
        let end = rt.end_state.or(rt.run_state).unwrap_or(self.run_end);
        self.run_state = state;
        self.run_end = end;
        // SCK counts system-clock cycles. The virtual board has no system
        // clock to count, so SCK cycles are taken as TCK cycles in run_state.
        let cycles = match rt.count {
            Some((n, Clock::Tck | Clock::Sck)) => n,
            None => 0,
        };
        // MAXIMUM has no place in `Action::Idle`; the parser checked it is
        // not below the minimum, which is all a reader can check.
        self.push(
            s,
            Action::Idle {
                state,
                cycles,
                min_seconds: rt.min_seconds,
                end,
            },
        );
    }
}

#[cfg(test)]
mod tests {
    use super::super::{read_svf, SvfError};
    use super::*;

    fn read(text: &str) -> Result<SvfProgram, SvfError> {
        read_svf(text, None, "P")
    }

    fn scans(text: &str) -> Vec<Scan> {
        read(text)
            .unwrap()
            .program
            .steps
            .into_iter()
            .filter_map(|s| match s.action {
                Action::Scan(scan) => Some(scan),
                _ => None,
            })
            .collect()
    }

    fn bits(s: &str) -> Bits {
        // Wire order: the first character is bit 0, the first shifted in.
        Bits::from_bools(
            &s.chars()
                .filter(|c| *c != ' ')
                .map(|c| c == '1')
                .collect::<Vec<_>>(),
        )
    }

    #[test]
    fn tdi_mask_and_smask_are_sticky_at_the_same_length() {
        // SVF Specification Rev E (from memory): TDI, MASK and SMASK
        // are reused when omitted while the length is unchanged.
        let s = scans(
            "SDR 4 TDI(5) TDO(3) MASK(6) SMASK(C);\n\
             SDR 4 TDO(0);\n\
             SDR 4 TDI(A) TDO(F);",
        );
        assert_eq!(s[1].tdi, Bits::from_u64(0x5, 4));
        assert_eq!(s[1].mask, Bits::from_u64(0x6, 4));
        assert_eq!(s[1].smask, Some(Bits::from_u64(0xC, 4)));
        assert_eq!(s[1].expect, Some(Bits::from_u64(0x0, 4)));
        assert_eq!(s[2].tdi, Bits::from_u64(0xA, 4));
        assert_eq!(s[2].mask, Bits::from_u64(0x6, 4));
    }

    #[test]
    fn a_length_change_resets_mask_and_smask_and_needs_tdi() {
        // SVF Specification Rev E (from memory): on a length change TDI must be given
        // again and MASK/SMASK return to all ones.
        let s = scans("SDR 4 TDI(5) TDO(3) MASK(6) SMASK(C);\nSDR 6 TDI(11) TDO(2A);");
        assert_eq!(s[1].mask, Bits::ones(6));
        assert_eq!(s[1].smask, None);
        let e = read("SDR 4 TDI(5);\n  SDR 6 TDO(2A);").unwrap_err();
        assert_eq!((e.span.line, e.span.column), (2, 3));
        assert_eq!(
            e.kind,
            SvfErrorKind::MissingTdi {
                command: "SDR",
                length: 6,
                previous: Some(4)
            }
        );
        let e = read("SIR 8;").unwrap_err();
        assert_eq!(
            e.kind.to_string(),
            "SIR 8: TDI must be given when the length changes (there is no earlier SIR)"
        );
    }

    #[test]
    fn tdo_is_not_sticky() {
        // SVF Specification Rev E (from memory): TDO is not remembered; without it the
        // scan is not compared.
        let s = scans("SIR 4 TDI(1) TDO(1);\nSIR 4;");
        assert_eq!(s[0].expect, Some(Bits::from_u64(1, 4)));
        assert_eq!(s[1].expect, None);
        assert_eq!(s[1].mask, Bits::zeros(4));
        assert_eq!(s[1].tdi, Bits::from_u64(1, 4));
    }

    #[test]
    fn headers_and_trailers_wrap_the_data_and_length_zero_removes_them() {
        // SVF Specification Rev E (from memory): wire order is
        // header, data, trailer; each segment has its own TDO and MASK; length 0 removes
        // a header or trailer.
        let s = scans(
            "HDR 2 TDI(1) TDO(2);\nTDR 1 TDI(1);\nSDR 3 TDI(6) TDO(5) MASK(3);\n\
             HDR 0;\nSDR 3;\nTDR 0;\nSDR 3;",
        );
        assert_eq!(s[0].tdi, bits("10 011 1"));
        assert_eq!(s[0].expect, Some(bits("01 101 0")));
        assert_eq!(s[0].mask, bits("11 110 0"));
        assert_eq!(s[1].tdi, bits("011 1"));
        assert_eq!(s[1].expect, None);
        assert_eq!(s[2].tdi, bits("011"));
    }

    #[test]
    fn a_zero_length_scan_is_skipped_but_counts_for_the_sticky_rules() {
        assert!(read("SDR 0;").unwrap().program.steps.is_empty());
        // With a header there is something to shift.
        let s = scans("HDR 1 TDI(1);\nSDR 0;");
        assert_eq!(s.len(), 1);
        assert_eq!(s[0].tdi, bits("1"));
        // SDR 0 is a length like any other: the next SDR 4 is a length change.
        let e = read("SDR 4 TDI(3);\nSDR 0;\nSDR 4;").unwrap_err();
        assert_eq!(e.span.line, 3);
        assert_eq!(
            e.kind,
            SvfErrorKind::MissingTdi {
                command: "SDR",
                length: 4,
                previous: Some(0)
            }
        );
    }

    #[test]
    fn a_short_text_cannot_ask_for_unbounded_memory() {
        // 65 scans of 2^24 bits each pass 2^30 bits: the 65th is refused.
        let mut text = format!("SDR {} TDI(0);\n", 1u64 << 24);
        text.push_str(&"SDR 16777216;\n".repeat(64));
        let e = read(&text).unwrap_err();
        assert_eq!(e.span.line, 65);
        assert_eq!(e.kind, SvfErrorKind::ProgramTooLarge { max: 1 << 30 });
    }

    #[test]
    fn scans_end_in_the_endir_enddr_state() {
        // SVF Specification Rev E (from memory): ENDIR/ENDDR default to IDLE.
        let s =
            scans("SIR 2 TDI(1);\nENDDR DRPAUSE;\nSDR 2 TDI(1);\nENDIR IRPAUSE;\nSIR 2;\nSDR 2;");
        let ends: Vec<TapState> = s.iter().map(|s| s.end).collect();
        assert_eq!(
            ends,
            [
                TapState::RunTestIdle,
                TapState::PauseDr,
                TapState::PauseIr,
                TapState::PauseDr
            ]
        );
    }

    #[test]
    fn state_paths_are_checked_against_the_current_state() {
        // IEEE 1149.1 clause 6 diagram (from memory): Pause-DR → Exit2-DR →
        // Update-DR → Run-Test/Idle is one TCK per step.
        let p = read("ENDDR DRPAUSE;\nSDR 1 TDI(0);\nSTATE DREXIT2 DRUPDATE IDLE;").unwrap();
        assert_eq!(
            p.program.steps[1].action,
            Action::Goto {
                path: vec![TapState::Exit2Dr, TapState::UpdateDr, TapState::RunTestIdle],
                end: TapState::RunTestIdle
            }
        );
        // From Run-Test/Idle, Exit2-DR is not one TCK away.
        let e = read("SDR 1 TDI(0);\nSTATE DREXIT2 DRUPDATE IDLE;").unwrap_err();
        assert_eq!((e.span.line, e.span.column), (2, 7));
        assert_eq!(
            e.kind,
            SvfErrorKind::IllegalStep {
                from: TapState::RunTestIdle,
                to: TapState::Exit2Dr
            }
        );
    }

    #[test]
    fn runtest_defaults() {
        // SVF Specification Rev E (from memory): run_state defaults to
        // the previous RUNTEST's, initially IDLE; the end state to run_state when given,
        // else the previous end state.
        let p = read(
            "RUNTEST 10 TCK;\nRUNTEST DRPAUSE 5 TCK;\nRUNTEST 7 TCK ENDSTATE IDLE;\n\
             RUNTEST 1E-3 SEC;\nRUNTEST IRPAUSE 2 SCK 5E-1 SEC MAXIMUM 1 SEC;",
        )
        .unwrap();
        let idles: Vec<(TapState, u64, Option<f64>, TapState)> = p
            .program
            .steps
            .iter()
            .map(|s| match &s.action {
                Action::Idle {
                    state,
                    cycles,
                    min_seconds,
                    end,
                } => (*state, *cycles, *min_seconds, *end),
                a => panic!("{a:?}"),
            })
            .collect();
        use TapState::*;
        assert_eq!(
            idles,
            [
                (RunTestIdle, 10, None, RunTestIdle),
                (PauseDr, 5, None, PauseDr),
                (PauseDr, 7, None, RunTestIdle),
                (PauseDr, 0, Some(1e-3), RunTestIdle),
                (PauseIr, 2, Some(0.5), PauseIr),
            ]
        );
    }
}
