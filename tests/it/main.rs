//! Integration tests.

mod bad_input_cli;
mod board_cli;
mod cli;
mod compare_cli;
mod diagnose_cli;
mod import_cli;
mod messages_cli;
mod model_notes_cli;
mod play_cli;
mod run_cli;
mod serve_cli;
mod usb_cli;
