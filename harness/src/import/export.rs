//! `export`: a board file's netlist as a CAD tool would write it — the
//! nets' device pins, each pull as a two-pin resistor to a rail, and each
//! TAP port as a connector wired through the chain — in CSV or IPC-D-356A.
//!
//! Names the board file does not have are made up here, and said in the
//! file's comments: pull resistors `R9001…` (pin 1 on the net, pin 2 on the
//! first power or ground rail, or on a net `PULL_VCC` / `PULL_GND` when the
//! board has none), TAP connectors `J901…` (pins 1 TDI, 2 TDO, 3 TMS,
//! 4 TCK, 5 TRST*), TAP nets `PORT_TDI`, `PORT_LINK1…`, `PORT_TDO`,
//! `PORT_TMS`, `PORT_TCK`, `PORT_TRST_N`. Non-scan parts (clusters) are not
//! written: give them under `clusters:` in the assembly file. A device's
//! `pads:` go out as pad centres (IPC-D-356A and CSV; EDIF has none).

use std::fmt::Write as _;

use virtual_board::{DeviceModel, LoadedBoard, PortMode};

/// One exported pin.
#[derive(Clone, Debug, PartialEq)]
pub struct ExportPin {
    /// The net it is on.
    pub net: String,
    /// Its part's designator.
    pub designator: String,
    /// The pin (package pin name).
    pub pin: String,
    /// The pad centre, `[x, y]` in millimetres, when the board file gives
    /// the device's `pads:`.
    pub pad: Option<[f64; 2]>,
}

/// Designator of the connector of TAP port number `i` (from 0).
pub fn connector_name(i: usize) -> String {
    format!("J{}", 901 + i)
}

/// The netlist of a loaded board, nets in the board file's order, and
/// comment lines saying what was made up.
pub fn board_netlist(loaded: &LoadedBoard) -> (Vec<ExportPin>, Vec<String>) {
    let board = &loaded.board;
    let file = &loaded.file;
    let model_of = |des: &str| board.device_index(des).map(|i| board.devices()[i].model());
    let mut out: Vec<ExportPin> = Vec::new();
    let mut notes: Vec<String> = Vec::new();
    let pin_of = |net: &str, des: &str, pin: String| ExportPin {
        pad: file
            .devices
            .get(des)
            .and_then(|d| d.pads.get(&pin))
            .copied(),
        net: net.to_string(),
        designator: des.to_string(),
        pin,
    };
    for (net, refs) in &file.nets {
        for r in refs {
            let Some((des, pin)) = r.split_once('.') else {
                continue;
            };
            let Some(m) = model_of(des) else { continue };
            for p in physical_pins(m, pin) {
                out.push(pin_of(net, des, p));
            }
        }
    }
    let power = file
        .power
        .first()
        .cloned()
        .unwrap_or_else(|| "PULL_VCC".into());
    let ground = file
        .ground
        .first()
        .cloned()
        .unwrap_or_else(|| "PULL_GND".into());
    for (k, (net, dir)) in file.pulls.iter().enumerate() {
        let r = format!("R{}", 9001 + k);
        let rail = if matches!(dir, virtual_board::PullEntry::Up) {
            &power
        } else {
            &ground
        };
        out.push(pin_of(net, &r, "1".into()));
        out.push(pin_of(rail, &r, "2".into()));
    }
    if !file.pulls.is_empty() {
        notes.push(format!(
            "pull resistors R9001-R{} are made up: pin 1 on the net, pin 2 on the rail",
            9000 + file.pulls.len()
        ));
    }
    for (i, port) in file.tap_ports.iter().enumerate() {
        let j = connector_name(i);
        notes.push(format!(
            "TAP port {}: connector {j} (pins 1 TDI, 2 TDO, 3 TMS, 4 TCK{})",
            port.name,
            if port.trst { ", 5 TRST*" } else { "" }
        ));
        let name = |s: &str| format!("{}_{s}", port.name);
        let tap_pins = |des: &str, sig: fn(&DeviceModel) -> Option<&str>| -> Vec<String> {
            model_of(des)
                .and_then(|m| {
                    sig(m)
                        .and_then(|p| m.port(p))
                        .map(|p| p.pins.iter().flatten().cloned().collect())
                })
                .unwrap_or_default()
        };
        let mut cur = name("TDI");
        out.push(pin_of(&cur, &j, "1".into()));
        for (k, des) in port.chain.iter().enumerate() {
            for p in tap_pins(des, |m| m.tap.tdi.as_deref()) {
                out.push(pin_of(&cur, des, p));
            }
            cur = if k + 1 == port.chain.len() {
                name("TDO")
            } else {
                name(&format!("LINK{}", k + 1))
            };
            for p in tap_pins(des, |m| m.tap.tdo.as_deref()) {
                out.push(pin_of(&cur, des, p));
            }
        }
        out.push(pin_of(&name("TDO"), &j, "2".into()));
        let mut fan = |sig: &str, pin: &str, f: fn(&DeviceModel) -> Option<&str>| {
            out.push(pin_of(&name(sig), &j, pin.into()));
            for des in &port.chain {
                for p in tap_pins(des, f) {
                    out.push(pin_of(&name(sig), des, p));
                }
            }
        };
        fan("TMS", "3", |m| m.tap.tms.as_deref());
        fan("TCK", "4", |m| m.tap.tck.as_deref());
        if port.trst {
            fan("TRST_N", "5", |m| m.tap.trst.as_deref());
        }
    }
    if !file.clusters.is_empty() {
        notes.push(format!(
            "non-scan parts not written (give them under clusters: in the assembly file): {}",
            file.clusters.keys().cloned().collect::<Vec<_>>().join(", ")
        ));
    }
    (out, notes)
}

