//! `DeviceModel`: what a BSDL file says about one scan device.

use std::collections::BTreeMap;
use std::fmt;
use std::path::PathBuf;

use serde::Serialize;

use crate::span::Span;

/// One bit of a BSDL pattern: `0`, `1` or `X` (don't care / varies).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum PatternBit {
    /// Logic 0.
    Zero,
    /// Logic 1.
    One,
    /// `X`: don't care (opcodes), unknown or design-specific (captures, IDCODE).
    X,
}

/// A pattern of 0/1/X bits as BSDL writes them.
///
/// Stored with index 0 = least significant bit = the rightmost character in
/// BSDL = the bit nearest TDO, first out and first shifted in (IEEE 1149.1
/// Annex B, from memory).
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct BitPattern {
    bits: Vec<PatternBit>,
}

impl BitPattern {
    /// Builds a pattern from text written MSB first (`"10X1"`); `None` if a
    /// character is not 0, 1 or X (either case).
    pub fn parse(msb_first: &str) -> Option<BitPattern> {
        let mut bits = Vec::with_capacity(msb_first.len());
        for ch in msb_first.chars().rev() {
            bits.push(match ch {
                '0' => PatternBit::Zero,
                '1' => PatternBit::One,
                'x' | 'X' => PatternBit::X,
                _ => return None,
            });
        }
        Some(BitPattern { bits })
    }

    /// A pattern of `width` bits holding `value` (no X bits).
    pub fn from_value(value: u64, width: usize) -> BitPattern {
        let bits = (0..width)
            .map(|i| {
                if i < 64 && (value >> i) & 1 == 1 {
                    PatternBit::One
                } else {
                    PatternBit::Zero
                }
            })
            .collect();
        BitPattern { bits }
    }

    /// Number of bits.
    pub fn len(&self) -> usize {
        self.bits.len()
    }

    /// True when the pattern has no bits.
    pub fn is_empty(&self) -> bool {
        self.bits.is_empty()
    }

    /// Bit `i` (0 = least significant).
    pub fn bit(&self, i: usize) -> PatternBit {
        self.bits[i]
    }

    /// The bits, least significant first.
    pub fn bits(&self) -> &[PatternBit] {
        &self.bits
    }

    /// True when every bit is 1.
    pub fn is_all_ones(&self) -> bool {
        self.bits.iter().all(|b| *b == PatternBit::One)
    }

    /// True when some bit is X.
    pub fn has_x(&self) -> bool {
        self.bits.contains(&PatternBit::X)
    }

    /// True when `value` (bit i = bit i of the register) agrees with every
    /// non-X bit.
    pub fn matches(&self, value: &[bool]) -> bool {
        value.len() == self.bits.len()
            && self.bits.iter().zip(value).all(|(p, v)| match p {
                PatternBit::Zero => !*v,
                PatternBit::One => *v,
                PatternBit::X => true,
            })
    }

    /// True when some value matches both patterns (same width, no bit where
    /// one says 0 and the other 1).
    pub fn overlaps(&self, other: &BitPattern) -> bool {
        self.len() == other.len()
            && self.bits.iter().zip(&other.bits).all(|(a, b)| {
                !matches!(
                    (a, b),
                    (PatternBit::Zero, PatternBit::One) | (PatternBit::One, PatternBit::Zero)
                )
            })
    }

    /// The 1 bits as a number (X counts as 0); bits past 64 are ignored.
    pub fn value_u64(&self) -> u64 {
        self.bits
            .iter()
            .take(64)
            .enumerate()
            .filter(|(_, b)| **b == PatternBit::One)
            .fold(0, |acc, (i, _)| acc | (1 << i))
    }

    /// The non-X bits as a mask (1 = the bit is defined); bits past 64 ignored.
    pub fn mask_u64(&self) -> u64 {
        self.bits
            .iter()
            .take(64)
            .enumerate()
            .filter(|(_, b)| **b != PatternBit::X)
            .fold(0, |acc, (i, _)| acc | (1 << i))
    }

