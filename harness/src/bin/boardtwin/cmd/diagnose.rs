//! `boardtwin diagnose`: from a failing capture to a repair instruction, and
//! the follow-up test that tells an ambiguity group apart.

use std::io::Write;
use std::path::Path;
use std::sync::Mutex;

use anyhow::Context;
use harness::capture::read_real_capture;
use harness::diagnose::{
    diagnose_runs, follow_up, Candidate, DiagnoseOptions, Diagnosis, FollowUp,
};
use harness::program::native::load_program;
use harness::program::Program;
use harness::run::ScanRecord;
use harness::{write_atomic, TextTable};

use super::Outcome;
use crate::args::DiagnoseArgs;

/// Reads the captures, finds the explanations, prints them; writes the
/// follow-up test when asked and several explanations fit.
pub fn run(args: &DiagnoseArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let universe = super::universe_options(&args.classes)?;
    if args.remote.target.is_none() && args.program.len() != args.real.len() {
        anyhow::bail!(
            "give one --real for each --program, in the same order ({} programs, {} recordings)",
            args.program.len(),
            args.real.len()
        );
    }
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    super::check_port(&loaded, args.port.as_deref())?;
    let names = args.wires.names();
    // With --target each program runs on the served board, in order, and
    // its capture is what the board returns.
    let mut remote = super::target::open(&args.remote, &loaded, None)?;
    let mut runs = Vec::new();
    for (k, path) in args.program.iter().enumerate() {
        let program = load_program(path, &loaded, args.port.as_deref())?;
        let ports = match &args.port {
            Some(p) => vec![p.clone()],
            None => program.ports(),
        };
        let real = match (&mut remote, args.real.get(k)) {
            (Some(target), _) => super::target::capture(target, &program)?,
            (None, Some(real)) => read_real_capture(real, &ports, &names, None)?.0,
            (None, None) => anyhow::bail!(
                "give --real CAPTURE or --target tcp://HOST:PORT or --target usb://VID:PID"
            ),
        };
        runs.push((program, real));
    }
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
            if b.length() != Some(total as u64) || b.message() != stage {
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
    let parts: Vec<(&Program, &[ScanRecord])> =
        runs.iter().map(|(p, r)| (p, r.as_slice())).collect();
    let d = diagnose_runs(&loaded, &parts, &options).map_err(|e| anyhow::anyhow!(e))?;
    let follow = match &args.follow_up {
        Some(path) if d.exact.len() > 1 => Some(
            follow_up(&loaded, &d.exact, &options)
                .map(|f| (path, f))
                .map_err(|e| format!("no follow-up test written: {e}")),
        ),
        Some(_) if d.failing_bits > 0 => Some(Err(format!(
            "no follow-up test written: {}",
            if d.exact.is_empty() {
                "no explanation fits the capture exactly, so there is no group to tell apart"
            } else {
                "one explanation fits the capture exactly, so there is nothing to tell apart"
            }
        ))),
        _ => None,
    };
    if let Ok(b) = bar.lock() {
        b.finish_and_clear();
    }
    if let Some(Ok((path, f))) = &follow {
        write_atomic(path, f.text(Some(&again(args, path))).as_bytes())
            .with_context(|| format!("writing {}", path.display()))?;
    }
    if let Some(path) = &args.html {
        let programs: Vec<String> = args
            .program
            .iter()
            .map(|p| p.display().to_string())
            .collect();
        super::html::write_diagnose_html(
            path,
            &d,
            &loaded.board,
            &args.board,
            &programs.join(", "),
        )?;
    }
    if args.json {
        let mut v = serde_json::to_value(&d)?;
        match &follow {
            Some(Ok((path, f))) => {
                let mut f = serde_json::to_value(f)?;
                f["file"] = path.display().to_string().into();
                v["follow_up"] = f;
            }
            Some(Err(e)) => v["follow_up"] = serde_json::json!({ "error": e }),
            None => {}
        }
        writeln!(out, "{}", serde_json::to_string_pretty(&v)?)?;
    } else {
        print(&d, out)?;
        match &follow {
            Some(Ok((path, f))) => print_follow_up(path, f, &again(args, path), out)?,
            Some(Err(e)) => writeln!(out, "\n{e}")?,
            None if d.exact.len() > 1 => writeln!(
                out,
                "\n`--follow-up FILE` writes a test that tells them apart"
            )?,
            None => {}
        }
    }
    Ok(if d.failing_bits == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

/// The command that diagnoses again with the follow-up's recording.
fn again(args: &DiagnoseArgs, follow: &Path) -> String {
    let mut cmd = format!("boardtwin diagnose --board {}", args.board.display());
    for (p, r) in args.program.iter().zip(&args.real) {
        cmd += &format!(" --program {} --real {}", p.display(), r.display());
    }
    cmd += &format!(" --program {} --real FOLLOW-UP-CAPTURE", follow.display());
    if let Some(p) = &args.port {
        cmd += &format!(" --port {p}");
    }
    let w = &args.wires;
    for (flag, name) in [
        ("tck", &w.tck),
        ("tms", &w.tms),
        ("tdi", &w.tdi),
        ("tdo", &w.tdo),
        ("trst", &w.trst),
    ] {
        if let Some(n) = name {
            cmd += &format!(" --{flag} {n}");
        }
    }
    cmd
}

fn print_follow_up(
    path: &Path,
    f: &FollowUp,
    again: &str,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    let plural = |n: usize, what: &str| format!("{n} {what}{}", if n == 1 { "" } else { "s" });
    writeln!(
        out,
        "\nwrote {}: {} over {} {} {} of the {} pairs of explanations apart ({} tried, {})",
        path.display(),
        plural(f.vectors.len(), "vector"),
        f.nets.join(", "),
        if f.vectors.len() == 1 {
            "tells"
        } else {
            "tell"
        },
        f.told_apart,
        f.pairs,
        plural(f.tried, "vector"),
        if f.fewest {
            "no fewer do"
        } else {
            "chosen by greedy set cover"
        }
    )?;
    for (a, b) in &f.alike {
        writeln!(out, "  no net-level vector tells apart: {a}; {b}")?;
    }
    writeln!(
        out,
        "run it on the board, record its capture, and diagnose again with both:\n  {again}"
    )
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
    let uncompared = if d.uncompared_bits_differ == 0 {
        String::new()
    } else {
        let n = d.uncompared_bits_differ;
        let bits = if n == 1 {
            "TDO bit differs"
        } else {
            "TDO bits differ"
        };
        format!(" (and {n} more {bits} in scans the program does not compare)")
    };
    if d.failing_bits == 0 {
        writeln!(
            out,
            "the capture matches the good board on every compared bit: no defect to diagnose{uncompared}"
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
        "{} compared bits differ from the good board, {}{uncompared}",
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
