//! `BoardSummary`: what `boardtwin board` shows about a board file.

use std::fmt;

use serde::Serialize;
use virtual_board::Board;

use crate::model_notes::{design_warnings, DesignWarning};
use crate::report::table::TextTable;

/// One device of a TAP port, in chain order.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct ChainDevice {
    /// Designator.
    pub designator: String,
    /// BSDL entity.
    pub entity: String,
    /// Instruction register length.
    pub ir_length: usize,
    /// Boundary register length.
    pub boundary_length: usize,
    /// True when the device has an IDCODE register.
    pub has_idcode: bool,
}

/// One TAP port.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct PortSummary {
    /// Port name.
    pub name: String,
    /// Devices from TDI to TDO.
    pub devices: Vec<ChainDevice>,
    /// Sum of the IR lengths.
    pub ir_length: usize,
    /// Sum of the boundary lengths.
    pub boundary_length: usize,
    /// True when TRST* is wired.
    pub trst: bool,
}

/// How scan cells reach a net.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct NetAccess {
    /// Net name.
    pub name: String,
    /// Pins on the net.
    pub pins: usize,
    /// Scan cells that can drive it (output or bidirectional cells).
    pub scan_drivers: usize,
    /// Scan cells that can read it (input or bidirectional cells).
    pub scan_receivers: usize,
    /// TAP ports of the drivers and receivers, sorted.
    pub ports: Vec<String>,
    /// `power`, `ground`, `pull-up`, `pull-down` or empty.
    pub tie: String,
}

/// What `boardtwin board` prints.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct BoardSummary {
    /// Board name.
    pub name: String,
    /// TAP ports.
    pub tap_ports: Vec<PortSummary>,
    /// Number of nets.
    pub nets: usize,
    /// Nets a scan cell can both drive and read: interconnect-testable.
    pub nets_driven_and_read: usize,
    /// Nets a scan cell can drive but none can read.
    pub nets_driven_only: usize,
    /// Nets a scan cell can read but none can drive.
    pub nets_read_only: usize,
    /// Nets with driver and receiver on different TAP ports.
    pub nets_crossing_ports: usize,
    /// Names of the nets no scan cell can drive or read (rails excluded).
    pub nets_without_scan_access: Vec<String>,
    /// Every net, with its access.
    pub net_access: Vec<NetAccess>,
    /// The device makers' DESIGN_WARNINGs, once per part.
    pub design_warnings: Vec<DesignWarning>,
}

