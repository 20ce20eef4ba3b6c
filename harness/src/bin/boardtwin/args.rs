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
    /// Run a test program (SVF or native YAML) on the virtual board.
    Play(PlayArgs),
    /// Replay scenarios (one file, or every scenario below a folder; none:
    /// the bundled demo) and check what each must give.
    Run(RunArgs),
    /// Run a program on the virtual board and compare it, scan by scan, with
    /// a real tester's capture (a capture log or a logic-analyzer VCD).
    Compare(CompareArgs),
    /// Simulate every single fault of the board's fault universe against a
    /// program, and say which it detects.
    Campaign(CampaignArgs),
    /// Join the JSON results of campaign shards.
    CampaignMerge(MergeArgs),
    /// Name the defect that explains a failing board's capture, in repair words.
    Diagnose(DiagnoseArgs),
    /// Write a test program for a board: the interconnect test of a method
    /// (every scan-accessible net coded), or the infrastructure test.
    Generate(GenerateArgs),
}

/// Arguments of `boardtwin generate`.
#[derive(Debug, clap::Args)]
pub struct GenerateArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// Interconnect method: counting, modified-counting, true-complement,
    /// walking-ones or walking-zeros.
    #[arg(
        long,
        value_name = "METHOD",
        required_unless_present = "infrastructure"
    )]
    pub method: Option<String>,

    /// Write the program (native YAML) to this file instead of stdout.
    #[arg(short = 'o', long = "output", value_name = "PROGRAM.yaml")]
    pub output: Option<PathBuf>,

    /// Also compile the program against the board and write it as SVF, one
    /// file per TAP port, into this folder (with a replay program).
    #[arg(long, value_name = "DIR")]
    pub svf: Option<PathBuf>,

    /// Write the infrastructure test (resets, IR capture, BYPASS and IR
    /// path lengths, blind IDCODE) instead of the interconnect test.
    #[arg(long)]
    pub infrastructure: bool,
}

/// Arguments of `boardtwin diagnose`.
#[derive(Debug, clap::Args)]
pub struct DiagnoseArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// The program the tester ran (it must pass on the good board). Give
    /// it again for a follow-up test run after it: the programs are
    /// diagnosed as one, each with its own `--real`.
    #[arg(long, required = true)]
    pub program: Vec<PathBuf>,

    /// The failing board's capture: a capture log (`.jsonl`) or a VCD
    /// (`.vcd`); one per `--program`, in the same order.
    #[arg(long, required = true)]
    pub real: Vec<PathBuf>,

    /// When several explanations fit exactly, write the follow-up test that
    /// tells them apart to FILE (a native program, as `generate` writes).
    #[arg(long, value_name = "FILE")]
    pub follow_up: Option<PathBuf>,

    /// TAP port of an SVF program or of a VCD recording.
    #[arg(long, value_name = "PORT")]
    pub port: Option<String>,

    /// VCD wire names.
    #[command(flatten)]
    pub wires: WireArgs,

    /// Fault classes of the fault dictionary, used when the syndrome of an
    /// interconnect test does not explain the capture (comma-separated, as
    /// for `campaign`). Default: all but any-short.
    #[arg(long, value_delimiter = ',')]
    pub classes: Vec<String>,

    /// Threads (default: all cores).
    #[arg(long, short = 'j')]
    pub jobs: Option<usize>,

    /// Print one JSON object instead of the readable report.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin campaign`.
#[derive(Debug, clap::Args)]
pub struct CampaignArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// The program.
    #[arg(long)]
    pub program: PathBuf,

    /// TAP port an SVF program runs on.
    #[arg(long, value_name = "PORT")]
    pub port: Option<String>,

    /// Fault classes, comma-separated (stuck, open-net, open-pin,
    /// adjacent-short, any-short, chain, cluster-pin). Default: all but any-short.
    #[arg(long, value_delimiter = ',')]
    pub classes: Vec<String>,

    /// Run slice I of N (1-based), for spreading a campaign over machines.
    #[arg(long, value_name = "I/N")]
    pub shard: Option<String>,

    /// Threads (default: all cores).
    #[arg(long, short = 'j')]
    pub jobs: Option<usize>,

    /// Write the full result (every fault) as JSON to this file.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,

    /// Print the result as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin campaign-merge`.