    /// The concrete bits, X replaced by the matching bit of `fill`.
    pub fn resolve(&self, fill: u64) -> Vec<bool> {
        self.bits
            .iter()
            .enumerate()
            .map(|(i, b)| match b {
                PatternBit::Zero => false,
                PatternBit::One => true,
                PatternBit::X => i < 64 && (fill >> i) & 1 == 1,
            })
            .collect()
    }
}

impl fmt::Display for BitPattern {
    /// MSB first, as BSDL writes it, with `X` for don't-care bits.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for b in self.bits.iter().rev() {
            f.write_str(match b {
                PatternBit::Zero => "0",
                PatternBit::One => "1",
                PatternBit::X => "X",
            })?;
        }
        Ok(())
    }
}

impl Serialize for BitPattern {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// Mode of a logical port (BSDL borrows VHDL's port modes).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub enum PortMode {
    /// `in`
    In,
    /// `out`
    Out,
    /// `inout`
    InOut,
    /// `buffer`
    Buffer,
    /// `linkage` (power, ground, no-connect, analog)
    Linkage,
    /// A newer linkage type (2013: POWER_POS, VREF_IN …), kept by name.
    OtherLinkage(String),
}

/// Direction of a `bit_vector` range.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum RangeDir {
    /// `a to b`, left index smaller.
    To,
    /// `a downto b`, left index larger.
    Downto,
}

/// A `bit_vector(left to|downto right)` range.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct PortRange {
    /// Left (first declared) index.
    pub left: i64,
    /// Right (last declared) index.
    pub right: i64,
    /// `to` or `downto`.
    pub dir: RangeDir,
}

impl PortRange {
    /// The indices in declared order, left index first.
    pub fn indices(&self) -> Vec<i64> {
        match self.dir {
            RangeDir::To => (self.left..=self.right).collect(),
            RangeDir::Downto => (self.right..=self.left).rev().collect(),
        }
    }

    /// Number of elements (0 for an empty, reversed range).
    pub fn width(&self) -> usize {
        match self.dir {
            RangeDir::To if self.right >= self.left => (self.right - self.left + 1) as usize,
            RangeDir::Downto if self.left >= self.right => (self.left - self.right + 1) as usize,
            _ => 0,
        }
    }

    /// True when `index` is inside the range.
    pub fn contains(&self, index: i64) -> bool {
        let (lo, hi) = match self.dir {
            RangeDir::To => (self.left, self.right),
            RangeDir::Downto => (self.right, self.left),
        };
        (lo..=hi).contains(&index)
    }
}

/// A logical port of the entity, with the physical pins it is bonded to.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Port {
    /// Port name as written (BSDL is case-insensitive; compare upper-cased).
    pub name: String,
    /// Port mode.
    pub mode: PortMode,
    /// `Some` for a `bit_vector`, `None` for a scalar `bit`.
    pub range: Option<PortRange>,
    /// Pins per element, in declared order (one entry for a scalar). An
    /// element may be bonded to several pins.
    pub pins: Vec<Vec<String>>,
    /// Where the port is declared.
    #[serde(skip)]
    pub span: Span,
}

impl Port {
    /// Pins of element `index` (`None` for a scalar port).
    pub fn pins_of(&self, index: Option<i64>) -> Option<&[String]> {
        match (self.range, index) {
            (None, None) => self.pins.first().map(Vec::as_slice),
            (Some(range), Some(i)) => {
                let pos = range.indices().iter().position(|&x| x == i)?;
                self.pins.get(pos).map(Vec::as_slice)
            }
            _ => None,
        }
    }
}

/// A reference to one port element: `D`, or `D(3)`.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
pub struct PortRef {
    /// Port name, as written.
    pub name: String,
    /// Element index for a vector port.
    pub index: Option<i64>,
}

impl fmt::Display for PortRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.index {
            Some(i) => write!(f, "{}({})", self.name, i),
            None => f.write_str(&self.name),
        }
    }
}

/// When TCK may be stopped (TAP_SCAN_CLOCK's second field).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum ClockStop {
    /// `BOTH`: TCK may stop high or low.
    Both,
    /// `LOW`: TCK may stop only low.
    Low,
}

