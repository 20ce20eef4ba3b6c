//! `Runner`: plays a `Program` on any `TapTarget`, TCK by TCK.

use std::borrow::Cow;
use std::sync::Arc;
use std::time::Instant;

use serde::Serialize;
use tracing::{info, info_span};
use virtual_board::{
    Bits, BoardEvent, EventGroup, EventPlace, PathSegment, PortId, TapState, TapTarget, TargetError,
};

use super::hazard_book::{BoundaryBits, HazardBook};
use super::record::{Hazard, ScanRecord};
use crate::program::{Action, Program, Scan, ScanKind, Step, TrstMode};

/// Why a run stopped before its end.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum RunError {
    /// A step names a TAP port the board does not have.
    #[error("step {step}: the board has no TAP port `{port}` (it has: {known})")]
    UnknownPort {
        /// Step index.
        step: usize,
        /// Port named.
        port: String,
        /// Ports present.
        known: String,
    },
    /// An explicit state path with a step the TAP cannot take in one TCK.
    #[error("step {step}: {from} cannot reach {to} in one TCK")]
    BadPath {
        /// Step index.
        step: usize,
        /// From.
        from: TapState,
        /// To.
        to: TapState,
    },
    /// An idle step longer than the limit (a count, or a time at the
    /// program's frequency).
    #[error("step {step} ({origin}): {}", crate::program::idle_too_long(.cycles))]
    IdleTooLong {
        /// Step index.
        step: usize,
        /// Where the step came from.
        origin: String,
        /// The cycles asked for.
        cycles: u64,
    },
    /// The target refused (an instruction the model does not run, a link failure).
    #[error("step {step} ({origin}): {error}")]
    Target {
        /// Step index.
        step: usize,
        /// Where the step came from.
        origin: String,
        /// The target's error.
        error: TargetError,
    },
}

/// Settings of a run.
#[derive(Clone, Debug)]
pub struct RunOptions {
    /// TCK frequency used to convert minimum times to cycles, and to report
    /// program time, when the program gives none (common practice: 10 MHz).
    pub default_hz: f64,
    /// Ask the target for each scan's chain layout (the default): scan
    /// records carry it and a scan whose length differs from the chain's
    /// raises a hazard. A fault campaign's faulty runs, which keep only the
    /// captured bits and the verdicts, leave it off (placing every cell of a
    /// layout costs more than the scans on a board of long registers).
    pub layouts: bool,
}

impl Default for RunOptions {
    fn default() -> RunOptions {
        RunOptions {
            default_hz: 10e6,
            layouts: true,
        }
    }
}

/// A scan record with the layout of the chain at the time, for mapping bits.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ScanResult {
    /// The record (the capture-log line).
    #[serde(flatten)]
    pub record: ScanRecord,
    /// Where the step came from: file and line.
    pub origin: String,
    /// The chain's registers, TDO end first, when the target can say;
    /// shared by every scan of the same port under the same instructions.
    #[serde(skip)]
    pub layout: Option<Arc<[PathSegment]>>,
}

/// What a run did.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct RunReport {
    /// Program name.
    pub program: String,
    /// Every scan, in order.
    pub scans: Vec<ScanResult>,
    /// Hazards seen.
    pub hazards: Vec<Hazard>,
    /// TCK cycles clocked, all ports.
    pub tck_cycles: u64,
    /// The highest TCK frequency the program clocked at (its only one when
    /// it sets one frequency), Hz.
    pub tck_hz: f64,
    /// Seconds the program takes at its TCK frequencies, each FREQUENCY
    /// applying from where it stands.
    pub seconds: f64,
    /// Wall-clock seconds the run took.
    pub wall_seconds: f64,
    /// The error that stopped the run early, if any.
    pub error: Option<String>,
}

impl RunReport {
    /// True when the run finished and every scan passed.
    pub fn passed(&self) -> bool {
        self.error.is_none() && self.scans.iter().all(|s| s.record.passed)
    }

    /// Scans that failed.
    pub fn failed_scans(&self) -> usize {
        self.scans.iter().filter(|s| !s.record.passed).count()
    }