/// Physical pins of a board-file pin reference (a pin, a port element, or a
/// whole linkage vector).
fn physical_pins(m: &DeviceModel, name: &str) -> Vec<String> {
    if m.pin_map().contains_key(name) {
        return vec![name.to_string()];
    }
    let (port, index) = match name.split_once('(') {
        Some((p, rest)) => (
            p,
            rest.strip_suffix(')')
                .and_then(|i| i.trim().parse::<i64>().ok()),
        ),
        None => (name, None),
    };
    let Some(port) = m.port(port) else {
        return Vec::new();
    };
    if index.is_none() && matches!(port.mode, PortMode::Linkage | PortMode::OtherLinkage(_)) {
        return port.pins.iter().flatten().cloned().collect();
    }
    port.pins_of(index)
        .map(<[String]>::to_vec)
        .unwrap_or_default()
}

/// The pins as CSV with a header line (`x` and `y` columns, in
/// millimetres, when any pin has a pad centre); notes as nothing (CSV has
/// no comments).
pub fn write_csv(pins: &[ExportPin]) -> String {
    let with_pads = pins.iter().any(|p| p.pad.is_some());
    let mut t = String::from(if with_pads {
        "net,designator,pin,x,y\n"
    } else {
        "net,designator,pin\n"
    });
    let field = |s: &str| {
        if s.contains([',', '"', '\n']) || s.starts_with(' ') || s.ends_with(' ') {
            format!("\"{}\"", s.replace('"', "\"\""))
        } else {
            s.to_string()
        }
    };
    for p in pins {
        let _ = write!(
            t,
            "{},{},{}",
            field(&p.net),
            field(&p.designator),
            field(&p.pin)
        );
        match (with_pads, p.pad) {
            (true, Some([x, y])) => {
                let _ = write!(t, ",{x},{y}");
            }
            (true, None) => t.push_str(",,"),
            (false, _) => {}
        }
        t.push('\n');
    }
    t
}

/// The pins as IPC-D-356A: surface test records (`327`) in the fixed
/// columns this project reads (net 4–17, designator 21–26, `-` 27, pin
/// 28–31; access `A00`), names longer than 14 characters through
/// `P  NNAME` aliases, notes as `C` comments, `999` at the end. Pad centres
/// follow the access code as `X…Y…` in thousandths of a millimetre under
/// `UNITS CUST 1` when any pin has one (without them, `UNITS CUST 0` and
/// no coordinates).
pub fn write_ipc356(pins: &[ExportPin], notes: &[String]) -> String {
    let with_pads = pins.iter().any(|p| p.pad.is_some());
    let mut t = String::new();
    t.push_str("C  IPC-D-356A netlist written by boardtwin board --export-netlist\n");
    for n in notes {
        let _ = writeln!(t, "C  {}", n.chars().take(77).collect::<String>());
    }
    let _ = writeln!(
        t,
        "P  JOB   BOARDTWIN\nP  UNITS CUST {}\nP  IMAGE PRIMARY",
        u8::from(with_pads)
    );
    let mut aliases: Vec<(String, String)> = Vec::new();
    let mut alias_of = std::collections::HashMap::new();
    for ExportPin { net: n, .. } in pins {
        let needs_alias = n.chars().count() > 14
            || n.contains(' ')
            || n.is_empty()
            || n.to_ascii_uppercase().starts_with("NNAME");
        if needs_alias && !alias_of.contains_key(n) {
            let a = format!("NNAME{}", aliases.len() + 1);
            alias_of.insert(n.clone(), a.clone());
            aliases.push((a, n.clone()));
        }
    }
    for (a, n) in &aliases {
        let _ = writeln!(t, "P  {a:<11}{n}");
    }
    for p in pins {
        let (d, pin) = (&p.designator, &p.pin);
        let net = alias_of.get(&p.net).unwrap_or(&p.net);
        if d.chars().count() <= 6 && pin.chars().count() <= 4 {
            let _ = write!(t, "327{net:<14}   {d:<6}-{pin:<4}       A00");
        } else {
            let _ = write!(t, "327{net:<14}   {d}-{pin} A00");
        }
        if let Some([x, y]) = p.pad {
            let _ = write!(t, "X{}Y{}", thousandths(x), thousandths(y));
        }
        t.push('\n');
    }
    t.push_str("999\n");
    t
}

/// Millimetres as a sign and at least six digits of thousandths
/// (`-1.27` → `-001270`).
fn thousandths(mm: f64) -> String {
    let v = (mm * 1000.0).round() as i64;
    format!("{}{:06}", if v < 0 { '-' } else { '+' }, v.unsigned_abs())
}
