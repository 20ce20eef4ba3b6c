//! `Device`: one scan device on the board, edge by edge.
//!
//! A device is a TAP controller, an instruction register, its data registers
//! and its pads, built from a `DeviceModel`. It sees the board only through a
//! `PinView` (the levels of the nets its pads sit on) and tells the board
//! what each pad drives; the board does the net resolution.

mod decode;
mod pads;
mod quiet;

#[cfg(test)]
mod held_tests;

use std::sync::Arc;

pub use decode::{DecodeTable, Decoded, PinControl, Selected};
pub use pads::{pads_of, Drive, Pad, SystemDrive};
pub(crate) use quiet::Quiet;

use crate::cell::{capture_source, CaptureFunction, CaptureSource, InstructionClass};
use crate::model::device::{BitPattern, CellFunction, CellType, DeviceModel, PatternBit};
use crate::register::Bits;
use crate::rng::Rng;
use crate::span::Span;
use crate::tap::TapState;
use crate::target::{HeldInstruction, InstructionView, TargetError};

/// How a net reads at an input, as the board resolved it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub struct NetRead {
    /// The level (the float policy already applied, unless `random`).
    pub value: bool,
    /// Nothing drives the net, not even weakly.
    pub floating: bool,
    /// Floating under the random policy: each read draws a new value.
    pub random: bool,
}

/// The board as a device's pads see it during a capture.
#[derive(Clone, Copy, Debug)]
pub struct PinView<'a> {
    /// Net of each pad (its first connected pin), by pad index.
    pub pad_net: &'a [Option<u32>],
    /// Every net of the board.
    pub nets: &'a [NetRead],
    /// By pad index: how a pad on no net reads (its own one-pin net, which
    /// only the pad drives). A pad missing here reads `unconnected`.
    pub lone: &'a [NetRead],
    /// How an unconnected pin reads when nothing says more.
    pub unconnected: NetRead,
}

/// Why a device cannot be built from its model.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum DeviceError {
    /// A cell type/function pair the capture table does not give.
    #[error("cell {cell} is {cell_type} with function {function}, which the model's capture table does not cover (see virtual_board/src/cell/capture_table.txt)")]
    CellNotModelled {
        /// Cell number.
        cell: u32,
        /// Cell type.
        cell_type: String,
        /// Function.
        function: &'static str,
        /// Where the BSDL file lists the cell.
        span: Span,
    },
    /// A concrete IDCODE or USERCODE that disagrees with the BSDL pattern.
    #[error("{register} value {value:#010x} does not match the BSDL pattern {pattern}")]
    CodeMismatch {
        /// IDCODE or USERCODE.
        register: &'static str,
        /// The value given.
        value: u64,
        /// The pattern.
        pattern: String,
    },
    /// An instruction register longer than the model decodes.
    #[error("instruction register of {0} bits; the model decodes at most 64")]
    IrTooLong(usize),
}

/// Defects of one device's TAP or the device itself.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct DeviceFaults {
    /// TCK open at this device: it never sees an edge (frozen).
    pub tck_open: bool,
    /// TMS open at this device: it reads 1 through its pull-up.
    pub tms_open: bool,
    /// TDO stuck at this level.
    pub tdo_stuck: Option<bool>,
    /// A dead device: no TAP, TDO never drives, its pins drive nothing.
    pub dead: bool,
}

impl DeviceFaults {
    /// True when any fault is set.
    pub fn any(&self) -> bool {
        self.tck_open || self.tms_open || self.tdo_stuck.is_some() || self.dead
    }
}

/// Per-device settings from the board file.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DeviceSetup {
    /// Reference designator (U1 …).
    pub designator: String,
    /// Concrete IDCODE; its X bits fill the BSDL pattern's X bits. `None`: X bits read 0.
    pub idcode: Option<u64>,
    /// Concrete USERCODE, likewise.
    pub usercode: Option<u64>,
    /// Seed of the device's arbitrary values.
    pub seed: u64,
    /// System-logic behaviour per pad (same order as [`pads_of`]); missing pads are `Off`.
    pub system: Vec<SystemDrive>,
}

