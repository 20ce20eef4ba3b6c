//! `DeviceSummary`: what a BSDL file says about one device, as text for people and JSON for programs.

use std::collections::BTreeSet;
use std::fmt;

use serde::ser::{SerializeMap, Serializer};
use serde::Serialize;
use virtual_board::{
    BitPattern, CellFunction, CellType, ClockStop, DeviceModel, DisableResult, PatternBit,
    PortMode, RangeDir, RegisterKind,
};

use crate::report::table::TextTable;

/// A device model reduced to what a test engineer checks first: identity,
/// instruction register, ID codes, data registers, cells, TAP and pins.
///
/// Built with [`DeviceSummary::from_model`]; `Display` gives the text form,
/// `Serialize` the JSON form. Bit patterns are written MSB first with `X` for
/// don't-care bits, as BSDL writes them.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DeviceSummary {
    /// Entity name.
    pub entity: String,
    /// The file the model was read from, if any.
    pub source: Option<String>,
    /// Package (PIN_MAP_STRING) selected by the PHYSICAL_PIN_MAP generic.
    pub package: String,
    /// Every package the file carries, the selected one included.
    pub packages: Vec<String>,
    /// `use` packages (standard editions, vendor cell packages).
    pub uses: Vec<String>,
    /// INSTRUCTION_LENGTH.
    pub ir_length: usize,
    /// INSTRUCTION_CAPTURE.
    pub ir_capture: String,
    /// Instructions in file order; JSON: an object name → opcodes.
    #[serde(serialize_with = "instructions_as_map")]
    pub instructions: Vec<InstructionRow>,
    /// Instructions listed in INSTRUCTION_PRIVATE.
    pub private_instructions: Vec<String>,
    /// IDCODE as hex, X bits as 0 (`None` when the device has no IDCODE register).
    pub idcode: Option<String>,
    /// Defined bits of the IDCODE (1 = the bit is 0 or 1, not X), as hex.
    pub idcode_mask: Option<String>,
    /// IDCODE_REGISTER, 32 bits MSB first.
    pub idcode_pattern: Option<String>,
    /// IDCODE as hex with `?` for every digit holding an X bit.
    pub idcode_display: Option<String>,
    /// The IDCODE's fields.
    pub idcode_fields: Option<IdcodeFields>,
    /// USERCODE as hex, X bits as 0.
    pub usercode: Option<String>,
    /// Defined bits of the USERCODE, as hex.
    pub usercode_mask: Option<String>,
    /// USERCODE_REGISTER, 32 bits MSB first.
    pub usercode_pattern: Option<String>,
    /// USERCODE as hex with `?` for every digit holding an X bit.
    pub usercode_display: Option<String>,
    /// BOUNDARY_LENGTH.
    pub boundary_length: usize,
    /// Data registers with their lengths and the instructions that select them.
    pub registers: Vec<RegisterRow>,
    /// BOUNDARY_REGISTER entries counted by function (merged cells count in each entry).
    #[serde(serialize_with = "pairs_as_map")]
    pub cell_functions: Vec<(String, usize)>,
    /// BOUNDARY_REGISTER entries counted by cell type.
    #[serde(serialize_with = "pairs_as_map")]
    pub cell_types: Vec<(String, usize)>,
    /// BOUNDARY_REGISTER entries in file order.
    pub cells: Vec<CellRow>,
    /// TAP signals.
    pub tap: TapRow,
    /// Distinct pins bonded in the selected package.
    pub pin_count: usize,
    /// Ports with their pins, in declared order.
    pub pins: Vec<PortPins>,
    /// Attributes the model does not use, by name.
    pub unmodelled_attributes: Vec<String>,
    /// DESIGN_WARNING: the device maker's instruction to the test engineer.
    pub design_warning: Option<String>,
}

/// One instruction of INSTRUCTION_OPCODE.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct InstructionRow {
    /// Instruction name.
    pub name: String,
    /// Opcodes, MSB first.
    pub opcodes: Vec<String>,
    /// The data register it selects, when the file or the standard says.
    pub register: Option<String>,
    /// Listed in INSTRUCTION_PRIVATE.
    pub private: bool,
}

/// The fields of a 32-bit IDCODE.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct IdcodeFields {
    /// Bits 31:28.
    pub version: IdField,
    /// Bits 27:12.
    pub part_number: IdField,
    /// Bits 11:1, the manufacturer identity.
    pub manufacturer: IdField,
}

