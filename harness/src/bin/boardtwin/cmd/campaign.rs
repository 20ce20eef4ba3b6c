//! `boardtwin campaign` and `campaign-merge`: which single faults a program catches.

use std::io::Write;

use anyhow::Context;
use harness::campaign::{self, CampaignResult};
use harness::program::native::load_program;
use harness::{write_atomic, TextTable};

use super::Outcome;
use crate::args::{CampaignArgs, MergeArgs};

/// Builds the universe (or its shard), simulates it, prints the result.
pub fn run(args: &CampaignArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    let program = load_program(&args.program, &loaded, args.port.as_deref())?;
    let options = super::universe_options(&args.classes)?;
    let shard = match &args.shard {
        None => (1, 1),
        Some(s) => {
            let parsed = s
                .split_once('/')
                .and_then(|(i, n)| Some((i.parse::<usize>().ok()?, n.parse::<usize>().ok()?)));
            match parsed {
                Some((i, n)) if n >= 1 && (1..=n).contains(&i) => (i, n),
                _ => anyhow::bail!("--shard is I/N with 1 <= I <= N, not `{s}`"),
            }
        }
    };
    let all = campaign::universe(&loaded, &options);
    let faults = campaign::shard_of(all, shard.0, shard.1);
    let jobs = args.jobs.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    let bar = super::progress_bar(
        faults.len() as u64,
        "{bar:40} {pos}/{len} faults {per_sec} eta {eta}",
    );
    let result = campaign::run_campaign(&loaded, &program, &faults, jobs, shard, &|n| {
        bar.set_position(n as u64)
    })
    .map_err(|e| anyhow::anyhow!(e))?;
    bar.finish_and_clear();
    if let Some(path) = &args.report {
        write_atomic(path, serde_json::to_string_pretty(&result)?.as_bytes())
            .with_context(|| format!("writing {}", path.display()))?;
    }
    if let Some(path) = &args.html {
        super::html::write_campaign_html(path, &result, &loaded.board, &args.board, &args.program)?;
    }
    print(&result, args.json, out)?;
    Ok(if result.undetected == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

/// Joins shard results and prints the whole.
pub fn merge(args: &MergeArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let mut parts = Vec::new();
    for f in &args.files {
        let text = std::fs::read_to_string(f)
            .with_context(|| format!("{}: cannot read the file", f.display()))?;
        let part: CampaignResult = serde_json::from_str(&text).map_err(|e| {
            // The place goes in front, once; serde_json's message ends with it too.
            let message = e.to_string();
            let suffix = format!(" at line {} column {}", e.line(), e.column());
            anyhow::anyhow!(
                "{}:{}:{}: not a campaign result: {}",
                f.display(),
                e.line(),
                e.column(),
                message.strip_suffix(&suffix).unwrap_or(&message)
            )
        })?;
        parts.push(part);
    }
    let merged = campaign::merge(parts)?;
    print(&merged, args.json, out)?;
    Ok(if merged.undetected == 0 {
        Outcome::Passed
    } else {
        Outcome::Failed
    })
}

fn print(r: &CampaignResult, json: bool, out: &mut dyn Write) -> anyhow::Result<()> {
    if json {
        writeln!(out, "{}", serde_json::to_string_pretty(r)?)?;
        return Ok(());
    }
    writeln!(out, "campaign of {} (shard {})", r.program, r.shard)?;
    let mut t = TextTable::new(2);
    t.row([
        "class",
        "faults",
        "detected",
        "undetected",
        "untestable",
        "coverage",
    ]);
    let pct = |d: usize, f: usize, u: usize| {
        let testable = f - u;
        if testable == 0 {
            "-".to_string()
        } else {
            format!("{:.1}%", 100.0 * d as f64 / testable as f64)
        }
    };
    for (name, c) in &r.by_class {
        t.row([
            name.clone(),
            c.faults.to_string(),
            c.detected.to_string(),
            c.undetected.to_string(),
            c.untestable.to_string(),
            pct(c.detected, c.faults, c.untestable),
        ]);
    }
    t.row([
        "all".to_string(),
        r.faults.to_string(),
        r.detected.to_string(),
        r.undetected.to_string(),
        r.untestable.to_string(),
        pct(r.detected, r.faults, r.untestable),
    ]);
    write!(out, "{t}")?;
    let sizes: Vec<String> = r
        .ambiguity_groups
        .sizes
        .iter()
        .map(|(s, n)| format!("{n}×{s}"))
        .collect();
    writeln!(
        out,
        "\ndiagnostic resolution: {} ambiguity groups among {} detected faults (group size × count: {}); largest {}",
        r.ambiguity_groups.count,
        r.detected,
        sizes.join(", "),
        r.ambiguity_groups.largest
    )?;
    let missed: Vec<_> = r
        .results
        .iter()
        .filter(|x| x.verdict == "undetected")
        .collect();
    if !missed.is_empty() {
        writeln!(out, "\nundetected faults")?;
        let mut t = TextTable::new(2);
        t.row(["class", "fault", "reason"]);
        for m in missed {
            t.row([
                m.fault.class.name().to_string(),
                m.fault.label.clone(),
                m.reason.clone().unwrap_or_default(),
            ]);
        }
        write!(out, "{t}")?;
    }
    if !r.paths.is_empty() {
        let said: Vec<String> = r
            .paths
            .iter()
            .map(|(path, classes)| {
                let n: usize = classes.values().sum();
                let each: Vec<String> = classes.iter().map(|(c, k)| format!("{c} {k}")).collect();
                format!("{path} {n} ({})", each.join(", "))
            })
            .collect();
        writeln!(out, "\nevaluated by: {}", said.join("; "))?;
    }
    writeln!(
        out,
        "\n{} in {:.2} s wall, {:.1} faults/s",
        harness::count(r.faults, "fault"),
        r.wall_seconds,
        r.faults_per_second
    )?;
    Ok(())
}