/// How Capture-DR fills one boundary cell (one entry per cell number).
#[derive(Clone, Debug, PartialEq)]
struct CellPlan {
    cell: CellType,
    /// The function whose capture row applies (the observing one of a merged pair).
    capture: CellFunction,
    /// The pad the cell serves, if any.
    pad: Option<usize>,
    /// For a control cell: the disable value of the outputs it controls.
    disable_value: bool,
    /// For a control cell: the pads it enables.
    controls: Vec<usize>,
    /// Capture source by instruction class (EXTEST, SAMPLE, INTEST) and, for
    /// a BIDIR cell, by direction (index 1 = driver enabled): looked up from
    /// the table once, at build time.
    sources: [[CaptureSource; 2]; 3],
}

/// What a boundary-register capture writes, held apart from the device
/// while its cell plans are read: the register, the random draws, and the
/// floating reads for the board to report.
struct Capture {
    bsr: Bits,
    rng: Rng,
    floating: Vec<(usize, u32)>,
}

const CLASSES: [InstructionClass; 3] = [
    InstructionClass::Extest,
    InstructionClass::Sample,
    InstructionClass::Intest,
];

fn class_index(class: InstructionClass) -> usize {
    match class {
        InstructionClass::Extest => 0,
        InstructionClass::Sample => 1,
        InstructionClass::Intest => 2,
    }
}

/// The table's sources for one cell, X where the table has no row.
fn sources_of(cell: &CellType, function: CellFunction) -> [[CaptureSource; 2]; 3] {
    CLASSES.map(|class| {
        let look = |f| capture_source(cell, f, class).unwrap_or(CaptureSource::X);
        match function {
            CellFunction::Bidir => [
                look(CaptureFunction::BidirIn),
                look(CaptureFunction::BidirOut),
            ],
            f => [look(CaptureFunction::Plain(f)); 2],
        }
    })
}

/// A user (design-specific) data register.
#[derive(Clone, Debug, PartialEq)]
struct UserRegister {
    shift: Bits,
    captures: Option<BitPattern>,
}

/// One scan device, edge by edge.
#[derive(Clone, Debug)]
pub struct Device {
    designator: String,
    model: Arc<DeviceModel>,
    decode: Arc<DecodeTable>,
    pads: Arc<Vec<Pad>>,
    cells: Arc<Vec<CellPlan>>,
    controlr: Arc<Vec<(u32, bool)>>,
    system: Vec<SystemDrive>,
    user_names: Arc<Vec<String>>,
    state: TapState,
    instruction: usize,
    /// The register and pin control of `instruction`, cached for the edge loop.
    selected: Selected,
    pin_control: PinControl,
    ir: Bits,
    bypass: Bits,
    idcode: Bits,
    usercode: Bits,
    /// The values the ID registers capture.
    idcode_value: Bits,
    usercode_value: Bits,
    user: Vec<UserRegister>,
    bsr: Bits,
    update: Bits,
    tdo: Option<bool>,
    rng: Rng,
    /// (pad, capturing cell) of each read of a floating net since the last take.
    floating_reads: Vec<(usize, u32)>,
    faults: DeviceFaults,
    /// A PRELOAD (an Update-DR under an instruction that `preloads`) has
    /// loaded the boundary register's latches since power-up.
    preloaded: bool,
    /// EXTEST (or CLAMP) became active with latches never loaded; for the board to report.
    unpreloaded_extest: bool,
    /// The opcode the last Update-IR latched (IR bit i = bit i), and whether
    /// Test-Logic-Reset has replaced it since (see [`Device::held`]).
    loaded: Option<u64>,
    reset_since_load: bool,
    /// How many bits Shift-DR gathers (`pending`) before it moves the
    /// selected data register: the register's length up to a word (0 with
    /// word shifts off, and 1, the same as moving it every bit, for a
    /// one-bit register). The register also moves when Shift-DR is left.
    lazy_room: u32,
    /// False on the reference: every Shift-DR bit moves the register.
    word_shifts: bool,
    /// Bits shifted into the data register, not yet applied (bit 0 first),
    /// and how many: only in Shift-DR, fewer than `lazy_room`.
    pending: (u64, u32),
}

impl PartialEq for Device {
    /// Two devices are equal when every piece of state a scan can observe is
    /// (bits shifted in but not yet applied count as applied).
    fn eq(&self, o: &Device) -> bool {
        if self.pending.1 != 0 || o.pending.1 != 0 {
            let (mut a, mut b) = (self.clone(), o.clone());
            a.apply_pending();
            b.apply_pending();
            return a.same_as(&b);
        }
        self.same_as(o)
    }
}