    /// Places failing bits by the board as designed: takes the chain
    /// layouts from a run of the same program on the good board. On a
    /// faulty board the registers really in the path can differ (a broken
    /// chain leaves devices out of step), and a repair needs the bits named
    /// as the program meant them.
    pub fn use_layouts_of(&mut self, good: &RunReport) {
        for (s, g) in self.scans.iter_mut().zip(&good.scans) {
            if s.record.port == g.record.port && s.record.length == g.record.length {
                s.layout.clone_from(&g.layout);
            }
        }
    }

    /// Seconds the program takes at its TCK frequencies.
    pub fn program_seconds(&self) -> f64 {
        self.seconds
    }
}

/// A scan's layout as the target gave it (`None`: it cannot say).
type Layout = Option<Arc<[PathSegment]>>;

/// Plays programs on a target, keeping each port's TAP state.
///
/// The runner tracks the state itself from the TMS it sends, as a tester
/// does; it starts every port in Test-Logic-Reset (the state after power-up).
pub struct Runner<'t, T: TapTarget + ?Sized> {
    target: &'t mut T,
    names: Vec<String>,
    states: Vec<TapState>,
    trst_n: Vec<bool>,
    cycles: u64,
    options: RunOptions,
    /// The TCK frequency in force, Hz.
    hz: f64,
    /// Per port: the frequency its devices' limits were last checked at.
    hz_checked: Vec<Option<f64>>,
    /// Cycles and frequency of the stretch since the last change, for time.
    stretch: (u64, f64),
    /// Per port: the layouts of a DR (0) and an IR (1) scan as the target
    /// last gave them; the DR one is forgotten whenever the instructions
    /// may change (Update-IR, Test-Logic-Reset, TRST*).
    layouts: Vec<[Option<Layout>; 2]>,
    /// The hazards of the run under way, by place.
    hazards: HazardBook,
}

