//! Native test programs: YAML with our own keys, several TAP ports, SVF
//! files included per port, and net-level patterns.
//!
//! ```yaml
//! name: infrastructure, J1_MAIN
//! frequency: 10000000          # Hz, optional
//! steps:
//!   - { port: J1_MAIN, reset: tms }             # or: reset: trst
//!   - { port: J1_MAIN, goto: idle }             # SVF state names: reset idle drpause irpause …
//!   - { port: J1_MAIN, idle: 100 }              # TCK cycles in Run-Test/Idle
//!   - port: J1_MAIN
//!     scan_ir: { tdi: "0xFFF", length: 12, expect: "XXXXX0001X01", end: idle }
//!   - port: J1_MAIN
//!     scan_dr: { tdi: "0x0", length: 64, expect: "0x25508A0127420A01", mask: "0xFFFFFFFF0FFFFFFF" }
//!   - { port: J2_AUX, svf: infra_j2.svf, part: 1 }  # an SVF file for one port (a part of it)
//!   - patterns: { … }                            # net-level patterns (see `net_level`)
//! ```
//!
//! Bit strings are `0x` hex (with `length`) or `0`/`1`/`X` digits, most
//! significant first: the rightmost bit is shifted first and ends nearest TDO.
//! In `expect`, an X bit is not compared.

use std::path::{Path, PathBuf};

use serde::Deserialize;
use virtual_board::{read_yaml, Bits, LoadedBoard, PathStep, Span, TapState, YamlNode};

use super::bits_text::parse_bits;
use super::net_level::{compile_patterns, PatternSet};
use super::svf::{read_svf, SvfError};
use super::PatternError;
use super::{
    check_frequency, idle_too_long, Action, Origin, Program, Scan, ScanKind, Step, TrstMode,
    MAX_IDLE_CYCLES,
};

/// A native program file as written.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProgramFile {
    /// Name.
    #[serde(default)]
    pub name: String,
    /// TCK frequency in Hz.
    #[serde(default)]
    pub frequency: Option<f64>,
    /// Where the tester stops TCK between periods: `low` (the default) or `high`.
    #[serde(default)]
    pub tck_stop: Option<String>,
    /// Steps.
    pub steps: Vec<StepEntry>,
}

/// One step as written: a TAP port and exactly one action key.
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct StepEntry {
    /// TAP port (not needed for `patterns`).
    #[serde(default)]
    pub port: Option<String>,
    /// `tms` or `trst`.
    #[serde(default)]
    pub reset: Option<String>,
    /// TRST* line: `on`, `off`, `z`, `absent`.
    #[serde(default)]
    pub trst: Option<String>,
    /// A stable state to go to.
    #[serde(default)]
    pub goto: Option<String>,
    /// TCK cycles in Run-Test/Idle.
    #[serde(default)]
    pub idle: Option<u64>,
    /// An IR scan.
    #[serde(default)]
    pub scan_ir: Option<ScanEntry>,
    /// A DR scan.
    #[serde(default)]
    pub scan_dr: Option<ScanEntry>,
    /// An SVF file for `port`, relative to this file.
    #[serde(default)]
    pub svf: Option<PathBuf>,
    /// Only this part (`! part N` comments) of the SVF file.
    #[serde(default)]
    pub part: Option<u32>,
    /// Net-level patterns.
    #[serde(default)]
    pub patterns: Option<PatternSet>,
    /// The TCK frequency from this step on: Hz, or `full` (the tester's full speed).
    #[serde(default)]
    pub frequency: Option<serde_yaml::Value>,
}

/// A scan as written.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScanEntry {
    /// Bits to shift in.
    pub tdi: String,
    /// Length in bits (required for hex).
    #[serde(default)]
    pub length: Option<usize>,
    /// Bits expected (X = not compared).
    #[serde(default)]
    pub expect: Option<String>,
    /// Compare mask (1 = compare), in addition to X bits of `expect`.
    #[serde(default)]
    pub mask: Option<String>,
    /// End state (default idle).
    #[serde(default)]
    pub end: Option<String>,
}