/// One field of an ID code.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct IdField {
    /// The field's bits, MSB first, with X.
    pub bits: String,
    /// The value as hex, `None` when a bit is X.
    pub value: Option<String>,
}

/// A data register.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct RegisterRow {
    /// BYPASS, DEVICE_ID, USERCODE, BOUNDARY or a design-specific name.
    pub name: String,
    /// Length in bits.
    pub length: usize,
    /// Instructions that select it, in file order.
    pub instructions: Vec<String>,
}

/// One BOUNDARY_REGISTER entry.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct CellRow {
    /// Cell number; 0 is nearest TDO.
    pub num: u32,
    /// Cell type (`BC_1` …).
    pub cell: String,
    /// Port element, `None` for `*`.
    pub port: Option<String>,
    /// Function.
    pub function: CellFunction,
    /// Safe value: `0`, `1` or `X`.
    pub safe: String,
    /// Control cell of a three-state cell.
    pub control_cell: Option<u32>,
    /// Control-cell value that disables the driver: `0` or `1`.
    pub disable_value: Option<String>,
    /// What the disabled pin does.
    pub disable_result: Option<DisableResult>,
}

/// The TAP signals.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TapRow {
    /// Port with TAP_SCAN_CLOCK.
    pub tck: Option<String>,
    /// Port with TAP_SCAN_MODE.
    pub tms: Option<String>,
    /// Port with TAP_SCAN_IN.
    pub tdi: Option<String>,
    /// Port with TAP_SCAN_OUT.
    pub tdo: Option<String>,
    /// Port with TAP_SCAN_RESET (TRST*), if any.
    pub trst: Option<String>,
    /// Highest TCK frequency in Hz.
    pub tck_max_hz: Option<f64>,
    /// When TCK may stop: `BOTH` or `LOW`.
    pub tck_stop: Option<String>,
}

/// A port and the pins its elements are bonded to.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct PortPins {
    /// Port name.
    pub port: String,
    /// Mode: in, out, inout, buffer, linkage or a newer linkage type.
    pub mode: String,
    /// `7 downto 0` / `0 to 3` for a vector.
    pub range: Option<String>,
    /// Elements in declared order (left index first).
    pub elements: Vec<ElementPins>,
}

/// One port element and its pins.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct ElementPins {
    /// `D(3)`, or the port name for a scalar.
    pub element: String,
    /// Pins (usually one).
    pub pins: Vec<String>,
}

impl DeviceSummary {
    /// Summarises a device model.
    pub fn from_model(model: &DeviceModel) -> DeviceSummary {
        let instructions: Vec<InstructionRow> = model
            .instructions
            .iter()
            .map(|i| InstructionRow {
                name: i.name.clone(),
                opcodes: i.opcodes.iter().map(ToString::to_string).collect(),
                register: model.register_for(&i.name).map(|r| register_name(&r)),
                private: i.private,
            })
            .collect();
        let idcode = model.idcode.as_ref();
        let usercode = model.usercode.as_ref();
        DeviceSummary {
            entity: model.entity.clone(),
            source: model.source.as_ref().map(|p| p.display().to_string()),
            package: model.package.clone(),
            packages: model.packages.clone(),
            uses: model.uses.clone(),
            ir_length: model.ir_length,
            ir_capture: model.ir_capture.to_string(),
            private_instructions: instructions
                .iter()
                .filter(|i| i.private)
                .map(|i| i.name.clone())
                .collect(),
            instructions,
            idcode: idcode.map(|p| hex_value(p.value_u64(), p.len())),
            idcode_mask: idcode.map(|p| hex_value(p.mask_u64(), p.len())),
            idcode_pattern: idcode.map(ToString::to_string),
            idcode_display: idcode.map(hex_with_unknowns),
            idcode_fields: idcode.filter(|p| p.len() == 32).map(|p| IdcodeFields {
                version: id_field(p, 28, 4),
                part_number: id_field(p, 12, 16),
                manufacturer: id_field(p, 1, 11),
            }),
            usercode: usercode.map(|p| hex_value(p.value_u64(), p.len())),
            usercode_mask: usercode.map(|p| hex_value(p.mask_u64(), p.len())),
            usercode_pattern: usercode.map(ToString::to_string),
            usercode_display: usercode.map(hex_with_unknowns),
            boundary_length: model.boundary_length,
            registers: registers(model),
            cell_functions: model
                .cell_counts()
                .into_iter()
                .map(|(f, n)| (f.as_str().to_string(), n))
                .collect(),
            cell_types: cell_types(model),
            cells: model
                .cells
                .iter()
                .map(|c| CellRow {
                    num: c.num,
                    cell: c.cell.to_string(),
                    port: c.port.as_ref().map(ToString::to_string),
                    function: c.function,
                    safe: bit_text(c.safe).to_string(),
                    control_cell: c.control.map(|k| k.cell),
                    disable_value: c
                        .control
                        .map(|k| bit_text(Some(k.disable_value)).to_string()),
                    disable_result: c.control.map(|k| k.disable_result),
                })
                .collect(),
            tap: TapRow {
                tck: model.tap.tck.clone(),
                tms: model.tap.tms.clone(),
                tdi: model.tap.tdi.clone(),
                tdo: model.tap.tdo.clone(),
                trst: model.tap.trst.clone(),
                tck_max_hz: model.tap.tck_max_hz,
                tck_stop: model.tap.tck_stop.map(|s| {
                    match s {
                        ClockStop::Both => "BOTH",
                        ClockStop::Low => "LOW",
                    }
                    .to_string()
                }),
            },
            pin_count: model.pin_map().len(),
            pins: model.ports.iter().map(port_pins).collect(),
            unmodelled_attributes: model.unmodelled_attributes.clone(),
            design_warning: model.design_warning.clone(),
        }
    }
}

