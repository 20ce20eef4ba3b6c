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

    /// Say nothing on stderr but errors: no warnings (design warnings
    /// included), no progress bars.
    #[arg(short, long, global = true, conflicts_with = "verbose")]
    pub quiet: bool,

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
    /// Serve the virtual board over TCP, for `--target tcp://HOST:PORT` and
    /// other tools (protocol: harness/docs/remote-protocol.md).
    Serve(ServeArgs),
    /// Make a board file from a CAD netlist (IPC-D-356A, EDIF or CSV) and an
    /// assembly file (scan devices and their BSDL files, TAP connectors).
    Import(ImportArgs),
    /// List the USB JTAG adapters (MPSSE chips) connected, with the
    /// usb:// address of each (needs a build with the `usb` feature).
    Adapters,
    /// Training on hidden faulted boards: draw and seal an exercise, host
    /// it for a class, submit a diagnosis.
    Exercise(crate::exercise_args::ExerciseArgs),
}

/// Arguments of `boardtwin serve`.
#[derive(Debug, clap::Args)]
pub struct ServeArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// Defects of the served board, a YAML list (as `play --defects`).
    #[arg(long, value_name = "FILE")]
    pub defects: Option<PathBuf>,

    /// Address to listen on (port 0: any free port; the address taken is
    /// printed).
    #[arg(long, value_name = "ADDR:PORT", default_value = "127.0.0.1:7149")]
    pub listen: String,

    /// Allow listening on an address other than loopback (the board can
    /// then be reached from other machines; the protocol is not encrypted).
    #[arg(long)]
    pub allow_network: bool,

    /// One board for every client, used in turn (each request whole), instead
    /// of a copy per connection.
    #[arg(long)]
    pub shared: bool,

    /// Read the admin token (allows injecting, clearing and listing defects)
    /// from the first line of this file; otherwise from the environment
    /// variable BOARDTWIN_ADMIN_TOKEN. Without a token they are refused.
    #[arg(long, value_name = "FILE")]
    pub admin_token_file: Option<PathBuf>,

    /// Connections served at once.
    #[arg(long, value_name = "N", default_value_t = 256)]
    pub max_connections: usize,

    /// Seconds a connection may stay silent before it is closed.
    #[arg(long, value_name = "SECONDS", default_value_t = 600)]
    pub idle_timeout: u64,
}

/// Where a command's programs run instead of the in-process board.
#[derive(Debug, clap::Args)]
pub struct TargetArgs {
    /// Run on a board served by `boardtwin serve` (tcp://HOST:PORT), or on
    /// a real board through a USB JTAG adapter
    /// (usb://VID:PID[/SERIAL][/INTERFACE], needs a build with the `usb`
    /// feature); the board file is still read for names and placement.
    #[arg(long, value_name = "tcp://HOST:PORT|usb://VID:PID")]
    pub target: Option<String>,

    /// With a usb:// target: the adapter pin wired to TRST* (ADBUS4…7 or
    /// ACBUS0…7).
    #[arg(long, value_name = "PIN", requires = "target")]
    pub trst_pin: Option<String>,

    /// With a usb:// target: the adapter pin that senses the target's power
    /// (high while powered); a program is not sent while it reads low.
    #[arg(long, value_name = "PIN", requires = "target")]
    pub power_pin: Option<String>,

    /// With a usb:// target: send a program to the real board even though it
    /// raised hazards on the virtual board (after checking them).
    #[arg(long, requires = "target")]
    pub i_have_checked: bool,

    /// The target's admin token, for setting its defects: the first line of
    /// this file (otherwise the BOARDTWIN_ADMIN_TOKEN environment variable).
    #[arg(long, value_name = "FILE", requires = "target")]
    pub admin_token_file: Option<PathBuf>,
}

/// Arguments of `boardtwin import`.
#[derive(Debug, clap::Args)]
pub struct ImportArgs {
    /// The netlist: IPC-D-356A (.ipc, .356, .d356), EDIF 2 0 0 (.edf, .edn,
    /// .edif) or CSV (.csv, header `net,designator,pin`).
    pub netlist: PathBuf,

    /// The assembly file (YAML): scan devices and BSDL files, TAP ports,
    /// rails, parts not fitted.
    #[arg(long, value_name = "ASSEMBLY.yaml")]
    pub assembly: PathBuf,

    /// Where to write the board file (written whole or not at all).
    #[arg(short = 'o', long = "output", value_name = "BOARD.yaml")]
    pub output: PathBuf,

    /// The netlist format when its file name does not say: csv, ipc-d-356a
    /// or edif.
    #[arg(long, value_name = "FORMAT")]
    pub format: Option<String>,

    /// Print the report as one JSON object.
    #[arg(long)]
    pub json: bool,
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

    /// Print the summary as one JSON object on stdout (needs -o: the program
    /// goes to its file).
    #[arg(long, requires = "output")]
    pub json: bool,

    /// How the vectors become DR scans: `pipelined` (each scan captures the
    /// response to the vector before and applies the next: one DR scan per
    /// TAP port per vector) or `apply-then-capture` (an apply scan and a
    /// capture scan per vector, the earlier form).
    #[arg(long, value_name = "SCHEDULE", default_value = "pipelined")]
    pub scans: String,
}