/// What is wrong with a native program.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum ProgramErrorKind {
    /// The file could not be read.
    #[error("cannot read the file: {0}")]
    Io(String),
    /// YAML syntax or a key of the wrong shape.
    #[error("{0}")]
    Yaml(String),
    /// A step with no action key, or more than one.
    #[error("step {0} must have exactly one of reset, trst, goto, idle, scan_ir, scan_dr, svf, patterns, frequency")]
    StepShape(usize),
    /// A step without the port it needs.
    #[error("step {0} needs a `port`")]
    NoPort(usize),
    /// An SVF file for a board of several TAP ports, with no port given.
    #[error("an SVF file drives one TAP port and this board has {}: give the port (--port {}) or name it in the file's header (`! TAP port: NAME`)", .0.join(", "), .0[0])]
    SvfPortNeeded(Vec<String>),
    /// A value that does not read.
    #[error("step {step}: {message}")]
    Value {
        /// Step index (from 1).
        step: usize,
        /// What is wrong.
        message: String,
    },
    /// An SVF file (the program, or one a step includes) failed to read;
    /// the `ProgramError` around it carries that file and place, so only
    /// the message is shown here.
    #[error("{}", .0.kind)]
    Svf(Box<SvfError>),
    /// A net-level pattern problem.
    #[error("step {step}: {error}")]
    Pattern {
        /// Step index (from 1).
        step: usize,
        /// What is wrong.
        error: PatternError,
    },
    /// TRST* asserted on a TAP port the board wires no TRST* line to: the
    /// TAP would not reset while the runner takes it as reset.
    #[error("TAP port `{0}` has no TRST* line on this board (`trst: false`): its TAP would not reset; use a TMS reset")]
    NoTrst(String),
}

/// A native-program error with its place.
///
/// Shown as `path:line:col: message`, or `path: message` when the error is
/// about the file as a whole (no place in it: line 0).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct ProgramError {
    /// The program file.
    pub path: PathBuf,
    /// Where in it.
    pub span: Span,
    /// What is wrong.
    pub kind: Box<ProgramErrorKind>,
}

impl std::fmt::Display for ProgramError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.span.line == 0 {
            write!(f, "{}: {}", self.path.display(), self.kind)
        } else {
            write!(
                f,
                "{}:{}:{}: {}",
                self.path.display(),
                self.span.line,
                self.span.column,
                self.kind
            )
        }
    }
}

/// Parses a state name as SVF writes it (RESET, IDLE, DRPAUSE …), any case.
pub fn parse_state(name: &str) -> Option<TapState> {
    use TapState::*;
    Some(match name.to_ascii_uppercase().as_str() {
        "RESET" => TestLogicReset,
        "IDLE" => RunTestIdle,
        "DRSELECT" => SelectDrScan,
        "DRCAPTURE" => CaptureDr,
        "DRSHIFT" => ShiftDr,
        "DREXIT1" => Exit1Dr,
        "DRPAUSE" => PauseDr,
        "DREXIT2" => Exit2Dr,
        "DRUPDATE" => UpdateDr,
        "IRSELECT" => SelectIrScan,
        "IRCAPTURE" => CaptureIr,
        "IRSHIFT" => ShiftIr,
        "IREXIT1" => Exit1Ir,
        "IRPAUSE" => PauseIr,
        "IREXIT2" => Exit2Ir,
        "IRUPDATE" => UpdateIr,
        _ => return None,
    })
}

