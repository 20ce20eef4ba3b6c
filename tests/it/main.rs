//! Integration tests.

mod board_cli;
mod cli;
mod play_cli;
