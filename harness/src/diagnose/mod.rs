//! Diagnosis: from what a failing board returned to a repair instruction.
//!
//! # Layout
//! - `chain`: `locate_chain_break`, where an instruction-register scan says a
//!   scan chain is broken (`ChainVerdict`).

mod chain;

pub use chain::{locate_chain_break, locate_chain_break_shifted, ChainVerdict};
