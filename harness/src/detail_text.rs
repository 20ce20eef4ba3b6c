//! The detailed text views: `device --cells` (the boundary register cell by cell) and
//! `board --nets` (every net with its pins, pull or rail, scan access and clusters).

use std::collections::BTreeMap;
use std::fmt;

use virtual_board::{Board, DisableResult};

use crate::board_summary::BoardSummary;
use crate::device_summary::DeviceSummary;
use crate::report::table::TextTable;

/// `boardtwin device --cells`: every BOUNDARY_REGISTER entry, cell 0 (nearest TDO) first,
/// with the pins of its port element.
pub struct CellsText<'a>(pub &'a DeviceSummary);

impl fmt::Display for CellsText<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = self.0;
        let pins: BTreeMap<&str, String> = s
            .pins
            .iter()
            .flat_map(|p| &p.elements)
            .map(|e| (e.element.as_str(), e.pins.join(" ")))
            .collect();
        writeln!(
            f,
            "boundary register of {}: {} cells, cell 0 nearest TDO",
            s.entity, s.boundary_length
        )?;
        let mut t = TextTable::new(2);
        t.row([
            "cell", "type", "port", "pin", "function", "safe", "control", "disable", "result",
        ]);
        let mut cells: Vec<_> = s.cells.iter().collect();
        cells.sort_by_key(|c| c.num);
        for c in cells {
            let port = c.port.clone().unwrap_or_else(|| "*".into());
            t.row([
                c.num.to_string(),
                c.cell.clone(),
                port.clone(),
                c.port
                    .as_deref()
                    .and_then(|p| pins.get(p).cloned())
                    .unwrap_or_default(),
                c.function.as_str().to_string(),
                c.safe.clone(),
                c.control_cell.map(|k| k.to_string()).unwrap_or_default(),
                c.disable_value.clone().unwrap_or_default(),
                c.disable_result.map(result_word).unwrap_or_default().into(),
            ]);
        }
        write!(f, "{t}")
    }
}

fn result_word(r: DisableResult) -> &'static str {
    match r {
        DisableResult::Z => "Z",
        DisableResult::Weak0 => "WEAK0",
        DisableResult::Weak1 => "WEAK1",
        DisableResult::Pull0 => "PULL0",
        DisableResult::Pull1 => "PULL1",
        DisableResult::Keeper => "KEEPER",
    }
}

/// `boardtwin board --nets`: every net with its pins, its tie (rail or pull), how many scan
/// cells drive and read it, its TAP ports, and the non-scan parts (clusters) driving it.
pub struct NetsText<'a>(pub &'a Board);

impl fmt::Display for NetsText<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let board = self.0;
        let summary = BoardSummary::from_board(board);
        let access: BTreeMap<&str, &crate::NetAccess> = summary
            .net_access
            .iter()
            .map(|n| (n.name.as_str(), n))
            .collect();
        writeln!(f, "nets of {}: {}", board.name(), board.nets().len())?;
        let mut t = TextTable::new(2);
        t.row([
            "net",
            "tie",
            "drivers",
            "receivers",
            "TAP ports",
            "clusters",
            "pins",
        ]);
        let mut nets: Vec<_> = board.nets().iter().collect();
        nets.sort_by(|a, b| a.name.cmp(&b.name));
        for n in nets {
            let a = access.get(n.name.as_str());
            let clusters: Vec<String> = n
                .cluster_drivers
                .iter()
                .filter_map(|&(c, o)| {
                    let cl = board.clusters().get(c)?;
                    Some(format!("{}.{}", cl.name, cl.outputs.get(o)?.name))
                })
                .collect();
            let pins: Vec<String> = n
                .pins
                .iter()
                .map(|p| format!("{}.{}", p.device, p.pin))
                .collect();
            t.row([
                n.name.clone(),
                a.map(|a| a.tie.clone()).unwrap_or_default(),
                a.map(|a| a.scan_drivers).unwrap_or(0).to_string(),
                a.map(|a| a.scan_receivers).unwrap_or(0).to_string(),
                a.map(|a| a.ports.join(" ")).unwrap_or_default(),
                clusters.join(" "),
                pins.join(" "),
            ]);
        }
        write!(f, "{t}")
    }
}
