//! `boardtwin compare --board B --program P --real CAPTURE`: the virtual run
//! against a real tester's capture, scan by scan and bit by bit (or, with
//! `--target`, against the run on a remote board).

use std::io::Write;

use harness::capture::{compare, read_real_capture};
use harness::program::native::{load_program, parse_state};
use harness::run::{RunOptions, Runner};

use super::Outcome;
use crate::args::CompareArgs;

/// Runs the program, reads the capture, compares, prints.
pub fn run(args: &CompareArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    super::check_port(&loaded, args.port.as_deref())?;
    let mut program = load_program(&args.program, &loaded, args.port.as_deref())?;
    if let Ok(here) = std::env::current_dir() {
        program.show_paths_from(&here);
    }
    let mut board = loaded.board.clone();
    let report = Runner::new(&mut board, RunOptions::default()).run(&program);
    if let Some(e) = &report.error {
        anyhow::bail!("the program did not run to its end: {e}");
    }
    let start = match &args.start {
        Some(s) => {
            Some(parse_state(s).ok_or_else(|| anyhow::anyhow!("`{s}` is not a TAP state name"))?)
        }
        None => None,
    };
    let names = args.wires.names();
    let ports = match &args.port {
        Some(p) => vec![p.clone()],
        None => program.ports(),
    };
    let (real, partial) = match (
        &args.real,
        super::target::open(&args.remote, &loaded, None)?,
    ) {
        (_, Some(mut target)) => (super::target::capture(&mut target, &program)?, 0),
        (Some(path), None) => read_real_capture(path, &ports, &names, start)?,
        (None, None) => anyhow::bail!(
            "give --real CAPTURE or --target tcp://HOST:PORT or --target usb://VID:PID"
        ),
    };
    if partial > 0 {
        tracing::warn!(
            "{} of the recording {} partial (cut off or interrupted)",
            harness::count(partial, "scan"),
            if partial == 1 { "is" } else { "are" }
        );
    }
    // A recording of some TAP ports is compared on those ports only.
    let mut report = report;
    let recorded: std::collections::BTreeSet<&str> = real.iter().map(|r| r.port.as_str()).collect();
    if args
        .real
        .as_ref()
        .and_then(|r| r.extension())
        .is_some_and(|e| e.eq_ignore_ascii_case("vcd"))
    {
        report
            .scans
            .retain(|s| recorded.contains(s.record.port.as_str()));
    }
    let comparison = compare(&report, &real);
    if let Some(path) = &args.html {
        super::html::write_compare_html(
            path,
            &comparison,
            &loaded.board,
            &args.board,
            &args.program,
        )?;
    }
    if args.json {
        writeln!(out, "{}", serde_json::to_string_pretty(&comparison)?)?;
    } else {
        write!(out, "{comparison}")?;
    }
    Ok(if comparison.is_match() {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}