/// Reads a program: `.svf` (one TAP port: the board's first, or `svf_port`)
/// or native `.yaml`.
///
/// # Errors
/// A located error in the program (or an included file).
pub fn load_program(
    path: &Path,
    board: &LoadedBoard,
    svf_port: Option<&str>,
) -> Result<Program, ProgramError> {
    let text = std::fs::read_to_string(path).map_err(|e| ProgramError {
        path: path.to_path_buf(),
        span: Span::default(),
        kind: Box::new(ProgramErrorKind::Io(e.to_string())),
    })?;
    let is_svf = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("svf"));
    if is_svf {
        let names = virtual_board::TapTarget::port_names(&board.board);
        let port = match svf_port.map(str::to_string).or_else(|| header_port(&text)) {
            Some(p) => p,
            None if names.len() > 1 => {
                return Err(ProgramError {
                    path: path.to_path_buf(),
                    span: Span::default(),
                    kind: Box::new(ProgramErrorKind::SvfPortNeeded(names)),
                })
            }
            None => names.first().cloned().unwrap_or_default(),
        };
        let svf = read_svf(&text, Some(path), &port).map_err(|e| svf_error(path, e))?;
        let mut program = svf.program;
        if program.name.is_empty() {
            program.name = path.display().to_string();
        }
        check_trst(&program, board)?;
        return Ok(program);
    }
    parse_native(&text, path, board)
}

/// The TAP port an SVF file names in its header: a `! TAP port: NAME` (or
/// `// TAP port: NAME`) comment line before the first statement, as the
/// SVF writer puts it.
fn header_port(text: &str) -> Option<String> {
    for line in text.lines().map(str::trim) {
        if line.is_empty() {
            continue;
        }
        let Some(comment) = line.strip_prefix('!').or_else(|| line.strip_prefix("//")) else {
            return None; // the first statement ends the header
        };
        if let Some(name) = comment.trim().strip_prefix("TAP port:") {
            let name = name.trim();
            return (!name.is_empty()).then(|| name.to_string());
        }
    }
    None
}

fn svf_error(path: &Path, e: SvfError) -> ProgramError {
    ProgramError {
        path: path.to_path_buf(),
        span: e.span,
        kind: Box::new(ProgramErrorKind::Svf(Box::new(e))),
    }
}

