//! SVF statements as written, each with the place of its keyword; no sticky rules yet.
//!
//! Grammar from the SVF Specification Rev E (from memory). The parser checks what one statement
//! can show by itself (lengths, hex widths, state names, stable states); the
//! rules that need earlier statements are in `lower`.

use virtual_board::{Bits, TapState};

use super::error::{Located, Place, SvfErrorKind};
use super::lexer::{hex_digits, LexError, Lexer, Tok, Token};
use crate::program::{ScanKind, TrstMode};

/// The longest scan segment we accept, in bits (our own limit, so that a
/// typo cannot ask for gigabytes).
pub(super) const MAX_SCAN_BITS: u64 = crate::program::MAX_SCAN_BITS as u64;

/// The sixteen SVF state names (SVF Specification Rev E, from memory).
const STATE_NAMES: [(&str, TapState); 16] = [
    ("RESET", TapState::TestLogicReset),
    ("IDLE", TapState::RunTestIdle),
    ("DRSELECT", TapState::SelectDrScan),
    ("DRCAPTURE", TapState::CaptureDr),
    ("DRSHIFT", TapState::ShiftDr),
    ("DREXIT1", TapState::Exit1Dr),
    ("DRPAUSE", TapState::PauseDr),
    ("DREXIT2", TapState::Exit2Dr),
    ("DRUPDATE", TapState::UpdateDr),
    ("IRSELECT", TapState::SelectIrScan),
    ("IRCAPTURE", TapState::CaptureIr),
    ("IRSHIFT", TapState::ShiftIr),
    ("IREXIT1", TapState::Exit1Ir),
    ("IRPAUSE", TapState::PauseIr),
    ("IREXIT2", TapState::Exit2Ir),
    ("IRUPDATE", TapState::UpdateIr),
];

/// The SVF name of a state (`IDLE`, `DRPAUSE`, …).
pub fn svf_state_name(state: TapState) -> &'static str {
    STATE_NAMES
        .iter()
        .find(|(_, s)| *s == state)
        .map_or("?", |(n, _)| n)
}

/// The state an SVF name (upper-case) stands for.
pub(super) fn state_from_name(name: &str) -> Option<TapState> {
    STATE_NAMES
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, s)| *s)
}

/// One of the six scan commands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(super) enum ScanCommand {
    /// Header for IR scans.
    Hir,
    /// The IR scan itself.
    Sir,
    /// Trailer for IR scans.
    Tir,
    /// Header for DR scans.
    Hdr,
    /// The DR scan itself.
    Sdr,
    /// Trailer for DR scans.
    Tdr,
}

impl ScanCommand {
    /// The keyword.
    pub fn name(self) -> &'static str {
        match self {
            ScanCommand::Hir => "HIR",
            ScanCommand::Sir => "SIR",
            ScanCommand::Tir => "TIR",
            ScanCommand::Hdr => "HDR",
            ScanCommand::Sdr => "SDR",
            ScanCommand::Tdr => "TDR",
        }
    }

    /// IR or DR.
    pub fn kind(self) -> ScanKind {
        match self {
            ScanCommand::Hir | ScanCommand::Sir | ScanCommand::Tir => ScanKind::Ir,
            ScanCommand::Hdr | ScanCommand::Sdr | ScanCommand::Tdr => ScanKind::Dr,
        }
    }

    /// Index 0..6, for per-command tables.
    pub fn index(self) -> usize {
        self as usize
    }
}

/// `length [TDI(..)] [TDO(..)] [MASK(..)] [SMASK(..)]`, values already `length` bits wide.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(super) struct ScanStatement {
    /// Which command.
    pub command: ScanCommand,
    /// Bits.
    pub length: usize,
    /// TDI, if given.
    pub tdi: Option<Bits>,
    /// TDO, if given.
    pub tdo: Option<Bits>,
    /// MASK, if given.
    pub mask: Option<Bits>,
    /// SMASK, if given.
    pub smask: Option<Bits>,
}

