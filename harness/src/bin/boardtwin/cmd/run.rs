//! `boardtwin run [PATH ...]`: replay scenarios and check what each must give.

use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use harness::model_notes::{merge_design_warnings, tidy_path, UnmodelledAttributes};
use harness::mpsse::address::is_usb;
use harness::remote::RemoteTargets;
use harness::run::seconds;
use harness::scenario::{
    embedded, find_all, replay, replay_shown, InProcess, ScenarioError, ScenarioOutcome,
    TargetSource,
};
use harness::TextTable;

use super::Outcome;
use crate::args::RunArgs;
use harness::html::{scenario_detail, ScenarioRow};

/// Finds the scenarios, replays them on `--jobs` threads, prints the table.
pub fn run(args: &RunArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let mut _cleanup = None;
    let (paths, root) = if args.paths.is_empty() {
        let dir = std::env::temp_dir().join(format!("boardtwin-demo-{}", std::process::id()));
        _cleanup = Some(RemoveOnDrop(dir.clone()));
        let root = embedded::unpack(&dir)?;
        (find_all(&root), Some(root))
    } else {
        let mut all = Vec::new();
        let here = std::env::current_dir().ok();
        for p in &args.paths {
            if !p.exists() {
                anyhow::bail!("{}: no such file or folder", p.display());
            }
            all.extend(find_all(&shown_path(p, here.as_deref())));
        }
        (all, None)
    };
    if paths.is_empty() {
        anyhow::bail!("no scenario files found (a scenario has top-level `description:` and `programs:` keys)");
    }
    let jobs = args
        .jobs
        .unwrap_or_else(|| {
            std::thread::available_parallelism()
                .map(|n| n.get())
                .unwrap_or(1)
        })
        .max(1);
    // With --target each scenario runs on its own connection to the remote
    // board, or on the real board through the adapter, one at a time.
    let usb = args.remote.target.as_deref().is_some_and(is_usb);
    #[cfg(not(feature = "usb"))]
    if usb {
        anyhow::bail!("{}", super::target::NO_USB);
    }
    let remote = match &args.remote.target {
        Some(target) if !usb => Some(RemoteTargets {
            target: target.clone(),
            token: super::target::token(&args.remote)?,
        }),
        _ => None,
    };
    let hardware = match &args.remote.target {
        Some(target) if usb => Some(super::target::UsbTargets {
            target: target.clone(),
            pins: super::target::pins(&args.remote)?,
            shown: std::sync::atomic::AtomicBool::new(false),
            checked: args.remote.i_have_checked,
        }),
        _ => None,
    };
    if let Some(h) = &hardware {
        refuse_hazards(&paths, h.checked)?;
    }
    let jobs = if usb { 1 } else { jobs };
    let source: &(dyn TargetSource + Sync) = match (&remote, &hardware) {
        (Some(r), _) => r,
        (_, Some(h)) => h,
        _ => &InProcess,
    };
    let results: Mutex<Vec<(usize, Result<ScenarioOutcome, ScenarioError>)>> =
        Mutex::new(Vec::new());
    let next = AtomicUsize::new(0);
    let start = Instant::now();
    // A progress bar when the run takes more than a few seconds and stderr is a terminal.
    let bar = indicatif::ProgressBar::new(paths.len() as u64);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{bar:40} {pos}/{len} scenarios {msg}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    if !std::io::stderr().is_terminal() || crate::QUIET.load(Ordering::Relaxed) {
        bar.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    let shown = std::sync::atomic::AtomicBool::new(false);
    std::thread::scope(|s| {
        for _ in 0..jobs.min(paths.len()) {
            s.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                let Some(p) = paths.get(i) else { break };
                // The log names the file as the table does (below the
                // unpacked demo's temporary folder, for the demo).
                let label = match &root {
                    Some(r) => p.strip_prefix(r).unwrap_or(p),
                    None => p.as_path(),
                };
                let r = replay_shown(p, label, source, args.html.is_some());
                if let Ok(mut v) = results.lock() {
                    v.push((i, r));
                }
                if start.elapsed() > Duration::from_secs(3) && !shown.swap(true, Ordering::SeqCst) {
                    bar.reset_elapsed();
                }
                if shown.load(Ordering::SeqCst) {
                    bar.set_position(results.lock().map(|v| v.len()).unwrap_or(0) as u64);
                }
            });
        }
    });
    bar.finish_and_clear();
    let mut results = results.into_inner().unwrap_or_default();
    results.sort_by_key(|(i, _)| *i);
    let name = |p: &PathBuf| match &root {
        Some(r) => p.strip_prefix(r).unwrap_or(p).display().to_string(),
        None => p.display().to_string(),
    };
    // Messages name files by the scenario's paths: those of the unpacked
    // demo are shown below its folder, as the scenario column shows them.
    let unpacked = root.as_ref().map(|r| format!("{}/", r.display()));
    let shown = |text: &str| match &unpacked {
        Some(prefix) => text.replace(prefix.as_str(), ""),
        None => text.to_string(),
    };
    // Each design warning once for the whole run, whatever the number of
    // scenarios on the board; the demo's temporary folder is not shown.
    let mut warnings = Vec::new();
    let mut unmodelled: Vec<UnmodelledAttributes> = Vec::new();
    for o in results.iter().filter_map(|(_, r)| r.as_ref().ok()) {
        merge_design_warnings(&mut warnings, &o.design_warnings);
        for u in &o.unmodelled {
            if !unmodelled.contains(u) {
                unmodelled.push(u.clone());
            }
        }
    }
    super::show_model_notes(&warnings, &unmodelled, root.as_deref());
    let mut unmet = 0;
    let mut bad_input = Vec::new();
    let mut rows = Vec::new();
    for (i, r) in &results {
        match r {
            Ok(o) => {
                if !o.met() {
                    unmet += 1;
                }
                let mut o = o.clone();
                for m in &mut o.mismatches {
                    *m = shown(m);
                }
                rows.push((name(&paths[*i]), o));
            }
            Err(e) => bad_input.push(shown(&e.to_string())),
        }
    }
    if let Some(path) = &args.html {
        let list: Vec<ScenarioRow> = rows
            .iter()
            .map(|(n, o)| ScenarioRow {
                name: n.clone(),
                description: o.description.clone(),
                expected: o.expected.clone(),
                outcome: o.outcome.clone(),
                mismatches: o.mismatches.clone(),
                seconds: o.seconds,
                detail: scenario_detail(o, n),
            })
            .collect();
        let folders: Vec<String> = args.paths.iter().map(|p| p.display().to_string()).collect();
        super::html::write_scenarios_html(path, &list, &bad_input, &folders.join(", "))?;
    }
    if args.json {
        let list: Vec<_> = rows
            .iter()
            .map(|(n, o)| {
                serde_json::json!({
                    "scenario": n, "description": o.description, "expected": o.expected,
                    "outcome": o.outcome, "met": o.met(), "mismatches": o.mismatches, "seconds": o.seconds,
                })
            })
            .collect();
        let v = serde_json::json!({ "scenarios": list, "unmet": unmet, "errors": bad_input, "seconds": start.elapsed().as_secs_f64() });
        writeln!(out, "{}", serde_json::to_string_pretty(&v)?)?;
    } else {
        let mut t = TextTable::new(0);
        t.row(["scenario", "expected", "outcome", "verdict", "time"]);
        for (n, o) in &rows {
            t.row([
                n.clone(),
                o.expected.clone(),
                o.outcome.clone(),
                if o.met() {
                    "ok".into()
                } else {
                    "UNMET".to_string()
                },
                seconds(o.seconds),
            ]);
        }
        write!(out, "{t}")?;
        for (n, o) in &rows {
            if !o.met() {
                writeln!(out, "\n{n}: {}", o.description)?;
                for m in &o.mismatches {
                    writeln!(out, "  {m}")?;
                }
            }
        }
        writeln!(
            out,
            "\n{}, {} met, {} unmet, {} could not run, {} wall on {}",
            harness::count(results.len(), "scenario"),
            rows.len() - unmet,
            unmet,
            bad_input.len(),
            seconds(start.elapsed().as_secs_f64()),
            harness::count(jobs, "job")
        )?;
    }
    if !bad_input.is_empty() {
        anyhow::bail!("{}", bad_input.join("\n"));
    }
    Ok(if unmet == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

/// `path` as the user gave it, tidied (no `.` steps, no `dir/..` pairs), and
/// relative to `here` (the current folder) when it lies below it; every
/// path a scenario names is joined to it, so reports show them the same way.
fn shown_path(path: &Path, here: Option<&Path>) -> PathBuf {
    let tidy = tidy_path(path);
    match here.and_then(|h| tidy.strip_prefix(h).ok()) {
        Some(rel) if rel.as_os_str().is_empty() => PathBuf::from("."),
        Some(rel) => rel.to_path_buf(),
        None => tidy,
    }
}

/// Removes the unpacked demo when the command ends, however it ends.
struct RemoveOnDrop(PathBuf);

impl Drop for RemoveOnDrop {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Before scenarios go to a real board: each replayed on the virtual board
/// first, and refused when a program raised hazards there, unless the user
/// checked them (`--i-have-checked`).
fn refuse_hazards(paths: &[PathBuf], checked: bool) -> anyhow::Result<()> {
    if checked {
        return Ok(());
    }
    for p in paths {
        let local = replay(p)?;
        if let Some(run) = local.runs.iter().find(|r| !r.hazards.is_empty()) {
            anyhow::bail!(
                "{}: {} raised {} on the virtual board; check them (boardtwin play --strict) and add --i-have-checked to drive the real board anyway",
                p.display(),
                run.program,
                harness::count(run.hazards.len(), "hazard")
            );
        }
    }
    Ok(())
}
