//! `Runner`: plays a `Program` on any `TapTarget`, TCK by TCK.

use std::time::Instant;

use serde::Serialize;
use tracing::{info, info_span};
use virtual_board::{
    Bits, BoardEvent, PathSegment, PortId, TapPins, TapState, TapTarget, TargetError,
};

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
}

impl Default for RunOptions {
    fn default() -> RunOptions {
        RunOptions { default_hz: 10e6 }
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
    /// The chain's registers, TDO end first, when the target can say.
    #[serde(skip)]
    pub layout: Option<Vec<PathSegment>>,
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
    /// The frequency the program time is reported at.
    pub tck_hz: f64,
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

    /// Seconds the program takes at its TCK frequency.
    pub fn program_seconds(&self) -> f64 {
        self.tck_cycles as f64 / self.tck_hz
    }
}

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
            options,
        }
    }

    /// The target.
    pub fn target(&mut self) -> &mut T {
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
        let hz = program.frequency.unwrap_or(self.options.default_hz);
        let mut report = RunReport {
            program: program.name.clone(),
            tck_hz: hz,
            ..RunReport::default()
        };
        let _ = self.target.take_events();
        for (i, step) in program.steps.iter().enumerate() {
            observe(i, self.target);
            let scans_before = report.scans.len();
            let result = self.step(i, step, hz, &mut report);
            let last_scan = report.scans.len().checked_sub(1);
            let this_scan =
                (report.scans.len() > scans_before).then(|| &report.scans[report.scans.len() - 1]);
            // The scan's mask, read once for all its events.
            let mask = this_scan.and_then(|s| {
                s.record
                    .mask
                    .as_deref()
                    .and_then(|m| Bits::from_hex(m, s.record.length))
            });
            let events: Vec<_> = self
                .target
                .take_events()
                .into_iter()
                .filter(|e| floating_capture_compared(e, this_scan, mask.as_ref()))
                .collect();
            for event in events {
                report.hazards.push(Hazard {
                    scan: last_scan,
                    event,
                });
            }
            if let Err(e) = result {
                report.error = Some(e.to_string());
                break;
            }
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

    fn clock(&mut self, port: PortId, tms: bool, tdi: bool) -> Result<Option<bool>, TargetError> {
        let pins = TapPins {
            tms,
            tdi,
            trst_n: self.trst_n[port],
        };
        let out = self.target.clock(port, pins)?;
        self.cycles += 1;
        self.states[port] = if pins.trst_n {
            self.states[port].next(tms)
        } else {
            TapState::TestLogicReset
        };
        Ok(out)
    }

    fn goto(&mut self, port: PortId, target: TapState) -> Result<(), TargetError> {
        for tms in self.states[port].path_to(target) {
            self.clock(port, tms, true)?;
        }
        Ok(())
    }

    fn step(
        &mut self,
        i: usize,
        step: &Step,
        hz: f64,
        report: &mut RunReport,
    ) -> Result<(), RunError> {
        let port = self.port(i, step)?;
        let origin = || {
            let file = step
                .origin
                .file
                .as_ref()
                .map(|p| p.display().to_string())
                .unwrap_or_default();
            format!("{file}:{} {}", step.origin.line, step.origin.note)
        };
        let wrap = |error: TargetError| RunError::Target {
            step: i,
            origin: origin(),
            error,
        };
        match &step.action {
            Action::ResetTms => {
                for _ in 0..5 {
                    self.clock(port, true, true).map_err(wrap)?;
                }
            }
            Action::Trst(mode) => {
                match mode {
                    TrstMode::On => self.trst_n[port] = false,
                    TrstMode::Off | TrstMode::Z => self.trst_n[port] = true,
                    TrstMode::Absent => {}
                }
                if *mode == TrstMode::On {
                    // TRST* acts without TCK; one period with it low shows it.
                    self.clock(port, true, true).map_err(wrap)?;
                }
            }
            Action::Goto { path, end } => {
                if path.is_empty() {
                    self.goto(port, *end).map_err(wrap)?;
                } else {
                    for &next in path {
                        let from = self.states[port];
                        let tms = [false, true]
                            .into_iter()
                            .find(|&t| from.next(t) == next)
                            .ok_or(RunError::BadPath {
                                step: i,
                                from,
                                to: next,
                            })?;
                        self.clock(port, tms, true).map_err(wrap)?;
                    }
                }
            }
            Action::Idle {
                state,
                cycles,
                min_seconds,
                end,
            } => {
                self.goto(port, *state).map_err(wrap)?;
                let by_time = min_seconds.map(|s| (s * hz).ceil() as u64).unwrap_or(0);
                let tms = *state == TapState::TestLogicReset;
                for _ in 0..(*cycles).max(by_time) {
                    self.clock(port, tms, true).map_err(wrap)?;
                }
                self.goto(port, *end).map_err(wrap)?;
            }
            Action::Scan(scan) => {
                let _span = info_span!("scan", port = %step.port, register = scan.kind.as_str(), bits = scan.tdi.len()).entered();
                let shift = match scan.kind {
                    ScanKind::Ir => TapState::ShiftIr,
                    ScanKind::Dr => TapState::ShiftDr,
                };
                self.goto(port, shift).map_err(wrap)?;
                let layout = self.target.scan_layout(port, scan.kind == ScanKind::Ir);
                let tdo = self.shift(port, scan).map_err(wrap)?;
                self.goto(port, scan.end).map_err(wrap)?;
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
        }
        Ok(())
    }

    fn shift(&mut self, port: PortId, scan: &Scan) -> Result<Bits, TargetError> {
        let n = scan.tdi.len();
        if n == 0 {
            return Ok(Bits::zeros(0));
        }
        let out = self.target.shift(port, &scan.tdi)?;
        self.cycles += n as u64;
        self.states[port] = self.states[port].next(true);
        Ok(out)
    }
}

/// A floating capture is a hazard only when the program compares that bit:
/// a masked bit read from a floating net harms nothing. Other events pass.
fn floating_capture_compared(
    event: &BoardEvent,
    scan: Option<&ScanResult>,
    mask: Option<&Bits>,
) -> bool {
    let BoardEvent::FloatingCapture { device, cell, .. } = event else {
        return true;
    };
    let Some(scan) = scan else { return false };
    let Some(layout) = &scan.layout else {
        return false;
    };
    let Some(mask) = mask else {
        return false;
    };
    let mut at = 0;
    for seg in layout {
        if &seg.device == device && seg.register == "BOUNDARY" {
            let bit = at + *cell as usize;
            return bit < mask.len() && mask.get(bit);
        }
        at += seg.length;
    }
    false
}
