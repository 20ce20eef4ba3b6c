//! `write_svf`: the steps of one TAP port of a `Program`, as SVF text a tester can load.
//!
//! Every scan is written as the whole chain in SIR/SDR, with `HIR 0; HDR 0;
//! TIR 0; TDR 0;` once at the top so that headers or trailers left over in a
//! tester cannot add bits. TDI is always given, TDO and MASK together when
//! the scan is compared, SMASK when the scan has one; hex is upper case, and
//! no line is longer than SVF's 256 characters (SVF Specification Rev E, from memory).

use std::fmt::Write as _;

use virtual_board::{Bits, TapState};

use super::parser::svf_state_name;
use crate::program::{Action, Program, Scan, ScanKind, TrstMode};

/// SVF's line limit (SVF Specification Rev E, from memory: lines are at most 256 characters).
const LINE_LIMIT: usize = 256;

/// Indent of continuation lines.
const INDENT: &str = "  ";

/// Writes the steps of `port`, in order, as SVF.
///
/// A `! part K` comment line starts each run of this port's steps (K = 1,
/// 2, …): a new run begins wherever the program has steps on other ports
/// in between. `read_svf` gives these numbers back in `part_of_step`.
///
/// Things SVF cannot say are written as near as it can, with a comment:
/// `Action::ResetTms` as `STATE RESET;`, and a 0-bit scan is left out. A
/// one-state explicit path is written as its end state, which SVF reads as
/// the shortest path.
pub fn write_svf(program: &Program, port: &str) -> String {
    let mut w = Writer {
        out: String::new(),
        end_ir: TapState::RunTestIdle,
        end_dr: TapState::RunTestIdle,
        smask_sticky: [None, None],
    };
    w.comment(&format!("program: {}", one_line(&program.name)));
    w.comment(&format!("TAP port: {}", one_line(port)));
    w.comment("written by boardtwin: each SIR/SDR is a scan of the whole chain");
    if let Some(hz) = program.frequency {
        w.statement(vec![format!("FREQUENCY {hz:E} HZ;")]);
    }
    w.line("HIR 0; HDR 0; TIR 0; TDR 0;");
    let mut part = 0u32;
    let mut last: Option<usize> = None;
    for (i, step) in program.steps.iter().enumerate() {
        if step.port != port {
            continue;
        }
        if last.is_none_or(|l| i > l + 1) {
            part += 1;
            w.line(&format!("! part {part}"));
        }
        last = Some(i);
        w.action(&step.action);
    }
    w.out
}

/// A name or port on one comment line: control characters become spaces,
/// and it is cut to fit the line limit.
fn one_line(s: &str) -> String {
    let mut out = String::new();
    for c in s.chars().map(|c| if c.is_control() { ' ' } else { c }) {
        if out.len() + c.len_utf8() > LINE_LIMIT - 40 {
            break;
        }
        out.push(c);
    }
    out
}

struct Writer {
    out: String,
    /// The ENDIR/ENDDR a reader holds now.
    end_ir: TapState,
    end_dr: TapState,
    /// Per IR/DR: the length of the last SIR/SDR written and whether the
    /// SMASK a reader remembers for it is all ones.
    smask_sticky: [Option<(usize, bool)>; 2],
}

impl Writer {
    fn line(&mut self, s: &str) {
        self.out.push_str(s);
        self.out.push('\n');
    }

    fn comment(&mut self, s: &str) {
        self.line(&format!("! {s}"));
    }