impl Device {
    fn same_as(&self, o: &Device) -> bool {
        self.designator == o.designator
            && self.state == o.state
            && self.instruction == o.instruction
            && self.ir == o.ir
            && self.bypass == o.bypass
            && self.idcode == o.idcode
            && self.usercode == o.usercode
            && self.user == o.user
            && self.bsr == o.bsr
            && self.update == o.update
            && self.tdo == o.tdo
            && self.rng == o.rng
            && self.system == o.system
            && self.faults == o.faults
            && self.preloaded == o.preloaded
            && self.loaded == o.loaded
            && self.reset_since_load == o.reset_since_load
    }
}

fn fill(
    pattern: &BitPattern,
    value: Option<u64>,
    register: &'static str,
) -> Result<Bits, DeviceError> {
    match value {
        Some(v) => {
            if v & pattern.mask_u64() != pattern.value_u64() {
                return Err(DeviceError::CodeMismatch {
                    register,
                    value: v,
                    pattern: pattern.to_string(),
                });
            }
            Ok(Bits::from_u64(v, pattern.len()))
        }
        None => Ok(Bits::from_bools(&pattern.resolve(0))),
    }
}

impl Device {
    /// Builds a device in Test-Logic-Reset, as after power-up.
    ///
    /// # Errors
    /// A cell the capture table does not cover, an IDCODE/USERCODE that
    /// disagrees with the file, or an instruction register over 64 bits.
    pub fn new(model: Arc<DeviceModel>, setup: DeviceSetup) -> Result<Device, DeviceError> {
        if model.ir_length > 64 {
            return Err(DeviceError::IrTooLong(model.ir_length));
        }
        let pads = pads_of(&model);
        let cells = plan_cells(&model, &pads)?;
        let mut user_names = Vec::new();
        let mut user = Vec::new();
        for a in &model.register_access {
            if let crate::model::device::RegisterKind::User { name, length } = &a.register {
                if !user_names
                    .iter()
                    .any(|n: &String| n.eq_ignore_ascii_case(name))
                {
                    user_names.push(name.clone());
                    user.push(UserRegister {
                        shift: Bits::zeros(*length),
                        captures: a.captures.clone(),
                    });
                }
            }
        }
        let decode = DecodeTable::new(&model, &user_names);
        let controlr = model
            .cells
            .iter()
            .filter(|c| c.function == CellFunction::Controlr)
            .map(|c| (c.num, cells[c.num as usize].disable_value))
            .collect();
        let idcode = match &model.idcode {
            Some(p) => fill(p, setup.idcode, "IDCODE")?,
            None => Bits::zeros(32),
        };
        let usercode = match &model.usercode {
            Some(p) => fill(p, setup.usercode, "USERCODE")?,
            None => Bits::zeros(32),
        };
        let mut system = setup.system;
        system.resize(pads.len(), SystemDrive::Off);
        let n = model.boundary_length;
        let mut d = Device {
            designator: setup.designator,
            decode: Arc::new(decode),
            pads: Arc::new(pads),
            cells: Arc::new(cells),
            controlr: Arc::new(controlr),
            system,
            user_names: Arc::new(user_names),
            state: TapState::TestLogicReset,
            instruction: 0,
            selected: Selected::Bypass,
            pin_control: PinControl::System,
            ir: Bits::zeros(model.ir_length),
            bypass: Bits::zeros(1),
            idcode_value: idcode.clone(),
            usercode_value: usercode.clone(),
            idcode,
            usercode,
            user,
            bsr: Bits::zeros(n),
            update: Bits::zeros(n),
            tdo: None,
            rng: Rng::new(setup.seed),
            floating_reads: Vec::new(),
            faults: DeviceFaults::default(),
            preloaded: false,
            unpreloaded_extest: false,
            loaded: None,
            reset_since_load: false,
            lazy_room: 0,
            word_shifts: true,
            pending: (0, 0),
            model,
        };
        // Power-up: the update latches hold arbitrary values (common
        // practice: nothing in the standard resets them), then TLR applies.
        for i in 0..n {
            let v = d.rng.bit();
            d.update.set(i, v);
        }
        d.reset();
        Ok(d)
    }

    /// Reference designator.
    pub fn designator(&self) -> &str {
        &self.designator
    }

    /// The BSDL model.
    pub fn model(&self) -> &Arc<DeviceModel> {
        &self.model
    }

    /// The TAP controller's state.
    pub fn state(&self) -> TapState {
        self.state
    }