/// The TAP signals of the device (TAP_SCAN_* attributes).
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct TapSignals {
    /// Port with TAP_SCAN_IN.
    pub tdi: Option<String>,
    /// Port with TAP_SCAN_OUT.
    pub tdo: Option<String>,
    /// Port with TAP_SCAN_MODE.
    pub tms: Option<String>,
    /// Port with TAP_SCAN_CLOCK.
    pub tck: Option<String>,
    /// Port with TAP_SCAN_RESET (TRST*), if the device has one.
    pub trst: Option<String>,
    /// Highest TCK frequency in Hz.
    pub tck_max_hz: Option<f64>,
    /// When TCK may stop.
    pub tck_stop: Option<ClockStop>,
    /// Where each TAP_SCAN_* attribute is written: (attribute, span of its name).
    #[serde(skip)]
    pub declared_at: Vec<(&'static str, Span)>,
}

impl TapSignals {
    /// The TAP_SCAN_* attribute that makes `port` a TAP signal, and where it
    /// is written (`None` for a model built without text).
    pub fn signal_of(&self, port: &str) -> Option<(&'static str, Option<Span>)> {
        let attribute = [
            (&self.tdi, "TAP_SCAN_IN"),
            (&self.tdo, "TAP_SCAN_OUT"),
            (&self.tms, "TAP_SCAN_MODE"),
            (&self.tck, "TAP_SCAN_CLOCK"),
            (&self.trst, "TAP_SCAN_RESET"),
        ]
        .into_iter()
        .find(|(p, _)| p.as_deref().is_some_and(|p| p.eq_ignore_ascii_case(port)))
        .map(|(_, a)| a)?;
        let span = self
            .declared_at
            .iter()
            .find(|(a, _)| *a == attribute)
            .map(|(_, s)| *s);
        Some((attribute, span))
    }
}

/// An instruction and its opcodes (INSTRUCTION_OPCODE).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Instruction {
    /// Instruction name, as written.
    pub name: String,
    /// Opcodes, each INSTRUCTION_LENGTH bits; X bits are don't-care in decode.
    pub opcodes: Vec<BitPattern>,
    /// Listed in INSTRUCTION_PRIVATE.
    pub private: bool,
    /// Where the instruction is named.
    #[serde(skip)]
    pub span: Span,
}

/// A data register an instruction can select (REGISTER_ACCESS).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub enum RegisterKind {
    /// BOUNDARY
    Boundary,
    /// BYPASS
    Bypass,
    /// DEVICE_ID
    DeviceId,
    /// USERCODE (some files name it; otherwise USERCODE selects DEVICE_ID)
    Usercode,
    /// A design-specific register with its length.
    User {
        /// Register name.
        name: String,
        /// Length in bits.
        length: usize,
    },
}

/// One REGISTER_ACCESS association: an instruction and the register it selects.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RegisterAccess {
    /// Instruction name.
    pub instruction: String,
    /// Register selected.
    pub register: RegisterKind,
    /// `CAPTURES` pattern, if the file states what the register captures.
    pub captures: Option<BitPattern>,
}

/// Cell type of a boundary-register cell.
#[derive(Clone, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum CellType {
    /// A standard cell `BC_n` of the STD_1149_1 packages (n = 0 ..= 10).
    Bc(u8),
    /// Any other cell (IEEE 1149.6 AC_*, vendor cells), kept by name. A board
    /// that uses one gets a clear error; reading the file does not fail.
    Other(String),
}

impl fmt::Display for CellType {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CellType::Bc(n) => write!(f, "BC_{n}"),
            CellType::Other(name) => f.write_str(name),
        }
    }
}

/// Function of a boundary cell (the third field of a cell entry).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "SCREAMING_SNAKE_CASE")]
pub enum CellFunction {
    /// Observes an input pin.
    Input,
    /// Drives a two-state output.
    Output2,
    /// Drives a three-state output (with a control cell).
    Output3,
    /// Enables three-state drivers.
    Control,
    /// A control cell forced to its disable value in Test-Logic-Reset.
    Controlr,
    /// A bidirectional pin (data); acts as BIDIR_IN or BIDIR_OUT per its control.
    Bidir,
    /// A clock input.
    Clock,
    /// Observes only (no update stage).
    ObserveOnly,
    /// An internal cell with no pin.
    Internal,
}

