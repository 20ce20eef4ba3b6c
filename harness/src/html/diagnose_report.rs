//! The sections of a diagnosis report (`diagnose`): the ranked explanations with the nets
//! involved and their pins to probe, chain breaks on the chain picture, the device findings.

use std::fmt::Write;

use virtual_board::Board;

use super::chain::{breaks_of, chain_svg, ChainBreak};
use super::escape::{esc, id_of};
use super::run_report::nets_section;
use super::table::{link, HtmlTable};
use crate::board_summary::BoardSummary;
use crate::diagnose::{Candidate, Diagnosis};

/// Breaks named by the explanations that fit exactly: a broken link after a device, or a
/// device whose TDO passes nothing on (stuck, dead, TMS or TCK open).
fn breaks_in(d: &Diagnosis, board: &Board) -> Vec<ChainBreak> {
    d.exact
        .iter()
        .flat_map(|c| breaks_of(&c.defects, board, |_| c.words.clone()))
        .collect()
}

/// One ranked explanation: its words, distance, and each net with its pins to probe.
fn explanation(rank: usize, c: &Candidate, exact: bool) -> String {
    let mut s = String::new();
    let _ = write!(
        s,
        "<li class=\"explanation\" data-rank=\"{rank}\" data-distance=\"{}\"><strong>{}</strong> — {}",
        c.distance,
        esc(&c.words),
        if exact {
            "explains every recorded bit".to_string()
        } else {
            format!("differs from the capture in {} recorded bits", c.distance)
        }
    );
    if !c.probes.is_empty() {
        s.push_str("<ul class=\"probes\">");
        for p in &c.probes {
            let pins: Vec<String> = p
                .pins
                .iter()
                .map(|x| format!("<span class=\"pin\">{}</span>", esc(x)))
                .collect();
            let _ = write!(
                s,
                "<li>net {}: probe {}</li>",
                link(&id_of("net", &p.net), &p.net),
                pins.join(", ")
            );
        }
        s.push_str("</ul>");
    }
    if !c.neighbours.is_empty() {
        let pairs: Vec<String> = c
            .neighbours
            .iter()
            .map(|(a, b)| format!("{}–{}", esc(a), esc(b)))
            .collect();
        let _ = write!(
            s,
            "<p>neighbouring pins to look at: {}</p>",
            pairs.join(", ")
        );
    }
    s.push_str("</li>");
    s
}

/// The sections of a diagnose report.
pub fn diagnose_sections(d: &Diagnosis, board: &Board) -> Vec<(String, String, String)> {
    let mut out = Vec::new();
    let mut s = String::new();
    let _ = write!(
        s,
        "<p id=\"diagnose-total\">{} of {} recorded compared bits fail ({} compared in the whole program); candidates found by {}; {} explanations simulated.</p>",
        d.failing_bits, d.recorded_bits, d.compared_bits, esc(&d.method), d.simulated
    );
    if !d.nets_involved.is_empty() {
        let nets: Vec<String> = d
            .nets_involved
            .iter()
            .map(|n| link(&id_of("net", n), n))
            .collect();
        let _ = write!(s, "<p>nets involved: {}</p>", nets.join(", "));
    }
    if !d.devices_involved.is_empty() {
        let _ = write!(
            s,
            "<p>devices involved: {}</p>",
            esc(&d.devices_involved.join(", "))
        );
    }
    out.push(("Summary".into(), "summary".into(), s));

    let mut s = String::from("<ol class=\"ranked\">");
    let mut rank = 0;
    for c in &d.exact {
        rank += 1;
        s.push_str(&explanation(rank, c, true));
    }
    for c in &d.nearest {
        rank += 1;
        s.push_str(&explanation(rank, c, false));
    }
    s.push_str("</ol>");
    if rank == 0 {
        s = "<p>No explanation was found.</p>".into();
    } else if d.exact.len() > 1 {
        let _ = write!(
            s,
            "<p>{} explanations fit exactly: an ambiguity group; <code>--follow-up FILE</code> writes a test that tells them apart.</p>",
            d.exact.len()
        );
    }
    out.push(("Explanations, best first".into(), "explanations".into(), s));

    if !d.devices.is_empty() {
        let mut t = HtmlTable::new("devices-table", &["device", "register", "scan", "finding"]);
        for f in &d.devices {
            t.row([
                f.device.clone(),
                f.register.clone(),
                f.scan.to_string(),
                f.words.clone(),
            ]);
        }
        out.push(("Device findings".into(), "devices".into(), t.render()));
    }
    let summary = BoardSummary::from_board(board);
    out.push((
        "Scan chains".into(),
        "chains".into(),
        chain_svg(&summary.tap_ports, &[], &breaks_in(d, board)),
    ));
    out.push(("Nets".into(), "nets".into(), nets_section(board, None)));
    out
}