/// Arguments of `boardtwin diagnose`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit status: 0 the capture equals the good board's (nothing to \
                  diagnose), 1 it differs (the diagnosis is printed), 2 could not run."
)]
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
    #[arg(long, required_unless_present = "target", conflicts_with = "target")]
    pub real: Vec<PathBuf>,

    /// When several explanations fit exactly, write the follow-up test that
    /// tells them apart to FILE (a native program, as `generate` writes).
    #[arg(long, value_name = "FILE")]
    pub follow_up: Option<PathBuf>,

    /// Take the capture from a board served by `boardtwin serve`.
    #[command(flatten)]
    pub remote: TargetArgs,

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

    /// Write a self-contained HTML report (ranked explanations, pins to probe, chains).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,

    /// Print one JSON object instead of the readable report.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin campaign`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit status: 0 every fault of the universe detected, 1 some fault \
                  undetected (the program passes on a board that has it), 2 could not run."
)]
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

    /// Write a self-contained HTML report (coverage per class and per net, ambiguity groups,
    /// faults not detected, nets).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,

    /// Print the result as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `boardtwin campaign-merge`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit status: 0 every fault detected, 1 some undetected, 2 could not \
                  run (as `campaign`)."
)]
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
#[command(
    after_help = "Exit status: 0 the capture equals the run, 1 a scan or bit differs, \
                  2 could not run."
)]
pub struct CompareArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,

    /// The program the tester ran.
    #[arg(long)]
    pub program: PathBuf,

    /// The real capture: a capture log (`.jsonl`) or a VCD recording (`.vcd`).
    #[arg(long, required_unless_present = "target", conflicts_with = "target")]
    pub real: Option<PathBuf>,

    /// Take the capture from a board served by `boardtwin serve`.
    #[command(flatten)]
    pub remote: TargetArgs,

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

    /// Write a self-contained HTML report (differing bits per device and net, both values).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,

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

    /// Write a self-contained HTML report (every scenario, its outcome and mismatches).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,

    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,

    /// Replay on a board served by `boardtwin serve`.
    #[command(flatten)]
    pub remote: TargetArgs,
}

/// How defects are written, for `play --help` and the errors of
/// `--defect` and `--defects` (README, "Replay scenarios").
pub const DEFECT_SYNTAX: &str = "\
Defects are YAML mappings (--defect '{…}', or a list in a --defects file):
  {short: [A, B], behaviour: wired-and}   short; also wired-or,
  {short: [A, B], dominant: A}            or one net dominant
  {open: NET}  {open: U5.A3}              open net, open pin
  {stuck: NET, value: 0}                  net (or non-scan part pin) stuck at 0 or 1
  {broken_link: U1}                       TDO-to-TDI link broken after U1
  {tdo_stuck: U3, value: 1}               TDO stuck
  {tms_open: U2}  {tck_open: U2}          TMS or TCK open at a device
  {trst_stuck: J1_MAIN}                   TRST* stuck active on a TAP port
  {wrong_device: U3, idcode: 0x35508A01}  wrong device fitted (or bsdl: other.bsd)
  {dead: U5}                              dead device";

/// Arguments of `boardtwin play`.
#[derive(Debug, clap::Args)]
#[command(after_help = DEFECT_SYNTAX)]
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

    /// Write a self-contained HTML report (chains, failing bits, waveforms, nets).
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,

    /// Write the program as SVF, one file per TAP port, into this folder
    /// (with a native program that replays them in order).
    #[arg(long, value_name = "DIR")]
    pub export_svf: Option<PathBuf>,

    /// Inject a defect, written as a YAML mapping, e.g.
    /// `--defect '{short: [LB_D0, LB_D1], behaviour: wired-or}'` (repeatable).
    #[arg(long, value_name = "DEFECT")]
    pub defect: Vec<String>,

    /// Inject the defects of a YAML file: a list of defects, or a mapping
    /// with a `defects:` list (a scenario file's defects, for one).
    #[arg(long, value_name = "FILE")]
    pub defects: Option<PathBuf>,

    /// Run on a board served by `boardtwin serve`.
    #[command(flatten)]
    pub remote: TargetArgs,

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

    /// Print every net with its pins, tie, scan access, TAP ports and clusters.
    #[arg(long)]
    pub nets: bool,

    /// Write the board's netlist instead of the summary: csv, ipc-d-356a or
    /// edif.
    #[arg(long, value_name = "FORMAT")]
    pub export_netlist: Option<String>,

    /// With --export-netlist: write it to this file instead of stdout.
    #[arg(
        short = 'o',
        long = "output",
        value_name = "FILE",
        requires = "export_netlist"
    )]
    pub output: Option<PathBuf>,
}

/// Arguments of `boardtwin device`.
#[derive(Debug, clap::Args)]
pub struct DeviceArgs {
    /// The BSDL file to read.
    pub file: PathBuf,

    /// Print one JSON object instead of the text summary.
    #[arg(long)]
    pub json: bool,

    /// Print the boundary register cell by cell (cell 0, nearest TDO, first).
    #[arg(long)]
    pub cells: bool,
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
