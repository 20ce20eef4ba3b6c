//! Diagnosis: from what a failing board returned to a repair instruction.
//!
//! # Layout
//! - `chain`: `locate_chain_break`, where an instruction-register scan says a
//!   scan chain is broken (`ChainVerdict`).
//! - `dictionary`: `diagnose`, fault-dictionary diagnosis of a failing capture.

mod chain;
mod dictionary;

pub use chain::{locate_chain_break, locate_chain_break_shifted, ChainVerdict};
pub use dictionary::{diagnose, real_response, repair_words, Candidate, Diagnosis};