/// [`load_program`] for native text (`path` names it and anchors includes).
///
/// # Errors
/// As [`load_program`].
pub fn parse_native(text: &str, path: &Path, board: &LoadedBoard) -> Result<Program, ProgramError> {
    let err = |span: Span, kind: ProgramErrorKind| ProgramError {
        path: path.to_path_buf(),
        span,
        kind: Box::new(kind),
    };
    let (file, tree): (ProgramFile, YamlNode) =
        read_yaml(text).map_err(|e| err(e.span, ProgramErrorKind::Yaml(e.kind.to_string())))?;
    // Step n (from 1) is where the reader saw item n-1 of `steps`.
    let step_span = |n: usize| tree.span_at(&[PathStep::Key("steps"), PathStep::Index(n - 1)]);
    if let Some(hz) = file.frequency {
        check_frequency(hz).map_err(|m| {
            let at = tree.span_at(&[PathStep::Key("frequency")]);
            err(at, ProgramErrorKind::Yaml(m.to_string()))
        })?;
    }
    let base = path.parent().unwrap_or(Path::new("."));
    let tck_stops_high = match file.tck_stop.as_deref() {
        None | Some("low") => false,
        Some("high") => true,
        Some(other) => {
            let at = tree.span_at(&[PathStep::Key("tck_stop")]);
            return Err(err(
                at,
                ProgramErrorKind::Yaml(format!(
                    "tck_stop is `low` or `high`, not `{}`",
                    virtual_board::clip(other)
                )),
            ));
        }
    };
    let mut program = Program {
        name: file.name.clone(),
        frequency: file.frequency,
        tck_stops_high,
        steps: Vec::new(),
    };
    if program.name.is_empty() {
        program.name = path.display().to_string();
    }
    for (k, entry) in file.steps.iter().enumerate() {
        let n = k + 1;
        let at = step_span(n);
        let origin = Origin {
            file: Some(path.to_path_buf()),
            line: at.line,
            note: String::new(),
            vector: None,
        };
        let value = |message: String| err(at, ProgramErrorKind::Value { step: n, message });
        let actions = [
            entry.reset.is_some(),
            entry.trst.is_some(),
            entry.goto.is_some(),
            entry.idle.is_some(),
            entry.scan_ir.is_some(),
            entry.scan_dr.is_some(),
            entry.svf.is_some(),
            entry.patterns.is_some(),
            entry.frequency.is_some(),
        ];
        if actions.iter().filter(|a| **a).count() != 1 {
            return Err(err(at, ProgramErrorKind::StepShape(n)));
        }
        if let Some(patterns) = &entry.patterns {
            let steps = compile_patterns(patterns, board)
                .map_err(|error| err(at, ProgramErrorKind::Pattern { step: n, error }))?;
            program.steps.extend(steps.into_iter().map(|mut s| {
                s.origin.file = Some(path.to_path_buf());
                s.origin.line = at.line;
                s
            }));
            continue;
        }
        let port = entry
            .port
            .clone()
            .ok_or_else(|| err(at, ProgramErrorKind::NoPort(n)))?;
        if board.board.port_index(&port).is_none() {
            let known: Vec<&str> = board
                .board
                .ports()
                .iter()
                .map(|p| p.name.as_str())
                .collect();
            return Err(value(format!(
                "the board has no TAP port `{port}` (it has: {})",
                known.join(", ")
            )));
        }
        let mut push = |action: Action, note: &str| {
            program.steps.push(Step {
                port: port.clone(),
                action,
                origin: Origin {
                    note: note.to_string(),
                    ..origin.clone()
                },
            })
        };
        if let Some(how) = &entry.reset {
            match how.as_str() {
                "tms" => push(Action::ResetTms, "reset"),
                "trst" => {
                    push(Action::Trst(TrstMode::On), "reset");
                    push(Action::Trst(TrstMode::Off), "reset");
                }
                other => return Err(value(format!("reset is `tms` or `trst`, not `{other}`"))),
            }
        } else if let Some(mode) = &entry.trst {
            let mode = match mode.to_ascii_lowercase().as_str() {
                "on" => TrstMode::On,
                "off" => TrstMode::Off,
                "z" => TrstMode::Z,
                "absent" => TrstMode::Absent,
                other => {
                    return Err(value(format!(
                        "trst is on, off, z or absent, not `{other}`"
                    )))
                }
            };
            push(Action::Trst(mode), "trst");
        } else if let Some(state) = &entry.goto {
            let end = parse_state(state)
                .filter(|s| s.is_stable())
                .ok_or_else(|| {
                    value(format!(
                        "`{state}` is not a stable state (reset, idle, drpause, irpause)"
                    ))
                })?;
            push(
                Action::Goto {
                    path: Vec::new(),
                    end,
                },
                "goto",
            );
        } else if let Some(hz) = &entry.frequency {
            let hz = match hz {
                serde_yaml::Value::String(w) if w == "full" => None,
                v => Some(
                    v.as_f64()
                        .ok_or_else(|| value("frequency is a number of Hz or `full`".into()))
                        .and_then(|f| check_frequency(f).map_err(|e| value(e.to_string())))?,
                ),
            };
            push(Action::Frequency(hz), "frequency");
        } else if let Some(cycles) = entry.idle {
            if cycles > MAX_IDLE_CYCLES {
                return Err(value(idle_too_long(cycles)));
            }
            push(
                Action::Idle {
                    state: TapState::RunTestIdle,
                    cycles,
                    min_seconds: None,
                    end: TapState::RunTestIdle,
                },
                "idle",
            );
        } else if let Some(s) = entry.scan_ir.as_ref().or(entry.scan_dr.as_ref()) {
            let kind = if entry.scan_ir.is_some() {
                ScanKind::Ir
            } else {
                ScanKind::Dr
            };
            let scan = scan_of(s, kind).map_err(value)?;
            push(Action::Scan(scan), kind.as_str());
        } else if let Some(file) = &entry.svf {
            let full = base.join(file);
            let svf_text = std::fs::read_to_string(&full)
                .map_err(|e| value(format!("{}: {e}", full.display())))?;
            let svf = read_svf(&svf_text, Some(&full), &port).map_err(|e| svf_error(&full, e))?;
            let keep = |i: usize| {
                entry
                    .part
                    .is_none_or(|p| svf.part_of_step.get(i) == Some(&p))
            };
            let before = program.steps.len();
            program.steps.extend(
                svf.program
                    .steps
                    .into_iter()
                    .enumerate()
                    .filter(|(i, _)| keep(*i))
                    .map(|(_, s)| s),
            );
            if entry.part.is_some() && program.steps.len() == before {
                return Err(value(format!(
                    "{} has no part {}",
                    full.display(),
                    entry.part.unwrap_or(0)
                )));
            }
            // The file's FREQUENCY before its first step holds from where
            // the whole file is included (its steps carry any later one). A
            // part of a file is a piece of an export, whose replay program
            // gives the frequency itself.
            if let Some(hz) = svf.program.frequency {
                if entry.part.is_none() {
                    program.steps.insert(
                        before,
                        Step {
                            port: port.clone(),
                            action: Action::Frequency(Some(hz)),
                            origin: origin.clone(),
                        },
                    );
                }
            }
        }
    }
    check_trst(&program, board)?;
    Ok(program)
}