/// The name a register goes by in reports.
fn register_name(kind: &RegisterKind) -> String {
    match kind {
        RegisterKind::Boundary => "BOUNDARY".to_string(),
        RegisterKind::Bypass => "BYPASS".to_string(),
        RegisterKind::DeviceId => "DEVICE_ID".to_string(),
        RegisterKind::Usercode => "USERCODE".to_string(),
        RegisterKind::User { name, .. } => name.clone(),
    }
}

/// BYPASS, DEVICE_ID, USERCODE and BOUNDARY (when present), then the
/// design-specific registers in the order REGISTER_ACCESS names them.
///
/// Lengths: BYPASS 1 and DEVICE_ID 32 bits (IEEE 1149.1 clause 10, from
/// memory); USERCODE is read through a 32-bit register too; BOUNDARY is
/// BOUNDARY_LENGTH; design-specific registers state their own length.
fn registers(model: &DeviceModel) -> Vec<RegisterRow> {
    let mut rows = vec![RegisterRow {
        name: "BYPASS".into(),
        length: 1,
        instructions: Vec::new(),
    }];
    if model.idcode.is_some() {
        rows.push(RegisterRow {
            name: "DEVICE_ID".into(),
            length: 32,
            instructions: Vec::new(),
        });
    }
    rows.push(RegisterRow {
        name: "BOUNDARY".into(),
        length: model.boundary_length,
        instructions: Vec::new(),
    });
    for ins in &model.instructions {
        let Some(kind) = model.register_for(&ins.name) else {
            continue;
        };
        let name = register_name(&kind);
        let at = match rows.iter().position(|r| r.name == name) {
            Some(at) => at,
            None => {
                let length = match kind {
                    RegisterKind::Bypass => 1,
                    RegisterKind::DeviceId | RegisterKind::Usercode => 32,
                    RegisterKind::Boundary => model.boundary_length,
                    RegisterKind::User { length, .. } => length,
                };
                // Standard registers keep their place before BOUNDARY.
                let at = match kind {
                    RegisterKind::DeviceId | RegisterKind::Usercode => rows
                        .iter()
                        .position(|r| r.name == "BOUNDARY")
                        .unwrap_or(rows.len()),
                    _ => rows.len(),
                };
                rows.insert(
                    at,
                    RegisterRow {
                        name,
                        length,
                        instructions: Vec::new(),
                    },
                );
                at
            }
        };
        rows[at].instructions.push(ins.name.clone());
    }
    rows
}