    /// Writes a statement from its pieces (the last one ends with `;`),
    /// filling lines up to the limit. A piece of the form `NAME(hex)` or
    /// `NAME(hex);` longer than a line is broken inside the hex digits.
    fn statement(&mut self, pieces: Vec<String>) {
        let mut line = String::new();
        for piece in pieces {
            if INDENT.len() + piece.len() <= LINE_LIMIT {
                if line.is_empty() {
                    line = piece;
                } else if line.len() + 1 + piece.len() <= LINE_LIMIT {
                    line.push(' ');
                    line.push_str(&piece);
                } else {
                    self.line(&line);
                    line = format!("{INDENT}{piece}");
                }
                continue;
            }
            // A long hex field: `NAME(` on a fresh line, digits filling lines.
            let (head, rest) = piece.split_at(piece.find('(').map_or(0, |k| k + 1));
            let (digits, tail) = rest.split_at(rest.find(')').unwrap_or(rest.len()));
            if !line.is_empty() {
                self.line(&line);
            }
            line = format!("{INDENT}{head}");
            let mut digits = digits;
            while !digits.is_empty() {
                let room = LINE_LIMIT - line.len();
                if room == 0 {
                    self.line(&line);
                    line = INDENT.to_string();
                    continue;
                }
                let (now, later) = digits.split_at(room.min(digits.len()));
                line.push_str(now);
                digits = later;
            }
            if line.len() + tail.len() > LINE_LIMIT {
                self.line(&line);
                line = INDENT.to_string();
            }
            line.push_str(tail);
        }
        if !line.is_empty() {
            self.line(&line);
        }
    }

    fn action(&mut self, action: &Action) {
        match action {
            Action::ResetTms => {
                self.comment("five TCK with TMS high, to Test-Logic-Reset from any state");
                self.line("STATE RESET;");
            }
            Action::Trst(mode) => {
                let m = match mode {
                    TrstMode::On => "ON",
                    TrstMode::Off => "OFF",
                    TrstMode::Z => "Z",
                    TrstMode::Absent => "ABSENT",
                };
                self.line(&format!("TRST {m};"));
            }
            Action::Goto { path, end } => {
                let mut states: Vec<TapState> = path.clone();
                if states.last() != Some(end) {
                    states.push(*end);
                }
                let mut pieces: Vec<String> = std::iter::once("STATE".to_string())
                    .chain(states.iter().map(|s| svf_state_name(*s).to_string()))
                    .collect();
                if let Some(last) = pieces.last_mut() {
                    last.push(';');
                }
                self.statement(pieces);
            }
            Action::Idle {
                state,
                cycles,
                min_seconds,
                end,
            } => {
                let mut s = format!("RUNTEST {} {cycles} TCK", svf_state_name(*state));
                if let Some(t) = min_seconds {
                    let _ = write!(s, " {t:E} SEC");
                }
                let _ = write!(s, " ENDSTATE {};", svf_state_name(*end));
                self.line(&s);
            }
            Action::Scan(scan) => self.scan(scan),
            Action::Frequency(Some(hz)) => self.line(&format!("FREQUENCY {hz:E} HZ;")),
            Action::Frequency(None) => self.line("FREQUENCY;"),
        }
    }

    fn scan(&mut self, scan: &Scan) {
        let n = scan.tdi.len();
        let (keyword, end_keyword, k) = match scan.kind {
            ScanKind::Ir => ("SIR", "ENDIR", 0),
            ScanKind::Dr => ("SDR", "ENDDR", 1),
        };
        if n == 0 {
            self.comment(&format!(
                "a 0-bit {} scan to {} is left out: there is nothing to shift",
                scan.kind.as_str(),
                svf_state_name(scan.end)
            ));
            return;
        }
        let current_end = match scan.kind {
            ScanKind::Ir => &mut self.end_ir,
            ScanKind::Dr => &mut self.end_dr,
        };
        if *current_end != scan.end {
            *current_end = scan.end;
            let line = format!("{end_keyword} {};", svf_state_name(scan.end));
            self.line(&line);
        }
        // Every field is written `n` bits wide, whatever the program holds.
        let fit = |b: &Bits| b.slice(0, n).to_hex();
        let mut pieces = vec![format!("{keyword} {n}"), format!("TDI({})", fit(&scan.tdi))];
        if let Some(expect) = &scan.expect {
            pieces.push(format!("TDO({})", fit(expect)));
            pieces.push(format!("MASK({})", fit(&scan.mask)));
        }
        // SMASK is sticky at the same length (SVF Rev E, from memory): a scan
        // without one after one with a partial SMASK must say all ones.
        let remembered_ones = match self.smask_sticky[k] {
            Some((len, ones)) if len == n => ones,
            _ => true,
        };
        let smask = match &scan.smask {
            Some(s) => Some(s.slice(0, n)),
            None if !remembered_ones => Some(Bits::ones(n)),
            None => None,
        };
        let mut ones = remembered_ones;
        if let Some(s) = smask {
            ones = s.count_ones() == n;
            pieces.push(format!("SMASK({})", s.to_hex()));
        }
        self.smask_sticky[k] = Some((n, ones));
        if let Some(last) = pieces.last_mut() {
            last.push(';');
        }
        self.statement(pieces);
    }
}

