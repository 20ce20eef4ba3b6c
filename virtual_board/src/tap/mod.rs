//! The TAP controller's state machine (IEEE 1149.1 clause 6).

mod state;

pub use state::{TapState, TmsPath};
