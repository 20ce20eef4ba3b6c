//! Diagnosis: from what a failing board returned to a repair instruction.
//!
//! # Layout
//! - `chain`: `locate_chain_break`, where an instruction-register scan says a
//!   scan chain is broken (`ChainVerdict`).
//! - `recording`: the capture laid against the good run (`Recorded`), which
//!   scans a recording of part of a board holds.
//! - `good_run`: the good run, with the runner's layout of each scan.
//! - `net_view`: each net's code over the vectors of a good run (`NetView`).
//! - `syndrome`: interconnect diagnosis from each net's captured sequence.
//! - `device`: wrong or missing devices from IDCODE and IR-capture mismatches.
//! - `dictionary`: the fault dictionary, for everything else.
//! - `verify`: each explanation simulated on the board before it is reported.
//! - `minimal`: multi-defect explanations reduced to the defects they need.
//! - `follow_up`: the follow-up test that tells an ambiguity group apart;
//!   `follow_up_text`: what it reads under each explanation, and its text.
//! - `words`: repair words, pins to probe, neighbouring pins.
//! - `diagnosis`: `diagnose` and `diagnose_runs` (a test and its follow-up
//!   diagnosed as one), which put them together (`Diagnosis`).

mod chain;
mod device;
mod diagnosis;
mod dictionary;
mod error;
mod follow_up;
mod follow_up_text;
mod good_run;
mod minimal;
mod net_view;
mod recording;
mod syndrome;
mod verify;
mod words;

pub use chain::{locate_chain_break, locate_chain_break_shifted, ChainVerdict};
pub use device::{DeviceFinding, IdcodeValue};
pub use diagnosis::{diagnose, diagnose_runs, Candidate, DiagnoseOptions, Diagnosis, Explanation};
pub use error::DiagnoseError;
pub use follow_up::{follow_up, FollowUp, Reading, EXHAUSTIVE};
pub use good_run::good_run;
pub use recording::{Recorded, UnrecordedScan};
pub use words::{neighbours, probes, repair_words, Probe};