    /// The instruction in effect.
    pub fn instruction(&self) -> &Decoded {
        &self.decode.instructions[self.instruction]
    }

    /// The instruction the device holds, and the one the last Update-IR
    /// loaded when Test-Logic-Reset has replaced it since.
    pub fn held(&self) -> HeldInstruction {
        let width = self.model.ir_length;
        let reset = &self.decode.instructions[self.decode.reset];
        let reset_view = InstructionView {
            name: Some(reset.name.clone()),
            opcode: self
                .model
                .instruction(&reset.name)
                .and_then(|i| i.opcodes.first())
                .map(|p| BitPattern::from_value(p.value_u64(), width).to_string())
                .unwrap_or_else(|| "1".repeat(width)),
            register: self.register_name(reset.register),
        };
        let loaded = self.loaded.map(|op| InstructionView {
            name: self
                .decode
                .lookup(op)
                .map(|i| self.decode.instructions[i].name.clone()),
            opcode: BitPattern::from_value(op, width).to_string(),
            register: self.register_name(self.decode.instructions[self.decode.decode(op)].register),
        });
        let (now, replaced) = match loaded {
            Some(l) if !self.reset_since_load => (l, None),
            l => (reset_view, l),
        };
        HeldInstruction {
            device: self.designator.clone(),
            now,
            by_reset: replaced.is_some() || self.loaded.is_none(),
            replaced,
        }
    }

    /// The name a scan layout gives a selected register.
    fn register_name(&self, selected: Selected) -> String {
        match selected {
            Selected::Bypass => "BYPASS".into(),
            Selected::Idcode => "DEVICE_ID".into(),
            Selected::Usercode => "USERCODE".into(),
            Selected::Boundary => "BOUNDARY".into(),
            Selected::User(i) => self.user_names[i].clone(),
        }
    }

    /// The pads.
    pub fn pads(&self) -> &[Pad] {
        &self.pads
    }

    /// The boundary register's update latches (bit i = cell i).
    pub fn update_latches(&self) -> &Bits {
        &self.update
    }

    /// The boundary register's shift stage. In the middle of a Shift-DR,
    /// up to 63 bits shifted in may not be applied yet (see
    /// [`Device::data_register`], which applies them).
    pub fn boundary_shift(&self) -> &Bits {
        &self.bsr
    }

    /// TDO as set by the last falling edge; `None` = high-impedance.
    #[inline]
    pub fn tdo(&self) -> Option<bool> {
        if self.faults.dead {
            return None;
        }
        match self.faults.tdo_stuck {
            Some(v) => Some(v),
            None => self.tdo,
        }
    }

    /// The device's defects.
    pub fn faults(&self) -> DeviceFaults {
        self.faults
    }

    /// Defect: loads another value into the IDCODE register (a wrong part).
    pub fn force_idcode(&mut self, value: u64) {
        self.idcode_value = Bits::from_u64(value, 32);
        self.idcode = self.idcode_value.clone();
    }

    /// Sets the device's defects.
    pub fn set_faults(&mut self, faults: DeviceFaults) {
        self.faults = faults;
    }

    /// True once (then false) after EXTEST or CLAMP became active while the
    /// update latches held values no Update-DR had loaded.
    pub fn take_unpreloaded_extest(&mut self) -> bool {
        std::mem::take(&mut self.unpreloaded_extest)
    }

    /// Length of the register between TDI and TDO now (IR in the IR states).
    pub fn path_length(&self) -> usize {
        match self.state {
            TapState::CaptureIr
            | TapState::ShiftIr
            | TapState::Exit1Ir
            | TapState::PauseIr
            | TapState::Exit2Ir => self.ir.len(),
            _ => self.data_register_len(),
        }
    }

    /// Length of the selected data register.
    pub fn data_register_len(&self) -> usize {
        match self.instruction().register {
            Selected::Bypass => 1,
            Selected::Idcode | Selected::Usercode => 32,
            Selected::Boundary => self.bsr.len(),
            Selected::User(i) => self.user[i].shift.len(),
        }
    }

    /// Names of the user registers, in REGISTER_ACCESS order.
    pub fn user_register_names(&self) -> &[String] {
        &self.user_names
    }

    /// (pad, capturing cell) of each read of a floating net since the last call.
    pub fn take_floating_reads(&mut self) -> Vec<(usize, u32)> {
        std::mem::take(&mut self.floating_reads)
    }

