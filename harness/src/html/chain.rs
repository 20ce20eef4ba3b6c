//! The scan chains picture: each TAP port with its devices from TDI to TDO, their IR and
//! boundary lengths, the instruction each holds, and where a chain breaks.

use std::fmt::Write;

use virtual_board::{Board, DefectSpec, HeldInstruction, InstructionView};

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

/// The breaks a list of defects makes: a broken link after a device, or a device whose TDO
/// passes nothing on (stuck, dead, TMS or TCK open), each told in `words`.
pub fn breaks_of(
    defects: &[DefectSpec],
    board: &Board,
    words: impl Fn(&DefectSpec) -> String,
) -> Vec<ChainBreak> {
    let port_of = |dev: &str| {
        board.ports().iter().find_map(|p| {
            p.chain
                .iter()
                .any(|&k| board.devices()[k].designator() == dev)
                .then(|| p.name.clone())
        })
    };
    defects
        .iter()
        .filter_map(|x| {
            let dev = [
                &x.broken_link,
                &x.tdo_stuck,
                &x.dead,
                &x.tms_open,
                &x.tck_open,
            ]
            .into_iter()
            .find_map(Option::as_ref)?;
            Some(ChainBreak {
                port: port_of(dev)?,
                device: dev.clone(),
                words: words(x),
            })
        })
        .collect()
}

/// An instruction in a few words: its name, or `unlisted 0b…` for an opcode the BSDL table
/// does not list.
pub fn instruction_words(v: &InstructionView) -> String {
    match &v.name {
        Some(n) => n.clone(),
        None => format!("unlisted 0b{}", v.opcode),
    }
}

const BOX_W: usize = 176;
const BOX_H: usize = 92;
const GAP: usize = 40;
const ROW_H: usize = BOX_H + 46;
const LEFT: usize = 60;

/// One SVG with a row per port. `held` gives the instruction each device holds at the end of
/// the run, when the target can say; `breaks` marks broken links.
pub fn chain_svg(ports: &[PortSummary], held: &[HeldInstruction], breaks: &[ChainBreak]) -> String {
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
            let h = held.iter().find(|h| h.device == d.designator);
            let _ = write!(
                s,
                "<g class=\"chain-dev\" id=\"{}\" data-device=\"{}\" data-order=\"{k}\"{}>",
                id_of("dev", &format!("{}.{}", port.name, d.designator)),
                esc(&d.designator),
                held_attributes(h),
            );
            if let Some(h) = h {
                let _ = write!(s, "<title>{}</title>", esc(&held_words(h)));
            }
            let _ = write!(
                s,
                "<rect x=\"{x}\" y=\"{top}\" width=\"{BOX_W}\" height=\"{BOX_H}\" rx=\"4\" fill=\"#eef3fb\" stroke=\"#345\"/><text x=\"{}\" y=\"{}\" font-weight=\"bold\">{}</text><text x=\"{}\" y=\"{}\">{}</text><text x=\"{}\" y=\"{}\">IR {} · BSR {}</text>",
                x + 6,
                top + 14,
                esc(&d.designator),
                x + 6,
                top + 28,
                esc(&clip(&d.entity, 24)),
                x + 6,
                top + 42,
                d.ir_length,
                d.boundary_length,
            );
            if let Some(h) = h {
                let _ = write!(
                    s,
                    "<text class=\"held\" x=\"{}\" y=\"{}\" font-weight=\"bold\">{}</text><text x=\"{}\" y=\"{}\">→ {}</text>",
                    x + 6,
                    top + 58,
                    esc(&clip(
                        &format!(
                            "{}{}",
                            instruction_words(&h.now),
                            if h.by_reset { " (reset)" } else { "" }
                        ),
                        24
                    )),
                    x + 6,
                    top + 72,
                    esc(&clip(&h.now.register, 22)),
                );
                let last = h
                    .replaced
                    .as_ref()
                    .map(|r| format!("was {}", instruction_words(r)))
                    .unwrap_or_default();
                let _ = write!(
                    s,
                    "<text x=\"{}\" y=\"{}\" fill=\"#555\">{}</text>",
                    x + 6,
                    top + 86,
                    esc(&clip(&last, 24))
                );
            }
            s.push_str("</g>");
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

/// `data-` attributes of a device box: the instruction held, its opcode and register, and
/// the one the program last loaded (the same, unless a reset replaced it).
fn held_attributes(h: Option<&HeldInstruction>) -> String {
    let Some(h) = h else {
        return String::new();
    };
    let loaded = match (&h.replaced, h.by_reset) {
        (Some(r), _) => instruction_words(r),
        (None, true) => String::new(),
        (None, false) => instruction_words(&h.now),
    };
    format!(
        " data-instruction=\"{}\" data-opcode=\"{}\" data-register=\"{}\" data-by-reset=\"{}\" data-loaded=\"{}\"",
        esc(&instruction_words(&h.now)),
        esc(&h.now.opcode),
        esc(&h.now.register),
        h.by_reset,
        esc(&loaded)
    )
}

/// The tooltip of a device box.
fn held_words(h: &HeldInstruction) -> String {
    let mut w = format!(
        "{} holds {} (opcode {}), which selects {}",
        h.device,
        instruction_words(&h.now),
        h.now.opcode,
        h.now.register
    );
    if h.by_reset {
        w.push_str("; set by Test-Logic-Reset");
    }
    if let Some(r) = &h.replaced {
        let _ = write!(
            w,
            "; the last Update-IR loaded {} (opcode {})",
            instruction_words(r),
            r.opcode
        );
    }
    w
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
        let view = |name: Option<&str>, opcode: &str, register: &str| InstructionView {
            name: name.map(str::to_string),
            opcode: opcode.into(),
            register: register.into(),
        };
        let held = [
            HeldInstruction {
                device: "U1".into(),
                now: view(Some("EXTEST"), "00000", "BOUNDARY"),
                by_reset: false,
                replaced: None,
            },
            HeldInstruction {
                device: "U3".into(),
                now: view(Some("IDCODE"), "0010", "DEVICE_ID"),
                by_reset: true,
                replaced: Some(view(None, "1011", "BYPASS")),
            },
        ];
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
        assert!(svg.contains("data-instruction=\"EXTEST\" data-opcode=\"00000\" data-register=\"BOUNDARY\" data-by-reset=\"false\" data-loaded=\"EXTEST\""));
        // A reset replaced an opcode the table does not list: both are told.
        assert!(svg.contains("data-instruction=\"IDCODE\" data-opcode=\"0010\" data-register=\"DEVICE_ID\" data-by-reset=\"true\" data-loaded=\"unlisted 0b1011\""));
        assert!(svg.contains(">IDCODE (reset)</text>"));
        assert!(svg.contains(">was unlisted 0b1011</text>"));
        assert!(svg.contains("the last Update-IR loaded unlisted 0b1011 (opcode 1011)"));
        assert!(svg.contains("class=\"chain-break\" data-device=\"U3\""));
    }
}
