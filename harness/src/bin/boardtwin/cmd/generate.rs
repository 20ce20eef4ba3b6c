//! `boardtwin generate --board BOARD --method METHOD [-o FILE] [--svf DIR] [--infrastructure] [--json]`: write a test program for a board.

use std::io::Write;
use std::path::PathBuf;

use anyhow::Context;
use harness::generate::{infrastructure_yaml, interconnect_test, InterconnectTest, Method};
use harness::program::export::{export_svf_files, interleave_warning};
use harness::program::native::parse_native;
use harness::program::net_level::Schedule;
use harness::program::tck_bound::tck_bound;
use harness::program::Action;
use harness::run::{RunOptions, Runner};
use harness::write_atomic;

use super::Outcome;
use crate::args::GenerateArgs;

/// Generates the program, reads it back against the board (so what is
/// written is a program that loads), writes it and the SVF, and prints a
/// summary: on stdout when the program goes to a file (as JSON with
/// `--json`), on stderr when the program itself goes to stdout.
pub fn run(args: &GenerateArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    let board = &loaded.board;
    // A method is checked even where --infrastructure makes it unused.
    let method: Option<Method> = args.method.as_deref().map(str::parse).transpose()?;
    let mut json = serde_json::Map::new();
    json.insert("board".into(), board.name().into());
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
        let mut test = interconnect_test(board, method)?;
        test.patterns.schedule = args.scans.parse::<Schedule>()?;
        json.extend(summary_json(&test));
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
    json.insert("scans".into(), scans.into());
    // The TCK cycles, from one run on the board as designed.
    let good = Runner::new(&mut board.clone(), RunOptions::default()).run(&program);
    if let Some(bound) = tck_bound(&program, good.tck_cycles) {
        summary.push_str(&format!("{}\n", bound.line()));
        json.insert("tck".into(), serde_json::to_value(&bound)?);
    }
    match &args.output {
        Some(p) => {
            write_atomic(p, text.as_bytes()).with_context(|| format!("writing {}", p.display()))?;
            summary.push_str(&format!("wrote {}\n", p.display()));
            json.insert("program".into(), p.display().to_string().into());
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
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &serde_json::Value::Object(json))?;
        writeln!(out)?;
    } else if args.output.is_some() {
        out.write_all(summary.as_bytes())?;
    } else if !crate::QUIET.load(std::sync::atomic::Ordering::Relaxed) {
        std::io::stderr().lock().write_all(summary.as_bytes())?;
    }
    Ok(Outcome::Passed)
}

/// What `--json` says about an interconnect test: its nets, by how the test
/// covers them.
fn summary_json(test: &InterconnectTest) -> serde_json::Map<String, serde_json::Value> {
    let value = |v: serde_json::Result<serde_json::Value>| v.unwrap_or(serde_json::Value::Null);
    let mut m = serde_json::Map::new();
    m.insert("method".into(), test.method.to_string().into());
    m.insert("vectors".into(), test.vector_count().into());
    m.insert("coded".into(), value(serde_json::to_value(&test.nets)));
    m.insert(
        "read_back_at_driver".into(),
        value(serde_json::to_value(&test.read_back_at_driver)),
    );
    m.insert(
        "static".into(),
        value(serde_json::to_value(&test.static_nets)),
    );
    m.insert(
        "through_clusters".into(),
        value(serde_json::to_value(&test.cluster_nets)),
    );
    m.insert(
        "left_out".into(),
        value(serde_json::to_value(&test.left_out)),
    );
    m.insert(
        "safe_driven".into(),
        value(serde_json::to_value(&test.safe_driven)),
    );
    m.insert(
        "cautions".into(),
        value(serde_json::to_value(&test.cautions)),
    );
    m
}
