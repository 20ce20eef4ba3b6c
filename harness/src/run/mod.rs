//! Running programs: the runner, scan records (capture logs), failing bits
//! placed on the board, hazards, and the readable report.

mod failures;
mod hazard_book;
mod held;
mod record;
mod runner;
mod text;

pub use failures::{failures_of, locate, BitFailure};
pub use held::held_instructions;
pub use record::{Hazard, ScanRecord};
pub use runner::{RunError, RunOptions, RunReport, Runner, ScanResult};
pub use text::{hazard_columns, rate, seconds, statistics, verdict, RunText, StrictRunText};
