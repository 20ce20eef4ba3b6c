//! Instruction decode: what each opcode selects and how the device behaves under it.

use crate::cell::InstructionClass;
use crate::model::device::{DeviceModel, RegisterKind};

/// The data register in the TDI–TDO path.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Selected {
    /// The one-bit bypass register.
    Bypass,
    /// The 32-bit device identification register.
    Idcode,
    /// The 32-bit user code register.
    Usercode,
    /// The boundary register.
    Boundary,
    /// A design-specific register (index into the device's user registers).
    User(usize),
}

/// Who drives the device's pins under an instruction.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PinControl {
    /// The system logic (BYPASS, SAMPLE/PRELOAD, IDCODE, Test-Logic-Reset …).
    System,
    /// The boundary register's update latches (EXTEST, CLAMP).
    Latches,
    /// Every output disabled (HIGHZ).
    Disabled,
}

/// One decoded instruction.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Decoded {
    /// Instruction name as the BSDL file writes it.
    pub name: String,
    /// The register it selects.
    pub register: Selected,
    /// Who drives the pins.
    pub pins: PinControl,
    /// Capture-table class when the boundary register is selected.
    pub class: InstructionClass,
    /// Why the model cannot run it, if it cannot.
    pub not_modelled: Option<&'static str>,
    /// True when its Update-DR of the boundary register counts as a PRELOAD
    /// for the EXTEST-without-PRELOAD check: every instruction but a SAMPLE
    /// that has an opcode of its own beside a separate PRELOAD.
    pub preloads: bool,
}

/// The decode table of one device: every instruction of its BSDL file, with
/// BYPASS for unknown opcodes (IEEE 1149.1 clause 8, from memory).
#[derive(Clone, Debug)]
pub struct DecodeTable {
    /// Decoded instructions; the index is the instruction's place in the BSDL file.
    pub instructions: Vec<Decoded>,
    /// (opcode value, care mask, instruction index) for each opcode; IR up to 64 bits decode by word.
    opcodes: Vec<(u64, u64, usize)>,
    /// Index of BYPASS.
    pub bypass: usize,
    /// Index of the instruction Test-Logic-Reset selects: IDCODE, else BYPASS.
    pub reset: usize,
}

impl DecodeTable {
    /// Builds the table. `user` names the device's user registers in order.
    pub fn new(model: &DeviceModel, user: &[String]) -> DecodeTable {
        let mut instructions = Vec::new();
        let mut opcodes = Vec::new();
        for (index, ins) in model.instructions.iter().enumerate() {
            let upper = ins.name.to_ascii_uppercase();
            let register = match model.register_for(&ins.name) {
                Some(RegisterKind::Boundary) => Selected::Boundary,
                Some(RegisterKind::Bypass) | None => Selected::Bypass,
                // USERCODE selects the device identification register, which
                // then captures the user code (IEEE 1149.1 clause 8, from
                // memory), so a file may list it under DEVICE_ID.
                Some(RegisterKind::DeviceId) if upper == "USERCODE" && model.usercode.is_some() => {
                    Selected::Usercode
                }
                Some(RegisterKind::DeviceId) if model.idcode.is_some() => Selected::Idcode,
                Some(RegisterKind::DeviceId) => Selected::Bypass,
                Some(RegisterKind::Usercode) if model.usercode.is_some() => Selected::Usercode,
                Some(RegisterKind::Usercode) => Selected::Idcode,
                Some(RegisterKind::User { name, .. }) => user
                    .iter()
                    .position(|u| u.eq_ignore_ascii_case(&name))
                    .map(Selected::User)
                    .unwrap_or(Selected::Bypass),
            };
            let (pins, class, not_modelled) = match upper.as_str() {
                "EXTEST" | "EXTEST_PULSE" | "EXTEST_TRAIN" => {
                    (PinControl::Latches, InstructionClass::Extest, None)
                }
                "CLAMP" => (PinControl::Latches, InstructionClass::Sample, None),
                "HIGHZ" => (PinControl::Disabled, InstructionClass::Sample, None),
                "INTEST" => (
                    PinControl::Latches,
                    InstructionClass::Intest,
                    Some("INTEST drives the core from the boundary register"),
                ),
                "RUNBIST" => (
                    PinControl::Latches,
                    InstructionClass::Intest,
                    Some("RUNBIST runs the device's own self-test"),
                ),
                _ if ins.private => (
                    PinControl::System,
                    InstructionClass::Sample,
                    Some("it is private to the device's maker"),
                ),
                _ => (PinControl::System, InstructionClass::Sample, None),
            };
            // IEEE 1149.1-2001 (clause 8, from memory) made SAMPLE and PRELOAD
            // separable and does not require SAMPLE's Update-DR to load the
            // update latches; where they share an opcode it is one
            // instruction, SAMPLE/PRELOAD, which does.
            let preloads = upper != "SAMPLE"
                || !model.instructions.iter().any(|p| {
                    p.name.eq_ignore_ascii_case("PRELOAD")
                        && !p.opcodes.iter().any(|o| ins.opcodes.contains(o))
                });
            instructions.push(Decoded {
                name: ins.name.clone(),
                register,
                pins,
                class,
                not_modelled,
                preloads,
            });
            for op in &ins.opcodes {
                opcodes.push((op.value_u64(), op.mask_u64(), index));
            }
        }
        let find = |n: &str| {
            model
                .instructions
                .iter()
                .position(|i| i.name.eq_ignore_ascii_case(n))
        };
        // The reader guarantees BYPASS exists; a hand-built model without one
        // gets a synthetic entry so decode never fails.
        let bypass = find("BYPASS").unwrap_or_else(|| {
            instructions.push(Decoded {
                name: "BYPASS".into(),
                register: Selected::Bypass,
                pins: PinControl::System,
                class: InstructionClass::Sample,
                not_modelled: None,
                preloads: true,
            });
            instructions.len() - 1
        });
        let reset = match find("IDCODE") {
            Some(i) if model.idcode.is_some() => i,
            _ => bypass,
        };
        DecodeTable {
            instructions,
            opcodes,
            bypass,
            reset,
        }
    }

    /// The instruction an IR value selects (bit i of `ir` = IR bit i).
    pub fn decode(&self, ir: u64) -> usize {
        self.lookup(ir).unwrap_or(self.bypass)
    }

    /// The instruction whose opcode in the BSDL table matches an IR value;
    /// `None` for an opcode the table does not list (the device then acts
    /// as under BYPASS: IEEE 1149.1 clause 8, from memory).
    pub fn lookup(&self, ir: u64) -> Option<usize> {
        self.opcodes
            .iter()
            .find(|(value, mask, _)| ir & mask == value & mask)
            .map(|(_, _, i)| *i)
    }
}
