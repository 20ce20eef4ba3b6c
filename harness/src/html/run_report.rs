//! The sections of a run's report (`play`, `run`): chains, failing bits, a waveform per
//! failing scan, and the nets with their pins.

use std::collections::BTreeMap;
use std::fmt::Write;

use virtual_board::{Board, HeldInstruction, TapState};

use super::chain::{chain_svg, ChainBreak};
use super::escape::{esc, id_of};
use super::table::{link, HtmlTable};
use super::waveform::{shift_windows, states_of, waveform_svg, WaveWindow};
use crate::board_summary::BoardSummary;
use crate::run::{failures_of, hazard_columns, BitFailure, RunReport};
use crate::vcd::Cycle;

/// At most this many failing scans get a waveform; the table lists every failing bit.
pub const MAX_WAVES: usize = 24;

/// Periods drawn on either side of a failing bit.
const AROUND: usize = 10;

/// Where one scan's bits are on its port's recording.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ScanWave {
    /// The scan's index in the run.
    pub scan: usize,
    /// The TCK count (on its port, from 0) of the period that shifts bit 0.
    pub shift_tck: usize,
}

/// What a run's report draws beside the run itself.
#[derive(Clone, Copy, Debug, Default)]
pub struct RunExtras<'a> {
    /// The run's recording (every port), when made: the waveforms come from it.
    pub cycles: Option<&'a [Cycle]>,
    /// The instruction each device holds at the end, when the target can say.
    pub held: &'a [HeldInstruction],
    /// Where the chains break (the defects injected).
    pub breaks: &'a [ChainBreak],
}

/// The sections of a run report.
pub fn run_sections(
    report: &RunReport,
    board: &Board,
    extras: &RunExtras<'_>,
) -> Vec<(String, String, String)> {
    let summary = BoardSummary::from_board(board);
    let failures: Vec<BitFailure> = report.scans.iter().flat_map(failures_of).collect();
    let mut out = Vec::new();

    let mut s = String::new();
    let _ = write!(
        s,
        "<table class=\"facts\"><tbody><tr><th>scans</th><td class=\"num\" id=\"scan-count\">{}</td></tr><tr><th>failed scans</th><td class=\"num\" id=\"failed-scans\">{}</td></tr><tr><th>failing bits</th><td class=\"num\" id=\"failing-bits\">{}</td></tr><tr><th>TCK cycles</th><td class=\"num\">{}</td></tr><tr><th>TCK</th><td>{:.0} Hz</td></tr><tr><th>hazards</th><td class=\"num\">{}</td></tr></tbody></table>",
        report.scans.len(),
        report.failed_scans(),
        failures.len(),
        report.tck_cycles,
        report.tck_hz,
        report.hazards.len()
    );
    if let Some(e) = &report.error {
        let _ = write!(
            s,
            "<p class=\"fail\">the program stopped: {}</p>",
            esc(&e.to_string())
        );
    }
    if !report.hazards.is_empty() {
        let mut t = HtmlTable::new(
            "hazards-table",
            &["scan", "port", "cycle", "hazard", "net", "drivers"],
        );
        for h in &report.hazards {
            let (port, cycle, net, drivers) = hazard_columns(&h.event);
            t.row([
                h.scan.map(|s| s.to_string()).unwrap_or_default(),
                port,
                cycle.to_string(),
                match h.repeats {
                    1 => h.event.kind().to_string(),
                    _ => format!("{} {}", h.event.kind(), h.times()),
                },
                net,
                drivers,
            ]);
        }
        s.push_str(&t.render());
    }
    out.push(("Summary".into(), "summary".into(), s));

    out.push((
        "Scan chains".into(),
        "chains".into(),
        chain_svg(&summary.tap_ports, extras.held, extras.breaks),
    ));

    if !failures.is_empty() {
        let mut t = HtmlTable::new(
            "failing-bits-table",
            &[
                "scan", "port", "bit", "expected", "captured", "device", "register", "cell",
                "function", "pin", "net",
            ],
        );
        for f in &failures {
            let opt = |v: &Option<String>| esc(v.as_deref().unwrap_or(""));
            t.html_row(
                Some(format!("bit-{}-{}", f.scan, f.bit)),
                vec![
                    f.scan.to_string(),
                    esc(&f.tap_port),
                    f.bit.to_string(),
                    u8::from(f.expected).to_string(),
                    u8::from(f.captured).to_string(),
                    opt(&f.device),
                    opt(&f.register),
                    f.register_bit.map(|b| b.to_string()).unwrap_or_default(),
                    opt(&f.function),
                    opt(&f.pin),
                    f.net
                        .as_deref()
                        .map(|n| link(&id_of("net", n), n))
                        .unwrap_or_default(),
                ],
            );
        }
        out.push(("Failing bits".into(), "failing-bits".into(), t.render()));
        if let Some(cycles) = extras.cycles {
            let drawn = Waves {
                cap: MAX_WAVES,
                id_prefix: "",
                rest: "the failing-bits table above lists every failing bit",
            };
            out.push((
                "Failing scans as waveforms".into(),
                "waveforms".into(),
                waveforms(report, board, cycles, &failures, &drawn),
            ));
        }
    }
    out.push(("Nets".into(), "nets".into(), nets_section(board, None)));
    out
}

