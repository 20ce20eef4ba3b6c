//! The document: header (board, program, date, tool version, command line), style sheet,
//! sections, and the script that sorts and filters tables.

use std::fmt::Write;

use super::escape::esc;

/// What every report says about where it came from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Meta {
    /// The board file (or board name).
    pub board: String,
    /// The program file (or program name).
    pub program: String,
    /// When the report was made, `YYYY-MM-DD hh:mm:ss UTC`.
    pub date: String,
    /// The tool's name and version.
    pub version: String,
    /// The command line that made the report.
    pub command: String,
}

impl Meta {
    /// Meta for this process: the date is now, the command line this process's arguments.
    pub fn now(board: &str, program: &str) -> Meta {
        let secs = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map(|d| d.as_secs())
            .unwrap_or(0);
        let command = std::env::args()
            .map(|a| quote_arg(&a))
            .collect::<Vec<_>>()
            .join(" ");
        Meta {
            board: board.to_string(),
            program: program.to_string(),
            date: utc_date(secs),
            version: format!("boardtwin {}", env!("CARGO_PKG_VERSION")),
            command,
        }
    }
}

/// An argument as a shell would need it: bare when plain, single-quoted otherwise.
fn quote_arg(a: &str) -> String {
    let plain = !a.is_empty()
        && a.bytes()
            .all(|b| b.is_ascii_alphanumeric() || b"-_./=:,+@%".contains(&b));
    if plain {
        a.to_string()
    } else {
        format!("'{}'", a.replace('\'', r"'\''"))
    }
}

/// `secs` after 1970-01-01 00:00:00 UTC as `YYYY-MM-DD hh:mm:ss UTC` (the proleptic
/// Gregorian calendar; days to a civil date as in H. Hinnant's `civil_from_days`).
pub fn utc_date(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02} {:02}:{:02}:{:02} UTC",
        rem / 3600,
        rem / 60 % 60,
        rem % 60
    )
}

/// A whole report: a title, where it came from, and its sections (HTML already escaped).
#[derive(Clone, Debug)]
pub struct Report {
    /// The title (plain text).
    pub title: String,
    /// Board, program, date, version, command.
    pub meta: Meta,
    /// One-line verdict shown under the title (plain text).
    pub verdict: String,
    /// Whether the verdict is a pass.
    pub passed: bool,
    /// Sections, in order: (heading, id, HTML body).
    pub sections: Vec<(String, String, String)>,
}

impl Report {
    /// The complete HTML document.
    pub fn render(&self) -> String {
        let body_len: usize = self.sections.iter().map(|s| s.2.len()).sum();
        let mut h = String::with_capacity(body_len + 8192);
        h.push_str("<!doctype html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n");
        // No request may leave the file: the policy forbids every outside source.
        h.push_str("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'; img-src data:\">\n");
        let _ = writeln!(h, "<title>{}</title>", esc(&self.title));
        let _ = writeln!(h, "<style>{STYLE}</style></head><body>");
        let _ = writeln!(h, "<header><h1>{}</h1>", esc(&self.title));
        let _ = writeln!(
            h,
            "<p class=\"verdict {}\" id=\"verdict\">{}</p>",
            if self.passed { "pass" } else { "fail" },
            esc(&self.verdict)
        );
        h.push_str("<dl class=\"meta\">");
        let m = &self.meta;
        for (k, v) in [
            ("board", &m.board),
            ("program", &m.program),
            ("date", &m.date),
            ("tool", &m.version),
            ("command", &m.command),
        ] {
            let _ = write!(h, "<dt>{k}</dt><dd id=\"meta-{k}\">{}</dd>", esc(v));
        }
        h.push_str("</dl>");
        if self.sections.len() > 1 {
            h.push_str("<nav>");
            for (title, id, _) in &self.sections {
                let _ = write!(h, "<a href=\"#{id}\">{}</a> ", esc(title));
            }
            h.push_str("</nav>");
        }
        h.push_str("</header>\n");
        for (title, id, body) in &self.sections {
            // A long section (a board's thousands of nets) is laid out only when scrolled to.
            let long = if body.len() > LONG_SECTION {
                " class=\"long\""
            } else {
                ""
            };
            let _ = write!(
                h,
                "<section id=\"{id}\"{long}><h2>{}</h2>\n{body}</section>\n",
                esc(title)
            );
        }
        let _ = writeln!(h, "<script>{SCRIPT}</script></body></html>");
        h
    }
}

/// Bytes of HTML above which a section is laid out only when it comes into view.
const LONG_SECTION: usize = 256 * 1024;

