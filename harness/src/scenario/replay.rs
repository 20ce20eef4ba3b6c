//! Replaying a scenario: load, inject, run, and check every expectation.

use std::collections::BTreeSet;
use std::fmt::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::Serialize;
use tracing::info_span;
use virtual_board::{
    load_board, read_yaml, Board, BoardErrorKind, DefectSpec, HeldInstruction, LoadedBoard,
    PathStep, TapTarget, YamlNode,
};

use super::error::{Place, ScenarioError, TargetError};
use super::{hazard_word, HazardSet, ProgramEntry, ScenarioFile, Verdict};
use crate::capture::{compare, read_real_capture, WireNames};
use crate::model_notes::{
    design_warnings, tidy_path, unmodelled_attributes, DesignWarning, UnmodelledAttributes,
};
use crate::program::native::{load_program, ProgramErrorKind};
use crate::run::{failures_of, held_instructions, RunOptions, RunReport, RunText, Runner};
use crate::vcd::{Cycle, Recorder};

/// What replaying one scenario gave.
#[derive(Clone, Debug, Serialize)]
pub struct ScenarioOutcome {
    /// The scenario file.
    pub path: PathBuf,
    /// Its description.
    pub description: String,
    /// What the scenario expects, in a few words.
    pub expected: String,
    /// What happened, in a few words.
    pub outcome: String,
    /// Every expectation that did not hold.
    pub mismatches: Vec<String>,
    /// Wall-clock seconds.
    pub seconds: f64,
    /// The readable report of each program run.
    #[serde(skip)]
    pub reports: Vec<String>,
    /// The DESIGN_WARNINGs of the board's devices, for the caller to show once.
    #[serde(skip)]
    pub design_warnings: Vec<DesignWarning>,
    /// The board's BSDL attributes the model keeps only by name, per file.
    #[serde(skip)]
    pub unmodelled: Vec<UnmodelledAttributes>,
    /// Each program's run, in order.
    #[serde(skip)]
    pub runs: Vec<RunReport>,
    /// Each program's recorded TCK periods, when the replay recorded them.
    #[serde(skip)]
    pub cycles: Vec<Option<Vec<Cycle>>>,
    /// The instruction each device holds after the last program, when the target can say.
    #[serde(skip)]
    pub held: Vec<HeldInstruction>,
    /// The board as designed.
    #[serde(skip)]
    pub board: Option<Board>,
    /// The defects the scenario injects.
    #[serde(skip)]
    pub defects: Vec<DefectSpec>,
}

/// Where a scenario's programs run: the in-process board, or a target
/// reached otherwise (a remote board).
pub trait TargetSource {
    /// The target for one scenario: `design` is the board as designed,
    /// `built` the same with `defects` (already checked against it).
    ///
    /// # Errors
    /// [`TargetError`]: the target cannot be had.
    fn open(
        &self,
        design: &LoadedBoard,
        built: &LoadedBoard,
        defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, TargetError>;
}

/// Scenarios run on a copy of the board built in process.
#[derive(Clone, Copy, Debug, Default)]
pub struct InProcess;

impl TargetSource for InProcess {
    fn open(
        &self,
        _design: &LoadedBoard,
        built: &LoadedBoard,
        _defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, TargetError> {
        Ok(Box::new(built.board.clone()))
    }
}

impl ScenarioOutcome {
    /// True when every expectation held.
    pub fn met(&self) -> bool {
        self.mismatches.is_empty()
    }