/// Entries counted by cell type: BC_0 … BC_10 by number, then other types by name.
fn cell_types(model: &DeviceModel) -> Vec<(String, usize)> {
    let kinds: BTreeSet<(u8, String)> = model
        .cells
        .iter()
        .map(|c| match &c.cell {
            CellType::Bc(n) => (*n, String::new()),
            CellType::Other(name) => (u8::MAX, name.clone()),
        })
        .collect();
    kinds
        .into_iter()
        .map(|(n, other)| {
            let ty = if n == u8::MAX {
                CellType::Other(other)
            } else {
                CellType::Bc(n)
            };
            let count = model.cells.iter().filter(|c| c.cell == ty).count();
            (ty.to_string(), count)
        })
        .collect()
}

fn port_pins(port: &virtual_board::Port) -> PortPins {
    let mode = match &port.mode {
        PortMode::In => "in".to_string(),
        PortMode::Out => "out".to_string(),
        PortMode::InOut => "inout".to_string(),
        PortMode::Buffer => "buffer".to_string(),
        PortMode::Linkage => "linkage".to_string(),
        PortMode::OtherLinkage(name) => name.to_ascii_lowercase(),
    };
    let (range, indices) = match port.range {
        Some(r) => {
            let dir = match r.dir {
                RangeDir::To => "to",
                RangeDir::Downto => "downto",
            };
            let indices = r.indices().into_iter().map(Some).collect();
            (Some(format!("{} {dir} {}", r.left, r.right)), indices)
        }
        None => (None, vec![None]),
    };
    let elements = indices
        .into_iter()
        .zip(&port.pins)
        .map(|(index, pins)| ElementPins {
            element: match index {
                Some(i) => format!("{}({i})", port.name),
                None => port.name.clone(),
            },
            pins: pins.clone(),
        })
        .collect();
    PortPins {
        port: port.name.clone(),
        mode,
        range,
        elements,
    }
}

fn bit_text(bit: Option<bool>) -> &'static str {
    match bit {
        Some(false) => "0",
        Some(true) => "1",
        None => "X",
    }
}

/// `0x` and `width` bits of `value` as hex digits (at least one digit).
fn hex_value(value: u64, width: usize) -> String {
    let digits = width.div_ceil(4).max(1);
    format!("0x{value:0digits$x}")
}

/// Hex digits MSB first: the digit where its bits are all 0/1, `?` where any is X.
fn hex_with_unknowns(pattern: &BitPattern) -> String {
    let bits = pattern.bits();
    let digits = bits.len().div_ceil(4).max(1);
    let mut out = String::from("0x");
    for d in (0..digits).rev() {
        let nibble = &bits[d * 4..(d * 4 + 4).min(bits.len())];
        if nibble.contains(&PatternBit::X) {
            out.push('?');
        } else {
            let v = nibble
                .iter()
                .enumerate()
                .filter(|(_, b)| **b == PatternBit::One)
                .fold(0u32, |acc, (i, _)| acc | (1 << i));
            out.push(char::from_digit(v, 16).unwrap_or('?'));
        }
    }
    out
}

/// Bits `low .. low + width` of `pattern`.
fn id_field(pattern: &BitPattern, low: usize, width: usize) -> IdField {
    let all = pattern.bits();
    let bits = &all[low.min(all.len())..(low + width).min(all.len())];
    let text: String = bits
        .iter()
        .rev()
        .map(|b| match b {
            PatternBit::Zero => '0',
            PatternBit::One => '1',
            PatternBit::X => 'X',
        })
        .collect();
    let value = (!bits.contains(&PatternBit::X)).then(|| {
        let v = bits
            .iter()
            .enumerate()
            .filter(|(_, b)| **b == PatternBit::One)
            .fold(0u64, |acc, (i, _)| acc | (1 << i));
        format!("0x{v:0digits$x}", digits = width.div_ceil(4))
    });
    IdField { bits: text, value }
}

fn instructions_as_map<S: Serializer>(rows: &[InstructionRow], s: S) -> Result<S::Ok, S::Error> {
    let mut map = s.serialize_map(Some(rows.len()))?;
    for row in rows {
        map.serialize_entry(&row.name, &row.opcodes)?;
    }
    map.end()
}

fn pairs_as_map<S: Serializer>(pairs: &[(String, usize)], s: S) -> Result<S::Ok, S::Error> {
    let mut map = s.serialize_map(Some(pairs.len()))?;
    for (k, v) in pairs {
        map.serialize_entry(k, v)?;
    }
    map.end()
}