    /// Calls `f(pad, cell)` for each read of a floating net since the last
    /// call, and forgets them, keeping the list's room (no allocation).
    pub fn drain_floating_reads(&mut self, mut f: impl FnMut(usize, u32)) {
        for (pad, cell) in self.floating_reads.drain(..) {
            f(pad, cell);
        }
    }

    /// The system logic's drive for each pad.
    pub fn system(&self) -> &[SystemDrive] {
        &self.system
    }

    /// Replaces the system logic's drive for each pad (missing pads are `Off`).
    pub fn set_system(&mut self, mut system: Vec<SystemDrive>) {
        system.resize(self.pads.len(), SystemDrive::Off);
        self.system = system;
    }

    /// Who drives the pins now.
    #[inline]
    pub fn pin_control(&self) -> PinControl {
        self.pin_control
    }

    /// What pad `p` drives now.
    pub fn drive(&self, p: usize) -> Drive {
        if self.faults.dead {
            return Drive::None;
        }
        let pad = &self.pads[p];
        let Some(out) = pad.output else {
            return Drive::None;
        };
        let disabled = Drive::disabled(pad.control.map(|c| c.disable_result));
        match self.pin_control() {
            PinControl::Latches => {
                let enabled = pad
                    .control
                    .is_none_or(|c| self.update.get(c.cell as usize) != c.disable_value);
                if enabled {
                    Drive::Strong(self.update.get(out as usize))
                } else {
                    disabled
                }
            }
            PinControl::Disabled => disabled,
            PinControl::System => match self.system[p] {
                SystemDrive::Low => Drive::Strong(false),
                SystemDrive::High => Drive::Strong(true),
                SystemDrive::Off | SystemDrive::OffData(_) => disabled,
                SystemDrive::Follow(net) => Drive::Follow(net),
            },
        }
    }

    /// TRST* asserted: Test-Logic-Reset at once, without TCK (IEEE 1149.1
    /// clause 6, from memory). Returns true when the pins may have changed.
    pub fn trst(&mut self) -> bool {
        self.apply_pending();
        self.state = TapState::TestLogicReset;
        self.tdo = None;
        self.reset()
    }

    /// What Test-Logic-Reset does: IDCODE (or BYPASS) becomes the instruction
    /// and CONTROLR cells take their disable value. True when pins may change.
    fn reset(&mut self) -> bool {
        let before = self.pin_control();
        self.reset_since_load = true;
        self.set_instruction(self.decode.reset);
        for &(cell, disval) in self.controlr.iter() {
            self.update.set(cell as usize, disval);
        }
        before != self.pin_control()
    }

    /// The rising TCK edge: capture or shift in the current state, then move.
    #[inline]
    pub fn rising(&mut self, tms: bool, tdi: bool, view: &PinView<'_>) {
        if self.faults.tck_open || self.faults.dead {
            return;
        }
        let tms = tms || self.faults.tms_open;
        match self.state {
            TapState::ShiftDr | TapState::ShiftIr => self.shift_bit(tdi),
            TapState::CaptureDr => self.capture_dr(view),
            TapState::CaptureIr => self.capture_ir(),
            _ => {}
        }
        self.move_state(tms);
    }

    /// The rising edge in Shift-DR or Shift-IR: one bit in at TDI.
    #[inline]
    fn shift_bit(&mut self, tdi: bool) {
        if self.state == TapState::ShiftIr {
            self.ir.shift_in(tdi);
        } else if self.lazy_room > 1 {
            let (bits, n) = &mut self.pending;
            *bits |= u64::from(tdi) << *n;
            *n += 1;
            if *n == self.lazy_room {
                self.apply_pending();
            }
        } else {
            self.selected_register().shift_in(tdi);
        }
    }

    /// The state after the rising edge; bits gathered in Shift-DR are
    /// applied when it is left.
    #[inline]
    fn move_state(&mut self, tms: bool) {
        self.state = self.state.next(tms);
        if self.pending.1 != 0 && self.state != TapState::ShiftDr {
            self.apply_pending();
        }
    }

    /// TDO as the falling edge sets it in a Shift state (`None` elsewhere).
    /// With bits pending, the register has not moved yet: the bit at TDO is
    /// the one `pending` places further on (still inside the register:
    /// fewer than its length are pending).
    #[inline]
    fn shift_tdo(&self) -> Option<bool> {
        match self.state {
            TapState::ShiftDr => Some(self.data_register_ref().get(self.pending.1 as usize)),
            TapState::ShiftIr => Some(self.ir.get(0)),
            _ => None,
        }
    }