impl BoardSummary {
    /// Summarises a loaded board.
    pub fn from_board(board: &Board) -> BoardSummary {
        let port_of_device = |d: usize| {
            board
                .ports()
                .iter()
                .find(|p| p.chain.contains(&d))
                .map(|p| p.name.clone())
                .unwrap_or_default()
        };
        let tap_ports = board
            .ports()
            .iter()
            .map(|p| {
                let devices: Vec<ChainDevice> = p
                    .chain
                    .iter()
                    .map(|&d| {
                        let dev = &board.devices()[d];
                        let m = dev.model();
                        ChainDevice {
                            designator: dev.designator().to_string(),
                            entity: m.entity.clone(),
                            ir_length: m.ir_length,
                            boundary_length: m.boundary_length,
                            has_idcode: m.idcode.is_some(),
                        }
                    })
                    .collect();
                PortSummary {
                    name: p.name.clone(),
                    ir_length: devices.iter().map(|d| d.ir_length).sum(),
                    boundary_length: devices.iter().map(|d| d.boundary_length).sum(),
                    devices,
                    trst: p.trst_wired,
                }
            })
            .collect();
        let mut net_access: Vec<NetAccess> = board
            .nets()
            .iter()
            .map(|n| {
                let mut ports: Vec<String> = n
                    .drivers
                    .iter()
                    .chain(&n.receivers)
                    .map(|&(d, _, _)| port_of_device(d))
                    .collect();
                ports.sort();
                ports.dedup();
                let tie = match (n.rail, n.pull) {
                    (Some(true), _) => "power",
                    (Some(false), _) => "ground",
                    (None, Some(true)) => "pull-up",
                    (None, Some(false)) => "pull-down",
                    (None, None) => "",
                };
                NetAccess {
                    name: n.name.clone(),
                    pins: n.pins.len(),
                    scan_drivers: n.drivers.len(),
                    scan_receivers: n.receivers.len(),
                    ports,
                    tie: tie.to_string(),
                }
            })
            .collect();
        net_access.sort_by(|a, b| a.name.cmp(&b.name));
        let crossing = board
            .nets()
            .iter()
            .filter(|n| {
                n.drivers.iter().any(|&(d, _, _)| {
                    n.receivers
                        .iter()
                        .any(|&(r, _, _)| port_of_device(r) != port_of_device(d))
                })
            })
            .count();
        let count = |f: &dyn Fn(&NetAccess) -> bool| net_access.iter().filter(|n| f(n)).count();
        BoardSummary {
            name: board.name().to_string(),
            tap_ports,
            nets: net_access.len(),
            nets_driven_and_read: count(&|n| n.scan_drivers > 0 && n.scan_receivers > 0),
            nets_driven_only: count(&|n| n.scan_drivers > 0 && n.scan_receivers == 0),
            nets_read_only: count(&|n| n.scan_drivers == 0 && n.scan_receivers > 0),
            nets_crossing_ports: crossing,
            nets_without_scan_access: net_access
                .iter()
                .filter(|n| {
                    n.scan_drivers == 0
                        && n.scan_receivers == 0
                        && !matches!(n.tie.as_str(), "power" | "ground")
                })
                .map(|n| n.name.clone())
                .collect(),
            net_access,
            design_warnings: design_warnings(board),
        }
    }
}

impl fmt::Display for BoardSummary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "board {}", self.name)?;
        for p in &self.tap_ports {
            writeln!(
                f,
                "\nTAP port {}: {}, IR {}, boundary {}, TRST* {}",
                p.name,
                crate::count(p.devices.len(), "device"),
                crate::count(p.ir_length, "bit"),
                crate::count(p.boundary_length, "cell"),
                if p.trst { "wired" } else { "not wired" }
            )?;
            let mut t = TextTable::new(2);
            t.row(["position", "device", "entity", "IR", "boundary", "IDCODE"]);
            for (i, d) in p.devices.iter().enumerate() {
                let position = match i {
                    0 if p.devices.len() == 1 => "TDI/TDO".to_string(),
                    0 => "1 (TDI)".to_string(),
                    _ if i + 1 == p.devices.len() => format!("{} (TDO)", i + 1),
                    _ => (i + 1).to_string(),
                };
                t.row([
                    position,
                    d.designator.clone(),
                    d.entity.clone(),
                    d.ir_length.to_string(),
                    d.boundary_length.to_string(),
                    if d.has_idcode { "yes" } else { "no" }.to_string(),
                ]);
            }
            write!(f, "{t}")?;
        }
        writeln!(f, "\nnets: {}", self.nets)?;
        let mut t = TextTable::new(2);
        t.row([
            "driven and read by scan cells",
            &self.nets_driven_and_read.to_string(),
        ]);
        t.row([
            "  of which cross TAP ports",
            &self.nets_crossing_ports.to_string(),
        ]);
        t.row(["driven only", &self.nets_driven_only.to_string()]);
        t.row(["read only", &self.nets_read_only.to_string()]);
        t.row([
            "no scan access (rails excluded)",
            &self.nets_without_scan_access.len().to_string(),
        ]);
        write!(f, "{t}")?;
        if !self.nets_without_scan_access.is_empty() {
            writeln!(
                f,
                "\nnets with no scan access: {}",
                self.nets_without_scan_access.join(", ")
            )?;
        }
        if !self.design_warnings.is_empty() {
            writeln!(f)?;
            for w in &self.design_warnings {
                writeln!(f, "{w}")?;
            }
        }
        Ok(())
    }
}
