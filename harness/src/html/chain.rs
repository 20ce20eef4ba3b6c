//! The scan chains picture: each TAP port with its devices from TDI to TDO, their IR and
//! boundary lengths, the instruction each holds, and where a chain breaks.

use std::collections::BTreeMap;
use std::fmt::Write;

use super::escape::{esc, id_of};
use crate::board_summary::PortSummary;

/// Where a chain breaks: after `device` on `port` (its TDO, or the link to the next TDI).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ChainBreak {
    /// TAP port.
    pub port: String,
    /// The device whose TDO side is broken.
    pub device: String,
    /// What the diagnosis says, in repair words.
    pub words: String,
}

const BOX_W: usize = 150;
const BOX_H: usize = 64;
const GAP: usize = 40;
const ROW_H: usize = BOX_H + 46;
const LEFT: usize = 60;

/// One SVG with a row per port. `held` gives the instruction each device (designator) holds
/// at the end of the run, when known; `breaks` marks broken links.
pub fn chain_svg(
    ports: &[PortSummary],
    held: &BTreeMap<String, String>,
    breaks: &[ChainBreak],
) -> String {
    let widest = ports.iter().map(|p| p.devices.len()).max().unwrap_or(0);
    let width = LEFT + widest * (BOX_W + GAP) + 60;
    let height = ports.len() * ROW_H + 10;
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg class=\"chains\" viewBox=\"0 0 {width} {height}\" width=\"{width}\" height=\"{height}\" role=\"img\" aria-label=\"scan chains\">"
    );
    s.push_str("<defs><marker id=\"arrow\" viewBox=\"0 0 10 10\" refX=\"9\" refY=\"5\" markerWidth=\"6\" markerHeight=\"6\" orient=\"auto\"><path d=\"M0,0L10,5L0,10z\" fill=\"#333\"/></marker></defs>");
    for (row, port) in ports.iter().enumerate() {
        let top = row * ROW_H + 22;
        let mid = top + BOX_H / 2;
        let _ = write!(
            s,
            "<g class=\"chain\" data-port=\"{}\"><text x=\"4\" y=\"{}\">TAP port {} (IR {} bits, boundary {} bits{})</text>",
            esc(&port.name),
            top - 8,
            esc(&port.name),
            port.ir_length,
            port.boundary_length,
            if port.trst { ", TRST*" } else { "" }
        );
        let _ = write!(s, "<text x=\"4\" y=\"{}\">TDI</text>", mid + 4);
        let mut x = LEFT;
        for (k, d) in port.devices.iter().enumerate() {
            let _ = write!(
                s,
                "<line x1=\"{}\" y1=\"{mid}\" x2=\"{x}\" y2=\"{mid}\" stroke=\"#333\" marker-end=\"url(#arrow)\"/>",
                x - GAP + if k == 0 { 10 } else { 0 }
            );
            let instr = held.get(&d.designator).map(String::as_str).unwrap_or("");
            let _ = write!(
                s,
                "<g class=\"chain-dev\" id=\"{}\" data-device=\"{}\" data-order=\"{k}\"><rect x=\"{x}\" y=\"{top}\" width=\"{BOX_W}\" height=\"{BOX_H}\" rx=\"4\" fill=\"#eef3fb\" stroke=\"#345\"/><text x=\"{}\" y=\"{}\" font-weight=\"bold\">{}</text><text x=\"{}\" y=\"{}\">{}</text><text x=\"{}\" y=\"{}\">IR {} · BSR {}</text><text x=\"{}\" y=\"{}\">{}</text></g>",
                id_of("dev", &format!("{}.{}", port.name, d.designator)),
                esc(&d.designator),
                x + 6,
                top + 14,
                esc(&d.designator),
                x + 6,
                top + 28,
                esc(&clip(&d.entity, 20)),
                x + 6,
                top + 42,
                d.ir_length,
                d.boundary_length,
                x + 6,
                top + 56,
                esc(&clip(instr, 20)),
            );
            if let Some(b) = breaks
                .iter()
                .find(|b| b.port == port.name && b.device == d.designator)
            {
                let bx = x + BOX_W + GAP / 2;
                let _ = write!(
                    s,
                    "<g class=\"chain-break\" data-device=\"{}\"><title>{}</title><path d=\"M{},{}L{},{}M{},{}L{},{}\" stroke=\"#c00\" stroke-width=\"4\"/></g>",
                    esc(&d.designator),
                    esc(&b.words),
                    bx - 9,
                    mid - 9,
                    bx + 9,
                    mid + 9,
                    bx - 9,
                    mid + 9,
                    bx + 9,
                    mid - 9
                );
            }
            x += BOX_W + GAP;
        }
        let _ = write!(
            s,
            "<line x1=\"{}\" y1=\"{mid}\" x2=\"{}\" y2=\"{mid}\" stroke=\"#333\" marker-end=\"url(#arrow)\"/><text x=\"{}\" y=\"{}\">TDO</text></g>",
            x - GAP,
            x - 8,
            x - 4,
            mid + 4
        );
    }
    s.push_str("</svg>");
    s
}

fn clip(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut c: String = s.chars().take(n - 1).collect();
        c.push('…');
        c
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::board_summary::ChainDevice;

    fn dev(name: &str, ir: usize, bsr: usize) -> ChainDevice {
        ChainDevice {
            designator: name.into(),
            entity: format!("PART_{name}"),
            ir_length: ir,
            boundary_length: bsr,
            has_idcode: true,
        }
    }

    #[test]
    fn one_box_per_device_in_chain_order_and_the_break_after_its_device() {
        let ports = vec![PortSummary {
            name: "J<1>".into(),
            devices: vec![dev("U3", 4, 10), dev("U1", 5, 20)],
            ir_length: 9,
            boundary_length: 30,
            trst: false,
        }];
        let mut held = BTreeMap::new();
        held.insert("U1".to_string(), "EXTEST".to_string());
        let breaks = [ChainBreak {
            port: "J<1>".into(),
            device: "U3".into(),
            words: "open between U3 TDO and U1 TDI".into(),
        }];
        let svg = chain_svg(&ports, &held, &breaks);
        let u3 = svg.find("data-device=\"U3\" data-order=\"0\"").unwrap();
        let u1 = svg.find("data-device=\"U1\" data-order=\"1\"").unwrap();
        assert!(u3 < u1);
        assert_eq!(svg.matches("class=\"chain-dev\"").count(), 2);
        assert!(svg.contains("TAP port J&lt;1&gt; (IR 9 bits, boundary 30 bits)"));
        assert!(svg.contains("IR 5 · BSR 20"));
        assert!(svg.contains(">EXTEST</text>"));
        assert!(svg.contains("class=\"chain-break\" data-device=\"U3\""));
    }
}