    /// Applies the bits Shift-DR gathered to the data register.
    #[inline]
    fn apply_pending(&mut self) {
        let (bits, n) = std::mem::take(&mut self.pending);
        if n != 0 {
            self.selected_register().shift_in_word(bits, n as usize);
        }
    }

    /// The falling TCK edge: updates, reset, and TDO. Returns true when what
    /// the pads drive may have changed.
    ///
    /// # Errors
    /// The new instruction is one the model does not run (the instruction is
    /// still loaded; the device stays as the hardware would, minus the effect).
    #[inline]
    pub fn falling(&mut self) -> Result<bool, TargetError> {
        if self.faults.tck_open || self.faults.dead {
            return Ok(false);
        }
        let mut changed = false;
        match self.state {
            TapState::ShiftDr | TapState::ShiftIr => {
                self.tdo = self.shift_tdo();
                return Ok(false);
            }
            TapState::UpdateDr if matches!(self.selected, Selected::Boundary) => {
                self.load_latches();
                changed = self.pin_control() == PinControl::Latches;
            }
            TapState::UpdateIr => {
                let before = self.pin_control();
                let opcode = self.ir.to_u64();
                self.loaded = Some(opcode);
                self.reset_since_load = false;
                self.set_instruction(self.decode.decode(opcode));
                changed = before != self.pin_control() || before == PinControl::Latches;
                if before != PinControl::Latches
                    && self.pin_control() == PinControl::Latches
                    && !self.preloaded
                {
                    self.unpreloaded_extest = true;
                }
                let d = &self.decode.instructions[self.instruction];
                if let Some(why) = d.not_modelled {
                    self.tdo = None;
                    return Err(TargetError::NotModelled {
                        device: self.designator.clone(),
                        instruction: d.name.clone(),
                        why,
                    });
                }
            }
            TapState::TestLogicReset => changed = self.reset(),
            _ => {}
        }
        self.tdo = None;
        Ok(changed)
    }

    /// Update-DR with the boundary register selected: the latches load.
    /// They load either way; only a PRELOAD (or a shared SAMPLE/PRELOAD)
    /// counts as one for the hazard check.
    fn load_latches(&mut self) {
        self.update.clone_from(&self.bsr);
        self.preloaded |= self.instruction().preloads;
    }

    fn set_instruction(&mut self, index: usize) {
        self.apply_pending();
        self.instruction = index;
        let d = &self.decode.instructions[index];
        self.selected = d.register;
        self.pin_control = d.pins;
        self.set_lazy_room();
    }

    /// [`Device::lazy_room`] for the selected register.
    fn set_lazy_room(&mut self) {
        let len = self.data_register_ref().len().min(64) as u32;
        self.lazy_room = if self.word_shifts { len } else { 0 };
    }

    /// Turns the word-at-a-time Shift-DR of long registers on (the default)
    /// or off (the reference: every bit moves the register). Both give the
    /// same answers; `tests/fast_path.rs` checks it on random boards.
    pub fn set_word_shifts(&mut self, on: bool) {
        self.apply_pending();
        self.word_shifts = on;
        self.set_lazy_room();
    }

    /// The selected data register, for the board's whole-scan path (any
    /// bits Shift-DR gathered are applied first).
    #[inline]
    pub fn data_register(&mut self) -> &mut Bits {
        self.apply_pending();
        self.selected_register()
    }

    #[inline]
    fn selected_register(&mut self) -> &mut Bits {
        match self.selected {
            Selected::Bypass => &mut self.bypass,
            Selected::Idcode => &mut self.idcode,
            Selected::Usercode => &mut self.usercode,
            Selected::Boundary => &mut self.bsr,
            Selected::User(i) => &mut self.user[i].shift,
        }
    }

    #[inline]
    fn data_register_ref(&self) -> &Bits {
        // The boundary register first: the one long scans go through.
        if matches!(self.selected, Selected::Boundary) {
            return &self.bsr;
        }
        match self.selected {
            Selected::Bypass => &self.bypass,
            Selected::Idcode => &self.idcode,
            Selected::Usercode => &self.usercode,
            Selected::Boundary => &self.bsr,
            Selected::User(i) => &self.user[i].shift,
        }
    }

    /// The instruction register's shift stage, for the board's whole-scan path.
    #[inline]
    pub fn instruction_register(&mut self) -> &mut Bits {
        &mut self.ir
    }