/// How many failing scans to draw, and how to name them.
struct Waves<'a> {
    /// At most this many waveforms.
    cap: usize,
    /// Before each figure's id (`wave-SCAN`), to keep ids apart on a page of several runs.
    id_prefix: &'a str,
    /// Where the scans not drawn are told, for the note at the cap.
    rest: &'a str,
}

/// The failing scans of one run as waveforms, at most `cap` of them (with a note saying so
/// where it caps), for a page holding several runs; `id_prefix` keeps their ids apart.
pub fn failing_waves(
    report: &RunReport,
    board: &Board,
    cycles: &[Cycle],
    cap: usize,
    id_prefix: &str,
) -> String {
    let failures: Vec<BitFailure> = report.scans.iter().flat_map(failures_of).collect();
    let drawn = Waves {
        cap,
        id_prefix,
        rest: "the scenario's text report lists every failing bit",
    };
    waveforms(report, board, cycles, &failures, &drawn)
}

/// Each port's periods with a rising TCK, numbered from 0, with the TAP state of each.
fn port_tracks(board: &Board, cycles: &[Cycle]) -> Vec<(Vec<Cycle>, Vec<TapState>)> {
    (0..board.ports().len())
        .map(|p| {
            let all: Vec<Cycle> = cycles.iter().filter(|c| c.port == p).copied().collect();
            let states = states_of(&all);
            all.into_iter().zip(states).filter(|(c, _)| c.tck).unzip()
        })
        .collect()
}

/// The TCK count where each scan starts shifting: the scans of a port matched in order with
/// its shift episodes (a port whose episodes do not match its scans gets none).
pub fn scan_waves(report: &RunReport, board: &Board, cycles: &[Cycle]) -> Vec<ScanWave> {
    let tracks = port_tracks(board, cycles);
    let mut out = Vec::new();
    for (p, port) in board.ports().iter().enumerate() {
        let episodes = shift_windows(&tracks[p].1);
        let scans: Vec<_> = report
            .scans
            .iter()
            .filter(|s| s.record.port == port.name)
            .collect();
        let matches = scans.len() == episodes.len()
            && scans.iter().zip(&episodes).all(|(s, e)| {
                let ir = e.2 == TapState::ShiftIr;
                s.record.length == e.1 && (s.record.register == "IR") == ir
            });
        if !matches {
            continue;
        }
        for (s, e) in scans.iter().zip(&episodes) {
            out.push(ScanWave {
                scan: s.record.index,
                shift_tck: e.0,
            });
        }
    }
    out.sort_by_key(|w| w.scan);
    out
}