/// What RUNTEST counts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Clock {
    /// Test clock.
    Tck,
    /// System clock.
    Sck,
}

/// A RUNTEST statement, every part optional as written.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct RunTest {
    /// The state to run in.
    pub run_state: Option<TapState>,
    /// `run_count TCK|SCK`.
    pub count: Option<(u64, Clock)>,
    /// `min_time SEC`.
    pub min_seconds: Option<f64>,
    /// `MAXIMUM max_time SEC`.
    pub max_seconds: Option<f64>,
    /// `ENDSTATE s`.
    pub end_state: Option<TapState>,
}

/// What a statement says.
#[derive(Clone, Debug, PartialEq)]
pub(super) enum Body {
    /// SIR, SDR, HIR, HDR, TIR, TDR.
    Scan(ScanStatement),
    /// ENDIR or ENDDR.
    EndState {
        /// IR for ENDIR, DR for ENDDR.
        kind: ScanKind,
        /// The stable state.
        state: TapState,
    },
    /// STATE: the listed states with their places (the last one stable).
    State(Vec<(TapState, Place)>),
    /// RUNTEST.
    RunTest(RunTest),
    /// TRST.
    Trst(TrstMode),
    /// FREQUENCY, in Hz; `None` for full speed.
    Frequency(Option<f64>),
}

/// One statement and where its keyword is.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Statement {
    /// The keyword, upper-case (`SDR`).
    pub keyword: &'static str,
    /// The keyword's place.
    pub place: Place,
    /// The keyword's line (1-based).
    pub line: u32,
    /// The part (`! part N`) it falls in; 0 before the first.
    pub part: u32,
    /// What it says.
    pub body: Body,
}

/// Reads all statements of `text`.
///
/// # Errors
/// The first lexical or grammar error, located.
pub(super) fn parse(text: &str) -> Result<Vec<Statement>, Located> {
    let mut p = Parser {
        text,
        lexer: Lexer::new(text),
        peeked: None,
        keyword: ("", Place::default()),
    };
    let mut out = Vec::new();
    while let Some(s) = p.statement()? {
        out.push(s);
    }
    Ok(out)
}

struct Parser<'a> {
    text: &'a str,
    lexer: Lexer<'a>,
    peeked: Option<Token>,
    /// The statement being read: keyword and place, for "not closed" errors.
    keyword: (&'static str, Place),
}

const KEYWORDS: [&str; 14] = [
    "ENDDR",
    "ENDIR",
    "FREQUENCY",
    "HDR",
    "HIR",
    "PIO",
    "PIOMAP",
    "RUNTEST",
    "SDR",
    "SIR",
    "STATE",
    "TDR",
    "TIR",
    "TRST",
];