    /// Ends a whole-scan shift done by the board: the state the last bit's
    /// TMS=1 reaches (Exit1), and TDO off as its falling edge leaves it.
    pub fn finish_shift(&mut self) {
        self.state = self.state.next(true);
        self.tdo = None;
    }

    fn capture_ir(&mut self) {
        // IEEE 1149.1 clause 7: Capture-IR loads INSTRUCTION_CAPTURE; its X
        // bits are design-specific, so the model loads arbitrary values there.
        let pattern = &self.model.ir_capture;
        for i in 0..pattern.len() {
            let v = match pattern.bit(i) {
                PatternBit::Zero => false,
                PatternBit::One => true,
                PatternBit::X => self.rng.bit(),
            };
            self.ir.set(i, v);
        }
    }

    fn capture_dr(&mut self, view: &PinView<'_>) {
        if matches!(self.selected, Selected::Boundary) {
            let class = self.decode.instructions[self.instruction].class;
            // What the cells write is taken out for the loop, so the plans
            // are read in place (no reference count touched per capture).
            let mut out = Capture {
                bsr: std::mem::take(&mut self.bsr),
                rng: self.rng.clone(),
                floating: std::mem::take(&mut self.floating_reads),
            };
            for (i, plan) in self.cells.iter().enumerate() {
                if let Some(v) = self.capture_cell(i, plan, class, view, &mut out) {
                    out.bsr.set(i, v);
                }
            }
            self.bsr = out.bsr;
            self.rng = out.rng;
            self.floating_reads = out.floating;
        } else {
            self.capture_off_board();
        }
    }

    /// Capture-DR of a register other than the boundary register: nothing
    /// on the board is read.
    fn capture_off_board(&mut self) {
        match self.selected {
            // IEEE 1149.1 clause 10: the bypass register captures 0.
            Selected::Bypass => self.bypass.set(0, false),
            // The ID registers capture their fixed values (IEEE 1149.1
            // clause 10, from memory): a scan shifts them out, and every
            // Capture-DR loads them again.
            Selected::Idcode => self.idcode.clone_from(&self.idcode_value),
            Selected::Usercode => self.usercode.clone_from(&self.usercode_value),
            Selected::User(i) => {
                let len = self.user[i].shift.len();
                for k in 0..len {
                    let v = match self.user[i].captures.as_ref().map(|p| p.bit(k)) {
                        Some(PatternBit::One) => true,
                        Some(PatternBit::X) => self.rng.bit(),
                        _ => false,
                    };
                    self.user[i].shift.set(k, v);
                }
            }
            Selected::Boundary => {}
        }
    }

    /// What cell `cell` reads at its pad; a floating read is kept with the
    /// cell that made it (an output's self-monitoring cell as much as an
    /// input's), for the board to report.
    fn pin(&self, pad: Option<usize>, cell: usize, view: &PinView<'_>, out: &mut Capture) -> bool {
        let r = match pad {
            Some(p) => match view.pad_net.get(p).copied().flatten() {
                Some(n) => view
                    .nets
                    .get(n as usize)
                    .copied()
                    .unwrap_or(view.unconnected),
                None => view.lone.get(p).copied().unwrap_or(view.unconnected),
            },
            None => view.unconnected,
        };
        let p = pad;
        if r.floating {
            if let Some(p) = p {
                out.floating.push((p, cell as u32));
            }
        }
        if r.random {
            out.rng.bit()
        } else {
            r.value
        }
    }

    /// The system logic's value behind a cell: output data, or enable as a control value.
    fn core(&self, i: usize, plan: &CellPlan, view: &PinView<'_>, out: &mut Capture) -> bool {
        if !plan.controls.is_empty() {
            let enabled = plan.controls.iter().any(|&p| self.system[p].enabled());
            return enabled != plan.disable_value;
        }
        match plan.pad.map(|p| self.system[p]) {
            Some(SystemDrive::High) => true,
            Some(SystemDrive::Low) | Some(SystemDrive::Off) => false,
            Some(SystemDrive::OffData(v)) => v,
            Some(SystemDrive::Follow(n)) => {
                view.nets.get(n as usize).map(|r| r.value).unwrap_or(false)
            }
            // An internal cell's core signal is nothing the board shows: arbitrary.
            None => {
                let _ = i;
                out.rng.bit()
            }
        }
    }