#[cfg(test)]
mod tests {
    use super::super::read_svf;
    use super::*;
    use crate::program::{Origin, Step};
    use virtual_board::Rng;

    const STABLE: [TapState; 4] = [
        TapState::TestLogicReset,
        TapState::RunTestIdle,
        TapState::PauseDr,
        TapState::PauseIr,
    ];

    fn step(port: &str, action: Action) -> Step {
        Step {
            port: port.to_string(),
            action,
            origin: Origin::default(),
        }
    }

    fn below(rng: &mut Rng, n: u64) -> u64 {
        rng.next_u64() % n
    }

    fn random_bits(rng: &mut Rng, n: usize) -> Bits {
        let words = (0..n.div_ceil(64)).map(|_| rng.next_u64()).collect();
        Bits::from_words(words, n)
    }

    fn stable(rng: &mut Rng) -> TapState {
        STABLE[below(rng, 4) as usize]
    }

    /// A legal path of at least two states from `from` to a stable state.
    fn random_path(rng: &mut Rng, from: TapState) -> Vec<TapState> {
        let mut s = from;
        let mut path = Vec::new();
        for _ in 0..below(rng, 6) {
            s = s.next(rng.bit());
            path.push(s);
        }
        for tms in s.path_to(stable(rng)) {
            s = s.next(tms);
            path.push(s);
        }
        while path.len() < 2 {
            // Every stable state has a one-TCK loop onto itself (IEEE 1149.1 diagram).
            s = s.next(s == TapState::TestLogicReset);
            path.push(s);
        }
        path
    }

    /// A scan in the reader's canonical form: mask 0 when not compared,
    /// no all-ones SMASK.
    fn random_scan(rng: &mut Rng) -> Scan {
        let n = below(rng, 300) as usize;
        let (expect, mask) = if rng.bit() {
            let mask = match below(rng, 4) {
                0 => Bits::ones(n),
                1 => Bits::zeros(n),
                _ => random_bits(rng, n),
            };
            (Some(random_bits(rng, n)), mask)
        } else {
            (None, Bits::zeros(n))
        };
        let smask = if below(rng, 3) == 0 {
            Some(random_bits(rng, n)).filter(|s| s.count_ones() != n)
        } else {
            None
        };
        Scan {
            kind: if rng.bit() {
                ScanKind::Ir
            } else {
                ScanKind::Dr
            },
            tdi: random_bits(rng, n),
            expect,
            mask,
            smask,
            end: stable(rng),
        }
    }

    fn random_program(rng: &mut Rng) -> Program {
        let mut steps = Vec::new();
        // Where port P's TAP is, as the reader will track it.
        let mut current: Option<TapState> = None;
        for _ in 0..below(rng, 40) {
            let port = if below(rng, 4) == 0 { "Q" } else { "P" };
            let action = match below(rng, 10) {
                0..=3 => Action::Scan(random_scan(rng)),
                4 => Action::Goto {
                    path: vec![],
                    end: stable(rng),
                },
                5 => {
                    let from = current.unwrap_or(TapState::ALL[below(rng, 16) as usize]);
                    let path = random_path(rng, from);
                    let end = path[path.len() - 1];
                    Action::Goto { path, end }
                }
                6 | 7 => Action::Idle {
                    state: stable(rng),
                    cycles: match below(rng, 3) {
                        0 => 0,
                        1 => below(rng, 1000),
                        // Any count the readers accept (issue 19's limit).
                        _ => rng.next_u64() % (crate::program::MAX_IDLE_CYCLES + 1),
                    },
                    min_seconds: rng.bit().then(|| (1 + below(rng, 1 << 40)) as f64 / 3.0e9),
                    end: stable(rng),
                },
                _ => Action::Trst(
                    [TrstMode::On, TrstMode::Off, TrstMode::Z, TrstMode::Absent]
                        [below(rng, 4) as usize],
                ),
            };
            if port == "P" {
                current = match &action {
                    Action::Trst(TrstMode::On) => Some(TapState::TestLogicReset),
                    Action::Trst(_) | Action::Frequency(_) => current,
                    Action::Goto { end, .. } | Action::Idle { end, .. } => Some(*end),
                    Action::Scan(s) if s.tdi.is_empty() => current,
                    Action::Scan(s) => Some(s.end),
                    Action::ResetTms => Some(TapState::TestLogicReset),
                };
            }
            steps.push(step(port, action));
        }
        Program {
            name: "random".to_string(),
            frequency: rng.bit().then(|| (1 + below(rng, 1 << 36)) as f64 / 7.0),
            tck_stops_high: false,
            steps,
        }
    }

