//! A failing scan as a waveform: TCK, TMS, TDI, TDO (and TRST*) around the failing bits,
//! with the TAP state of every period and each failing bit marked at its TCK count.

use std::fmt::Write;

use virtual_board::TapState;

use super::escape::esc;
use crate::vcd::Cycle;

/// A stretch of one port's recorded periods, ready to draw.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WaveWindow {
    /// The TCK count (from 0, on this port) of the first period drawn.
    pub first_tck: usize,
    /// The periods drawn.
    pub cycles: Vec<Cycle>,
    /// The TAP state during each period's rising edge.
    pub states: Vec<TapState>,
    /// Marked periods: (TCK count, scan bit, words shown with the mark).
    pub marks: Vec<(usize, usize, String)>,
    /// Draw the TRST* line.
    pub trst: bool,
}

/// The TAP state at each period's rising edge, from Test-Logic-Reset at the first period (a
/// run starts there, or reaches it with five TMS-high periods: IEEE 1149.1 clause 6.1); a
/// period with TRST* asserted is in Test-Logic-Reset (clause 6.1.2).
pub fn states_of(cycles: &[Cycle]) -> Vec<TapState> {
    let mut state = TapState::TestLogicReset;
    cycles
        .iter()
        .map(|c| {
            if !c.trst_n {
                state = TapState::TestLogicReset;
            }
            let now = state;
            if c.tck && c.trst_n {
                state = state.next(c.tms);
            }
            now
        })
        .collect()
}

/// The shift episodes of one port: (first period, number of periods, Shift-DR or Shift-IR),
/// in order. Scan bit k of an episode leaves TDO in its k-th period (0 = first).
pub fn shift_windows(states: &[TapState]) -> Vec<(usize, usize, TapState)> {
    let mut out: Vec<(usize, usize, TapState)> = Vec::new();
    let mut k = 0;
    while k < states.len() {
        if states[k].is_shift() {
            let start = k;
            let st = states[k];
            while k < states.len() && states[k] == st {
                k += 1;
            }
            out.push((start, k - start, st));
        } else {
            k += 1;
        }
    }
    out
}

const COL: usize = 24;
const LEFT: usize = 56;
const LANE: usize = 26;

/// The SVG of a window. Each period is a column; the TAP state name stands above it.
pub fn waveform_svg(w: &WaveWindow) -> String {
    let n = w.cycles.len();
    let lanes: Vec<&str> = if w.trst {
        vec!["TCK", "TRST*", "TMS", "TDI", "TDO"]
    } else {
        vec!["TCK", "TMS", "TDI", "TDO"]
    };
    let top = 96;
    let width = LEFT + n * COL + 10;
    let height = top + lanes.len() * LANE + 22;
    let mut s = String::with_capacity(n * 600);
    let _ = write!(
        s,
        "<svg class=\"wave\" viewBox=\"0 0 {width} {height}\" width=\"{width}\" height=\"{height}\" role=\"img\" aria-label=\"waveform\" data-first-tck=\"{}\">",
        w.first_tck
    );
    // Marks first, under the lines.
    for (tck, bit, words) in &w.marks {
        if *tck < w.first_tck || *tck >= w.first_tck + n {
            continue;
        }
        let x = LEFT + (tck - w.first_tck) * COL;
        let _ = write!(
            s,
            "<g class=\"fail-bit\" data-tck=\"{tck}\" data-bit=\"{bit}\"><title>{}</title><rect x=\"{x}\" y=\"{}\" width=\"{COL}\" height=\"{}\" fill=\"#f6c0c0\"/><text x=\"{}\" y=\"{}\" fill=\"#a00\">bit {bit}</text></g>",
            esc(words),
            top - 6,
            lanes.len() * LANE + 8,
            x,
            height - 4
        );
    }
    for (k, (c, st)) in w.cycles.iter().zip(&w.states).enumerate() {
        let x = LEFT + k * COL;
        let tck = w.first_tck + k;
        let _ = write!(
            s,
            "<g class=\"period\" data-tck=\"{tck}\" data-state=\"{}\"><text transform=\"translate({},{}) rotate(-60)\">{}</text><line x1=\"{x}\" y1=\"{}\" x2=\"{x}\" y2=\"{}\" stroke=\"#ddd\"/></g>",
            st.name(),
            x + COL / 2 + 3,
            top - 8,
            st.name(),
            top - 4,
            top + lanes.len() * LANE,
        );
        let _ = c;
    }
    for (lane, name) in lanes.iter().enumerate() {
        let base = top + lane * LANE + LANE - 6;
        let hi = base - LANE + 12;
        let _ = write!(s, "<text x=\"2\" y=\"{}\">{name}</text>", base - 4);
        let mut d = String::new();
        for (k, c) in w.cycles.iter().enumerate() {
            let x = LEFT + k * COL;
            let level = |v: bool| if v { hi } else { base };
            match *name {
                "TCK" => {
                    // Low for the first half of the period, high for the second (rising
                    // edge in the middle) when TCK rises at all.
                    let mid = x + COL / 2;
                    if c.tck {
                        let _ = write!(d, "M{x},{base}H{mid}V{hi}H{}V{base}", x + COL);
                    } else {
                        let _ = write!(d, "M{x},{base}H{}", x + COL);
                    }
                }
                "TDO" => match c.tdo {
                    Some(v) => {
                        let _ = write!(d, "M{x},{}H{}", level(v), x + COL);
                    }
                    None => {
                        let _ = write!(d, "M{x},{}H{}", (hi + base) / 2, x + COL);
                    }
                },
                _ => {
                    let v = match *name {
                        "TRST*" => c.trst_n,
                        "TMS" => c.tms,
                        _ => c.tdi,
                    };
                    let _ = write!(d, "M{x},{}H{}", level(v), x + COL);
                }
            }
        }
        let _ = write!(
            s,
            "<path class=\"lane\" data-lane=\"{name}\" d=\"{d}\" stroke=\"#124\" fill=\"none\" stroke-width=\"1.5\"/>"
        );
        // The values as text under each period, for reading and for print.
        if *name != "TCK" {
            for (k, c) in w.cycles.iter().enumerate() {
                let v = match *name {
                    "TRST*" => bit_char(Some(c.trst_n)),
                    "TMS" => bit_char(Some(c.tms)),
                    "TDI" => bit_char(Some(c.tdi)),
                    _ => bit_char(c.tdo),
                };
                let _ = write!(
                    s,
                    "<text x=\"{}\" y=\"{}\" fill=\"#888\" font-size=\"9\">{v}</text>",
                    LEFT + k * COL + COL - 8,
                    base - 2
                );
            }
        }
    }
    s.push_str("</svg>");
    s
}