    fn driver_enabled(&self, pad: usize) -> bool {
        !matches!(
            self.drive(pad),
            Drive::None | Drive::Weak(_) | Drive::Keeper
        )
    }

    fn capture_cell(
        &self,
        i: usize,
        plan: &CellPlan,
        class: InstructionClass,
        view: &PinView<'_>,
        out: &mut Capture,
    ) -> Option<bool> {
        let (observing, direction) = match plan.capture {
            CellFunction::Bidir => {
                let drives = plan.pad.is_some_and(|p| self.driver_enabled(p));
                (!drives, drives as usize)
            }
            CellFunction::Input | CellFunction::Clock | CellFunction::ObserveOnly => (true, 0),
            _ => (false, 0),
        };
        let source = plan.sources[class_index(class)][direction];
        Some(match source {
            CaptureSource::Pi if observing => self.pin(plan.pad, i, view, out),
            CaptureSource::Pi => self.core(i, plan, view, out),
            CaptureSource::Po if observing || (self.pads_self_monitoring(plan)) => {
                self.pin(plan.pad, i, view, out)
            }
            CaptureSource::Po => match self.pin_control() {
                PinControl::System => self.core(i, plan, view, out),
                _ => self.update.get(i),
            },
            CaptureSource::Upd => self.update.get(i),
            CaptureSource::Cap => return None,
            CaptureSource::X => out.rng.bit(),
            CaptureSource::Zero => false,
            CaptureSource::One => true,
        })
    }

    fn pads_self_monitoring(&self, plan: &CellPlan) -> bool {
        plan.pad
            .is_some_and(|p| self.pads[p].self_monitoring && self.pads[p].output.is_some())
    }
}

/// One plan per cell number; checks every cell against the capture table.
fn plan_cells(model: &DeviceModel, pads: &[Pad]) -> Result<Vec<CellPlan>, DeviceError> {
    let mut plans: Vec<Option<CellPlan>> = vec![None; model.boundary_length];
    // The first pad of each port element, as a search in order finds it.
    let mut pad_of: std::collections::HashMap<&crate::model::device::PortRef, usize> =
        std::collections::HashMap::new();
    for (i, pad) in pads.iter().enumerate() {
        pad_of.entry(&pad.port).or_insert(i);
    }
    for cell in &model.cells {
        let observing = matches!(
            cell.function,
            CellFunction::Input | CellFunction::Clock | CellFunction::ObserveOnly
        );
        let functions: &[CaptureFunction] = if cell.function == CellFunction::Bidir {
            &[CaptureFunction::BidirIn, CaptureFunction::BidirOut]
        } else {
            &[CaptureFunction::Plain(cell.function)]
        };
        for &f in functions {
            for class in [InstructionClass::Extest, InstructionClass::Sample] {
                if capture_source(&cell.cell, f, class).is_none() {
                    return Err(DeviceError::CellNotModelled {
                        cell: cell.num,
                        cell_type: cell.cell.to_string(),
                        function: cell.function.as_str(),
                        span: cell.span,
                    });
                }
            }
        }
        let pad = cell.port.as_ref().and_then(|p| pad_of.get(p).copied());
        let slot = &mut plans[cell.num as usize];
        match slot {
            None => {
                *slot = Some(CellPlan {
                    cell: cell.cell.clone(),
                    capture: cell.function,
                    pad,
                    disable_value: cell.safe.unwrap_or(false),
                    controls: Vec::new(),
                    sources: sources_of(&cell.cell, cell.function),
                })
            }
            // A merged cell captures through its observing entry.
            Some(existing) if observing => {
                existing.cell = cell.cell.clone();
                existing.capture = cell.function;
                existing.pad = pad.or(existing.pad);
                existing.sources = sources_of(&cell.cell, cell.function);
            }
            Some(_) => {}
        }
    }
    let mut plans: Vec<CellPlan> = plans
        .into_iter()
        .map(|p| {
            p.unwrap_or(CellPlan {
                cell: CellType::Bc(1),
                capture: CellFunction::Internal,
                pad: None,
                disable_value: false,
                controls: Vec::new(),
                sources: [[CaptureSource::X; 2]; 3],
            })
        })
        .collect();
    for (p, pad) in pads.iter().enumerate() {
        if let Some(c) = pad.control {
            if let Some(plan) = plans.get_mut(c.cell as usize) {
                plan.disable_value = c.disable_value;
                plan.controls.push(p);
            }
        }
    }
    Ok(plans)
}