    /// The steps of P, without 0-bit scans, and the part each falls in.
    fn expected(p: &Program) -> (Vec<Action>, Vec<u32>) {
        let mut actions = Vec::new();
        let mut parts = Vec::new();
        let mut part = 0;
        let mut last: Option<usize> = None;
        for (i, s) in p.steps.iter().enumerate() {
            if s.port != "P" {
                continue;
            }
            if last.is_none_or(|l| i > l + 1) {
                part += 1;
            }
            last = Some(i);
            if matches!(&s.action, Action::Scan(scan) if scan.tdi.is_empty()) {
                continue;
            }
            // `STATE RESET;` reads back as the five-TCK TMS reset.
            let action = match &s.action {
                Action::Goto {
                    path,
                    end: TapState::TestLogicReset,
                } if path.is_empty() => Action::ResetTms,
                a => a.clone(),
            };
            actions.push(action);
            parts.push(part);
        }
        (actions, parts)
    }

    #[test]
    fn reading_what_was_written_gives_the_same_steps() {
        for seed in 0..600u64 {
            let mut rng = Rng::new(seed);
            let p = random_program(&mut rng);
            let text = write_svf(&p, "P");
            for line in text.lines() {
                assert!(
                    line.len() <= LINE_LIMIT,
                    "seed {seed}: {} chars",
                    line.len()
                );
            }
            let back =
                read_svf(&text, None, "P").unwrap_or_else(|e| panic!("seed {seed}: {e}\n{text}"));
            let (actions, parts) = expected(&p);
            let got: Vec<Action> = back
                .program
                .steps
                .iter()
                .map(|s| s.action.clone())
                .collect();
            assert_eq!(got, actions, "seed {seed}\n{text}");
            assert!(back.program.steps.iter().all(|s| s.port == "P"));
            assert_eq!(back.part_of_step, parts, "seed {seed}\n{text}");
            assert_eq!(back.program.frequency, p.frequency, "seed {seed}");
        }
    }

    fn scan(kind: ScanKind, tdi: Bits, end: TapState) -> Scan {
        let n = tdi.len();
        Scan {
            kind,
            tdi,
            expect: None,
            mask: Bits::zeros(n),
            smask: None,
            end,
        }
    }

