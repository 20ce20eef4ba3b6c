//! `boardtwin diagnose`: from a failing capture to a repair instruction.

use std::io::Write;

use harness::capture::read_real_capture;
use harness::diagnose::diagnose;
use harness::program::native::load_program;
use harness::TextTable;

use super::Outcome;
use crate::args::DiagnoseArgs;

/// Reads the capture, ranks the candidate defects, prints them.
pub fn run(args: &DiagnoseArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    super::check_port(&loaded, args.port.as_deref())?;
    let program = load_program(&args.program, &loaded, args.port.as_deref())?;
    let names = args.wires.names();
    let ports = match &args.port {
        Some(p) => vec![p.clone()],
        None => program.ports(),
    };
    let (real, _) = read_real_capture(&args.real, &ports, &names, None)?;
    let jobs = args.jobs.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    let d = diagnose(&loaded, &program, &real, jobs).map_err(|e| anyhow::anyhow!(e))?;
    if args.json {
        writeln!(out, "{}", serde_json::to_string_pretty(&d)?)?;
    } else if d.failing_bits == 0 {
        writeln!(
            out,
            "the capture matches the good board: no defect to diagnose"
        )?;
    } else {
        writeln!(
            out,
            "{} compared bits differ from the good board, on nets {}",
            d.failing_bits,
            d.nets_involved.join(", ")
        )?;
        if d.exact.is_empty() {
            writeln!(
                out,
                "\nno single fault or pair explains the capture exactly; nearest:"
            )?;
        } else {
            if d.exact.len() == 1 {
                writeln!(out, "\nthis explains the capture exactly:")?;
            } else {
                writeln!(out, "\nthese explain the capture exactly (an ambiguity group: the program cannot tell them apart):")?;
            }
            for c in &d.exact {
                writeln!(out, "  {}", c.words)?;
            }
            writeln!(out, "\nnearest others:")?;
        }
        let mut t = TextTable::new(2);
        t.row(["differing bits", "defect"]);
        for c in &d.nearest {
            t.row([c.distance.to_string(), c.words.clone()]);
        }
        write!(out, "{t}")?;
        writeln!(out, "\n{} candidate defects simulated", d.simulated)?;
    }
    Ok(if d.failing_bits == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}
