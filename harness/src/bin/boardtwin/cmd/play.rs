//! `boardtwin play --board BOARD PROGRAM`: run a test program on the virtual board.

use std::io::Write;

use anyhow::Context;
use harness::html::{breaks_of, RunExtras};
use harness::model_notes::{design_warnings, unmodelled_attributes};
use harness::program::export::{export_svf_files, interleave_warning};
use harness::program::native::load_program;
use harness::program::tck_bound::tck_bound;
use harness::run::{
    failures_of, held_instructions, statistics, verdict, RunOptions, RunReport, RunText, Runner,
    StrictRunText,
};
use harness::vcd::{write_vcd_ports_file, Cycle, Recorder, VcdPort};
use harness::write_atomic;
use serde_json::json;
use virtual_board::{read_tree, read_yaml, DefectSpec, HeldInstruction, PathStep, TapTarget};

use super::target::Opened;
use super::Outcome;
use crate::args::PlayArgs;

/// Loads board and program, runs, writes the requested files, prints the report.
pub fn run(args: &PlayArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    super::show_model_notes(
        &design_warnings(&loaded.board),
        &unmodelled_attributes(&loaded.board),
        None,
    );
    super::check_port(&loaded, args.port.as_deref())?;
    // The program is written for the board as designed; it runs on the
    // board as built, defects and all.
    let mut program = load_program(&args.program, &loaded, args.port.as_deref())?;
    if let Ok(here) = std::env::current_dir() {
        program.show_paths_from(&here);
    }
    let design = loaded.board.clone();
    let defects = read_defects(&args.defect, args.defects.as_deref())?;
    let loaded = if defects.is_empty() {
        loaded
    } else {
        let mut source = virtual_board::bsdl_files_beside(&args.board);
        let faulty = loaded
            .with_defects(&defects, &mut source)
            .map_err(|e| locate_defect(args.defect.len(), args.defects.as_deref(), e))?;
        for d in &defects {
            tracing::info!("defect: {}", d.describe());
        }
        faulty
    };
    // The VCD's wires: TRST_N only where the board wires TRST*.
    let ports = VcdPort::of_board(&loaded.board);
    // Long programs show the steps done on a terminal, after a few seconds.
    let bar = super::progress_bar(program.steps.len() as u64, "{bar:40} {pos}/{len} steps");
    let start = std::time::Instant::now();
    let mut shown = false;
    let mut progress = |i: usize| {
        if !shown && start.elapsed() > std::time::Duration::from_secs(3) {
            shown = true;
            bar.reset_elapsed();
        }
        if shown {
            bar.set_position(i as u64);
        }
    };
    // With --target the program runs on the remote board, which gets the
    // defects named here (through its admin token) or keeps its own.
    let remote_defects = (!defects.is_empty()).then_some(defects.as_slice());
    let design_loaded = virtual_board::LoadedBoard {
        board: design.clone(),
        ..loaded.clone()
    };
    // A real board's run takes the cells and nets of its scans from the
    // virtual board's run of the same program.
    let mut virtual_run = None;
    let (report, cycles, held) =
        match super::target::open(&args.remote, &design_loaded, remote_defects)? {
            Some(Opened::Remote(remote)) => run_on(remote, args, &program, &ports, &mut progress)?,
            Some(Opened::Usb(mut hw)) => {
                virtual_run = Some(super::target::prepare(&mut hw, &program)?);
                run_on(hw.target, args, &program, &ports, &mut progress)?
            }
            None => run_on(loaded.board.clone(), args, &program, &ports, &mut progress)?,
        };
    bar.finish_and_clear();
    let mut report = report;
    if let Some(good) = &virtual_run {
        report.use_layouts_of(good);
    } else if !defects.is_empty() {
        let mut good = design;
        report.use_layouts_of(&Runner::new(&mut good, RunOptions::default()).run(&program));
    }
    if let Some(log) = &args.log {
        let mut text = String::new();
        for s in &report.scans {
            // A capture-log line; hazards seen during the scan ride along.
            let mut line = serde_json::to_value(&s.record)?;
            let hazards: Vec<_> = report
                .hazards
                .iter()
                .filter(|h| h.scan == Some(s.record.index))
                .collect();
            if !hazards.is_empty() {
                line["hazards"] = serde_json::to_value(&hazards)?;
            }
            text.push_str(&serde_json::to_string(&line)?);
            text.push('\n');
        }
        write_atomic(log, text.as_bytes()).with_context(|| format!("writing {}", log.display()))?;
    }
    if let Some(path) = &args.html {
        let breaks = breaks_of(&defects, &loaded.board, DefectSpec::describe);
        let extras = RunExtras {
            cycles: cycles.as_deref(),
            held: &held,
            breaks: &breaks,
        };
        super::html::write_run_html(
            path,
            &report,
            &loaded.board,
            &args.board,
            &args.program,
            &extras,
        )?;
    }
    if let Some(dir) = &args.export_svf {
        let stem = args
            .program
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        let files = export_svf_files(&program, &stem, dir)
            .with_context(|| format!("writing SVF into {}", dir.display()))?;
        for (port, path) in &files.svf {
            tracing::info!("wrote {} for TAP port {port}", path.display());
        }
        // Also in each file's header, so `-q` may leave it out here.
        let quiet = crate::QUIET.load(std::sync::atomic::Ordering::Relaxed);
        if let Some(warning) = interleave_warning(&files).filter(|_| !quiet) {
            eprintln!("{warning}");
        }
    }
    if let Some(e) = &report.error {
        // The program could not run to its end: bad input for this board.
        if args.json {
            writeln!(out, "{}", serde_json::to_string_pretty(&json_of(&report))?)?;
        } else {
            write!(out, "{}", RunText(&report))?;
        }
        anyhow::bail!("{e}");
    }
    if args.json {
        let mut json = json_of(&report);
        json["verdict"] = verdict(&report, args.strict).into();
        if let Some(bound) = tck_bound(&program, report.tck_cycles) {
            json["tck_bound"] = serde_json::to_value(&bound)?;
        }
        json["strict"] = args.strict.into();
        writeln!(out, "{}", serde_json::to_string_pretty(&json)?)?;
    } else {
        if args.strict {
            write!(out, "{}", StrictRunText(&report))?;
        } else {
            write!(out, "{}", RunText(&report))?;
        }
        if let Some(bound) = tck_bound(&program, report.tck_cycles) {
            writeln!(out, "{}", bound.line())?;
        }
    }
    tracing::info!("{}", statistics(&report));
    let hazard_failure = args.strict && !report.hazards.is_empty();
    Ok(if report.passed() && !hazard_failure {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

/// What a run gave: the report, the recorded periods (for an HTML report's waveforms) and
/// the instruction each device holds at the end (when the target can say).
type RunOn = (RunReport, Option<Vec<Cycle>>, Vec<HeldInstruction>);

/// Runs the program on `target`, recording a VCD file when asked; the recorded periods are
/// kept for an HTML report's waveforms.
fn run_on<T: TapTarget>(
    target: T,
    args: &PlayArgs,
    program: &harness::program::Program,
    ports: &[VcdPort],
    progress: &mut dyn FnMut(usize),
) -> anyhow::Result<RunOn> {
    if args.vcd.is_none() && args.html.is_none() {
        let mut target = target;
        let report = Runner::new(&mut target, RunOptions::default())
            .run_observed(program, &mut |i, _| progress(i));
        return Ok((report, None, Vec::new()));
    }
    let mut recorder = Recorder::new(target);
    let report = Runner::new(&mut recorder, RunOptions::default())
        .run_observed(program, &mut |i, _| progress(i));
    if let Some(vcd) = &args.vcd {
        write_vcd_ports_file(vcd, recorder.cycles(), ports, report.tck_hz)
            .with_context(|| format!("writing {}", vcd.display()))?;
    }
    let cycles = args.html.is_some().then(|| recorder.cycles().to_vec());
    let held = held_instructions(&recorder);
    Ok((report, cycles, held))
}

/// The defects of `--defect` (YAML mappings) and `--defects FILE` (a YAML
/// list); a wrong device's BSDL path is taken relative to where it is written.
pub fn read_defects(
    flags: &[String],
    file: Option<&std::path::Path>,
) -> anyhow::Result<Vec<DefectSpec>> {
    let mut out = Vec::new();
    for (k, text) in flags.iter().enumerate() {
        let (mut d, _): (DefectSpec, _) = read_yaml(text).map_err(|e| {
            anyhow::anyhow!(
                "--defect number {}: `{}` is not a defect: {}\n\n{}",
                k + 1,
                virtual_board::clip(text),
                e.kind,
                crate::args::DEFECT_SYNTAX
            )
        })?;
        if let Some(b) = &d.bsdl {
            d.bsdl = Some(std::path::absolute(b)?);
        }
        out.push(d);
    }
    if let Some(path) = file {
        let text = std::fs::read_to_string(path)
            .with_context(|| format!("{}: cannot read the file", path.display()))?;
        let list = if defects_key(&text) {
            // A mapping with a `defects:` list, such as a scenario file.
            let (file, _): (DefectsFile, _) = read_yaml(&text).map_err(|e| bad_list(path, &e))?;
            file.defects
        } else {
            let (list, _): (Vec<DefectSpec>, _) =
                read_yaml(&text).map_err(|e| bad_list(path, &e))?;
            list
        };
        let base = path.parent().unwrap_or(std::path::Path::new("."));
        for mut d in list {
            if let Some(b) = &d.bsdl {
                d.bsdl = Some(std::path::absolute(base.join(b))?);
            }
            out.push(d);
        }
    }
    Ok(out)
}

/// The `defects:` list of a mapping (a scenario file, say); its other keys
/// are not read here.
#[derive(serde::Deserialize)]
struct DefectsFile {
    defects: Vec<DefectSpec>,
}

/// Whether a `--defects` file is a mapping with a `defects:` key rather
/// than a list.
fn defects_key(text: &str) -> bool {
    read_tree(text).is_ok_and(|tree| tree.get("defects").is_some())
}

/// A `--defects` file that does not read: its place, the reason, and the
/// two shapes the file may have.
fn bad_list(path: &std::path::Path, e: &virtual_board::YamlError) -> anyhow::Error {
    anyhow::anyhow!(
        "{}:{}:{}: {}\n\nthe file is a YAML list of defects, or a mapping with a `defects:` list (as a scenario has)\n{}",
        path.display(),
        e.span.line,
        e.span.column,
        e.kind,
        crate::args::DEFECT_SYNTAX
    )
}

fn json_of(r: &RunReport) -> serde_json::Value {
    let failures: Vec<_> = r.scans.iter().flat_map(failures_of).collect();
    json!({
        "program": r.program,
        "passed": r.passed(),
        "scans": r.scans.len(),
        "failed_scans": r.failed_scans(),
        "tck_cycles": r.tck_cycles,
        "tck_hz": r.tck_hz,
        "program_seconds": r.program_seconds(),
        "wall_seconds": r.wall_seconds,
        "hazards": r.hazards,
        "failing_bits": failures,
        "scan_records": r.scans,
        "error": r.error,
    })
}

/// Places a defect error: `--defect N: …`, or `FILE:line:col: …` for the
/// N-th entry of the `--defects` file.
pub fn locate_defect(
    from_flags: usize,
    file: Option<&std::path::Path>,
    e: virtual_board::DefectError,
) -> anyhow::Error {
    if e.index == 0 {
        return anyhow::anyhow!("{e}");
    }
    if e.index <= from_flags {
        return anyhow::anyhow!("--defect {}: {}", e.index, e.message);
    }
    let Some(path) = file else {
        return anyhow::anyhow!("{e}");
    };
    let n = e.index - from_flags;
    let text = std::fs::read_to_string(path).unwrap_or_default();
    match read_tree(&text) {
        Ok(tree) => {
            let at = if tree.get("defects").is_some() {
                tree.span_at(&[PathStep::Key("defects"), PathStep::Index(n - 1)])
            } else {
                tree.span_at(&[PathStep::Index(n - 1)])
            };
            anyhow::anyhow!(
                "{}:{}:{}: defect {n}: {}",
                path.display(),
                at.line,
                at.column,
                e.message
            )
        }
        Err(_) => anyhow::anyhow!("{}: defect {n}: {}", path.display(), e.message),
    }
}
