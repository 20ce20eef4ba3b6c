//! Repair words and places to probe: each named net's pins, and for a short
//! the pairs of neighbouring pins between its nets (where a solder bridge is
//! likely, common practice).

use std::collections::BTreeSet;

use serde::Serialize;
use virtual_board::{DefectSpec, LoadedBoard};

use crate::campaign::device_neighbours;

/// Where to look for one net of an explanation.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Probe {
    /// The net.
    pub net: String,
    /// Its device pins, `designator.pin`.
    pub pins: Vec<String>,
}

/// Repair words for a defect on this board: "open at U5 pin A3", "chain
/// breaks between U1 and U3", "short between nets A and B (wired-OR)".
pub fn repair_words(loaded: &LoadedBoard, d: &DefectSpec) -> String {
    let board = &loaded.board;
    if let Some(dev) = &d.broken_link {
        if let Some((p, k)) = board
            .device_index(dev)
            .and_then(|i| board.chain_position(i))
        {
            let chain = &board.ports()[p].chain;
            return match chain.get(k + 1) {
                Some(&next) => format!(
                    "chain breaks between {dev} and {}",
                    board.devices()[next].designator()
                ),
                None => format!(
                    "chain breaks after {dev} (its TDO to the {} connector)",
                    board.ports()[p].name
                ),
            };
        }
    }
    if let Some(what) = &d.open {
        if let Some((dev, pin)) = what.split_once('.') {
            if board.device_index(dev).is_some() {
                return format!("open at {dev} pin {pin}");
            }
        }
    }
    if let (Some(dev), Some(id)) = (&d.wrong_device, d.idcode) {
        return format!("wrong device fitted at {dev} (it reads IDCODE 0x{id:08X})");
    }
    d.describe()
}

/// The nets an explanation names, each with its pins.
pub fn probes(loaded: &LoadedBoard, defects: &[DefectSpec]) -> Vec<Probe> {
    let board = &loaded.board;
    let mut nets: Vec<String> = Vec::new();
    for d in defects {
        for n in d.short.iter().flatten().chain(&d.stuck).chain(&d.open) {
            let name = match n.split_once('.') {
                Some((dev, pin)) => board
                    .nets()
                    .iter()
                    .find(|x| x.pins.iter().any(|p| p.device == dev && p.pin == pin))
                    .map(|x| x.name.clone()),
                None => Some(n.clone()),
            };
            if let Some(name) = name.filter(|x| !nets.contains(x)) {
                nets.push(name);
            }
        }
    }
    nets.into_iter()
        .filter_map(|net| {
            let i = board.net_index(&net)?;
            let pins = board.nets()[i]
                .pins
                .iter()
                .map(|p| format!("{}.{}", p.device, p.pin))
                .collect();
            Some(Probe { net, pins })
        })
        .collect()
}

/// Neighbouring pins (same package, adjacent leads or balls) that sit on
/// two different nets of `nets`: where a bridge between them would be.
pub fn neighbours(loaded: &LoadedBoard, nets: &[String]) -> Vec<(String, String)> {
    let board = &loaded.board;
    let index: BTreeSet<usize> = nets.iter().filter_map(|n| board.net_index(n)).collect();
    let mut out = Vec::new();
    for dev in board.devices() {
        let name = dev.designator();
        let on_net = |pin: &str| {
            index.iter().copied().find(|&i| {
                board.nets()[i]
                    .pins
                    .iter()
                    .any(|p| p.device == name && p.pin == pin)
            })
        };
        for (a, b) in device_neighbours(loaded, name) {
            if let (Some(x), Some(y)) = (on_net(&a), on_net(&b)) {
                if x != y {
                    out.push((format!("{name}.{a}"), format!("{name}.{b}")));
                }
            }
        }
    }
    out
}