impl<'t, T: TapTarget + ?Sized> Runner<'t, T> {
    /// A runner over `target`.
    pub fn new(target: &'t mut T, options: RunOptions) -> Runner<'t, T> {
        let names = target.port_names();
        let n = names.len();
        Runner {
            target,
            names,
            states: vec![TapState::TestLogicReset; n],
            trst_n: vec![true; n],
            cycles: 0,
            hz: options.default_hz,
            hz_checked: vec![None; n],
            stretch: (0, options.default_hz),
            layouts: vec![[None, None]; n],
            hazards: HazardBook::default(),
            options,
        }
    }

    /// The target. Whatever is done to it directly may change its
    /// instructions, so the runner asks for its scan layouts anew.
    pub fn target(&mut self) -> &mut T {
        self.layouts.fill([None, None]);
        self.target
    }

    /// Runs the whole program; stops at the first target error (kept in the report).
    pub fn run(&mut self, program: &Program) -> RunReport {
        self.run_observed(program, &mut |_, _| {})
    }

    /// [`Runner::run`], calling `observe(step, target)` before each step:
    /// a scan step's Capture-DR sees the board as `observe` does.
    pub fn run_observed(
        &mut self,
        program: &Program,
        observe: &mut dyn FnMut(usize, &T),
    ) -> RunReport {
        let _span = info_span!("program", name = %program.name).entered();
        let start = Instant::now();
        let start_cycles = self.cycles;
        self.set_hz(program.frequency, &mut RunReport::default());
        // Each program is checked against the devices' TCK limits anew.
        self.hz_checked.fill(None);
        let scans = program.steps.iter();
        let scans = scans
            .filter(|s| matches!(s.action, Action::Scan(_)))
            .count();
        let mut report = RunReport {
            program: program.name.clone(),
            scans: Vec::with_capacity(scans),
            ..RunReport::default()
        };
        self.stretch = (self.cycles, self.hz);
        self.target.drain_event_groups(&mut |_| {});
        self.hazards = HazardBook::default();
        // Every frequency the program asks for is one the target can make,
        // before anything is clocked; then TCK for its start.
        if let Err(e) = self
            .frequencies_possible(program)
            .and_then(|()| self.target.set_tck(self.hz).map_err(clock_error(None)))
        {
            report.error = Some(e.to_string());
            report.tck_hz = self.hz;
            report.wall_seconds = start.elapsed().as_secs_f64();
            return report;
        }
        for (i, step) in program.steps.iter().enumerate() {
            observe(i, self.target);
            let scans_before = report.scans.len();
            let result = self.step(i, step, program, &mut report);
            let last_scan = report.scans.len().checked_sub(1);
            let this_scan = (report.scans.len() > scans_before)
                .then(|| report.scans.last())
                .flatten();
            // The scan's mask, read once for all its events: the step's own
            // when the record carries it as it is (no hex round trip).
            let mask = this_scan.and_then(|s| {
                s.record.mask.as_ref()?;
                match &step.action {
                    Action::Scan(sc) if sc.mask.len() == s.record.length => {
                        Some(Cow::Borrowed(&sc.mask))
                    }
                    _ => s
                        .record
                        .mask
                        .as_deref()
                        .and_then(|m| Bits::from_hex(m, s.record.length))
                        .map(Cow::Owned),
                }
            });
            let mut boundary = this_scan
                .and_then(|s| s.layout.as_deref())
                .map(BoundaryBits::new);
            let hazards = &mut report.hazards;
            let book = &mut self.hazards;
            self.target.drain_event_groups(&mut |g| match g {
                EventGroup::One(e) => {
                    let place = e.place();
                    // A floating capture is a hazard only when the program
                    // compares that bit: a masked bit read from a floating
                    // net harms nothing.
                    let floating = match place {
                        Some(p) => p.kind == EventPlace::FLOATING_CAPTURE,
                        None => e.floating_capture().is_some(),
                    };
                    if floating {
                        let compared = match (&mut boundary, mask.as_deref()) {
                            (Some(b), Some(m)) => b
                                .bit(e, place)
                                .is_some_and(|bit| bit < m.len() && m.get(bit)),
                            _ => false,
                        };
                        if !compared {
                            return;
                        }
                    }
                    book.note(hazards, last_scan, e, place);
                }
                // The same, a device's cells in one loop.
                EventGroup::Floating(f) => {
                    let (Some(b), Some(m)) = (&mut boundary, mask.as_deref()) else {
                        return;
                    };
                    let id = f.device_id();
                    let Some(start) = b.start(Some(id), || f.device()) else {
                        return;
                    };
                    for k in 0..f.len() {
                        let cell = f.cell(k);
                        let bit = start + cell as usize;
                        if bit < m.len() && m.get(bit) {
                            book.note_floating(hazards, last_scan, id, cell, || f.event(k));
                        }
                    }
                }
            });
            if let Err(e) = result {
                report.error = Some(e.to_string());
                break;
            }
        }
        // Moves a target held go out now: the board is where the report
        // says when the run returns.
        if let Err(e) = self.target.flush() {
            if report.error.is_none() {
                report.error = Some(format!("at the end of the program: {e}"));
            }
        }
        self.end_stretch(&mut report);
        if report.tck_hz == 0.0 {
            report.tck_hz = self.hz; // nothing clocked: the frequency in force
        }
        report.tck_cycles = self.cycles - start_cycles;
        report.wall_seconds = start.elapsed().as_secs_f64();
        report
    }

    fn port(&self, i: usize, step: &Step) -> Result<PortId, RunError> {
        self.names
            .iter()
            .position(|n| n == &step.port)
            .ok_or_else(|| RunError::UnknownPort {
                step: i,
                port: step.port.clone(),
                known: self.names.join(", "),
            })
    }

    /// Refuses a program that asks for a TCK frequency the target cannot
    /// make: its own (or the run's default) and each FREQUENCY step's.
    fn frequencies_possible(&self, program: &Program) -> Result<(), RunError> {
        self.target
            .tck_for(program.frequency.unwrap_or(self.options.default_hz))
            .map_err(clock_error(None))?;
        for (i, step) in program.steps.iter().enumerate() {
            if let Action::Frequency(hz) = step.action {
                self.target
                    .tck_for(hz.unwrap_or(self.options.default_hz))
                    .map_err(clock_error(Some((i, step))))?;
            }
        }
        Ok(())
    }

    /// A new TCK frequency from here on (`None`: the run's default).
    fn set_hz(&mut self, hz: Option<f64>, report: &mut RunReport) {
        self.end_stretch(report);
        self.hz = hz.unwrap_or(self.options.default_hz);
        self.stretch = (self.cycles, self.hz);
    }

    /// Adds the time of the stretch clocked at one frequency.
    fn end_stretch(&mut self, report: &mut RunReport) {
        let (from, hz) = self.stretch;
        let n = self.cycles - from;
        if n > 0 {
            report.seconds += n as f64 / hz;
            report.tck_hz = report.tck_hz.max(hz);
        }
        self.stretch = (self.cycles, self.hz);
    }

    /// Checks the port's devices against the frequency in force, once per
    /// frequency: TAP_SCAN_CLOCK's maximum and stop state (IEEE 1149.1
    /// BSDL, Annex B, from memory).
    fn check_tck(&mut self, port: PortId, program: &Program, report: &mut RunReport) {
        if self.hz_checked[port] == Some(self.hz) {
            return;
        }
        self.hz_checked[port] = Some(self.hz);
        let limits = self.target.tck_limits(port);
        let scan = report.scans.len().checked_sub(1);
        let name = &self.names[port];
        let slowest = limits
            .iter()
            .filter_map(|l| l.max_hz.map(|m| (m, l)))
            .min_by(|a, b| a.0.total_cmp(&b.0));
        if let Some((max, l)) = slowest {
            if self.hz > max {
                report.hazards.push(Hazard::once(
                    scan,
                    BoardEvent::TckTooFast {
                        port: name.clone(),
                        cycle: self.cycles,
                        hz: self.hz.round() as u64,
                        max_hz: max.round() as u64,
                        device: l.device.clone(),
                        part: l.part.clone(),
                    },
                ));
            }
        }
        if program.tck_stops_high {
            for l in limits.iter().filter(|l| l.stop_low_only) {
                report.hazards.push(Hazard::once(
                    scan,
                    BoardEvent::TckStopNotAllowed {
                        port: name.clone(),
                        cycle: self.cycles,
                        device: l.device.clone(),
                        part: l.part.clone(),
                    },
                ));
            }
        }
    }

    /// The layout of a scan on `port` now: the target's answer, asked once
    /// per port and instruction set (building it places every cell).
    fn layout(&mut self, port: PortId, ir: bool) -> Layout {
        if !self.options.layouts {
            return None;
        }
        let slot = &mut self.layouts[port][usize::from(ir)];
        if slot.is_none() {
            *slot = Some(self.target.scan_layout(port, ir).map(Arc::from));
        }
        slot.clone().flatten()
    }

    fn goto(&mut self, port: PortId, target: TapState) -> Result<(), TargetError> {
        let path = self.states[port].tms_path(target);
        self.moves(port, &path)
    }

    /// TCK periods with TDI high and TDO not read, through
    /// [`TapTarget::moves`] (a target may hold them until its next read);
    /// the state and the count follow once the target has taken them.
    fn moves(&mut self, port: PortId, tms: &[bool]) -> Result<(), TargetError> {
        if tms.is_empty() {
            return Ok(());
        }
        self.target.moves(port, tms, self.trst_n[port])?;
        for &t in tms {
            self.advance(port, t, self.trst_n[port]);
        }
        Ok(())
    }

    /// The runner's own count and TAP state after one period.
    fn advance(&mut self, port: PortId, tms: bool, trst_n: bool) {
        self.cycles += 1;
        self.states[port] = if trst_n {
            self.states[port].next(tms)
        } else {
            TapState::TestLogicReset
        };
        if matches!(
            self.states[port],
            TapState::UpdateIr | TapState::TestLogicReset
        ) {
            self.layouts[port][0] = None;
        }
    }

    fn step(
        &mut self,
        i: usize,
        step: &Step,
        program: &Program,
        report: &mut RunReport,
    ) -> Result<(), RunError> {
        let port = self.port(i, step)?;
        if let Action::Frequency(hz) = step.action {
            self.set_hz(hz, report);
            return self
                .target
                .set_tck(self.hz)
                .map_err(clock_error(Some((i, step))));
        }
        let hz = self.hz;
        if !matches!(step.action, Action::Trst(_)) {
            self.check_tck(port, program, report);
        }
        let origin = || origin_of(step);
        let wrap = |error: TargetError| RunError::Target {
            step: i,
            origin: origin(),
            error,
        };
        match &step.action {
            Action::ResetTms => self.moves(port, &[true; 5]).map_err(wrap)?,
            Action::Trst(mode) => {
                // TRST* is asynchronous: only the line changes, no TCK edge,
                // so devices without TRST* on a mixed port keep their state
                // (IEEE 1149.1 clause 6, from memory). From Test-Logic-Reset
                // and Run-Test/Idle alike the next path's first TMS-low edge
                // brings both kinds to Run-Test/Idle, in step again.
                let asserted = match mode {
                    TrstMode::On => true,
                    TrstMode::Off | TrstMode::Z => false,
                    TrstMode::Absent => return Ok(()),
                };
                self.target.set_trst(port, asserted).map_err(wrap)?;
                self.trst_n[port] = !asserted;
                self.layouts[port][0] = None;
                if asserted {
                    self.states[port] = TapState::TestLogicReset;
                }
            }
            Action::Goto { path, end } => {
                if path.is_empty() {
                    self.goto(port, *end).map_err(wrap)?;
                } else {
                    // The periods up to the first step the TAP cannot take
                    // go out; that step is refused.
                    let mut from = self.states[port];
                    let mut tms = Vec::with_capacity(path.len());
                    let mut bad = None;
                    for &next in path {
                        match [false, true].into_iter().find(|&t| from.next(t) == next) {
                            Some(t) => {
                                tms.push(t);
                                from = next;
                            }
                            None => {
                                bad = Some(RunError::BadPath {
                                    step: i,
                                    from,
                                    to: next,
                                });
                                break;
                            }
                        }
                    }
                    self.moves(port, &tms).map_err(wrap)?;
                    if let Some(e) = bad {
                        return Err(e);
                    }
                }
            }
            Action::Idle {
                state,
                cycles,
                min_seconds,
                end,
            } => {
                let by_time = min_seconds.map_or(0, |s| cycles_for(s, hz));
                let count = (*cycles).max(by_time);
                if count > crate::program::MAX_IDLE_CYCLES {
                    return Err(RunError::IdleTooLong {
                        step: i,
                        origin: origin(),
                        cycles: count,
                    });
                }
                self.goto(port, *state).map_err(wrap)?;
                // A stable state with TMS holding it: the target may count
                // the periods instead of clocking them one by one.
                let tms = *state == TapState::TestLogicReset;
                self.target.idle(port, tms, count).map_err(wrap)?;
                self.cycles += count;
                self.goto(port, *end).map_err(wrap)?;
            }
            Action::Scan(scan) => {
                let _span = info_span!("scan", port = %step.port, register = scan.kind.as_str(), bits = scan.tdi.len()).entered();
                // A whole scan: through Capture, and from a Pause state
                // through the Update the last scan deferred.
                let entry = self.states[port].scan_entry_path(scan.kind == ScanKind::Ir);
                self.moves(port, &entry).map_err(wrap)?;
                let layout = self.layout(port, scan.kind == ScanKind::Ir);
                if let Some(event) = length_hazard(&step.port, self.cycles, scan, &layout, &origin)
                {
                    report
                        .hazards
                        .push(Hazard::once(Some(report.scans.len()), event));
                }
                let tdo = self.shift(port, scan).map_err(wrap)?;
                let record = ScanRecord::new(
                    report.scans.len(),
                    &step.port,
                    scan.kind,
                    &scan.tdi,
                    &tdo,
                    scan.expect.as_ref(),
                    &scan.mask,
                );
                info!(passed = record.passed, tdo = %record.tdo, "scan done");
                report.scans.push(ScanResult {
                    record,
                    origin: origin(),
                    layout,
                });
            }
            Action::Frequency(_) => {} // taken above: it clocks nothing
        }
        Ok(())
    }

    /// The scan's shift and its moves to `scan.end`, as one call of
    /// [`TapTarget::shift_then_move`] (one exchange with an adapter).
    fn shift(&mut self, port: PortId, scan: &Scan) -> Result<Bits, TargetError> {
        let n = scan.tdi.len();
        if n == 0 {
            self.goto(port, scan.end)?;
            return Ok(Bits::zeros(0));
        }
        // Exit1-xR after the last bit; then the way to the end state.
        let exit1 = self.states[port].next(true);
        let after = exit1.tms_path(scan.end);
        let out = if self.trst_n[port] {
            self.target.shift_then_move(port, &scan.tdi, &after)?
        } else {
            // TRST* held low: the moves carry it (the reference's order).
            let out = self.target.shift(port, &scan.tdi)?;
            self.target.moves(port, &after, false)?;
            out
        };
        self.cycles += n as u64;
        self.states[port] = exit1;
        for &t in after.iter() {
            self.advance(port, t, self.trst_n[port]);
        }
        Ok(out)
    }
}

/// Where a step came from: `file:line note`. Built once per scan, so put
/// together by hand rather than through the formatting machinery.
fn origin_of(step: &Step) -> String {
    let o = &step.origin;
    let file = o.file.as_deref().map(|p| p.to_string_lossy());
    let file = file.as_deref().unwrap_or("");
    let mut out = String::with_capacity(file.len() + o.note.len() + 12);
    out.push_str(file);
    out.push(':');
    push_decimal(&mut out, o.line);
    out.push(' ');
    out.push_str(&o.note);
    out
}

/// Appends `n` in decimal.
fn push_decimal(out: &mut String, n: u32) {
    let mut digits = [0u8; 10];
    let mut at = digits.len();
    let mut n = n;
    loop {
        at -= 1;
        digits[at] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    for &d in &digits[at..] {
        out.push(char::from(d));
    }
}

/// A target's refusal of a TCK frequency as a run error: at a FREQUENCY
/// step, or (`None`) for the program's own frequency.
fn clock_error(at: Option<(usize, &Step)>) -> impl Fn(TargetError) -> RunError + '_ {
    move |error| match at {
        Some((step, s)) => RunError::Target {
            step,
            origin: origin_of(s),
            error,
        },
        None => RunError::Target {
            step: 0,
            origin: "the program's frequency".into(),
            error,
        },
    }
}

/// TCK periods at `hz` that last at least `seconds`: the next whole number,
/// except where the product is a whole number but for rounding (1E-5 s at
/// 1 MHz is 10 periods, not the 11 that `ceil(10.000000000000002)` gives).
fn cycles_for(seconds: f64, hz: f64) -> u64 {
    let x = seconds * hz;
    let nearest = x.round();
    if (x - nearest).abs() <= 1e-9 * nearest.max(1.0) {
        nearest as u64
    } else {
        x.ceil() as u64
    }
}

/// A scan whose length is not the present path's: the commonest error in
/// real programs (common practice). Expectations all X hide it from the
/// compare, so it is a hazard of its own. Not raised for a longer scan that
/// compares bits past the path's end: a deliberate chain-length check.
fn length_hazard(
    port: &str,
    cycle: u64,
    scan: &Scan,
    layout: &Option<Arc<[PathSegment]>>,
    origin: &dyn Fn() -> String,
) -> Option<BoardEvent> {
    let layout = layout.as_ref()?;
    let path_length: usize = layout.iter().map(|s| s.length).sum();
    let n = scan.tdi.len();
    if path_length == n {
        return None;
    }
    // A longer scan that compares what comes back out after the path (its
    // own TDI bits, flushed through) measures the chain on purpose: the
    // chain-length check of an infrastructure test (common practice).
    let measures =
        n > path_length && scan.expect.is_some() && (path_length..n).any(|i| scan.mask.get(i));
    if measures {
        return None;
    }
    // The layout is TDO end first; people read a chain from TDI.
    let path: Vec<String> = layout
        .iter()
        .rev()
        .map(|s| format!("{} ({}) {} {}", s.device, s.part, s.register, s.length))
        .collect();
    Some(BoardEvent::ScanLength {
        port: port.to_string(),
        cycle,
        register: scan.kind.as_str().to_string(),
        origin: origin().trim().to_string(),
        given: scan.tdi.len(),
        path_length,
        path: path.join(", "),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::program::Origin;

    /// The hand-built origin equals what the formatting machinery writes.
    #[test]
    fn origin_is_file_line_and_note() {
        for (file, line, note) in [
            (Some("programs/a.svf"), 0, "SDR"),
            (None, 7, ""),
            (Some("b c.yaml"), 10, "pattern 3"),
            (Some("x.yaml"), u32::MAX, "n"),
        ] {
            let step = Step {
                port: "P".into(),
                action: Action::ResetTms,
                origin: Origin {
                    file: file.map(Into::into),
                    line,
                    note: note.into(),
                    vector: None,
                },
            };
            let want = format!("{}:{line} {note}", file.unwrap_or(""));
            assert_eq!(origin_of(&step), want);
        }
    }
}
