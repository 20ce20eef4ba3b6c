//! The sections of a campaign's report: coverage bars per class, the per-net map, the
//! ambiguity-group histogram, the undetected faults with their reasons, and the nets.

use std::collections::BTreeMap;
use std::fmt::Write;

use virtual_board::Board;

use super::chain::chain_svg;
use super::coverage::{ambiguity_svg, class_bars_svg, net_map, NetCoverage};
use super::escape::{esc, id_of};
use super::run_report::nets_section;
use super::table::{link, HtmlTable};
use crate::board_summary::BoardSummary;
use crate::campaign::{CampaignResult, FaultResult};

/// The nets a fault is on: the nets of a short, the net (or the pin's net) of an open, the
/// stuck net.
fn nets_of(f: &FaultResult, net_of_pin: &BTreeMap<String, String>) -> Vec<String> {
    let d = &f.fault.defect;
    let mut out: Vec<String> = d.short.clone().unwrap_or_default();
    for name in [&d.open, &d.stuck].into_iter().flatten() {
        match net_of_pin.get(name) {
            Some(net) => out.push(net.clone()),
            None => out.push(name.clone()),
        }
    }
    out
}

/// Per net: what the campaign found there, in the board's net order by name.
pub fn net_coverage(result: &CampaignResult, board: &Board) -> Vec<NetCoverage> {
    let mut net_of_pin = BTreeMap::new();
    for n in board.nets() {
        for p in &n.pins {
            net_of_pin.insert(format!("{}.{}", p.device, p.pin), n.name.clone());
        }
    }
    let mut by: BTreeMap<String, NetCoverage> = board
        .nets()
        .iter()
        .map(|n| {
            (
                n.name.clone(),
                NetCoverage {
                    net: n.name.clone(),
                    ..NetCoverage::default()
                },
            )
        })
        .collect();
    for r in &result.results {
        for net in nets_of(r, &net_of_pin) {
            let Some(c) = by.get_mut(&net) else { continue };
            match r.verdict.as_str() {
                "detected" => c.detected += 1,
                "undetected" => c.undetected += 1,
                _ => c.untestable += 1,
            }
        }
    }
    // Nets no fault of the universe touches (rails, say) stay off the map.
    by.into_values()
        .filter(|c| c.detected + c.undetected + c.untestable > 0)
        .collect()
}

/// The sections of a campaign report.
pub fn campaign_sections(result: &CampaignResult, board: &Board) -> Vec<(String, String, String)> {
    let mut out = Vec::new();
    let testable = result.faults - result.untestable;
    let mut s = String::new();
    let _ = write!(
        s,
        "<p id=\"coverage-total\">{} faults: {} detected, {} undetected, {} untestable; coverage {} of testable faults. {} ambiguity groups, the largest of {} faults. Shard {}; {:.2} s wall, {:.1} faults/s.</p>",
        result.faults,
        result.detected,
        result.undetected,
        result.untestable,
        if testable == 0 {
            "-".to_string()
        } else {
            format!("{:.1}%", 100.0 * result.detected as f64 / testable as f64)
        },
        result.ambiguity_groups.count,
        result.ambiguity_groups.largest,
        esc(&result.shard),
        result.wall_seconds,
        result.faults_per_second
    );
    s.push_str(&class_bars_svg(&result.by_class));
    out.push(("Coverage per fault class".into(), "coverage".into(), s));

    let nets = net_coverage(result, board);
    out.push(("Coverage per net".into(), "net-map".into(), net_map(&nets)));
    out.push((
        "Diagnostic resolution".into(),
        "ambiguity".into(),
        ambiguity_svg(&result.ambiguity_groups.sizes),
    ));

    let mut t = HtmlTable::new("undetected-table", &["class", "fault", "nets", "reason"]);
    let mut net_of_pin = BTreeMap::new();
    for n in board.nets() {
        for p in &n.pins {
            net_of_pin.insert(format!("{}.{}", p.device, p.pin), n.name.clone());
        }
    }
    for r in result.results.iter().filter(|r| r.verdict != "detected") {
        let nets: Vec<String> = nets_of(r, &net_of_pin)
            .iter()
            .map(|n| link(&id_of("net", n), n))
            .collect();
        t.html_row(
            None,
            vec![
                esc(r.fault.class.name()),
                esc(&r.fault.label),
                nets.join(" "),
                esc(&format!(
                    "{}{}",
                    r.verdict,
                    r.reason
                        .as_deref()
                        .map(|x| format!(": {x}"))
                        .unwrap_or_default()
                )),
            ],
        );
    }
    let body = if t.is_empty() {
        "<p>Every testable fault is detected.</p>".to_string()
    } else {
        t.render()
    };
    out.push(("Faults not detected".into(), "undetected".into(), body));

    let summary = BoardSummary::from_board(board);
    out.push((
        "Scan chains".into(),
        "chains".into(),
        chain_svg(&summary.tap_ports, &[], &[]),
    ));
    let cov: BTreeMap<String, [usize; 3]> = nets
        .iter()
        .map(|c| (c.net.clone(), [c.detected, c.undetected, c.untestable]))
        .collect();
    out.push((
        "Nets".into(),
        "nets".into(),
        nets_section(board, Some(&cov)),
    ));
    out
}