impl Parser<'_> {
    fn place(t: &Token) -> Place {
        Place {
            offset: t.offset,
            len: t.len,
        }
    }

    fn error(&self, t: &Token, kind: SvfErrorKind) -> Located {
        Located {
            place: Self::place(t),
            kind,
        }
    }

    fn lex_error(&self, (offset, len, kind): LexError) -> Located {
        Located {
            place: Place { offset, len },
            kind,
        }
    }

    fn peek(&mut self) -> Result<&Token, Located> {
        let t = match self.peeked.take() {
            Some(t) => t,
            None => self.lexer.next_token().map_err(|e| self.lex_error(e))?,
        };
        Ok(self.peeked.insert(t))
    }

    fn bump(&mut self) -> Result<Token, Located> {
        match self.peeked.take() {
            Some(t) => Ok(t),
            None => self.lexer.next_token().map_err(|e| self.lex_error(e)),
        }
    }

    /// "expected …, found …", or "not closed" at the keyword when the text ended.
    fn unexpected(&self, expected: &'static str, t: &Token) -> Located {
        if t.tok == Tok::Eof && !self.keyword.0.is_empty() {
            return Located {
                place: self.keyword.1,
                kind: SvfErrorKind::UnclosedStatement(self.keyword.0),
            };
        }
        self.error(
            t,
            SvfErrorKind::Unexpected {
                expected,
                found: t.describe(self.text),
            },
        )
    }

    fn expect_semi(&mut self) -> Result<(), Located> {
        let t = self.bump()?;
        if t.tok == Tok::Semi {
            Ok(())
        } else {
            Err(self.unexpected("`;`", &t))
        }
    }

    fn expect_word(&mut self, word: &'static str, expected: &'static str) -> Result<(), Located> {
        let t = self.bump()?;
        if t.is_word(word) {
            Ok(())
        } else {
            Err(self.unexpected(expected, &t))
        }
    }

    fn number(&mut self, expected: &'static str) -> Result<(Token, String), Located> {
        let t = self.bump()?;
        match &t.tok {
            Tok::Number(n) => {
                let n = n.clone();
                Ok((t, n))
            }
            _ => Err(self.unexpected(expected, &t)),
        }
    }

    /// A state name; `stable` names the argument when it must be stable.
    fn state(&mut self, stable: Option<&'static str>) -> Result<(TapState, Place), Located> {
        let t = self.bump()?;
        let Tok::Word(w) = &t.tok else {
            return Err(self.unexpected("a state name", &t));
        };
        let state = state_from_name(w)
            .ok_or_else(|| self.error(&t, SvfErrorKind::UnknownState(w.clone())))?;
        if let Some(what) = stable {
            if !state.is_stable() {
                return Err(self.error(&t, SvfErrorKind::NotStable { what, state }));
            }
        }
        Ok((state, Self::place(&t)))
    }

    /// The next statement, or `None` at the end of the text.
    fn statement(&mut self) -> Result<Option<Statement>, Located> {
        self.keyword = ("", Place::default());
        let t = loop {
            let t = self.bump()?;
            if t.tok != Tok::Semi {
                break t; // an empty statement `;` is skipped
            }
        };
        let word = match &t.tok {
            Tok::Eof => return Ok(None),
            Tok::Word(w) => w.clone(),
            _ => return Err(self.unexpected("an SVF statement", &t)),
        };
        let Some(keyword) = KEYWORDS.iter().copied().find(|k| *k == word) else {
            return Err(self.error(&t, SvfErrorKind::UnknownStatement(word)));
        };
        let place = Self::place(&t);
        self.keyword = (keyword, place);
        let body = match keyword {
            "SIR" => self.scan(ScanCommand::Sir)?,
            "SDR" => self.scan(ScanCommand::Sdr)?,
            "HIR" => self.scan(ScanCommand::Hir)?,
            "HDR" => self.scan(ScanCommand::Hdr)?,
            "TIR" => self.scan(ScanCommand::Tir)?,
            "TDR" => self.scan(ScanCommand::Tdr)?,
            "ENDIR" | "ENDDR" => {
                let kind = if keyword == "ENDIR" {
                    ScanKind::Ir
                } else {
                    ScanKind::Dr
                };
                let what = if kind == ScanKind::Ir {
                    "the ENDIR state"
                } else {
                    "the ENDDR state"
                };
                let (state, _) = self.state(Some(what))?;
                self.expect_semi()?;
                Body::EndState { kind, state }
            }
            "STATE" => self.state_statement()?,
            "RUNTEST" => Body::RunTest(self.runtest()?),
            "TRST" => {
                let t = self.bump()?;
                let mode = match &t.tok {
                    Tok::Word(w) if w == "ON" => TrstMode::On,
                    Tok::Word(w) if w == "OFF" => TrstMode::Off,
                    Tok::Word(w) if w == "Z" => TrstMode::Z,
                    Tok::Word(w) if w == "ABSENT" => TrstMode::Absent,
                    _ => return Err(self.unexpected("ON, OFF, Z or ABSENT", &t)),
                };
                self.expect_semi()?;
                Body::Trst(mode)
            }
            "FREQUENCY" => {
                if self.peek()?.tok == Tok::Semi {
                    self.bump()?;
                    Body::Frequency(None)
                } else {
                    let (t, n) = self.number("a frequency in HZ or `;`")?;
                    let hz = real(&n)
                        .filter(|v| v.is_finite() && *v > 0.0)
                        .ok_or_else(|| {
                            self.error(
                                &t,
                                SvfErrorKind::NotPositive {
                                    what: "FREQUENCY",
                                    found: n.clone(),
                                },
                            )
                        })?;
                    self.expect_word("HZ", "HZ")?;
                    self.expect_semi()?;
                    Body::Frequency(Some(hz))
                }
            }
            // PIO and PIOMAP drive a tester's parallel pins, which the
            // virtual board does not model: refuse them at their place.
            "PIO" => return Err(self.error(&t, SvfErrorKind::NotSupported("PIO"))),
            _ => return Err(self.error(&t, SvfErrorKind::NotSupported("PIOMAP"))),
        };
        Ok(Some(Statement {
            keyword,
            place,
            line: t.line,
            part: t.part,
            body,
        }))
    }

    fn whole(&self, t: &Token, n: &str, what: &'static str, max: u64) -> Result<u64, Located> {
        let too_large = || {
            self.error(
                t,
                SvfErrorKind::TooLarge {
                    what,
                    found: n.to_string(),
                    max,
                },
            )
        };
        let value = if n.bytes().all(|b| b.is_ascii_digit()) {
            n.parse::<u64>().map_err(|_| too_large())?
        } else {
            let v = real(n)
                .filter(|v| *v >= 0.0 && v.fract() == 0.0)
                .ok_or_else(|| {
                    self.error(
                        t,
                        SvfErrorKind::NotWhole {
                            what,
                            found: n.to_string(),
                        },
                    )
                })?;
            // Above 2^53 a double no longer holds every whole number.
            if v > 9_007_199_254_740_992.0 {
                return Err(too_large());
            }
            v as u64
        };
        if value > max {
            return Err(too_large());
        }
        Ok(value)
    }

    fn seconds(&mut self, what: &'static str) -> Result<f64, Located> {
        let (t, n) = self.number("a time in SEC")?;
        let v = real(&n).filter(|v| *v >= 0.0).ok_or_else(|| {
            self.error(
                &t,
                SvfErrorKind::Negative {
                    what,
                    found: n.clone(),
                },
            )
        })?;
        self.expect_word("SEC", "SEC")?;
        Ok(v)
    }

    fn scan(&mut self, command: ScanCommand) -> Result<Body, Located> {
        let (t, n) = self.number("the scan length")?;
        let length = self.whole(&t, &n, "scan length", MAX_SCAN_BITS)? as usize;
        let mut s = ScanStatement {
            command,
            length,
            tdi: None,
            tdo: None,
            mask: None,
            smask: None,
        };
        loop {
            let t = self.bump()?;
            let field = match &t.tok {
                Tok::Semi => return Ok(Body::Scan(s)),
                Tok::Word(w) if w == "TDI" => "TDI",
                Tok::Word(w) if w == "TDO" => "TDO",
                Tok::Word(w) if w == "MASK" => "MASK",
                Tok::Word(w) if w == "SMASK" => "SMASK",
                _ => return Err(self.unexpected("TDI, TDO, MASK, SMASK or `;`", &t)),
            };
            let g = self.bump()?;
            let Tok::Group { start, end } = g.tok else {
                return Err(self.unexpected("`(` hex digits `)`", &g));
            };
            let digits = hex_digits(self.text, start, end).map_err(|e| self.lex_error(e))?;
            if digits.is_empty() && length > 0 {
                return Err(self.error(&g, SvfErrorKind::EmptyHex(field)));
            }
            // SVF Specification Rev E (from memory): the value may not exceed the
            // stated length; leading zeros are implied.
            let bits = Bits::from_hex(&digits, length)
                .ok_or_else(|| self.error(&g, SvfErrorKind::HexTooWide { field, length }))?;
            let slot = match field {
                "TDI" => &mut s.tdi,
                "TDO" => &mut s.tdo,
                "MASK" => &mut s.mask,
                _ => &mut s.smask,
            };
            if slot.is_some() {
                return Err(self.error(&t, SvfErrorKind::DuplicateField(field)));
            }
            *slot = Some(bits);
        }
    }

    fn state_statement(&mut self) -> Result<Body, Located> {
        let mut states = Vec::new();
        loop {
            let t = self.peek()?;
            if t.tok == Tok::Semi && !states.is_empty() {
                self.bump()?;
                break;
            }
            let expected = if states.is_empty() {
                "a state name"
            } else {
                "a state name or `;`"
            };
            if !matches!(t.tok, Tok::Word(_)) {
                let t = t.clone();
                return Err(self.unexpected(expected, &t));
            }
            states.push(self.state(None)?);
        }
        if let Some(&(state, place)) = states.last() {
            if !state.is_stable() {
                return Err(Located {
                    place,
                    kind: SvfErrorKind::NotStable {
                        what: "the last state of STATE",
                        state,
                    },
                });
            }
        }
        Ok(Body::State(states))
    }

    fn runtest(&mut self) -> Result<RunTest, Located> {
        let mut rt = RunTest {
            run_state: None,
            count: None,
            min_seconds: None,
            max_seconds: None,
            end_state: None,
        };
        if matches!(self.peek()?.tok, Tok::Word(_)) {
            rt.run_state = Some(self.state(Some("the RUNTEST run_state"))?.0);
        }
        let (t, n) = self.number("a run count or a time")?;
        let unit = self.bump()?;
        match &unit.tok {
            Tok::Word(w) if w == "TCK" || w == "SCK" => {
                let count =
                    self.whole(&t, &n, "RUNTEST run_count", crate::program::MAX_IDLE_CYCLES)?;
                let clock = if w == "TCK" { Clock::Tck } else { Clock::Sck };
                rt.count = Some((count, clock));
                if matches!(self.peek()?.tok, Tok::Number(_)) {
                    rt.min_seconds = Some(self.seconds("RUNTEST min_time")?);
                }
            }
            Tok::Word(w) if w == "SEC" => {
                let v = real(&n).filter(|v| *v >= 0.0).ok_or_else(|| {
                    self.error(
                        &t,
                        SvfErrorKind::Negative {
                            what: "RUNTEST min_time",
                            found: n.clone(),
                        },
                    )
                })?;
                rt.min_seconds = Some(v);
            }
            _ => return Err(self.unexpected("TCK, SCK or SEC", &unit)),
        }
        if let Some(min) = rt.min_seconds {
            if self.peek()?.is_word("MAXIMUM") {
                let m = self.bump()?;
                let max = self.seconds("RUNTEST MAXIMUM")?;
                if max < min {
                    return Err(self.error(
                        &m,
                        SvfErrorKind::MaximumBelowMinimum {
                            min: min.to_string(),
                            max: max.to_string(),
                        },
                    ));
                }
                rt.max_seconds = Some(max);
            }
        }
        if self.peek()?.is_word("ENDSTATE") {
            self.bump()?;
            rt.end_state = Some(self.state(Some("the RUNTEST ENDSTATE"))?.0);
        }
        let t = self.bump()?;
        if t.tok != Tok::Semi {
            let expected = if rt.min_seconds.is_some() {
                "MAXIMUM, ENDSTATE or `;`"
            } else {
                "a time in SEC, ENDSTATE or `;`"
            };
            return Err(self.unexpected(expected, &t));
        }
        Ok(rt)
    }
}

