//! Raw command-line arguments, as clap reads them; nothing here touches a file.

use std::path::PathBuf;

use clap::{ArgAction, Parser, Subcommand};

/// A virtual IEEE 1149.1 board: read device descriptions, run and check test programs.
#[derive(Debug, Parser)]
#[command(name = "boardtwin", version, arg_required_else_help = true)]
pub struct Args {
    /// Log more on stderr: -v info, -vv debug, -vvv trace (RUST_LOG also works).
    #[arg(short, long, action = ArgAction::Count, global = true)]
    pub verbose: u8,

    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands; each one has its own file under `cmd/`.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Read a BSDL file and show what it says about the device.
    Device(DeviceArgs),
    /// Read a board file and show its TAP ports, devices and nets.
    Board(BoardArgs),
}

/// Arguments of `boardtwin board`.
#[derive(Debug, clap::Args)]
pub struct BoardArgs {
    /// The board file (YAML) to read.
    pub file: PathBuf,

    /// Print one JSON object instead of the text summary.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin device`.
#[derive(Debug, clap::Args)]
pub struct DeviceArgs {
    /// The BSDL file to read.
    pub file: PathBuf,

    /// Print one JSON object instead of the text summary.
    #[arg(long)]
    pub json: bool,
}
