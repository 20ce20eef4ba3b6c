//! One module per subcommand; `run` sends the parsed command to its module.
//!
//! Each module has `run(&Args, &mut dyn Write) -> anyhow::Result<Outcome>`:
//! data goes to the writer (stdout), diagnostics to stderr through `tracing`,
//! and an `Err` is bad input or I/O (exit 2), printed by `main`.

pub mod adapters;
pub mod board;
pub mod campaign;
pub mod compare;
pub mod device;
pub mod diagnose;
pub mod exercise;
pub mod generate;
pub mod html;
pub mod import;
pub mod play;
pub mod run;
pub mod serve;
pub mod target;

use std::io::Write;
use std::path::Path;
use std::process::ExitCode;

use harness::campaign::{FaultClass, UniverseOptions};
use harness::model_notes::{DesignWarning, UnmodelledAttributes};

use crate::args::Command;

/// How a command that ran to the end came out.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Outcome {
    /// Everything checked passed (exit 0).
    Passed,
    /// The command ran and a check or test failed (exit 1).
    Failed,
}

impl Outcome {
    /// The process exit code for this outcome.
    pub fn exit_code(self) -> ExitCode {
        match self {
            Outcome::Passed => ExitCode::SUCCESS,
            Outcome::Failed => ExitCode::from(1),
        }
    }
}

/// Runs one subcommand, writing its data to `out`.
pub fn run(command: &Command, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    match command {
        Command::Device(args) => device::run(args, out),
        Command::Board(args) => board::run(args, out),
        Command::Play(args) => play::run(args, out),
        Command::Run(args) => run::run(args, out),
        Command::Compare(args) => compare::run(args, out),
        Command::Generate(args) => generate::run(args, out),
        Command::Campaign(args) => campaign::run(args, out),
        Command::CampaignMerge(args) => campaign::merge(args, out),
        Command::Diagnose(args) => diagnose::run(args, out),
        Command::Serve(args) => serve::run_serve(args, out),
        Command::Import(args) => import::run(args, out),
        Command::Adapters => adapters::run(out),
        Command::Exercise(args) => exercise::run(args, out),
    }
}

/// What the BSDL files hold that the model does not simulate, said once:
/// each device maker's design warning as a warning, and each file's
/// unmodelled attributes at `-v`, with paths under `root` shown relative to it.
pub fn show_model_notes(
    warnings: &[DesignWarning],
    unmodelled: &[UnmodelledAttributes],
    root: Option<&Path>,
) {
    for w in warnings {
        tracing::warn!("{w}");
    }
    for u in unmodelled {
        tracing::info!("{}", u.line(root));
    }
}

/// Refuses a `--port` the board does not have, listing the ports it has
/// (play, compare and diagnose alike).
pub fn check_port(loaded: &virtual_board::LoadedBoard, port: Option<&str>) -> anyhow::Result<()> {
    let Some(port) = port else {
        return Ok(());
    };
    if loaded.board.port_index(port).is_some() {
        return Ok(());
    }
    let known: Vec<&str> = loaded
        .board
        .ports()
        .iter()
        .map(|p| p.name.as_str())
        .collect();
    anyhow::bail!(
        "the board has no TAP port `{}` (it has: {})",
        virtual_board::clip(port),
        known.join(", ")
    )
}

/// The fault classes named by `--classes` (none named: the default set).
pub fn universe_options(names: &[String]) -> anyhow::Result<UniverseOptions> {
    let mut options = UniverseOptions::default();
    if !names.is_empty() {
        options.classes.clear();
        for c in names {
            let class = FaultClass::parse(c).ok_or_else(|| {
                let names: Vec<&str> = FaultClass::ALL.iter().map(|c| c.name()).collect();
                anyhow::anyhow!("`{c}` is not a fault class ({})", names.join(", "))
            })?;
            options.classes.insert(class);
        }
    }
    Ok(options)
}

/// A progress bar on stderr, hidden when stderr is not a terminal.
pub fn progress_bar(len: u64, template: &str) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    let bar = indicatif::ProgressBar::new(len);
    bar.set_style(
        indicatif::ProgressStyle::with_template(template)
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    if !std::io::stderr().is_terminal() || crate::QUIET.load(std::sync::atomic::Ordering::Relaxed) {
        bar.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    bar
}
