//! `pad_map`: a scan device's pad centres from the netlist's coordinates,
//! for the board file's `pads:` key (the fault universe's adjacent-short
//! class then goes by pad distance, not pin names).

use std::collections::BTreeMap;

use virtual_board::DeviceModel;

use super::netlist::Netlist;

/// A pad centre in millimetres and the netlist line it came from.
pub type PlannedPad = ([f64; 2], u32);

/// The pads of one device: every netlist pin of it (`refs`: net and pin
/// index) that has coordinates and that the device's pin map holds.
pub fn pad_map(
    netlist: &Netlist,
    refs: Option<&Vec<(usize, usize)>>,
    model: &DeviceModel,
) -> BTreeMap<String, PlannedPad> {
    let refs = refs.map(Vec::as_slice).unwrap_or(&[]);
    let with_xy: Vec<_> = refs
        .iter()
        .filter_map(|&(n, k)| netlist.nets.get(n)?.pins.get(k))
        .filter_map(|p| p.xy.map(|(x, y)| (p, [x, y])))
        .collect();
    if with_xy.is_empty() {
        return BTreeMap::new();
    }
    let map = model.pin_map();
    with_xy
        .into_iter()
        .filter(|(p, _)| map.contains_key(&p.pin))
        .map(|(p, xy)| (p.pin.clone(), (xy, p.line)))
        .collect()
}