fn bit_char(v: Option<bool>) -> char {
    match v {
        Some(true) => '1',
        Some(false) => '0',
        None => 'Z',
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cyc(tms: bool, tdi: bool, tdo: Option<bool>) -> Cycle {
        Cycle {
            port: 0,
            tms,
            tdi,
            trst_n: true,
            tdo,
            tck: true,
        }
    }

    #[test]
    fn states_follow_the_state_diagram_into_shift_dr() {
        // IEEE 1149.1 figure 6-1: from Test-Logic-Reset, TMS 0 → Run-Test/Idle, 1 →
        // Select-DR-Scan, 0 → Capture-DR, 0 → Shift-DR (three shift periods, the last
        // with TMS 1 → Exit1-DR), 1 → Update-DR.
        let tms = [0, 1, 0, 0, 0, 0, 1, 1, 0];
        let cycles: Vec<Cycle> = tms.iter().map(|&t| cyc(t == 1, false, None)).collect();
        let states = states_of(&cycles);
        let names: Vec<&str> = states.iter().map(|s| s.name()).collect();
        assert_eq!(
            names,
            [
                "Test-Logic-Reset",
                "Run-Test/Idle",
                "Select-DR-Scan",
                "Capture-DR",
                "Shift-DR",
                "Shift-DR",
                "Shift-DR",
                "Exit1-DR",
                "Update-DR"
            ]
        );
        assert_eq!(shift_windows(&states), [(4, 3, TapState::ShiftDr)]);
    }

    #[test]
    fn the_mark_stands_on_its_period() {
        let cycles: Vec<Cycle> = (0..6).map(|k| cyc(false, k % 2 == 0, Some(true))).collect();
        let w = WaveWindow {
            first_tck: 100,
            states: states_of(&cycles),
            cycles,
            marks: vec![(103, 7, "U1 cell 7 <net>".into()), (999, 8, String::new())],
            trst: false,
        };
        let svg = waveform_svg(&w);
        assert!(svg.contains("class=\"fail-bit\" data-tck=\"103\" data-bit=\"7\""));
        // Outside the window: not drawn.
        assert!(!svg.contains("data-tck=\"999\""));
        assert!(svg.contains("U1 cell 7 &lt;net&gt;"));
        assert_eq!(svg.matches("class=\"period\"").count(), 6);
        assert!(svg.contains("data-tck=\"100\" data-state=\"Test-Logic-Reset\""));
    }
}
