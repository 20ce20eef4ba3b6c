//! `boardtwin generate --board BOARD --method METHOD [-o FILE] [--svf DIR] [--infrastructure]`: write a test program for a board.

use std::io::Write;
use std::path::PathBuf;

use anyhow::Context;
use harness::generate::{infrastructure_yaml, interconnect_test, Method};
use harness::program::export::{export_svf_files, interleave_warning};
use harness::program::native::parse_native;
use harness::program::Action;
use harness::write_atomic;

use super::Outcome;
use crate::args::GenerateArgs;

/// Generates the program, reads it back against the board (so what is
/// written is a program that loads), writes it and the SVF, and prints a
/// summary on stderr.
pub fn run(args: &GenerateArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    let board = &loaded.board;
    // A method is checked even where --infrastructure makes it unused.
    let method: Option<Method> = args.method.as_deref().map(str::parse).transpose()?;
    let (text, mut summary, stem) = if args.infrastructure {
        let summary = format!(
            "{}: infrastructure test of {}\n",
            board.name(),
            harness::count(board.ports().len(), "TAP port")
        );
        (
            infrastructure_yaml(board),
            summary,
            "infrastructure".to_string(),
        )
    } else {
        let method = method.context("--method is needed for the interconnect test")?;
        let test = interconnect_test(board, method)?;
        (
            test.native_yaml(),
            test.summary(),
            format!("interconnect-{method}"),
        )
    };
    let stem = args
        .output
        .as_ref()
        .and_then(|p| p.file_stem())
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or(stem);
    let path = args
        .output
        .clone()
        .unwrap_or_else(|| PathBuf::from(format!("{stem}.yaml")));
    let program = parse_native(&text, &path, &loaded)
        .context("the generated program does not read back (a bug in boardtwin)")?;
    let scans = program
        .steps
        .iter()
        .filter(|s| matches!(s.action, Action::Scan(_)))
        .count();
    summary.push_str(&format!("{}\n", harness::count(scans, "scan")));
    match &args.output {
        Some(p) => {
            write_atomic(p, text.as_bytes()).with_context(|| format!("writing {}", p.display()))?;
            summary.push_str(&format!("wrote {}\n", p.display()));
        }
        None => out.write_all(text.as_bytes())?,
    }
    if let Some(dir) = &args.svf {
        let files = export_svf_files(&program, &stem, dir)
            .with_context(|| format!("writing SVF into {}", dir.display()))?;
        for (port, p) in &files.svf {
            summary.push_str(&format!("wrote {} (TAP port {port})\n", p.display()));
        }
        summary.push_str(&format!("wrote {}\n", files.replay.display()));
        if let Some(warning) = interleave_warning(&files) {
            summary.push_str(&format!("{warning}\n"));
        }
    }
    if !crate::QUIET.load(std::sync::atomic::Ordering::Relaxed) {
        std::io::stderr().lock().write_all(summary.as_bytes())?;
    }
    Ok(Outcome::Passed)
}