#[derive(Debug, clap::Args)]
pub struct MergeArgs {
    /// Shard results (`campaign --json` or `--report` files).
    #[arg(required = true)]
    pub files: Vec<PathBuf>,

    /// Print the merged result as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin compare`.
#[derive(Debug, clap::Args)]
pub struct CompareArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// The program the tester ran.
    #[arg(long)]
    pub program: PathBuf,

    /// The real capture: a capture log (`.jsonl`) or a VCD recording (`.vcd`).
    #[arg(long)]
    pub real: PathBuf,

    /// TAP port an SVF program runs on, and the port a VCD recording is of
    /// (default: the program's first).
    #[arg(long, value_name = "PORT")]
    pub port: Option<String>,

    /// VCD wire names.
    #[command(flatten)]
    pub wires: WireArgs,

    /// Decode the VCD from this TAP state instead of waiting for the first
    /// Test-Logic-Reset (SVF names: idle, drpause …).
    #[arg(long, value_name = "STATE")]
    pub start: Option<String>,

    /// Print one JSON object instead of the readable report.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin run`.
#[derive(Debug, clap::Args)]
pub struct RunArgs {
    /// Scenario files or folders.
    pub paths: Vec<PathBuf>,

    /// Scenarios replayed at once (default: all cores).
    #[arg(long, short = 'j')]
    pub jobs: Option<usize>,

    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin play`.
#[derive(Debug, clap::Args)]
pub struct PlayArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// The program: `.svf` (one TAP port) or native `.yaml`.
    pub program: PathBuf,

    /// TAP port an SVF program runs on (default: the board's first).
    #[arg(long, value_name = "PORT")]
    pub port: Option<String>,

    /// Write TCK, TMS, TDI, TDO and TRST* of every TAP port as a VCD file.
    #[arg(long, value_name = "FILE")]
    pub vcd: Option<PathBuf>,

    /// Write every scan as a JSON Lines capture log.
    #[arg(long, value_name = "FILE")]
    pub log: Option<PathBuf>,

    /// Write the program as SVF, one file per TAP port, into this folder
    /// (with a native program that replays them in order).
    #[arg(long, value_name = "DIR")]
    pub export_svf: Option<PathBuf>,

    /// Inject a defect, written as a YAML mapping, e.g.
    /// `--defect '{short: [LB_D0, LB_D1], behaviour: wired-or}'` (repeatable).
    #[arg(long, value_name = "DEFECT")]
    pub defect: Vec<String>,

    /// Inject the defects listed in a YAML file.
    #[arg(long, value_name = "FILE")]
    pub defects: Option<PathBuf>,

    /// Treat hazards (contention, scan outputs on rails or against non-scan
    /// outputs, EXTEST without PRELOAD, compared captures of floating nets)
    /// as failures.
    #[arg(long)]
    pub strict: bool,

    /// Print one JSON object instead of the readable report.
    #[arg(long)]
    pub json: bool,
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

/// Names of a VCD recording's wires, for `compare` and `diagnose` (default:
/// PORT_TCK, PORT_TMS … as `play --vcd` writes them).
#[derive(Debug, clap::Args)]
pub struct WireArgs {
    /// VCD signal name of TCK.
    #[arg(long, value_name = "NAME")]
    pub tck: Option<String>,
    /// VCD signal name of TMS.
    #[arg(long, value_name = "NAME")]
    pub tms: Option<String>,
    /// VCD signal name of TDI.
    #[arg(long, value_name = "NAME")]
    pub tdi: Option<String>,
    /// VCD signal name of TDO.
    #[arg(long, value_name = "NAME")]
    pub tdo: Option<String>,
    /// VCD signal name of TRST* (optional).
    #[arg(long, value_name = "NAME")]
    pub trst: Option<String>,
}

impl WireArgs {
    /// As the capture reader takes them.
    pub fn names(&self) -> harness::capture::WireNames {
        harness::capture::WireNames {
            tck: self.tck.clone(),
            tms: self.tms.clone(),
            tdi: self.tdi.clone(),
            tdo: self.tdo.clone(),
            trst: self.trst.clone(),
        }
    }
}
