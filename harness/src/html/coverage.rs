//! Coverage pictures: bars per fault class, the per-net map, the ambiguity-group histogram.

use std::collections::BTreeMap;
use std::fmt::Write;

use super::escape::{esc, id_of};
use crate::campaign::Counts;

/// What a campaign found on one net.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct NetCoverage {
    /// Net name.
    pub net: String,
    /// Faults on the net the program catches.
    pub detected: usize,
    /// Testable faults on the net it misses.
    pub undetected: usize,
    /// Faults on the net no scan cell can see.
    pub untestable: usize,
}

impl NetCoverage {
    /// `undetected` when any fault on the net is missed, else `detected` when one is caught,
    /// else `untestable`.
    pub fn class(&self) -> &'static str {
        if self.undetected > 0 {
            "undetected"
        } else if self.detected > 0 {
            "detected"
        } else {
            "untestable"
        }
    }
}

const BAR_W: usize = 520;
const LABEL_W: usize = 150;

/// Stacked bars, one per fault class: detected, undetected, untestable, each with its count.
pub fn class_bars_svg(by_class: &BTreeMap<String, Counts>) -> String {
    let h = by_class.len() * 26 + 30;
    let width = LABEL_W + BAR_W + 160;
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg class=\"class-bars\" viewBox=\"0 0 {width} {h}\" width=\"{width}\" height=\"{h}\" role=\"img\" aria-label=\"coverage per fault class\">"
    );
    for (row, (name, c)) in by_class.iter().enumerate() {
        let y = row * 26 + 4;
        let _ = write!(
            s,
            "<g class=\"bar\" data-class=\"{}\" data-detected=\"{}\" data-undetected=\"{}\" data-untestable=\"{}\"><text x=\"0\" y=\"{}\">{}</text>",
            esc(name),
            c.detected,
            c.undetected,
            c.untestable,
            y + 14,
            esc(name)
        );
        let mut x = LABEL_W;
        let total = c.faults.max(1);
        for (kind, n) in [
            ("detected", c.detected),
            ("undetected", c.undetected),
            ("untestable", c.untestable),
        ] {
            let w = BAR_W * n / total;
            if w > 0 {
                let _ = write!(
                    s,
                    "<rect class=\"{kind}\" x=\"{x}\" y=\"{y}\" width=\"{w}\" height=\"18\"><title>{kind}: {n}</title></rect>"
                );
            }
            x += w;
        }
        let testable = c.faults - c.untestable;
        let pct = if testable == 0 {
            "-".to_string()
        } else {
            format!("{:.1}%", 100.0 * c.detected as f64 / testable as f64)
        };
        let _ = write!(
            s,
            "<text x=\"{}\" y=\"{}\">{}/{} {pct}</text></g>",
            LABEL_W + BAR_W + 6,
            y + 14,
            c.detected,
            testable
        );
    }
    let _ = write!(
        s,
        "<text x=\"{LABEL_W}\" y=\"{}\">green detected · red undetected · grey untestable; percent of testable faults</text></svg>",
        h - 6
    );
    s
}

/// The histogram of ambiguity-group sizes: one bar per size, its height the number of groups.
pub fn ambiguity_svg(sizes: &BTreeMap<usize, usize>) -> String {
    let most = sizes.values().copied().max().unwrap_or(0).max(1);
    let col = 34;
    let plot_h = 140;
    let width = 50 + sizes.len().max(1) * col;
    let height = plot_h + 50;
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg class=\"ambiguity\" viewBox=\"0 0 {width} {height}\" width=\"{width}\" height=\"{height}\" role=\"img\" aria-label=\"ambiguity group sizes\">"
    );
    for (k, (size, n)) in sizes.iter().enumerate() {
        let bh = plot_h * n / most;
        let x = 40 + k * col;
        let _ = write!(
            s,
            "<g class=\"hist-bar\" data-size=\"{size}\" data-groups=\"{n}\"><rect x=\"{x}\" y=\"{}\" width=\"{}\" height=\"{bh}\" fill=\"#5577aa\"/><text x=\"{}\" y=\"{}\">{n}</text><text x=\"{}\" y=\"{}\">{size}</text></g>",
            10 + plot_h - bh,
            col - 6,
            x + 2,
            6 + plot_h - bh,
            x + 6,
            plot_h + 26
        );
    }
    let _ = write!(
        s,
        "<text x=\"40\" y=\"{}\">group size (faults that give the same response); bar: number of groups</text></svg>",
        plot_h + 44
    );
    s
}

/// The per-net map: one small square per net, coloured by what the program catches there,
/// linking to the net's row.
pub fn net_map(nets: &[NetCoverage]) -> String {
    let mut s = String::with_capacity(nets.len() * 110 + 200);
    s.push_str("<p class=\"legend\"><span class=\"detected\"></span>every fault caught<span class=\"undetected\"></span>a fault missed<span class=\"untestable\"></span>untestable only</p><div class=\"netmap\">");
    for n in nets {
        let _ = write!(
            s,
            "<a class=\"{}\" href=\"#{}\" title=\"{}: {} detected, {} undetected, {} untestable\"></a>",
            n.class(),
            id_of("net", &n.net),
            esc(&n.net),
            n.detected,
            n.undetected,
            n.untestable
        );
    }
    s.push_str("</div>");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bars_are_in_proportion_to_the_counts() {
        let mut by = BTreeMap::new();
        by.insert(
            "short".to_string(),
            Counts {
                faults: 4,
                detected: 2,
                undetected: 1,
                untestable: 1,
            },
        );
        let svg = class_bars_svg(&by);
        assert!(svg.contains("class=\"detected\" x=\"150\" y=\"4\" width=\"260\""));
        assert!(svg.contains("class=\"undetected\" x=\"410\" y=\"4\" width=\"130\""));
        // 2 of 3 testable.
        assert!(svg.contains(">2/3 66.7%</text>"));
    }

    #[test]
    fn histogram_has_one_bar_per_size() {
        let sizes = BTreeMap::from([(1, 10), (2, 5), (4, 1)]);
        let svg = ambiguity_svg(&sizes);
        assert_eq!(svg.matches("class=\"hist-bar\"").count(), 3);
        assert!(svg.contains("data-size=\"2\" data-groups=\"5\""));
        // The tallest bar is the full plot height.
        assert!(svg.contains("y=\"10\" width=\"28\" height=\"140\""));
    }

    #[test]
    fn a_net_with_one_missed_fault_is_red() {
        let nets = [NetCoverage {
            net: "D<0>".into(),
            detected: 3,
            undetected: 1,
            untestable: 0,
        }];
        let html = net_map(&nets);
        assert!(html.contains(
            "<a class=\"undetected\" href=\"#net-D.3C0.3E\" title=\"D&lt;0&gt;: 3 detected"
        ));
    }
}
