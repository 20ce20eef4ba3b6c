//! Safety before a program drives a real board: the usual cautions before
//! the first program that selects a boundary register (EXTEST drives the
//! board's nets), no program whose run on the virtual board raised hazards
//! unless the user says they checked it, and the chain (infrastructure)
//! test passing on the real board before any such program.

use std::io::Write;

use virtual_board::{Board, LoadedBoard, TapTarget};

use crate::generate::infrastructure_program;
use crate::program::Program;
use crate::run::{RunOptions, RunReport, Runner};

/// The usual cautions, shown once per session before the first program
/// that drives the board's nets (common practice; local codes and the
/// board maker's procedures come first).
pub const CAUTIONS: &str = "\
Before boundary-scan drives this board's pins through the adapter:
  - power the board from a current-limited bench supply set to its rated
    voltage, with the limit low enough that a short cannot burn a trace;
  - match the adapter's I/O voltage to the board's TAP voltage (a 3.3 V
    adapter on a 1.8 V TAP, or the other way round, can damage either);
  - connect ground first, and wear an ESD strap on a grounded mat;
  - follow the board maker's test procedures and your local electrical
    safety codes: they come before anything this tool says;
  - a program that passes on the virtual board can still fight a device
    the board file does not describe; watch the supply current.
";

/// Why a program was not run on the hardware.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum SafetyError {
    /// The program raised hazards on the virtual board.
    #[error("{program}: on the virtual board this program raised {}, first: {first}. Check them (boardtwin play --strict shows them all) and run again with --i-have-checked to drive the real board anyway", crate::count(*.count, "hazard"))]
    Hazards {
        /// The program.
        program: String,
        /// How many hazards.
        count: usize,
        /// The first, in words.
        first: String,
    },
    /// The program does not run to its end on the virtual board.
    #[error("{program}: the program does not run to its end on the virtual board ({error}); it is not sent to the real board")]
    VirtualError {
        /// The program.
        program: String,
        /// Why.
        error: String,
    },
    /// The chain test failed or could not run on the real board.
    #[error("the chain (infrastructure) test fails on the real board ({why}); no interconnect test is run until the chain works: check the TAP wiring, power and the board file")]
    Chain {
        /// What failed.
        why: String,
    },
    /// Writing the cautions failed.
    #[error("cannot show the cautions: {0}")]
    Notice(String),
}

/// The state of one session on real hardware.
#[derive(Clone, Debug, Default)]
pub struct HardwareGate {
    /// The user checked the virtual board's hazards (`--i-have-checked`).
    pub hazards_checked: bool,
    cautions_shown: bool,
    chain_passed: bool,
}

impl HardwareGate {
    /// A gate; `hazards_checked` lets programs with hazards through.
    pub fn new(hazards_checked: bool) -> HardwareGate {
        HardwareGate {
            hazards_checked,
            ..HardwareGate::default()
        }
    }

    /// True once the chain test has passed in this session.
    pub fn chain_passed(&self) -> bool {
        self.chain_passed
    }

    /// Runs `program` on a copy of the board as designed and decides
    /// whether it may go to `target`; before the first program that
    /// selects a boundary register, shows [`CAUTIONS`] on `notice` and runs
    /// the chain test on `target`. Returns the virtual board's run.
    ///
    /// # Errors
    /// Hazards on the virtual board (unless checked), a program that does
    /// not run there, a failing chain test.
    pub fn admit(
        &mut self,
        target: &mut dyn TapTarget,
        design: &LoadedBoard,
        program: &Program,
        notice: &mut dyn Write,
    ) -> Result<RunReport, SafetyError> {
        let mut board = design.board.clone();
        // Whether an instruction that selects a boundary register (EXTEST,
        // or to be safe any other) is in force at any step or at the end.
        let mut drives = false;
        let virtual_run = Runner::new(&mut board, RunOptions::default())
            .run_observed(program, &mut |_, b| drives = drives || selects_boundary(b));
        drives = drives || selects_boundary(&board);
        if let Some(error) = &virtual_run.error {
            return Err(SafetyError::VirtualError {
                program: program.name.clone(),
                error: error.clone(),
            });
        }
        if let Some(first) = virtual_run.hazards.first() {
            if !self.hazards_checked {
                return Err(SafetyError::Hazards {
                    program: program.name.clone(),
                    count: virtual_run.hazards.len(),
                    first: match first.scan {
                        Some(k) => format!("{} at scan {k}", first.event.kind()),
                        None => first.event.kind().to_string(),
                    },
                });
            }
        }
        if drives {
            if !self.cautions_shown {
                notice
                    .write_all(CAUTIONS.as_bytes())
                    .map_err(|e| SafetyError::Notice(e.to_string()))?;
                self.cautions_shown = true;
            }
            if !self.chain_passed {
                let hz = chain_test_hz(&design.board, crate::mpsse::program_hz(program));
                self.chain_test(target, design, hz)?;
            }
        }
        Ok(virtual_run)
    }

    /// The infrastructure test of the board file, on `target`, with TCK at
    /// most `hz` ([`chain_test_hz`]); once it has passed, later programs
    /// need not run it again.
    ///
    /// # Errors
    /// The test fails or does not run to its end.
    pub fn chain_test(
        &mut self,
        target: &mut dyn TapTarget,
        design: &LoadedBoard,
        hz: f64,
    ) -> Result<(), SafetyError> {
        let mut program = infrastructure_program(&design.board);
        program.frequency = Some(hz);
        let run = Runner::new(target, RunOptions::default()).run(&program);
        if let Some(e) = run.error {
            return Err(SafetyError::Chain { why: e });
        }
        if !run.passed() {
            let failing: Vec<String> = run
                .scans
                .iter()
                .filter(|s| !s.record.passed)
                .map(|s| {
                    format!(
                        "scan {} ({} {})",
                        s.record.index, s.record.port, s.record.register
                    )
                })
                .collect();
            return Err(SafetyError::Chain {
                why: format!("failing: {}", failing.join(", ")),
            });
        }
        self.chain_passed = true;
        Ok(())
    }
}

/// The TCK frequency for the chain test before a program that asks for at
/// most `hz`: that, or the slowest highest frequency a device of the board
/// allows (BSDL `TAP_SCAN_CLOCK`, IEEE 1149.1 Annex B, from memory), if
/// lower. The chain test must not fail for a clock the board cannot take.
pub fn chain_test_hz(board: &Board, hz: f64) -> f64 {
    (0..board.port_count())
        .flat_map(|p| board.tck_limits(p))
        .filter_map(|l| l.max_hz)
        .fold(hz, f64::min)
}

/// True when, on some TAP port, the instructions in force put a boundary
/// register between TDI and TDO: EXTEST (and, to be safe, any other
/// instruction that selects it) may drive the board's nets.
pub fn selects_boundary(board: &Board) -> bool {
    (0..board.port_count()).any(|p| {
        board
            .scan_layout(p, false)
            .is_some_and(|l| l.iter().any(|seg| seg.register == "BOUNDARY"))
    })
}