/// A finite number from its text.
fn real(n: &str) -> Option<f64> {
    n.parse::<f64>().ok().filter(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse_text(text: &str) -> Result<Vec<Statement>, Located> {
        parse(text)
    }

    fn one(text: &str) -> Body {
        let mut s = parse_text(text).unwrap();
        assert_eq!(s.len(), 1, "{text}");
        s.remove(0).body
    }

    fn err(text: &str) -> (u32, u32, SvfErrorKind) {
        let e = parse_text(text).unwrap_err();
        let span = virtual_board::Span::at(text, e.place.offset, e.place.len);
        (span.line, span.column, e.kind)
    }

    #[test]
    fn state_names_round_trip() {
        for s in TapState::ALL {
            assert_eq!(state_from_name(svf_state_name(s)), Some(s));
        }
    }

    #[test]
    fn scan_fields_in_any_order() {
        // SVF Specification Rev E (from memory): TDI, TDO, MASK and SMASK may come in any order.
        let Body::Scan(s) = one("sdr 8 smask(0F) mask(F0) tdo(81) tdi(C5);") else {
            panic!()
        };
        assert_eq!(s.command, ScanCommand::Sdr);
        assert_eq!(s.length, 8);
        assert_eq!(s.tdi.unwrap().to_u64(), 0xC5);
        assert_eq!(s.tdo.unwrap().to_u64(), 0x81);
        assert_eq!(s.mask.unwrap().to_u64(), 0xF0);
        assert_eq!(s.smask.unwrap().to_u64(), 0x0F);
    }

    #[test]
    fn hex_may_span_lines_with_white_space() {
        // SVF Specification Rev E (from memory): hex data in ( ) may continue across lines.
        let Body::Scan(s) = one("SDR 40 TDI(12 345\n  6789\r\n\tA);") else {
            panic!()
        };
        assert_eq!(s.tdi.unwrap().to_hex(), "123456789A");
    }

    #[test]
    fn hex_wider_than_its_length_is_an_error() {
        // SVF Specification Rev E (from memory): the value may not exceed the length;
        // leading zeros are implied, so extra zero digits are fine.
        let Body::Scan(s) = one("SIR 4 TDI(000A);") else {
            panic!()
        };
        assert_eq!(s.tdi.unwrap().to_u64(), 0xA);
        assert_eq!(
            err("SIR 4 TDI(1A);"),
            (
                1,
                10,
                SvfErrorKind::HexTooWide {
                    field: "TDI",
                    length: 4
                }
            )
        );
        assert_eq!(
            err("SIR 3\n TDO(8);"),
            (
                2,
                5,
                SvfErrorKind::HexTooWide {
                    field: "TDO",
                    length: 3
                }
            )
        );
    }

    #[test]
    fn grammar_errors_are_located() {
        assert_eq!(
            err("SDR 8 TDI(1) TDI(2);"),
            (1, 14, SvfErrorKind::DuplicateField("TDI"))
        );
        assert_eq!(
            err("SDR 8 TDI(1G);"),
            (1, 12, SvfErrorKind::BadHexDigit('G'))
        );
        assert_eq!(err("SDR 8 TDI();"), (1, 10, SvfErrorKind::EmptyHex("TDI")));
        assert_eq!(
            err("\nSDR 8 TDI(1)"),
            (2, 1, SvfErrorKind::UnclosedStatement("SDR"))
        );
        assert_eq!(
            err("FOO 1;"),
            (1, 1, SvfErrorKind::UnknownStatement("FOO".into()))
        );
        assert_eq!(
            err("SDR 8.5 TDI(1);"),
            (
                1,
                5,
                SvfErrorKind::NotWhole {
                    what: "scan length",
                    found: "8.5".into()
                }
            )
        );
        assert!(matches!(
            err("SDR 99999999999 TDI(0);"),
            (1, 5, SvfErrorKind::TooLarge { .. })
        ));
        assert_eq!(
            err("ENDDR DRSHIFT;"),
            (
                1,
                7,
                SvfErrorKind::NotStable {
                    what: "the ENDDR state",
                    state: TapState::ShiftDr
                }
            )
        );
        assert_eq!(
            err("STATE IDLE FOO;"),
            (1, 12, SvfErrorKind::UnknownState("FOO".into()))
        );
        assert_eq!(
            err("STATE IDLE DRSELECT;"),
            (
                1,
                12,
                SvfErrorKind::NotStable {
                    what: "the last state of STATE",
                    state: TapState::SelectDrScan
                }
            )
        );
        assert!(matches!(
            err("STATE ;"),
            (
                1,
                7,
                SvfErrorKind::Unexpected {
                    expected: "a state name",
                    ..
                }
            )
        ));
    }

    #[test]
    fn pio_and_piomap_are_refused_at_their_place() {
        // SVF Specification Rev E (from memory): PIO and PIOMAP are parallel-vector statements.
        assert_eq!(
            err("SIR 2 TDI(1);\n  pio (HLUD);"),
            (2, 3, SvfErrorKind::NotSupported("PIO"))
        );
        assert_eq!(
            err("PIOMAP (IN A OUT B);"),
            (1, 1, SvfErrorKind::NotSupported("PIOMAP"))
        );
    }

    #[test]
    fn runtest_both_forms() {
        // SVF Specification Rev E (from memory), RUNTEST:
        // [run_state] run_count TCK|SCK [min_time SEC [MAXIMUM max_time SEC]] [ENDSTATE s]
        // [run_state] min_time SEC [MAXIMUM max_time SEC] [ENDSTATE s]
        let rt = |t: &str| match one(t) {
            Body::RunTest(rt) => rt,
            b => panic!("{b:?}"),
        };
        let a = rt("RUNTEST 100 TCK;");
        assert_eq!(a.run_state, None);
        assert_eq!(a.count, Some((100, Clock::Tck)));
        assert_eq!(a.min_seconds, None);
        let b = rt("runtest drpause 1E3 sck 1.0E-3 sec maximum 1 sec endstate idle;");
        assert_eq!(b.run_state, Some(TapState::PauseDr));
        assert_eq!(b.count, Some((1000, Clock::Sck)));
        assert_eq!(b.min_seconds, Some(1.0e-3));
        assert_eq!(b.max_seconds, Some(1.0));
        assert_eq!(b.end_state, Some(TapState::RunTestIdle));
        let c = rt("RUNTEST IDLE 5E-2 SEC ENDSTATE RESET;");
        assert_eq!(c.count, None);
        assert_eq!(c.min_seconds, Some(0.05));
        assert_eq!(c.end_state, Some(TapState::TestLogicReset));
        assert!(matches!(
            err("RUNTEST 1 SEC MAXIMUM 0.5 SEC;"),
            (1, 15, SvfErrorKind::MaximumBelowMinimum { .. })
        ));
        assert!(matches!(
            err("RUNTEST 10 HZ;"),
            (1, 12, SvfErrorKind::Unexpected { .. })
        ));
        assert!(matches!(
            err("RUNTEST 1.5 TCK;"),
            (1, 9, SvfErrorKind::NotWhole { .. })
        ));
        assert!(matches!(
            err("RUNTEST DRSHIFT 1 TCK;"),
            (1, 9, SvfErrorKind::NotStable { .. })
        ));
    }

    #[test]
    fn trst_and_frequency() {
        // SVF Specification Rev E (from memory): TRST ON|OFF|Z|ABSENT; FREQUENCY [cycles HZ].
        assert_eq!(one("TRST absent;"), Body::Trst(TrstMode::Absent));
        assert_eq!(one("trst Z;"), Body::Trst(TrstMode::Z));
        assert_eq!(one("FREQUENCY 10E6 HZ;"), Body::Frequency(Some(1.0e7)));
        assert_eq!(one("FREQUENCY;"), Body::Frequency(None));
        assert!(matches!(
            err("FREQUENCY 0 HZ;"),
            (1, 11, SvfErrorKind::NotPositive { .. })
        ));
        assert!(matches!(
            err("TRST MAYBE;"),
            (1, 6, SvfErrorKind::Unexpected { .. })
        ));
    }

    #[test]
    fn statements_know_their_line_and_part() {
        let s = parse_text("SIR 2 TDI(1);\n! part 2\n\n  SDR 4\n TDI(3);;\n").unwrap();
        assert_eq!(s.len(), 2);
        assert_eq!((s[0].line, s[0].place.offset, s[0].part), (1, 0, 0));
        assert_eq!((s[1].line, s[1].place.offset, s[1].part), (4, 26, 2));
        assert_eq!(s[1].keyword, "SDR");
    }
}