impl CellFunction {
    /// The BSDL spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            CellFunction::Input => "INPUT",
            CellFunction::Output2 => "OUTPUT2",
            CellFunction::Output3 => "OUTPUT3",
            CellFunction::Control => "CONTROL",
            CellFunction::Controlr => "CONTROLR",
            CellFunction::Bidir => "BIDIR",
            CellFunction::Clock => "CLOCK",
            CellFunction::ObserveOnly => "OBSERVE_ONLY",
            CellFunction::Internal => "INTERNAL",
        }
    }

    /// True for CONTROL and CONTROLR.
    pub fn is_control(self) -> bool {
        matches!(self, CellFunction::Control | CellFunction::Controlr)
    }
}

/// What a disabled three-state pin does (the seventh field of a cell entry).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "SCREAMING_SNAKE_CASE")]
pub enum DisableResult {
    /// High impedance: the net floats.
    Z,
    /// Weak 0.
    Weak0,
    /// Weak 1.
    Weak1,
    /// Pull-down.
    Pull0,
    /// Pull-up.
    Pull1,
    /// Bus keeper: holds the last strongly driven level.
    Keeper,
}

/// The control part of a three-state cell entry: `ccell, disval, rslt`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct CellControl {
    /// Number of the control cell.
    pub cell: u32,
    /// Control-cell value that disables this driver.
    pub disable_value: bool,
    /// What the pin does when disabled.
    pub disable_result: DisableResult,
}

/// One entry of BOUNDARY_REGISTER.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BoundaryCell {
    /// Cell number; 0 is nearest TDO.
    pub num: u32,
    /// Cell type.
    pub cell: CellType,
    /// Port element, `None` for `*` (internal or control cells).
    pub port: Option<PortRef>,
    /// Function.
    pub function: CellFunction,
    /// Safe value; `None` for X.
    pub safe: Option<bool>,
    /// For three-state cells: control cell, disable value, disable result.
    pub control: Option<CellControl>,
    /// Where the entry is written.
    #[serde(skip)]
    pub span: Span,
}

/// Everything a BSDL file says about one device that the model uses.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DeviceModel {
    /// Entity name.
    pub entity: String,
    /// The file read, if any.
    pub source: Option<PathBuf>,
    /// Package variant selected by the PHYSICAL_PIN_MAP generic.
    pub package: String,
    /// Every PIN_MAP_STRING constant the file carries.
    pub packages: Vec<String>,
    /// `use` packages named by the file, upper-cased.
    pub uses: Vec<String>,
    /// Logical ports with their pins in the selected package.
    pub ports: Vec<Port>,
    /// The TAP signals.
    pub tap: TapSignals,
    /// INSTRUCTION_LENGTH.
    pub ir_length: usize,
    /// Instructions, in the order INSTRUCTION_OPCODE lists them.
    pub instructions: Vec<Instruction>,
    /// INSTRUCTION_CAPTURE.
    pub ir_capture: BitPattern,
    /// IDCODE_REGISTER, if any.
    pub idcode: Option<BitPattern>,
    /// USERCODE_REGISTER, if any.
    pub usercode: Option<BitPattern>,
    /// REGISTER_ACCESS associations.
    pub register_access: Vec<RegisterAccess>,
    /// BOUNDARY_LENGTH.
    pub boundary_length: usize,
    /// BOUNDARY_REGISTER entries in file order (merged cells appear twice).
    pub cells: Vec<BoundaryCell>,
    /// Attributes present in the file that the model does not use, by name.
    pub unmodelled_attributes: Vec<String>,
    /// DESIGN_WARNING: the device maker's instruction to the test engineer,
    /// white space collapsed.
    pub design_warning: Option<String>,
}

