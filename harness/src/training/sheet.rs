//! The instructor's score sheet (one row per trainee, CSV and JSON) and the
//! trainee's debrief, which walks from the evidence to the answer.

use serde::{Deserialize, Serialize};

use super::desk::Costs;
use super::grade::{Grade, Verdict};
use super::safety::{on_a_real_board, SAFETY};

/// One trainee's graded submission.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Score {
    /// The trainee's name.
    pub trainee: String,
    /// The verdict.
    pub verdict: Verdict,
    /// Points out of 100.
    pub points: u32,
    /// The diagnosis, in repair words.
    pub submitted: Vec<String>,
    /// The answer, in repair words.
    pub answer: Vec<String>,
    /// What grading found (group, evidence).
    pub grade: Grade,
    /// What the work cost.
    pub costs: Costs,
    /// True when the desk's record stopped before the submission.
    pub record_full: bool,
}

/// The score sheet as CSV: a header, then one row per trainee.
pub fn score_csv(scores: &[Score]) -> String {
    let mut out = String::from(
        "trainee,verdict,points,submitted,answer,group_size,scans,tck,seconds,hazards\n",
    );
    for s in scores {
        let hazards: u64 = s.costs.hazards.values().sum();
        let row = [
            s.trainee.clone(),
            serde_json::to_value(s.verdict)
                .ok()
                .and_then(|v| v.as_str().map(String::from))
                .unwrap_or_default(),
            s.points.to_string(),
            s.submitted.join("; "),
            s.answer.join("; "),
            s.grade.group_size.to_string(),
            s.costs.scans.to_string(),
            s.costs.tck.to_string(),
            format!("{:.1}", s.costs.seconds),
            hazards.to_string(),
        ];
        let cells: Vec<String> = row.iter().map(|c| csv_cell(c)).collect();
        out += &cells.join(",");
        out.push('\n');
    }
    out
}

/// A CSV cell, quoted when it holds a comma, quote or line break (RFC 4180).
fn csv_cell(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// The trainee's debrief: what they ran, what the scans saw, where that
/// points, the answer, what it cost, and the safety note.
pub fn debrief(s: &Score) -> String {
    let mut out = format!(
        "Debrief for {}: {} ({} points)\n\n",
        s.trainee,
        s.verdict.words(),
        s.points
    );
    out += &format!(
        "What you ran: {} scans, {} TCK periods, over {:.0} s.\n",
        s.costs.scans, s.costs.tck, s.costs.seconds
    );
    let g = &s.grade;
    if g.differing_bits == 0 {
        out += "The evidence: none of the bits your scans captured differ from the board as designed, \
                so what you ran could not see the defect. An interconnect test over every net is the place to start.\n";
    } else {
        out += &format!(
            "The evidence: {} captured bits differ from the board as designed.\n",
            g.differing_bits
        );
        if !g.differing_nets.is_empty() {
            out += "Placed on the board, the failing boundary cells read these nets:\n";
            for (net, n) in &g.differing_nets {
                out += &format!("  {net}: {}\n", crate::count(*n as usize, "failing bit"));
            }
        }
    }
    if g.group_size > 0 {
        out += &format!(
            "What you ran cannot tell apart {} (its ambiguity group){}:\n",
            crate::count(g.group_size, "single fault"),
            if g.group_size > g.group.len() {
                ", the first of them"
            } else {
                ""
            }
        );
        for label in &g.group {
            out += &format!("  {label}\n");
        }
        if g.group_size > 1 {
            out += "A follow-up test over these nets (`boardtwin diagnose --follow-up`) would tell them apart.\n";
        }
    }
    out += &format!("\nYour diagnosis: {}\n", list(&s.submitted));
    out += &format!("The answer: {}\n", list(&s.answer));
    if s.record_full {
        out += "(Your requests were more than a desk records; grading used the first of them.)\n";
    }
    if !s.costs.hazards.is_empty() {
        out += "\nHazards your requests raised, and what they would do on a real board:\n";
        for (kind, n) in &s.costs.hazards {
            out += &format!("  {kind} ({n}): {}\n", on_a_real_board(kind));
        }
    }
    out += "\n";
    out += SAFETY;
    out.push('\n');
    out
}

fn list(items: &[String]) -> String {
    if items.is_empty() {
        "nothing".into()
    } else {
        items.join("; ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_quotes_per_rfc_4180() {
        // RFC 4180 section 2, rules 6 and 7: fields with commas or quotes
        // are enclosed in quotes, and a quote inside is doubled.
        assert_eq!(csv_cell("a,b"), "\"a,b\"");
        assert_eq!(csv_cell("say \"x\""), "\"say \"\"x\"\"\"");
        assert_eq!(csv_cell("plain"), "plain");
    }
}
