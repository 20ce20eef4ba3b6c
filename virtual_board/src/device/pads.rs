//! Pads: the device's signal pins as the boundary register sees them.
//!
//! A pad is one port element with boundary cells: an output (data) cell, its
//! control, and an input cell (a BIDIR cell is both). The board connects a
//! pad's pins to nets and asks the pad what it drives.

use crate::model::device::{
    BoundaryCell, CellControl, CellFunction, CellType, DeviceModel, DisableResult, PortRef,
};

/// What a pad puts on its net.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Drive {
    /// Nothing: high impedance.
    None,
    /// A strong driver.
    Strong(bool),
    /// A weak or pull level (BSDL WEAK0/1, PULL0/1).
    Weak(bool),
    /// A bus keeper (BSDL KEEPER).
    Keeper,
    /// The system logic copies another net (index of the net on the board).
    Follow(u32),
}

impl Drive {
    /// What a disabled driver leaves on the pin (BSDL disable result).
    pub fn disabled(result: Option<DisableResult>) -> Drive {
        match result {
            None | Some(DisableResult::Z) => Drive::None,
            Some(DisableResult::Weak0 | DisableResult::Pull0) => Drive::Weak(false),
            Some(DisableResult::Weak1 | DisableResult::Pull1) => Drive::Weak(true),
            Some(DisableResult::Keeper) => Drive::Keeper,
        }
    }
}

/// What the system logic does with a pad outside the test modes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SystemDrive {
    /// Drives 0.
    Low,
    /// Drives 1.
    High,
    /// Leaves the driver disabled (the BSDL disable result applies); its
    /// data line is 0.
    Off,
    /// Copies the level of a board net (a pass-through).
    Follow(u32),
    /// Leaves the driver disabled, with its data line at this level: the
    /// system's data and enable given separately (a cell capturing the
    /// system's data under SAMPLE reads this level).
    OffData(bool),
}

impl SystemDrive {
    /// True when the system logic enables the pad's driver.
    pub fn enabled(self) -> bool {
        !matches!(self, SystemDrive::Off | SystemDrive::OffData(_))
    }
}

/// One pad of a device.
#[derive(Clone, Debug, PartialEq)]
pub struct Pad {
    /// The port element.
    pub port: PortRef,
    /// Its physical pins in the selected package.
    pub pins: Vec<String>,
    /// Output (data) cell, for OUTPUT2, OUTPUT3 and BIDIR.
    pub output: Option<u32>,
    /// The output's control, for three-state outputs.
    pub control: Option<CellControl>,
    /// Input cell, for INPUT, CLOCK, OBSERVE_ONLY and BIDIR.
    pub input: Option<u32>,
    /// True when the output cell is a self-monitoring type whose PO is the pad (BC_7 … BC_10).
    pub self_monitoring: bool,
}

/// Builds the pads of a model, in the order ports and cells first name them.
pub fn pads_of(model: &DeviceModel) -> Vec<Pad> {
    let mut pads: Vec<Pad> = Vec::new();
    let mut pad_of: std::collections::HashMap<&PortRef, usize> = std::collections::HashMap::new();
    for cell in &model.cells {
        let Some(port) = &cell.port else { continue };
        let index = match pad_of.get(port) {
            Some(&i) => i,
            None => {
                pad_of.insert(port, pads.len());
                let pins = model
                    .port(&port.name)
                    .and_then(|p| p.pins_of(port.index))
                    .map(<[String]>::to_vec)
                    .unwrap_or_default();
                pads.push(Pad {
                    port: port.clone(),
                    pins,
                    output: None,
                    control: None,
                    input: None,
                    self_monitoring: false,
                });
                pads.len() - 1
            }
        };
        let pad = &mut pads[index];
        add_cell(pad, cell);
    }
    pads
}

fn add_cell(pad: &mut Pad, cell: &BoundaryCell) {
    use CellFunction::*;
    if matches!(cell.function, Output2 | Output3 | Bidir) {
        pad.output = Some(cell.num);
        pad.control = cell.control;
        pad.self_monitoring = matches!(cell.cell, CellType::Bc(7..=10));
    }
    if matches!(cell.function, Input | Clock | ObserveOnly | Bidir) {
        pad.input = Some(cell.num);
    }
}