impl DeviceModel {
    /// The instruction called `name` (case-insensitive).
    pub fn instruction(&self, name: &str) -> Option<&Instruction> {
        self.instructions
            .iter()
            .find(|i| i.name.eq_ignore_ascii_case(name))
    }

    /// The port called `name` (case-insensitive).
    pub fn port(&self, name: &str) -> Option<&Port> {
        self.ports
            .iter()
            .find(|p| p.name.eq_ignore_ascii_case(name))
    }

    /// Pin name → the port element bonded to it, for the selected package.
    pub fn pin_map(&self) -> BTreeMap<String, PortRef> {
        let mut map = BTreeMap::new();
        for port in &self.ports {
            let indices: Vec<Option<i64>> = match port.range {
                Some(r) => r.indices().into_iter().map(Some).collect(),
                None => vec![None],
            };
            for (index, pins) in indices.into_iter().zip(&port.pins) {
                for pin in pins {
                    map.insert(
                        pin.clone(),
                        PortRef {
                            name: port.name.clone(),
                            index,
                        },
                    );
                }
            }
        }
        map
    }

    /// The register an instruction selects by REGISTER_ACCESS, or by the
    /// standard's defaults for the standard instructions (IEEE 1149.1 clause 8,
    /// from memory): BYPASS, CLAMP, HIGHZ → BYPASS; EXTEST, SAMPLE, PRELOAD,
    /// INTEST → BOUNDARY; IDCODE → DEVICE_ID; USERCODE → USERCODE.
    pub fn register_for(&self, instruction: &str) -> Option<RegisterKind> {
        if let Some(a) = self
            .register_access
            .iter()
            .find(|a| a.instruction.eq_ignore_ascii_case(instruction))
        {
            return Some(a.register.clone());
        }
        let upper = instruction.to_ascii_uppercase();
        match upper.as_str() {
            "BYPASS" | "CLAMP" | "HIGHZ" => Some(RegisterKind::Bypass),
            "EXTEST" | "SAMPLE" | "PRELOAD" | "INTEST" | "EXTEST_PULSE" | "EXTEST_TRAIN" => {
                Some(RegisterKind::Boundary)
            }
            "IDCODE" => Some(RegisterKind::DeviceId),
            "USERCODE" => Some(RegisterKind::Usercode),
            _ => None,
        }
    }

    /// Cells counted by function, in a fixed order (for summaries).
    pub fn cell_counts(&self) -> Vec<(CellFunction, usize)> {
        use CellFunction::*;
        [
            Input,
            Output2,
            Output3,
            Control,
            Controlr,
            Bidir,
            Clock,
            ObserveOnly,
            Internal,
        ]
        .into_iter()
        .map(|f| (f, self.cells.iter().filter(|c| c.function == f).count()))
        .filter(|(_, n)| *n > 0)
        .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pattern_round_trip_and_order() {
        let p = BitPattern::parse("10X1").unwrap();
        assert_eq!(p.len(), 4);
        assert_eq!(p.bit(0), PatternBit::One);
        assert_eq!(p.bit(1), PatternBit::X);
        assert_eq!(p.bit(3), PatternBit::One);
        assert_eq!(p.to_string(), "10X1");
        assert_eq!(p.value_u64(), 0b1001);
        assert_eq!(p.mask_u64(), 0b1101);
        assert!(p.matches(&[true, false, false, true]));
        assert!(p.matches(&[true, true, false, true]));
        assert!(!p.matches(&[false, true, false, true]));
        assert!(BitPattern::parse("10a").is_none());
    }

    #[test]
    fn ranges_list_left_index_first() {
        let to = PortRange {
            left: 1,
            right: 4,
            dir: RangeDir::To,
        };
        assert_eq!(to.indices(), vec![1, 2, 3, 4]);
        let down = PortRange {
            left: 3,
            right: 0,
            dir: RangeDir::Downto,
        };
        assert_eq!(down.indices(), vec![3, 2, 1, 0]);
        assert_eq!(down.width(), 4);
        assert!(down.contains(0) && !down.contains(4));
    }
}