/// `25 MHz`, `12.5 MHz`, `800 kHz`.
fn frequency(hz: f64) -> String {
    if hz >= 1e6 {
        format!("{} MHz", hz / 1e6)
    } else if hz >= 1e3 {
        format!("{} kHz", hz / 1e3)
    } else {
        format!("{hz} Hz")
    }
}

fn list_or_none(items: &[String]) -> String {
    if items.is_empty() {
        "none".to_string()
    } else {
        items.join(", ")
    }
}

impl DeviceSummary {
    fn write_identity(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "device {}", self.entity)?;
        let mut t = TextTable::new(2);
        if let Some(source) = &self.source {
            t.row(["file", source.as_str()]);
        }
        let others: Vec<String> = self
            .packages
            .iter()
            .filter(|p| **p != self.package)
            .cloned()
            .collect();
        let package = if self.package.is_empty() {
            "none".to_string()
        } else {
            self.package.clone()
        };
        t.row(["package".to_string(), package]);
        t.row(["other packages".to_string(), list_or_none(&others)]);
        t.row(["uses".to_string(), list_or_none(&self.uses)]);
        write!(f, "{t}")
    }

    fn write_instructions(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "\ninstruction register: {} bits, captures {}",
            self.ir_length, self.ir_capture
        )?;
        let mut t = TextTable::new(2);
        t.row(["instruction", "opcode", "register", ""]);
        for i in &self.instructions {
            t.row([
                i.name.clone(),
                i.opcodes.join(" "),
                i.register.clone().unwrap_or_else(|| "not stated".into()),
                if i.private { "private" } else { "" }.to_string(),
            ]);
        }
        write!(f, "{t}")
    }

    fn write_codes(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "\nidentification")?;
        let mut t = TextTable::new(2);
        let mut fields = TextTable::new(2);
        match (&self.idcode_display, &self.idcode_pattern) {
            (Some(hex), Some(pattern)) => {
                let shown = match &self.idcode_fields {
                    // Version | part number | manufacturer | 1 (IEEE 1149.1
                    // clause 10, from memory).
                    Some(id) => format!(
                        "{} {} {} {}",
                        id.version.bits,
                        id.part_number.bits,
                        id.manufacturer.bits,
                        pattern.get(pattern.len().saturating_sub(1)..).unwrap_or("")
                    ),
                    None => pattern.clone(),
                };
                t.row(["IDCODE".to_string(), hex.clone(), shown]);
            }
            _ => {
                t.row([
                    "IDCODE",
                    "none",
                    "(BYPASS is selected after Test-Logic-Reset)",
                ]);
            }
        }
        match (&self.usercode_display, &self.usercode_pattern) {
            (Some(hex), Some(pattern)) => {
                t.row(["USERCODE".to_string(), hex.clone(), pattern.clone()]);
            }
            _ => {
                t.row(["USERCODE", "none"]);
            }
        }
        if let Some(id) = &self.idcode_fields {
            fields.row(["IDCODE field".to_string(), "value".to_string()]);
            fields.row(["version".to_string(), field_text(&id.version)]);
            fields.row(["part number".to_string(), field_text(&id.part_number)]);
            let mut maker = field_text(&id.manufacturer);
            if id.manufacturer.value.is_some() {
                // Bits 11:8 count JEP106 continuation codes, bits 7:1 are the
                // code within the bank (JEDEC JEP106, from memory).
                let bits = &id.manufacturer.bits;
                let (high, low) = bits.split_at(bits.len().min(4));
                let bank = u32::from_str_radix(high, 2).unwrap_or(0) + 1;
                let code = u32::from_str_radix(low, 2).unwrap_or(0);
                maker.push_str(&format!(" (JEP106 bank {bank}, code 0x{code:02x})"));
            }
            fields.row(["manufacturer".to_string(), maker]);
        }
        write!(f, "{t}")?;
        if !fields.is_empty() {
            write!(f, "\n{fields}")?;
        }
        Ok(())
    }

    fn write_registers(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "\ndata registers")?;
        let mut t = TextTable::new(2);
        t.row(["register", "bits", "selected by"]);
        for r in &self.registers {
            t.row([
                r.name.clone(),
                r.length.to_string(),
                list_or_none(&r.instructions),
            ]);
        }
        write!(f, "{t}")
    }

    fn write_cells(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "\nboundary register: {} cells", self.boundary_length)?;
        if self.cells.len() != self.boundary_length {
            write!(f, " in {} entries (merged cells)", self.cells.len())?;
        }
        writeln!(f)?;
        let mut t = TextTable::new(2);
        t.row(["function", "entries"]);
        for (name, n) in &self.cell_functions {
            t.row([name.clone(), n.to_string()]);
        }
        t.row(["", ""]);
        t.row(["cell type", "entries"]);
        for (name, n) in &self.cell_types {
            t.row([name.clone(), n.to_string()]);
        }
        write!(f, "{t}")
    }

    fn write_tap(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "\nTAP")?;
        let mut t = TextTable::new(2);
        let port = |p: &Option<String>| p.clone().unwrap_or_else(|| "none".into());
        let mut clock = Vec::new();
        if let Some(hz) = self.tap.tck_max_hz {
            clock.push(format!("up to {}", frequency(hz)));
        }
        match self.tap.tck_stop.as_deref() {
            Some("BOTH") => clock.push("may stop high or low".into()),
            Some("LOW") => clock.push("may stop only low".into()),
            _ => {}
        }
        t.row(["TCK".to_string(), port(&self.tap.tck), clock.join(", ")]);
        t.row(["TMS".to_string(), port(&self.tap.tms)]);
        t.row(["TDI".to_string(), port(&self.tap.tdi)]);
        t.row(["TDO".to_string(), port(&self.tap.tdo)]);
        let trst = match &self.tap.trst {
            Some(p) => [p.clone(), String::new()],
            None => [
                "none".to_string(),
                "(reset by TMS held high for five TCKs, or power-on)".to_string(),
            ],
        };
        t.row(["TRST*".to_string(), trst[0].clone(), trst[1].clone()]);
        write!(f, "{t}")
    }

    fn write_pins(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "\npins: {}", self.pin_count)?;
        if !self.package.is_empty() {
            write!(f, " in package {}", self.package)?;
        }
        writeln!(f)?;
        let mut t = TextTable::new(2);
        t.row(["port", "mode", "pins"]);
        for p in &self.pins {
            let name = match &p.range {
                Some(r) => format!("{}({r})", p.port),
                None => p.port.clone(),
            };
            let pins: Vec<String> = p
                .elements
                .iter()
                .map(|e| match e.pins.as_slice() {
                    [one] => one.clone(),
                    many => format!("({})", many.join(" ")),
                })
                .collect();
            t.row([name, p.mode.clone(), pins.join(" ")]);
        }
        write!(f, "{t}")
    }
}

