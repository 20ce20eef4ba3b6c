//! The sections of a comparison's report (`compare`): differing bits per device and per net
//! with both values, the scan-level differences, the chains and the nets.

use std::collections::BTreeMap;
use std::fmt::Write;

use virtual_board::Board;

use super::chain::chain_svg;
use super::escape::{esc, id_of};
use super::run_report::nets_section;
use super::table::{link, HtmlTable};
use crate::board_summary::BoardSummary;
use crate::capture::Comparison;

/// Horizontal bars of counts, one per name, linking to `link_kind` ids when set.
fn count_bars(class: &str, counts: &BTreeMap<String, usize>, link_kind: Option<&str>) -> String {
    let most = counts.values().copied().max().unwrap_or(0).max(1);
    let row = 22;
    let width = 720;
    let height = counts.len() * row + 8;
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg class=\"{class}\" viewBox=\"0 0 {width} {height}\" width=\"{width}\" height=\"{height}\" role=\"img\">"
    );
    for (k, (name, n)) in counts.iter().enumerate() {
        let y = k * row + 4;
        let w = 420 * n / most;
        let label = match link_kind {
            Some(kind) => format!(
                "<a href=\"#{}\"><text x=\"0\" y=\"{}\">{}</text></a>",
                id_of(kind, name),
                y + 13,
                esc(name)
            ),
            None => format!("<text x=\"0\" y=\"{}\">{}</text>", y + 13, esc(name)),
        };
        let _ = write!(
            s,
            "<g class=\"count-bar\" data-name=\"{}\" data-count=\"{n}\">{label}<rect x=\"200\" y=\"{y}\" width=\"{w}\" height=\"16\" fill=\"#c94040\"/><text x=\"{}\" y=\"{}\">{n}</text></g>",
            esc(name),
            206 + w,
            y + 13
        );
    }
    s.push_str("</svg>");
    s
}

/// The sections of a compare report.
pub fn compare_sections(c: &Comparison, board: &Board) -> Vec<(String, String, String)> {
    let mut out = Vec::new();
    let mut s = String::new();
    let in_program = c.bits.iter().filter(|b| b.program_compares).count();
    let _ = write!(
        s,
        "<p id=\"compare-total\">{} and {} compared ({} of them compared by the program): <span id=\"compare-issues\">{}</span>, <span id=\"compare-bits\" data-bits=\"{}\" data-in-program=\"{in_program}\">{} {} ({in_program} of them compared by the program)</span>.</p>",
        crate::count(c.scans_compared, "scan pair"),
        crate::count(c.bits_compared, "TDO bit"),
        c.program_bits_compared,
        crate::count(c.issues.len(), "scan-level difference"),
        c.bits.len(),
        crate::count(c.bits.len(), "TDO bit"),
        if c.bits.len() == 1 { "differs" } else { "differ" },
    );
    if !c.issues.is_empty() {
        s.push_str("<ul class=\"issues\">");
        for i in &c.issues {
            let _ = write!(s, "<li>{}</li>", esc(&i.to_string()));
        }
        s.push_str("</ul>");
    }
    out.push(("Summary".into(), "summary".into(), s));
    if !c.bits.is_empty() {
        let mut per_device: BTreeMap<String, usize> = BTreeMap::new();
        let mut per_net: BTreeMap<String, usize> = BTreeMap::new();
        for b in &c.bits {
            let dev = b.device.clone().unwrap_or_else(|| "(unplaced)".into());
            *per_device.entry(dev).or_default() += 1;
            if let Some(n) = &b.net {
                *per_net.entry(n.clone()).or_default() += 1;
            }
        }
        let mut s = String::from("<h3>per device</h3>");
        s.push_str(&count_bars("per-device", &per_device, None));
        s.push_str("<h3>per net</h3>");
        s.push_str(&count_bars("per-net", &per_net, Some("net")));
        out.push((
            "Differing bits per device and net".into(),
            "per-place".into(),
            s,
        ));
        let mut t = HtmlTable::new(
            "differences-table",
            &[
                "port",
                "run scan",
                "capture scan",
                "bit",
                "run",
                "capture",
                "device",
                "register",
                "cell",
                "function",
                "pin",
                "net",
                "in program",
            ],
        );
        for b in &c.bits {
            let opt = |v: &Option<String>| esc(v.as_deref().unwrap_or(""));
            t.html_row(
                None,
                vec![
                    esc(&b.tap_port),
                    b.sim_scan.to_string(),
                    b.real_scan.to_string(),
                    b.bit.to_string(),
                    u8::from(b.simulated).to_string(),
                    u8::from(b.real).to_string(),
                    opt(&b.device),
                    opt(&b.register),
                    b.register_bit.map(|x| x.to_string()).unwrap_or_default(),
                    opt(&b.function),
                    opt(&b.pin),
                    b.net
                        .as_deref()
                        .map(|n| link(&id_of("net", n), n))
                        .unwrap_or_default(),
                    if b.program_compares { "yes" } else { "no" }.to_string(),
                ],
            );
        }
        out.push(("Differing bits".into(), "differences".into(), t.render()));
    }
    let summary = BoardSummary::from_board(board);
    out.push((
        "Scan chains".into(),
        "chains".into(),
        chain_svg(&summary.tap_ports, &[], &[]),
    ));
    out.push(("Nets".into(), "nets".into(), nets_section(board, None)));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bars_scale_to_the_largest_count_and_link_nets() {
        let counts = BTreeMap::from([("A".to_string(), 4), ("B<".to_string(), 2)]);
        let svg = count_bars("per-net", &counts, Some("net"));
        assert!(svg.contains("data-name=\"A\" data-count=\"4\""));
        assert!(svg.contains("width=\"420\""));
        assert!(svg.contains("width=\"210\""));
        assert!(svg.contains("href=\"#net-B.3C\""));
    }
}
