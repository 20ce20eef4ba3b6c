//! Integration tests.

mod board_cli;
mod cli;
mod compare_cli;
mod diagnose_cli;
mod play_cli;
mod run_cli;
