//! The sections of a scenario replay's report (`run`): one row per scenario, what it expected
//! and what came out, each linking to its own section: its chains (with the instructions held
//! and the breaks its defects make), its mismatches and its failing scans as waveforms.

use std::fmt::Write;

use super::chain::{breaks_of, chain_svg};
use super::escape::{esc, id_of};
use super::run_report::failing_waves;
use super::table::{link, HtmlTable};
use crate::board_summary::BoardSummary;
use crate::scenario::ScenarioOutcome;
use virtual_board::DefectSpec;

/// At most this many failing scans of one program are drawn in a scenario's section.
pub const SCENARIO_WAVES: usize = 3;

/// One scenario as replayed.
#[derive(Clone, Debug, PartialEq)]
pub struct ScenarioRow {
    /// Its file name.
    pub name: String,
    /// What it sets up.
    pub description: String,
    /// The outcome it expects.
    pub expected: String,
    /// The outcome it had.
    pub outcome: String,
    /// Its expectations that did not hold.
    pub mismatches: Vec<String>,
    /// Wall seconds.
    pub seconds: f64,
    /// Its section's pictures (HTML, from [`scenario_detail`]; empty for none).
    pub detail: String,
}

/// The pictures of one replayed scenario: the chains after its last program (instructions
/// held, breaks its defects make), then each program's verdict and failing scans drawn.
pub fn scenario_detail(o: &ScenarioOutcome, name: &str) -> String {
    let Some(board) = &o.board else {
        return String::new();
    };
    let mut s = String::new();
    if !o.defects.is_empty() {
        s.push_str("<p>Defects injected:</p><ul class=\"defects\">");
        for d in &o.defects {
            let _ = write!(s, "<li>{}</li>", esc(&d.describe()));
        }
        s.push_str("</ul>");
    }
    let summary = BoardSummary::from_board(board);
    let breaks = breaks_of(&o.defects, board, DefectSpec::describe);
    s.push_str("<h4>Scan chains after the last program</h4>");
    s.push_str(&chain_svg(&summary.tap_ports, &o.held, &breaks));
    for (k, run) in o.runs.iter().enumerate() {
        let verdict = match &run.error {
            Some(e) => format!("stopped: {e}"),
            None if run.passed() => "passed".to_string(),
            None => format!(
                "failed ({} of {} scans)",
                run.failed_scans(),
                run.scans.len()
            ),
        };
        let _ = write!(
            s,
            "<h4 class=\"program\" data-passed=\"{}\">{}: {}</h4>",
            run.passed(),
            esc(&run.program),
            esc(&verdict)
        );
        if let Some(Some(cycles)) = o.cycles.get(k) {
            if run.failed_scans() > 0 {
                let prefix = format!("{}-{k}-", id_of("scenario", name));
                s.push_str(&failing_waves(run, board, cycles, SCENARIO_WAVES, &prefix));
            }
        }
    }
    s
}

/// The sections of a run report: the scenarios table (each name links to its section), each
/// scenario's section (folded when met), then what could not run.
pub fn scenario_sections(rows: &[ScenarioRow], errors: &[String]) -> Vec<(String, String, String)> {
    let mut t = HtmlTable::new(
        "scenarios-table",
        &[
            "scenario",
            "description",
            "expected",
            "outcome",
            "verdict",
            "seconds",
        ],
    );
    for r in rows {
        let met = r.mismatches.is_empty();
        t.html_row(
            None,
            vec![
                link(&id_of("scenario", &r.name), &r.name),
                esc(&r.description),
                esc(&r.expected),
                esc(&r.outcome),
                if met {
                    "<span class=\"pass\">ok</span>".into()
                } else {
                    "<span class=\"fail\">UNMET</span>".into()
                },
                format!("{:.3}", r.seconds),
            ],
        );
    }
    let mut out = vec![("Scenarios".into(), "scenarios".into(), t.render())];
    let mut s = String::new();
    for r in rows {
        let met = r.mismatches.is_empty();
        let _ = write!(
            s,
            "<details class=\"scenario\" id=\"{}\" data-scenario=\"{}\" data-verdict=\"{}\"{}><summary><strong>{}</strong> — <span class=\"{}\">{}</span>: {}</summary><p>{}</p>",
            id_of("scenario", &r.name),
            esc(&r.name),
            if met { "ok" } else { "UNMET" },
            if met { "" } else { " open" },
            esc(&r.name),
            if met { "pass" } else { "fail" },
            if met { "expectations met" } else { "UNMET" },
            esc(&r.outcome),
            esc(&r.description)
        );
        if !met {
            s.push_str("<ul class=\"mismatches\">");
            for m in &r.mismatches {
                let _ = write!(s, "<li>{}</li>", esc(m));
            }
            s.push_str("</ul>");
        }
        s.push_str(&r.detail);
        s.push_str("</details>");
    }
    out.push(("Scenario by scenario".into(), "by-scenario".into(), s));
    if !errors.is_empty() {
        let mut s = String::from("<ul>");
        for e in errors {
            let _ = write!(s, "<li><pre>{}</pre></li>", esc(e));
        }
        s.push_str("</ul>");
        out.push(("Could not run".into(), "errors".into(), s));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_scenario_has_its_section_linked_from_the_table() {
        let row = |name: &str, mismatches: Vec<String>| ScenarioRow {
            name: name.into(),
            description: "d".into(),
            expected: "fail".into(),
            outcome: "all passed".into(),
            mismatches,
            seconds: 0.5,
            detail: "<svg class=\"chains\"></svg>".into(),
        };
        let rows = [
            row("open<1>.yaml", vec!["scan 3 passed".into()]),
            row("good.yaml", vec![]),
        ];
        let s = scenario_sections(&rows, &[]);
        assert_eq!(s.len(), 2);
        let table = &s[0].2;
        assert!(table.contains("<a href=\"#scenario-open.3C1.3E.2Eyaml\">open&lt;1&gt;.yaml</a>"));
        assert!(table.contains("UNMET"));
        let details = &s[1].2;
        // The unmet one is open, with its mismatches; the met one folded.
        assert!(details.contains(
            "id=\"scenario-open.3C1.3E.2Eyaml\" data-scenario=\"open&lt;1&gt;.yaml\" data-verdict=\"UNMET\" open>"
        ));
        assert!(details.contains("<li>scan 3 passed</li>"));
        assert!(details.contains(
            "id=\"scenario-good.2Eyaml\" data-scenario=\"good.yaml\" data-verdict=\"ok\">"
        ));
        assert_eq!(details.matches("<svg class=\"chains\">").count(), 2);
    }
}