/// `0x7420`, or `unknown (XXXX)` when a bit is X.
fn field_text(field: &IdField) -> String {
    match &field.value {
        Some(v) => v.clone(),
        None => format!("unknown ({})", field.bits),
    }
}

impl fmt::Display for DeviceSummary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.write_identity(f)?;
        self.write_instructions(f)?;
        self.write_codes(f)?;
        self.write_registers(f)?;
        self.write_cells(f)?;
        self.write_tap(f)?;
        self.write_pins(f)?;
        if let Some(text) = &self.design_warning {
            writeln!(f, "\ndesign warning (from the device maker)")?;
            for line in wrap(text, 76) {
                writeln!(f, "  {line}")?;
            }
        }
        writeln!(
            f,
            "\nunmodelled attributes: {}",
            list_or_none(&self.unmodelled_attributes)
        )
    }
}

/// `text` cut into lines of at most `width` characters at spaces (a longer
/// word stands alone on its line).
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match lines.last_mut() {
            Some(line) if line.chars().count() + 1 + word.chars().count() <= width => {
                line.push(' ');
                line.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small invented device (demo data of our own, no real part): IR 3,
    /// IDCODE with an unknown version, a private instruction, a design-specific
    /// register, a shared control cell and a BC_7 bidirectional pin.
    const SMALL: &str = r#"
entity TINY is
  generic (PHYSICAL_PIN_MAP : string := "P8");
  port (A : in bit; Y : out bit_vector(1 downto 0); D : inout bit;
        TCK, TMS, TDI : in bit; TDO : out bit; VDD : linkage bit);
  use STD_1149_1_2001.all;
  attribute PIN_MAP of TINY : entity is PHYSICAL_PIN_MAP;
  constant P8 : PIN_MAP_STRING := "A:1, Y:(2,3), D:4, TCK:5, TMS:6, TDI:7, TDO:8, VDD:(9,10)";
  constant Q8 : PIN_MAP_STRING := "A:8, Y:(7,6), D:5, TCK:4, TMS:3, TDI:2, TDO:1, VDD:(9,10)";
  attribute TAP_SCAN_IN of TDI : signal is true;
  attribute TAP_SCAN_MODE of TMS : signal is true;
  attribute TAP_SCAN_OUT of TDO : signal is true;
  attribute TAP_SCAN_CLOCK of TCK : signal is (12.5e6, LOW);
  attribute INSTRUCTION_LENGTH of TINY : entity is 3;
  attribute INSTRUCTION_OPCODE of TINY : entity is
    "EXTEST (000), SAMPLE (001), IDCODE (010), TRIM (1X0), BYPASS (111, 011)";
  attribute INSTRUCTION_CAPTURE of TINY : entity is "X01";
  attribute INSTRUCTION_PRIVATE of TINY : entity is "TRIM";
  attribute IDCODE_REGISTER of TINY : entity is
    "XXXX" & "0001001000110100" & "00000000101" & "1";
  attribute REGISTER_ACCESS of TINY : entity is "TRIMREG[5] (TRIM)";
  attribute BOUNDARY_LENGTH of TINY : entity is 6;
  attribute BOUNDARY_REGISTER of TINY : entity is
    "0 (BC_1, A, INPUT, X), " &
    "1 (BC_1, *, CONTROL, 1), " &
    "2 (BC_1, Y(1), OUTPUT3, X, 1, 1, Z), " &
    "3 (BC_1, Y(0), OUTPUT3, 0, 1, 1, PULL1), " &
    "4 (BC_1, *, CONTROL, 0), " &
    "5 (BC_7, D, BIDIR, X, 4, 0, KEEPER)";
  attribute VENDOR_NOTE of TINY : entity is "demo";
  attribute DESIGN_WARNING of TINY : entity is
    "Hold D low while TRIM runs: " &
    "the trim engine drives D and   a second driver would fight it.";
end TINY;
"#;

    #[test]
    fn wrap_cuts_at_spaces() {
        assert_eq!(wrap("ab cd ef", 5), ["ab cd", "ef"]);
        assert_eq!(wrap("abcdefg hi", 4), ["abcdefg", "hi"]);
        assert_eq!(wrap("  ", 4), Vec::<String>::new());
    }

    fn small() -> DeviceSummary {
        DeviceSummary::from_model(&virtual_board::parse_bsdl(SMALL).expect("SMALL parses"))
    }

    #[test]
    fn text_form_is_exact() {
        let expected = "\
device TINY
  package         P8
  other packages  Q8
  uses            STD_1149_1_2001

instruction register: 3 bits, captures X01
  instruction  opcode   register
  EXTEST       000      BOUNDARY
  SAMPLE       001      BOUNDARY
  IDCODE       010      DEVICE_ID
  TRIM         1X0      TRIMREG    private
  BYPASS       111 011  BYPASS

identification
  IDCODE    0x?123400b  XXXX 0001001000110100 00000000101 1
  USERCODE  none

  IDCODE field  value
  version       unknown (XXXX)
  part number   0x1234
  manufacturer  0x005 (JEP106 bank 1, code 0x05)

data registers
  register   bits  selected by
  BYPASS     1     BYPASS
  DEVICE_ID  32    IDCODE
  BOUNDARY   6     EXTEST, SAMPLE
  TRIMREG    5     TRIM

boundary register: 6 cells
  function   entries
  INPUT      1
  OUTPUT3    2
  CONTROL    2
  BIDIR      1

  cell type  entries
  BC_1       5
  BC_7       1

TAP
  TCK    TCK   up to 12.5 MHz, may stop only low
  TMS    TMS
  TDI    TDI
  TDO    TDO
  TRST*  none  (reset by TMS held high for five TCKs, or power-on)

pins: 10 in package P8
  port           mode     pins
  A              in       1
  Y(1 downto 0)  out      2 3
  D              inout    4
  TCK            in       5
  TMS            in       6
  TDI            in       7
  TDO            out      8
  VDD            linkage  (9 10)

design warning (from the device maker)
  Hold D low while TRIM runs: the trim engine drives D and a second driver
  would fight it.

unmodelled attributes: VENDOR_NOTE
";
        let got = small().to_string();
        for (i, (g, e)) in got.lines().zip(expected.lines()).enumerate() {
            assert_eq!(g, e, "line {}", i + 1);
        }
        assert_eq!(got, expected);
    }

    #[test]
    fn json_keys_and_values() {
        let json = serde_json::to_value(small()).expect("serialises");
        assert_eq!(json["entity"], "TINY");
        assert_eq!(json["package"], "P8");
        assert_eq!(json["ir_length"], 3);
        assert_eq!(json["boundary_length"], 6);
        assert_eq!(json["idcode"], "0x0123400b");
        assert_eq!(json["idcode_mask"], "0x0fffffff");
        assert_eq!(json["idcode_pattern"], "XXXX0001001000110100000000001011");
        assert_eq!(json["idcode_display"], "0x?123400b");
        assert_eq!(json["idcode_fields"]["part_number"]["value"], "0x1234");
        assert_eq!(
            json["idcode_fields"]["version"]["value"],
            serde_json::Value::Null
        );
        assert_eq!(json["usercode"], serde_json::Value::Null);
        // IEEE 1149.1-2001 Annex B (from memory): DESIGN_WARNING is the
        // maker's note to the test engineer; its pieces join into one text.
        assert_eq!(
            json["design_warning"],
            "Hold D low while TRIM runs: the trim engine drives D and a second driver would fight it."
        );
        assert_eq!(
            json["unmodelled_attributes"],
            serde_json::json!(["VENDOR_NOTE"])
        );
        assert_eq!(
            json["instructions"]["BYPASS"],
            serde_json::json!(["111", "011"])
        );
        assert_eq!(json["instructions"]["TRIM"], serde_json::json!(["1X0"]));
        assert_eq!(json["private_instructions"], serde_json::json!(["TRIM"]));
        assert_eq!(json["cells"].as_array().map(Vec::len), Some(6));
        assert_eq!(
            json["cells"][3],
            serde_json::json!({
                "num": 3, "cell": "BC_1", "port": "Y(0)", "function": "OUTPUT3", "safe": "0",
                "control_cell": 1, "disable_value": "1", "disable_result": "PULL1"
            })
        );
        assert_eq!(json["cells"][1]["port"], serde_json::Value::Null);
        assert_eq!(
            json["registers"][3],
            serde_json::json!({"name": "TRIMREG", "length": 5, "instructions": ["TRIM"]})
        );
        assert_eq!(json["pin_count"], 10);
        assert_eq!(
            json["pins"][1]["elements"][0],
            serde_json::json!({"element": "Y(1)", "pins": ["2"]})
        );
        assert_eq!(json["tap"]["tck_max_hz"], 12.5e6);
        assert_eq!(json["tap"]["tck_stop"], "LOW");
    }

    /// IEEE 1149.1 clause 10 (from memory): bits 31:28 version, 27:12 part
    /// number, 11:1 manufacturer identity, bit 0 always 1. The value is made up.
    #[test]
    fn idcode_fields_follow_the_clause_10_layout() {
        let p = BitPattern::from_value(0x3ABC_D0F3, 32);
        assert_eq!(id_field(&p, 28, 4).value.as_deref(), Some("0x3"));
        assert_eq!(id_field(&p, 12, 16).value.as_deref(), Some("0xabcd"));
        // Bits 11:1 of 0x0F3 are 0x0F3 >> 1 = 0x079.
        assert_eq!(id_field(&p, 1, 11).value.as_deref(), Some("0x079"));
        assert_eq!(hex_value(p.value_u64(), 32), "0x3abcd0f3");
        assert_eq!(hex_with_unknowns(&p), "0x3abcd0f3");
    }

    #[test]
    fn a_digit_with_any_x_bit_shows_as_a_question_mark() {
        let cases = [
            ("1111000010100101", "0xf0a5"),
            ("X111000010100101", "0x?0a5"),
            ("11110000101001X1", "0xf0a?"),
            ("XXXXXXXX", "0x??"),
            ("101", "0x5"),
            ("X01", "0x?"),
        ];
        for (pattern, shown) in cases {
            let p = BitPattern::parse(pattern).expect("pattern");
            assert_eq!(hex_with_unknowns(&p), shown, "{pattern}");
        }
    }
}