const STYLE: &str = r#"
body{font:14px/1.4 system-ui,sans-serif;margin:1.5em;color:#222}
h1{font-size:1.5em;margin:0 0 .3em}h2{font-size:1.2em;border-bottom:1px solid #ccc;margin-top:1.6em}
.verdict{font-weight:bold;padding:.3em .6em;display:inline-block;border-radius:3px}
.pass{background:#d8f0d8}.fail{background:#f6d5d5}
dl.meta{display:grid;grid-template-columns:max-content auto;gap:.1em 1em;margin:.6em 0}
dl.meta dt{color:#666}dl.meta dd{margin:0;font-family:monospace;word-break:break-all}
nav a{margin-right:1em}
table{border-collapse:collapse;margin:.5em 0}th,td{border:1px solid #ccc;padding:.15em .5em;text-align:left}
th{background:#f0f0f0;cursor:pointer;user-select:none}th.asc::after{content:" \25B2"}th.desc::after{content:" \25BC"}
td.num{text-align:right;font-variant-numeric:tabular-nums}
tr:target,li:target{background:#fff3b0}
input.filter{margin:.3em 0;padding:.2em;width:20em}
details.scenario{border:1px solid #ccc;border-radius:3px;padding:.3em .6em;margin:.4em 0}details.scenario>summary{cursor:pointer}
svg{max-width:100%;height:auto}svg text{font:11px monospace}
.detected{fill:#4a9e4a;background:#4a9e4a}.undetected{fill:#c94040;background:#c94040}.untestable{fill:#999;background:#999}
.netmap{display:flex;flex-wrap:wrap;gap:2px}.netmap a{width:12px;height:12px;display:block}
.legend span{display:inline-block;width:12px;height:12px;margin:0 .3em 0 1em;vertical-align:middle}
section.long{content-visibility:auto;contain-intrinsic-size:auto 3000px}
@media print{section.long{content-visibility:visible}nav,input.filter{display:none}th{cursor:auto}section{break-inside:avoid-page}body{margin:0}}
"#;

/// Sorts a table on a header click (numbers as numbers) and filters its rows by the text of
/// the input before it.
const SCRIPT: &str = r#"
"use strict";
document.querySelectorAll("table.sortable").forEach(function (table) {
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function (th, col) {
    th.addEventListener("click", function () {
      var asc = !th.classList.contains("asc");
      Array.prototype.forEach.call(heads, function (h) { h.classList.remove("asc", "desc"); });
      th.classList.add(asc ? "asc" : "desc");
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      var key = function (r) { var t = r.cells[col].textContent.trim(); var n = Number(t); return t !== "" && !isNaN(n) ? n : t; };
      rows.sort(function (a, b) {
        var x = key(a), y = key(b), c;
        if (typeof x === "number" && typeof y === "number") { c = x - y; } else { c = String(x).localeCompare(String(y), undefined, {numeric: true}); }
        return asc ? c : -c;
      });
      rows.forEach(function (r) { body.appendChild(r); });
    });
  });
});
// A link to a folded section unfolds it; printing unfolds every section.
function openTarget() {
  var t = location.hash && document.getElementById(decodeURIComponent(location.hash.slice(1)));
  if (t && t.tagName === "DETAILS") { t.open = true; }
}
window.addEventListener("hashchange", openTarget);
openTarget();
window.addEventListener("beforeprint", function () {
  document.querySelectorAll("details").forEach(function (d) { d.open = true; });
});
document.querySelectorAll("input.filter").forEach(function (input) {
  var table = document.getElementById(input.dataset.table);
  input.addEventListener("input", function () {
    var words = input.value.toLowerCase().split(/\s+/).filter(Boolean);
    Array.prototype.forEach.call(table.tBodies[0].rows, function (r) {
      var text = r.textContent.toLowerCase();
      r.hidden = !words.every(function (w) { return text.indexOf(w) >= 0; });
    });
  });
});
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_match_worked_examples() {
        // The epoch, and 2000-03-01 (a leap-century day): 951868800 s, worked out by hand
        // (30 years of 365 days + 7 leap days = 10957 days to 2000-01-01, + 31 + 29 days).
        assert_eq!(utc_date(0), "1970-01-01 00:00:00 UTC");
        assert_eq!(utc_date(951_868_800), "2000-03-01 00:00:00 UTC");
        assert_eq!(utc_date(951_868_800 - 1), "2000-02-29 23:59:59 UTC");
    }

    #[test]
    fn arguments_are_quoted_when_a_shell_would_need_it() {
        assert_eq!(quote_arg("--html"), "--html");
        assert_eq!(quote_arg("a b"), "'a b'");
        assert_eq!(quote_arg("it's"), r"'it'\''s'");
    }

    #[test]
    fn a_report_carries_its_origin_escaped() {
        let r = Report {
            title: "run <1>".into(),
            meta: Meta {
                board: "b<&>.yaml".into(),
                program: "p.svf".into(),
                date: utc_date(0),
                version: "boardtwin 0".into(),
                command: "boardtwin play".into(),
            },
            verdict: "passed".into(),
            passed: true,
            sections: vec![("One".into(), "one".into(), "<p>x</p>".into())],
        };
        let h = r.render();
        assert!(h.starts_with("<!doctype html>"));
        assert!(h.contains("<title>run &lt;1&gt;</title>"));
        assert!(h.contains("<dd id=\"meta-board\">b&lt;&amp;&gt;.yaml</dd>"));
        assert!(h.contains("<section id=\"one\"><h2>One</h2>\n<p>x</p></section>"));
        assert!(!h.contains("http://") && !h.contains("https://"));
    }
}