    #[test]
    fn the_text_is_what_a_tester_expects() {
        let mut s = scan(ScanKind::Dr, Bits::from_u64(0xC5, 8), TapState::PauseDr);
        s.expect = Some(Bits::from_u64(0x0A, 8));
        s.mask = Bits::from_u64(0x0F, 8);
        let p = Program {
            name: "demo\nline".to_string(),
            frequency: Some(1.0e6),
            tck_stops_high: false,
            steps: vec![
                step("P", Action::Trst(TrstMode::Off)),
                step("P", Action::ResetTms),
                step("Q", Action::Trst(TrstMode::On)),
                step(
                    "P",
                    Action::Scan(scan(
                        ScanKind::Ir,
                        Bits::from_u64(0xA, 4),
                        TapState::RunTestIdle,
                    )),
                ),
                step("P", Action::Scan(s)),
                step(
                    "P",
                    Action::Idle {
                        state: TapState::RunTestIdle,
                        cycles: 100,
                        min_seconds: Some(1.0e-3),
                        end: TapState::RunTestIdle,
                    },
                ),
            ],
        };
        assert_eq!(
            write_svf(&p, "P"),
            "! program: demo line\n\
             ! TAP port: P\n\
             ! written by boardtwin: each SIR/SDR is a scan of the whole chain\n\
             FREQUENCY 1E6 HZ;\n\
             HIR 0; HDR 0; TIR 0; TDR 0;\n\
             ! part 1\n\
             TRST OFF;\n\
             ! five TCK with TMS high, to Test-Logic-Reset from any state\n\
             STATE RESET;\n\
             ! part 2\n\
             SIR 4 TDI(A);\n\
             ENDDR DRPAUSE;\n\
             SDR 8 TDI(C5) TDO(0A) MASK(0F);\n\
             RUNTEST IDLE 100 TCK 1E-3 SEC ENDSTATE IDLE;\n"
        );
        // `STATE RESET;` reads back as five TCK with TMS high (the reader's
        // choice for a state it may not know).
        let back = read_svf(&write_svf(&p, "P"), None, "P").unwrap();
        assert_eq!(back.program.steps[1].action, Action::ResetTms);
        assert_eq!(back.part_of_step, [1, 1, 2, 2, 2]);
    }

    #[test]
    fn long_scans_wrap_inside_the_hex() {
        let mut rng = Rng::new(7);
        let mut s = scan(
            ScanKind::Dr,
            random_bits(&mut rng, 5000),
            TapState::RunTestIdle,
        );
        s.expect = Some(random_bits(&mut rng, 5000));
        s.mask = random_bits(&mut rng, 5000);
        s.smask = Some(random_bits(&mut rng, 5000));
        let p = Program {
            steps: vec![step("P", Action::Scan(s.clone()))],
            ..Program::default()
        };
        let text = write_svf(&p, "P");
        assert!(text.lines().count() > 4 * 5000 / 4 / LINE_LIMIT);
        assert!(text.lines().all(|l| l.len() <= LINE_LIMIT));
        let back = read_svf(&text, None, "P").unwrap();
        assert_eq!(back.program.steps[0].action, Action::Scan(s));
    }

    #[test]
    fn a_scan_without_smask_after_a_partial_one_writes_all_ones() {
        let mut a = scan(ScanKind::Ir, Bits::from_u64(1, 4), TapState::RunTestIdle);
        a.smask = Some(Bits::from_u64(0x3, 4));
        let b = scan(ScanKind::Ir, Bits::from_u64(2, 4), TapState::RunTestIdle);
        let p = Program {
            steps: vec![
                step("P", Action::Scan(a.clone())),
                step("P", Action::Scan(b.clone())),
            ],
            ..Program::default()
        };
        let text = write_svf(&p, "P");
        assert!(
            text.contains("SIR 4 TDI(1) SMASK(3);\nSIR 4 TDI(2) SMASK(F);\n"),
            "{text}"
        );
        let back = read_svf(&text, None, "P").unwrap();
        let got: Vec<Action> = back.program.steps.into_iter().map(|s| s.action).collect();
        assert_eq!(got, [Action::Scan(a), Action::Scan(b)]);
    }

    #[test]
    fn a_one_state_path_reads_back_as_the_shortest_path() {
        // From Test-Logic-Reset, TMS=0 reaches Run-Test/Idle in one TCK (IEEE 1149.1
        // diagram), which is also the shortest path: the same clocks, a different form.
        let p = Program {
            steps: vec![
                step("P", Action::Trst(TrstMode::On)),
                step(
                    "P",
                    Action::Goto {
                        path: vec![TapState::RunTestIdle],
                        end: TapState::RunTestIdle,
                    },
                ),
            ],
            ..Program::default()
        };
        let back = read_svf(&write_svf(&p, "P"), None, "P").unwrap();
        assert_eq!(
            back.program.steps[1].action,
            Action::Goto {
                path: vec![],
                end: TapState::RunTestIdle
            }
        );
    }
}
