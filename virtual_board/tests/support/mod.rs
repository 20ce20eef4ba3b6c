//! Helpers shared by the integration tests of the virtual board.

// Each test binary uses its own part of the helpers.
#[allow(dead_code)]
pub mod random_board;
