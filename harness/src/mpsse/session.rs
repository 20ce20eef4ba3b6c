//! One session on a real board: the adapter, the safety gate and the board
//! file, and what happens before each program goes out (power sensed, TCK
//! for its FREQUENCY, the gate).

use std::io::Write;

use virtual_board::{LoadedBoard, TapTarget, TargetError};

use super::clock::{ClockError, TckSetting};
use super::safety::{HardwareGate, SafetyError};
use super::target::MpsseTarget;
use crate::program::{Action, Program};
use crate::run::{RunOptions, RunReport};

/// Why a program was not sent.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SessionError {
    /// The power-sense pin reads low.
    #[error("no target power sensed on TAP port {0}: the program is not sent (check the supply and the sense wiring)")]
    NoPower(String),
    /// The program's FREQUENCY cannot be made.
    #[error(transparent)]
    Clock(#[from] ClockError),
    /// The safety gate refused.
    #[error(transparent)]
    Safety(#[from] SafetyError),
    /// The adapter failed.
    #[error(transparent)]
    Target(#[from] TargetError),
}

/// A real board through an adapter.
pub struct HardwareSession {
    /// The adapter.
    pub target: MpsseTarget,
    gate: HardwareGate,
    design: LoadedBoard,
}

impl HardwareSession {
    /// A session on `target` for the board file `design`; `hazards_checked`
    /// is the user's `--i-have-checked`.
    pub fn new(target: MpsseTarget, design: LoadedBoard, hazards_checked: bool) -> Self {
        HardwareSession {
            target,
            gate: HardwareGate::new(hazards_checked),
            design,
        }
    }

    /// Before `program` goes to the real board: target power sensed (where
    /// a pin is mapped), TCK for its FREQUENCY ([`program_hz`]), then the
    /// safety gate (cautions on `notice`). Returns the program's run on the
    /// virtual board and the TCK setting.
    ///
    /// # Errors
    /// No power, a frequency the chip cannot make, the gate's refusal, a
    /// link failure.
    pub fn prepare(
        &mut self,
        program: &Program,
        notice: &mut dyn Write,
    ) -> Result<(RunReport, TckSetting), SessionError> {
        for (p, name) in self.target.port_names().iter().enumerate() {
            if self.target.power_sensed(p)? == Some(false) {
                return Err(SessionError::NoPower(name.clone()));
            }
        }
        // Every frequency the program names is one the chip can make,
        // before anything goes out; TCK starts at the slowest of them.
        for hz in program_frequencies(program) {
            TckSetting::for_hz(hz)?;
        }
        let setting = TckSetting::for_hz(program_hz(program))?;
        if setting != self.target.clock_setting() {
            self.target.set_clock(setting)?;
        }
        let run = self
            .gate
            .admit(&mut self.target, &self.design, program, notice)?;
        Ok((run, setting))
    }
}

/// The slowest TCK frequency `program` asks for ([`program_frequencies`]):
/// each is a highest allowed frequency (SVF Rev E FREQUENCY, from memory).
pub fn program_hz(program: &Program) -> f64 {
    program_frequencies(program)
        .into_iter()
        .reduce(f64::min)
        .unwrap_or(RunOptions::default().default_hz)
}

/// Every TCK frequency `program` runs at, in order: its own (else the
/// run's default), then each FREQUENCY step's (a FREQUENCY without a value
/// is the run's default again). The runner sets each on the target where
/// it stands.
pub fn program_frequencies(program: &Program) -> Vec<f64> {
    let default = RunOptions::default().default_hz;
    std::iter::once(program.frequency.unwrap_or(default))
        .chain(program.steps.iter().filter_map(|s| match s.action {
            Action::Frequency(hz) => Some(hz.unwrap_or(default)),
            _ => None,
        }))
        .collect()
}
