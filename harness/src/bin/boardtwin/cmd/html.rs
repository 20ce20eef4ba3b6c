//! `--html FILE`: each command's report as one self-contained HTML file, written atomically.

use std::path::Path;

use anyhow::Context;
use harness::campaign::CampaignResult;
use harness::capture::Comparison;
use harness::diagnose::Diagnosis;
use harness::html::{
    campaign_sections, compare_sections, diagnose_sections, run_sections, scenario_sections, Meta,
    Report, RunExtras, ScenarioRow,
};
use harness::run::RunReport;
use harness::write_atomic;
use virtual_board::Board;

/// Writes `report` to `path` (whole or not at all) and says so at `-v`.
fn write(path: &Path, report: &Report) -> anyhow::Result<()> {
    let started = std::time::Instant::now();
    let html = report.render();
    write_atomic(path, html.as_bytes()).with_context(|| format!("writing {}", path.display()))?;
    tracing::info!(
        "wrote {} ({} bytes in {:.3} s)",
        path.display(),
        html.len(),
        started.elapsed().as_secs_f64()
    );
    Ok(())
}

fn meta(board: &Path, program: &Path) -> Meta {
    Meta::now(&board.display().to_string(), &program.display().to_string())
}

/// The report of a run (`play`).
pub fn write_run_html(
    path: &Path,
    run: &RunReport,
    board: &Board,
    board_file: &Path,
    program_file: &Path,
    extras: &RunExtras<'_>,
) -> anyhow::Result<()> {
    let verdict = match &run.error {
        Some(e) => format!("stopped: {e}"),
        None if run.passed() => format!("{}: passed", run.program),
        None => format!(
            "{}: failed ({} of {} scans)",
            run.program,
            run.failed_scans(),
            run.scans.len()
        ),
    };
    let report = Report {
        title: format!("boardtwin run of {}", run.program),
        meta: meta(board_file, program_file),
        verdict,
        passed: run.passed(),
        sections: run_sections(run, board, extras),
    };
    write(path, &report)
}

/// The report of a campaign.
pub fn write_campaign_html(
    path: &Path,
    result: &CampaignResult,
    board: &Board,
    board_file: &Path,
    program_file: &Path,
) -> anyhow::Result<()> {
    let testable = result.faults - result.untestable;
    let verdict = format!(
        "{} of {} testable faults detected, {} undetected",
        result.detected, testable, result.undetected
    );
    let report = Report {
        title: format!("boardtwin campaign of {}", result.program),
        meta: meta(board_file, program_file),
        verdict,
        passed: result.undetected == 0,
        sections: campaign_sections(result, board),
    };
    write(path, &report)
}

/// The report of a comparison with a real capture.
pub fn write_compare_html(
    path: &Path,
    comparison: &Comparison,
    board: &Board,
    board_file: &Path,
    program_file: &Path,
) -> anyhow::Result<()> {
    let verdict = if comparison.is_match() {
        "the capture equals the run".to_string()
    } else {
        format!(
            "the capture differs: {}, {} ({} of them compared by the program)",
            harness::count(comparison.issues.len(), "scan-level difference"),
            harness::count(comparison.bits.len(), "TDO bit"),
            comparison
                .bits
                .iter()
                .filter(|b| b.program_compares)
                .count()
        )
    };
    let report = Report {
        title: format!("boardtwin comparison of {}", comparison.program),
        meta: meta(board_file, program_file),
        verdict,
        passed: comparison.is_match(),
        sections: compare_sections(comparison, board),
    };
    write(path, &report)
}

/// The report of a diagnosis.
pub fn write_diagnose_html(
    path: &Path,
    d: &Diagnosis,
    board: &Board,
    board_file: &Path,
    programs: &str,
) -> anyhow::Result<()> {
    let verdict = if d.failing_bits == 0 {
        "the capture matches the good board".to_string()
    } else {
        format!(
            "{} failing bits; {} explanations fit exactly",
            d.failing_bits,
            d.exact.len()
        )
    };
    let report = Report {
        title: "boardtwin diagnosis".to_string(),
        meta: Meta::now(&board_file.display().to_string(), programs),
        verdict,
        passed: d.failing_bits == 0,
        sections: diagnose_sections(d, board),
    };
    write(path, &report)
}

/// The report of a scenario replay.
pub fn write_scenarios_html(
    path: &Path,
    rows: &[ScenarioRow],
    errors: &[String],
    scenarios: &str,
) -> anyhow::Result<()> {
    let unmet = rows.iter().filter(|r| !r.mismatches.is_empty()).count();
    let report = Report {
        title: "boardtwin scenario replay".to_string(),
        meta: Meta::now("(each scenario names its board)", scenarios),
        verdict: format!(
            "{} scenarios: {} met, {unmet} unmet, {} could not run",
            rows.len() + errors.len(),
            rows.len() - unmet,
            errors.len()
        ),
        passed: unmet == 0 && errors.is_empty(),
        sections: scenario_sections(rows, errors),
    };
    write(path, &report)
}