fn waveforms(
    report: &RunReport,
    board: &Board,
    cycles: &[Cycle],
    failures: &[BitFailure],
    drawn: &Waves<'_>,
) -> String {
    let tracks = port_tracks(board, cycles);
    let waves = scan_waves(report, board, cycles);
    let port_index: BTreeMap<&str, usize> = board
        .ports()
        .iter()
        .enumerate()
        .map(|(i, p)| (p.name.as_str(), i))
        .collect();
    let mut s = String::new();
    let failed: Vec<_> = report.scans.iter().filter(|x| !x.record.passed).collect();
    if failed.len() > drawn.cap {
        let _ = write!(
            s,
            "<p class=\"wave-cap\" data-drawn=\"{}\" data-failing=\"{}\">{} of {} failing scans drawn (the first ones); {}.</p>",
            drawn.cap,
            failed.len(),
            drawn.cap,
            failed.len(),
            drawn.rest
        );
    }
    for scan in failed.iter().take(drawn.cap) {
        let r = &scan.record;
        let (Some(wave), Some(&p)) = (
            waves.iter().find(|w| w.scan == r.index),
            port_index.get(r.port.as_str()),
        ) else {
            let _ = write!(s, "<p>scan {}: no recording to draw.</p>", r.index);
            continue;
        };
        let (cyc, states) = &tracks[p];
        let first_bit = r.failing_bits[0];
        let centre = wave.shift_tck + first_bit;
        let from = centre
            .saturating_sub(AROUND)
            .max(wave.shift_tck.saturating_sub(4));
        let to = (centre + AROUND + 1)
            .min(wave.shift_tck + r.length + 3)
            .min(cyc.len());
        let marks = failures
            .iter()
            .filter(|f| f.scan == r.index)
            .map(|f| (wave.shift_tck + f.bit, f.bit, words_of(f)))
            .collect();
        let w = WaveWindow {
            first_tck: from,
            cycles: cyc[from..to].to_vec(),
            states: states[from..to].to_vec(),
            marks,
            trst: board.ports()[p].trst_wired,
        };
        let _ = write!(
            s,
            "<figure class=\"scan-wave\" id=\"{}wave-{}\" data-scan=\"{}\" data-port=\"{}\" data-shift-tck=\"{}\"><figcaption>scan {} on TAP port {} ({} {} bits, from {}): first failing bit {} at TCK {} of the port{}</figcaption>{}</figure>",
            drawn.id_prefix,
            r.index,
            r.index,
            esc(&r.port),
            wave.shift_tck,
            r.index,
            esc(&r.port),
            esc(&r.register),
            r.length,
            esc(&scan.origin),
            first_bit,
            centre,
            if r.failing_bits.len() > 1 {
                format!(", {} failing bits in all", r.failing_bits.len())
            } else {
                String::new()
            },
            waveform_svg(&w)
        );
    }
    s
}

/// A failing bit in repair words.
fn words_of(f: &BitFailure) -> String {
    let mut w = format!(
        "bit {}: expected {}, captured {}",
        f.bit,
        u8::from(f.expected),
        u8::from(f.captured)
    );
    if let Some(d) = &f.device {
        let _ = write!(w, "; {d}");
        if let Some(c) = f.register_bit {
            let _ = write!(w, " {} bit {c}", f.register.as_deref().unwrap_or(""));
        }
    }
    if let Some(p) = &f.pin {
        let _ = write!(w, " pin {p}");
    }
    if let Some(n) = &f.net {
        let _ = write!(w, " net {n}");
    }
    w
}

/// Every net with its pins, tie, scan access and TAP ports; rows are link targets
/// (`#net-NAME`). `coverage` adds a campaign's verdict counts per net.
pub fn nets_section(board: &Board, coverage: Option<&BTreeMap<String, [usize; 3]>>) -> String {
    let summary = BoardSummary::from_board(board);
    let access: BTreeMap<&str, &crate::NetAccess> = summary
        .net_access
        .iter()
        .map(|n| (n.name.as_str(), n))
        .collect();
    let mut heads = vec![
        "net",
        "pins",
        "tie",
        "scan drivers",
        "scan receivers",
        "TAP ports",
    ];
    if coverage.is_some() {
        heads.extend(["detected", "undetected", "untestable"]);
    }
    let mut t = HtmlTable::new("nets-table", &heads);
    let mut nets: Vec<_> = board.nets().iter().collect();
    nets.sort_by(|a, b| a.name.cmp(&b.name));
    for n in nets {
        let pins: Vec<String> = n
            .pins
            .iter()
            .map(|p| format!("<span class=\"pin\">{}</span>", esc(&p.to_string())))
            .collect();
        let a = access.get(n.name.as_str());
        let mut cells = vec![
            esc(&n.name),
            pins.join(" "),
            esc(a.map(|a| a.tie.as_str()).unwrap_or("")),
            a.map(|a| a.scan_drivers).unwrap_or(0).to_string(),
            a.map(|a| a.scan_receivers).unwrap_or(0).to_string(),
            esc(&a.map(|a| a.ports.join(" ")).unwrap_or_default()),
        ];
        if let Some(cov) = coverage {
            let c = cov.get(&n.name).copied().unwrap_or_default();
            cells.extend(c.iter().map(usize::to_string));
        }
        t.html_row(Some(id_of("net", &n.name)), cells);
    }
    t.render()
}
