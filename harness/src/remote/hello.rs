//! What the server's hello says of its board (as designed: defects stay
//! hidden), and how a client finds where it differs from a board file.

use serde::{Deserialize, Serialize};
use virtual_board::Board;

/// The protocol version this build speaks.
pub const PROTOCOL_VERSION: u16 = 1;

/// A board as the hello describes it: its TAP ports, in index order.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct BoardDescription {
    /// The board's name (its board file's `name`).
    pub board: String,
    /// The TAP ports, by index.
    pub ports: Vec<PortDescription>,
}

/// One TAP port of the hello.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct PortDescription {
    /// Port name.
    pub name: String,
    /// True when the port has a TRST* line wired.
    pub trst: bool,
    /// Its devices, TDI end first.
    pub devices: Vec<DeviceDescription>,
}

/// One device of a TAP port, as the board file and its BSDL give it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct DeviceDescription {
    /// Designator.
    pub designator: String,
    /// Part (BSDL entity).
    pub part: String,
    /// Instruction register length.
    pub ir_length: usize,
    /// Boundary register length.
    pub boundary_length: usize,
}

impl BoardDescription {
    /// The description of a board (pass the board as designed, so that the
    /// hello reveals no defect).
    pub fn of(board: &Board) -> BoardDescription {
        BoardDescription {
            board: board.name().to_string(),
            ports: board
                .ports()
                .iter()
                .map(|p| PortDescription {
                    name: p.name.clone(),
                    trst: p.trst_wired,
                    devices: p
                        .chain
                        .iter()
                        .map(|&d| {
                            let dev = &board.devices()[d];
                            DeviceDescription {
                                designator: dev.designator().to_string(),
                                part: dev.model().entity.clone(),
                                ir_length: dev.model().ir_length,
                                boundary_length: dev.model().boundary_length,
                            }
                        })
                        .collect(),
                })
                .collect(),
        }
    }

    /// Where `remote` differs from this (the local board file's)
    /// description, one line each; empty when they match. The board's name
    /// is not compared.
    pub fn differences(&self, remote: &BoardDescription) -> Vec<String> {
        let mut out = Vec::new();
        let names = |d: &BoardDescription| -> Vec<String> {
            d.ports.iter().map(|p| p.name.clone()).collect()
        };
        if names(self) != names(remote) {
            out.push(format!(
                "TAP ports: the board file has {}, the remote board has {}",
                list(&names(self)),
                list(&names(remote))
            ));
            return out;
        }
        for (mine, theirs) in self.ports.iter().zip(&remote.ports) {
            if mine.trst != theirs.trst {
                out.push(format!(
                    "TAP port {}: TRST* {} in the board file, {} on the remote board",
                    mine.name,
                    wired(mine.trst),
                    wired(theirs.trst)
                ));
            }
            let chain = |p: &PortDescription| -> Vec<String> {
                p.devices
                    .iter()
                    .map(|d| {
                        format!(
                            "{} ({}, IR {}, boundary {})",
                            d.designator, d.part, d.ir_length, d.boundary_length
                        )
                    })
                    .collect()
            };
            if mine.devices != theirs.devices {
                out.push(format!(
                    "TAP port {}: the board file has {}, the remote board has {}",
                    mine.name,
                    list(&chain(mine)),
                    list(&chain(theirs))
                ));
            }
        }
        out
    }
}

fn wired(trst: bool) -> &'static str {
    if trst {
        "wired"
    } else {
        "not wired"
    }
}

fn list(items: &[String]) -> String {
    if items.is_empty() {
        "none".into()
    } else {
        items.join(", ")
    }
}
