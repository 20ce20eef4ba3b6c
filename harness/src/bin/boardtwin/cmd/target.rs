//! `--target tcp://HOST:PORT`: the remote board a command runs on instead
//! of the in-process one, checked against the board file.

use harness::program::Program;
use harness::remote::{admin_token, open_target, RemoteBoard};
use harness::run::{RunOptions, Runner, ScanRecord};
use virtual_board::{DefectSpec, LoadedBoard};

use crate::args::TargetArgs;

/// The remote board of `--target`, if given: its hello must match
/// `design`; with `defects` `Some`, its connection's board gets exactly
/// those (which needs the admin token).
pub fn open(
    args: &TargetArgs,
    design: &LoadedBoard,
    defects: Option<&[DefectSpec]>,
) -> anyhow::Result<Option<RemoteBoard>> {
    let Some(target) = &args.target else {
        return Ok(None);
    };
    let token = token(args)?;
    let board =
        open_target(target, design, defects, token.as_deref()).map_err(anyhow::Error::msg)?;
    Ok(Some(board))
}

/// The admin token of `--admin-token-file` or the environment.
pub fn token(args: &TargetArgs) -> anyhow::Result<Option<String>> {
    admin_token(args.admin_token_file.as_deref()).map_err(anyhow::Error::msg)
}

/// Runs `program` on the remote board and returns its scans as a real
/// capture (what `compare` and `diagnose` read from `--real` otherwise).
pub fn capture(remote: &mut RemoteBoard, program: &Program) -> anyhow::Result<Vec<ScanRecord>> {
    let report = Runner::new(remote, RunOptions::default()).run(program);
    if let Some(e) = &report.error {
        anyhow::bail!("the program did not run to its end on the target: {e}");
    }
    Ok(report.scans.into_iter().map(|s| s.record).collect())
}
