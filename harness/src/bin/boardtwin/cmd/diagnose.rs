//! `boardtwin diagnose`: from a failing capture to a repair instruction.

use std::io::Write;
use std::sync::Mutex;

use harness::capture::read_real_capture;
use harness::diagnose::{diagnose, Candidate, DiagnoseOptions, Diagnosis};
use harness::program::native::load_program;
use harness::TextTable;

use super::Outcome;
use crate::args::DiagnoseArgs;

/// Reads the capture, finds the explanations, prints them.
pub fn run(args: &DiagnoseArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let universe = super::universe_options(&args.classes)?;
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    super::check_port(&loaded, args.port.as_deref())?;
    let program = load_program(&args.program, &loaded, args.port.as_deref())?;
    let names = args.wires.names();
    let ports = match &args.port {
        Some(p) => vec![p.clone()],
        None => program.ports(),
    };
    let real = match (
        &args.real,
        super::target::open(&args.remote, &loaded, None)?,
    ) {
        (_, Some(mut remote)) => super::target::capture(&mut remote, &program)?,
        (Some(path), None) => read_real_capture(path, &ports, &names, None)?.0,
        (None, None) => anyhow::bail!("give --real CAPTURE or --target tcp://HOST:PORT"),
    };
    let jobs = args.jobs.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    let bar = Mutex::new(super::progress_bar(
        0,
        "{msg} {bar:40} {pos}/{len} eta {eta}",
    ));
    let progress = |stage: &str, done: usize, total: usize| {
        if let Ok(b) = bar.lock() {
            if b.length() != Some(total as u64) {
                b.set_length(total as u64);
                b.set_message(stage.to_string());
            }
            b.set_position(done as u64);
        }
    };
    let options = DiagnoseOptions {
        jobs,
        universe,
        progress: &progress,
    };
    let d = diagnose(&loaded, &program, &real, &options).map_err(|e| anyhow::anyhow!(e))?;
    if let Ok(b) = bar.lock() {
        b.finish_and_clear();
    }
    if args.json {
        writeln!(out, "{}", serde_json::to_string_pretty(&d)?)?;
    } else {
        print(&d, out)?;
    }
    Ok(if d.failing_bits == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

fn print_candidate(c: &Candidate, out: &mut dyn Write) -> std::io::Result<()> {
    writeln!(out, "  {}", c.words)?;
    for p in &c.probes {
        writeln!(out, "      {}: pins {}", p.net, p.pins.join(", "))?;
    }
    if !c.neighbours.is_empty() {
        let pairs: Vec<String> = c
            .neighbours
            .iter()
            .map(|(a, b)| format!("{a}/{b}"))
            .collect();
        writeln!(out, "      neighbouring pins: {}", pairs.join(", "))?;
    }
    Ok(())
}

fn print(d: &Diagnosis, out: &mut dyn Write) -> std::io::Result<()> {
    if !d.unrecorded_scans.is_empty() {
        let mut ports: Vec<&str> = d.unrecorded_scans.iter().map(|s| s.port.as_str()).collect();
        ports.dedup();
        writeln!(
            out,
            "the recording holds {} of the program's {} compared bits; {} scans were not recorded (TAP ports {}) and are not compared",
            d.recorded_bits,
            d.compared_bits,
            d.unrecorded_scans.len(),
            ports.join(", ")
        )?;
    }
    if d.failing_bits == 0 {
        writeln!(
            out,
            "the capture matches the good board: no defect to diagnose"
        )?;
        return Ok(());
    }
    let mut place = Vec::new();
    if !d.nets_involved.is_empty() {
        place.push(format!("on nets {}", d.nets_involved.join(", ")));
    }
    if !d.devices_involved.is_empty() {
        place.push(format!("in registers of {}", d.devices_involved.join(", ")));
    }
    writeln!(
        out,
        "{} compared bits differ from the good board, {}",
        d.failing_bits,
        place.join(" and ")
    )?;
    for f in &d.devices {
        writeln!(out, "{}", f.words)?;
    }
    match d.exact.len() {
        0 => writeln!(
            out,
            "\nnothing simulated explains the capture exactly; nearest:"
        )?,
        1 => {
            writeln!(out, "\nthis explains the capture exactly:")?;
            print_candidate(&d.exact[0], out)?;
        }
        _ => {
            writeln!(out, "\nthese explain the capture exactly (an ambiguity group: the program cannot tell them apart):")?;
            for c in &d.exact {
                print_candidate(c, out)?;
            }
        }
    }
    if !d.nearest.is_empty() {
        if !d.exact.is_empty() {
            writeln!(out, "\nnearest others:")?;
        }
        let mut t = TextTable::new(2);
        t.row(["differing bits", "defect"]);
        for c in &d.nearest {
            t.row([c.distance.to_string(), c.words.clone()]);
        }
        write!(out, "{t}")?;
    }
    writeln!(
        out,
        "\n{} simulated ({}); every exact one was checked bit for bit on the simulated board",
        harness::count(d.simulated, "explanation"),
        d.method
    )?;
    Ok(())
}
