//! The sections of a scenario replay's report (`run`): one row per scenario, what it expected
//! and what came out, with the mismatches of those not met.

use std::fmt::Write;

use super::escape::esc;
use super::table::HtmlTable;

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
}

/// The sections of a run report: the scenarios table, then each unmet scenario's mismatches,
/// then what could not run.
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
                esc(&r.name),
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
    let unmet: Vec<&ScenarioRow> = rows.iter().filter(|r| !r.mismatches.is_empty()).collect();
    if !unmet.is_empty() {
        let mut s = String::new();
        for r in unmet {
            let _ = write!(
                s,
                "<h3>{}</h3><p>{}</p><ul>",
                esc(&r.name),
                esc(&r.description)
            );
            for m in &r.mismatches {
                let _ = write!(s, "<li>{}</li>", esc(m));
            }
            s.push_str("</ul>");
        }
        out.push(("Expectations not met".into(), "unmet".into(), s));
    }
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
    fn an_unmet_scenario_lists_its_mismatches() {
        let rows = [ScenarioRow {
            name: "open<1>.yaml".into(),
            description: "d".into(),
            expected: "fail".into(),
            outcome: "pass".into(),
            mismatches: vec!["scan 3 passed".into()],
            seconds: 0.5,
        }];
        let s = scenario_sections(&rows, &[]);
        assert_eq!(s.len(), 2);
        assert!(s[0].2.contains("<td>open&lt;1&gt;.yaml</td>"));
        assert!(s[0].2.contains("UNMET"));
        assert!(s[1].2.contains("<li>scan 3 passed</li>"));
    }
}
