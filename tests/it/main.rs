//! Integration tests.

mod board_cli;
mod cli;