    /// The mismatches and the run reports, for a failing test.
    pub fn report(&self) -> String {
        let mut s = format!("{}\n{}\n", self.path.display(), self.description);
        for m in &self.mismatches {
            let _ = writeln!(s, "  mismatch: {m}");
        }
        for r in &self.reports {
            s.push('\n');
            s.push_str(r);
        }
        s
    }
}

/// Every scenario file (`*.yaml` with a top-level `description:` and
/// `programs:`) below `root`, sorted.
pub fn find_all(root: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![root.to_path_buf()];
    if root.is_file() {
        return vec![root.to_path_buf()];
    }
    while let Some(dir) = stack.pop() {
        let Ok(entries) = std::fs::read_dir(&dir) else {
            continue;
        };
        for e in entries.flatten() {
            let p = e.path();
            if p.is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|x| x == "yaml") && is_scenario(&p) {
                out.push(p);
            }
        }
    }
    out.sort();
    out
}

fn is_scenario(p: &Path) -> bool {
    std::fs::read_to_string(p)
        .map(|t| {
            t.lines().any(|l| l.starts_with("description:"))
                && t.lines().any(|l| l.starts_with("programs:"))
        })
        .unwrap_or(false)
}

/// Replays one scenario file on the in-process board.
///
/// The paths a scenario names (its board, programs and captures) are joined
/// to its folder and tidied (`cases/../boards/b.yaml` becomes
/// `boards/b.yaml`), in its messages and reports alike.
///
/// # Errors
/// [`ScenarioError`]: the scenario, its board, a defect or a program cannot
/// be read, located (bad input, not a mismatch).
pub fn replay(path: &Path) -> Result<ScenarioOutcome, ScenarioError> {
    replay_on(path, &InProcess)
}

/// Replays one scenario file on the targets `source` gives.
///
/// # Errors
/// As [`replay`]; the source cannot give a target.
pub fn replay_on(path: &Path, source: &dyn TargetSource) -> Result<ScenarioOutcome, ScenarioError> {
    replay_recorded(path, source, false)
}

/// [`replay_on`], recording every program's TCK periods when `record` is set (for the
/// waveforms of a report).
///
/// # Errors
/// As [`replay_on`].
pub fn replay_recorded(
    path: &Path,
    source: &dyn TargetSource,
    record: bool,
) -> Result<ScenarioOutcome, ScenarioError> {
    let shown = tidy_path(path);
    replay_shown(path, &shown, source, record)
}

/// [`replay_recorded`], with the log's `scenario` span naming the file as
/// `shown` (a caller that unpacked the scenarios into a temporary folder
/// shows them below it, as its reports do).
///
/// # Errors
/// As [`replay_on`].
pub fn replay_shown(
    path: &Path,
    shown: &Path,
    source: &dyn TargetSource,
    record: bool,
) -> Result<ScenarioOutcome, ScenarioError> {
    let _span = info_span!("scenario", file = %shown.display()).entered();
    let start = Instant::now();
    let text = std::fs::read_to_string(path).map_err(|e| ScenarioError::Read {
        path: path.to_path_buf(),
        why: e.to_string(),
    })?;
    let (file, tree): (ScenarioFile, YamlNode) =
        read_yaml(&text).map_err(|e| ScenarioError::Syntax {
            at: Place {
                path: path.to_path_buf(),
                line: e.span.line,
                column: e.span.column,
            },
            message: e.kind.to_string(),
        })?;
    // `FILE:line:col` of the node at `steps` (or of its nearest parent).
    let place = |steps: &[PathStep<'_>]| {
        let s = tree.span_at(steps);
        Place {
            path: path.to_path_buf(),
            line: s.line,
            column: s.column,
        }
    };
    let base = path.parent().unwrap_or(Path::new("."));
    let board_path = tidy_path(&base.join(&file.board));
    let good = load_board(&board_path).map_err(|e| match &*e.kind {
        BoardErrorKind::Io(why) => ScenarioError::BoardUnreadable {
            at: place(&[PathStep::Key("board")]),
            board: board_path.clone(),
            why: why.clone(),
        },
        _ => ScenarioError::Board(e),
    })?;
    let mut defects = file.defects.clone();
    let loaded = if file.defects.is_empty() {
        good.clone()
    } else {
        for d in &mut defects {
            if let Some(b) = &d.bsdl {
                let joined = base.join(b);
                d.bsdl =
                    Some(
                        std::path::absolute(&joined).map_err(|e| ScenarioError::DefectPath {
                            path: joined.clone(),
                            why: e.to_string(),
                        })?,
                    );
            }
        }
        let mut source = virtual_board::bsdl_files_beside(&board_path);
        good.with_defects(&defects, &mut source).map_err(|error| {
            let item = PathStep::Index(error.index.saturating_sub(1));
            ScenarioError::Defect {
                at: place(&[PathStep::Key("defects"), item]),
                error,
            }
        })?
    };
    let mut board = source
        .open(&good, &loaded, &defects)
        .map_err(ScenarioError::Target)?;
    let mut mismatches = Vec::new();
    let mut reports = Vec::new();
    let mut all: Vec<RunReport> = Vec::new();
    let mut expected_words = Vec::new();
    let mut recorded = Vec::new();
    for (k, entry) in file.programs.iter().enumerate() {
        let (prog_path, port, want) = match entry {
            ProgramEntry::File(p) => (p.clone(), None, None),
            ProgramEntry::Full(x) => (x.file.clone(), x.port.clone(), Some(x)),
        };
        let full = tidy_path(&base.join(&prog_path));
        // Programs are written for the board as designed.
        let program = load_program(&full, &good, port.as_deref()).map_err(|e| match &*e.kind {
            ProgramErrorKind::Io(why) => ScenarioError::ProgramUnreadable {
                at: place(&[PathStep::Key("programs"), PathStep::Index(k)]),
                program: full.clone(),
                why: why.clone(),
            },
            _ => ScenarioError::Program(e),
        })?;
        let mut report = if record {
            let mut recorder = Recorder::new(board);
            let report = Runner::new(&mut recorder, RunOptions::default()).run(&program);
            recorded.push(Some(recorder.take_cycles()));
            board = recorder.into_inner();
            report
        } else {
            recorded.push(None);
            Runner::new(&mut *board, RunOptions::default()).run(&program)
        };
        if !file.defects.is_empty() {
            let mut design = good.board.clone();
            report.use_layouts_of(&Runner::new(&mut design, RunOptions::default()).run(&program));
        }
        let name = full.display().to_string();
        let expect_fail = want.is_some_and(|w| w.result == Verdict::Fail);
        expected_words.push(if expect_fail { "fail" } else { "pass" });
        if let Some(e) = &report.error {
            mismatches.push(format!("{name}: the run stopped: {e}"));
        }
        if report.passed() == expect_fail {
            mismatches.push(format!(
                "{name}: expected to {}, but it {}",
                if expect_fail { "fail" } else { "pass" },
                if report.passed() { "passed" } else { "failed" }
            ));
        }
        if let Some(w) = want {
            if let Some(scans) = &w.failing_scans {
                let got: Vec<usize> = report
                    .scans
                    .iter()
                    .filter(|s| !s.record.passed)
                    .map(|s| s.record.index)
                    .collect();
                if &got != scans {
                    mismatches.push(format!(
                        "{name}: failing scans should be {}, are {}",
                        listed(scans),
                        listed(&got)
                    ));
                }
            }
            if let Some(nets) = &w.failing_nets {
                let got: BTreeSet<String> = report
                    .scans
                    .iter()
                    .flat_map(failures_of)
                    .filter_map(|b| b.net)
                    .collect();
                let want_set: BTreeSet<String> = nets.iter().cloned().collect();
                if got != want_set {
                    mismatches.push(format!(
                        "{name}: failing nets should be {}, are {}",
                        listed(&want_set),
                        listed(&got)
                    ));
                }
            }
            if let Some(c) = &w.compare {
                let wire = |k: &str| c.wires.get(k).cloned();
                let names = WireNames {
                    tck: wire("tck"),
                    tms: wire("tms"),
                    tdi: wire("tdi"),
                    tdo: wire("tdo"),
                    trst: wire("trst"),
                };
                let ports = match &c.port {
                    Some(p) => vec![p.clone()],
                    None => program.ports(),
                };
                let real_path = tidy_path(&base.join(&c.real));
                let (real, _) = read_real_capture(&real_path, &ports, &names, None)
                    .map_err(ScenarioError::Capture)?;
                let mut sim = report.clone();
                if real_path.extension().is_some_and(|e| e == "vcd") {
                    let recorded: BTreeSet<&str> = real.iter().map(|r| r.port.as_str()).collect();
                    sim.scans
                        .retain(|s| recorded.contains(s.record.port.as_str()));
                }
                let cmp = compare(&sim, &real);
                if !cmp.issues.is_empty() {
                    mismatches.push(format!(
                        "{name}: the capture's scans do not pair with the run's: {}",
                        listed(&cmp.issues)
                    ));
                }
                let got: BTreeSet<String> = cmp.bits.iter().filter_map(|b| b.net.clone()).collect();
                let want_set: BTreeSet<String> = c.differing_nets.iter().cloned().collect();
                if got != want_set {
                    mismatches.push(format!(
                        "{name}: nets differing from the capture should be {}, are {}",
                        listed(&want_set),
                        listed(&got)
                    ));
                }
                reports.push(cmp.to_string());
            }
        }
        reports.push(RunText(&report).to_string());
        all.push(report);
    }
    let kinds: BTreeSet<&'static str> = all
        .iter()
        .flat_map(|r| &r.hazards)
        .map(|h| hazard_word(h.event.kind()))
        .collect();
    for k in file.hazards_present.iter().map(|k| k.word()) {
        if !kinds.contains(k) {
            mismatches.push(format!(
                "hazard `{k}` should appear and did not (seen: {})",
                listed(&kinds)
            ));
        }
    }
    match &file.hazards_absent {
        Some(HazardSet::All) if !kinds.is_empty() => {
            mismatches.push(format!("no hazard should appear; seen: {}", listed(&kinds)));
        }
        Some(HazardSet::All) | None => {}
        Some(HazardSet::List(list)) => {
            for k in list.iter().map(|k| k.word()) {
                if kinds.contains(k) {
                    mismatches.push(format!("hazard `{k}` should not appear and did"));
                }
            }
        }
    }
    let failed = all.iter().filter(|r| !r.passed()).count();
    tracing::info!(met = mismatches.is_empty(), "scenario done");
    let outcome = if failed == 0 {
        "all passed".to_string()
    } else {
        format!("{failed} of {} failed", all.len())
    };
    Ok(ScenarioOutcome {
        path: path.to_path_buf(),
        description: file.description,
        expected: expected_words.join(", "),
        outcome,
        mismatches,
        seconds: start.elapsed().as_secs_f64(),
        reports,
        design_warnings: design_warnings(&good.board),
        unmodelled: unmodelled_attributes(&good.board),
        runs: all,
        cycles: recorded,
        held: held_instructions(&*board),
        board: Some(good.board.clone()),
        defects: file.defects.clone(),
    })
}

/// Items joined with `, ` (`none` for no items), for messages a person
/// reads: `9, 13`, not Rust's `[9, 13]` or `{"A1", "A2"}`.
fn listed<T: std::fmt::Display>(items: impl IntoIterator<Item = T>) -> String {
    let all: Vec<String> = items.into_iter().map(|i| i.to_string()).collect();
    if all.is_empty() {
        "none".to_string()
    } else {
        all.join(", ")
    }
}