/// Refuses TRST* asserted (`reset: trst`, `trst: on`, SVF `TRST ON`) on a
/// TAP port without a TRST* line, placed at the step's line.
fn check_trst(program: &Program, board: &LoadedBoard) -> Result<(), ProgramError> {
    let wired = |port: &str| {
        board
            .board
            .ports()
            .iter()
            .find(|p| p.name == port)
            .is_none_or(|p| p.trst_wired)
    };
    let Some(step) = program
        .steps
        .iter()
        .find(|s| s.action == Action::Trst(TrstMode::On) && !wired(&s.port))
    else {
        return Ok(());
    };
    let path = step.origin.file.clone().unwrap_or_default();
    // The column of the step's first character on its line.
    let column = std::fs::read_to_string(&path)
        .ok()
        .and_then(|text| {
            let line = text
                .lines()
                .nth(step.origin.line.checked_sub(1)? as usize)?;
            Some(line.chars().take_while(|c| c.is_whitespace()).count() as u32 + 1)
        })
        .unwrap_or(1);
    Err(ProgramError {
        path,
        span: Span {
            line: step.origin.line,
            column,
            ..Span::default()
        },
        kind: Box::new(ProgramErrorKind::NoTrst(step.port.clone())),
    })
}

/// A serde_yaml message without the ` at line L column C` it ends with: the
/// error already starts with its place.
fn scan_of(s: &ScanEntry, kind: ScanKind) -> Result<Scan, String> {
    let tdi = parse_bits(&s.tdi, s.length).map_err(|e| e.to_string())?;
    let len = tdi.bits.len();
    let expect = s
        .expect
        .as_deref()
        .map(|e| parse_bits(e, Some(len)))
        .transpose()
        .map_err(|e| e.to_string())?;
    let extra = s
        .mask
        .as_deref()
        .map(|m| parse_bits(m, Some(len)))
        .transpose()
        .map_err(|e| e.to_string())?;
    let mask = match (&expect, &extra) {
        (Some(e), Some(m)) => and(&e.mask, &m.bits),
        (Some(e), None) => e.mask.clone(),
        (None, _) => Bits::zeros(len),
    };
    let end = match &s.end {
        Some(name) => parse_state(name)
            .filter(|s| s.is_stable())
            .ok_or_else(|| format!("`{name}` is not a stable state"))?,
        None => TapState::RunTestIdle,
    };
    Ok(Scan {
        kind,
        tdi: tdi.bits,
        expect: expect.map(|e| e.bits),
        mask,
        smask: None,
        end,
    })
}

fn and(a: &Bits, b: &Bits) -> Bits {
    Bits::from_bools(
        &a.to_bools()
            .iter()
            .zip(b.to_bools())
            .map(|(x, y)| *x && y)
            .collect::<Vec<_>>(),
    )
}
