//! `BsdlError`: what can be wrong with a BSDL file, and where.

use std::fmt;
use std::path::PathBuf;

use crate::span::Span;

/// What is wrong with a BSDL text.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum BsdlErrorKind {
    /// The file could not be read.
    #[error("cannot read the file: {0}")]
    Io(String),
    /// A character that BSDL does not use.
    #[error("unexpected character `{0}`")]
    BadCharacter(char),
    /// A string literal not closed on its line.
    #[error("string is not closed on this line")]
    UnterminatedString,
    /// The grammar expected something else here.
    #[error("expected {expected}, found {found}")]
    Unexpected {
        /// What the grammar wanted.
        expected: &'static str,
        /// What the text has.
        found: String,
    },
    /// No `entity NAME is … end NAME;` in the file.
    #[error("no entity declaration found")]
    NoEntity,
    /// A required attribute is absent.
    #[error("attribute {0} is missing")]
    MissingAttribute(&'static str),
    /// An attribute given twice.
    #[error("attribute {name} is given twice (first on line {first_line})")]
    DuplicateAttribute {
        /// Attribute name.
        name: String,
        /// Line of the first one.
        first_line: u32,
    },
    /// A value that does not have the form the attribute needs.
    #[error("{what}: `{found}` is not valid")]
    BadValue {
        /// What was being read.
        what: &'static str,
        /// The offending text.
        found: String,
    },
    /// The PHYSICAL_PIN_MAP names no PIN_MAP_STRING constant in the file.
    #[error("package `{package}` has no PIN_MAP_STRING constant (the file has: {available})")]
    UnknownPackage {
        /// Package asked for.
        package: String,
        /// Constants present.
        available: String,
    },
    /// A name that is not a port of the entity.
    #[error("`{0}` is not a port of this entity")]
    UnknownPort(String),
    /// A port element index outside its range, or an index on a scalar.
    #[error("`{0}` is not an element of a declared port")]
    BadPortIndex(String),
    /// A port that the selected pin map does not bond to any pin.
    #[error("port `{port}` has no pin in package `{package}`")]
    PortWithoutPin {
        /// Port name.
        port: String,
        /// Package.
        package: String,
    },
    /// A port mapped twice, or a vector mapped with the wrong number of pins.
    #[error("port `{port}`: {problem}")]
    BadPinMap {
        /// Port name.
        port: String,
        /// What is wrong.
        problem: String,
    },
    /// BOUNDARY_LENGTH disagrees with the cells listed.
    #[error("BOUNDARY_LENGTH is {declared} but BOUNDARY_REGISTER lists {listed} cells")]
    BoundaryLength {
        /// BOUNDARY_LENGTH.
        declared: usize,
        /// Distinct cell numbers listed.
        listed: usize,
    },
    /// A cell number in 0..BOUNDARY_LENGTH that no entry gives.
    #[error("boundary cell {0} is missing")]
    MissingCell(u32),
    /// A cell number at or past BOUNDARY_LENGTH.
    #[error("boundary cell {cell} is outside BOUNDARY_LENGTH {length}")]
    CellOutOfRange {
        /// Cell number.
        cell: u32,
        /// BOUNDARY_LENGTH.
        length: usize,
    },
    /// A cell number listed twice in a way no merged cell allows.
    #[error("boundary cell {cell} is listed twice (first on line {first_line}) and the two entries are not a merged cell the standard allows")]
    DuplicateCell {
        /// Cell number.
        cell: u32,
        /// Line of the first entry.
        first_line: u32,
    },
    /// A control-cell reference that points nowhere or at a non-control cell.
    #[error("cell {cell} names control cell {control}, which {problem}")]
    BadControlCell {
        /// The three-state cell.
        cell: u32,
        /// The control cell it names.
        control: u32,
        /// "does not exist" or "is not CONTROL or CONTROLR".
        problem: &'static str,
    },
    /// An OUTPUT3 or BIDIR cell without control fields.
    #[error("cell {0} is three-state but gives no control cell, disable value and result")]
    MissingControl(u32),
    /// An opcode whose width is not INSTRUCTION_LENGTH.
    #[error(
        "opcode {opcode} of {instruction} has {width} bits but INSTRUCTION_LENGTH is {ir_length}"
    )]
    OpcodeWidth {
        /// Instruction.
        instruction: String,
        /// Opcode as written.
        opcode: String,
        /// Its width.
        width: usize,
        /// INSTRUCTION_LENGTH.
        ir_length: usize,
    },
    /// Two instructions whose opcodes decode the same.
    #[error("opcode {opcode} of {instruction} also decodes as {other}")]
    AmbiguousOpcode {
        /// Instruction.
        instruction: String,
        /// Opcode as written.
        opcode: String,
        /// The other instruction.
        other: String,
    },
    /// No BYPASS instruction.
    #[error("there is no BYPASS instruction")]
    NoBypass,
    /// BYPASS without the all-ones opcode.
    #[error("BYPASS must have the all-ones opcode")]
    BypassNotOnes,
    /// INSTRUCTION_LENGTH below 2.
    #[error("INSTRUCTION_LENGTH must be at least 2, found {0}")]
    IrTooShort(usize),
    /// INSTRUCTION_CAPTURE with the wrong width or without 01 at its end.
    #[error("INSTRUCTION_CAPTURE {0}: {1}")]
    BadCapture(String, &'static str),
    /// An IDCODE or USERCODE register that is not 32 bits, or an IDCODE whose bit 0 is not 1.
    #[error("{register} {pattern}: {problem}")]
    BadIdRegister {
        /// IDCODE_REGISTER or USERCODE_REGISTER.
        register: &'static str,
        /// Pattern as written.
        pattern: String,
        /// What is wrong.
        problem: &'static str,
    },
    /// An instruction the standard requires is absent.
    #[error("there is no {0} instruction (IEEE 1149.1 requires it)")]
    MissingInstruction(&'static str),
    /// IDCODE or USERCODE listed without the register attribute that gives its value.
    #[error("instruction {instruction} is listed but attribute {attribute} is missing")]
    MissingRegister {
        /// The instruction.
        instruction: String,
        /// The attribute it needs.
        attribute: &'static str,
    },
    /// An entity attribute given for another entity name.
    #[error("attribute {attribute} is given for `{found}`, but the entity is `{entity}`")]
    WrongEntity {
        /// The attribute.
        attribute: String,
        /// The name written.
        found: String,
        /// The entity's name.
        entity: String,
    },
    /// A name used in INSTRUCTION_PRIVATE, INSTRUCTION_CAPTURE or REGISTER_ACCESS that is no instruction.
    #[error("`{0}` is not an instruction of INSTRUCTION_OPCODE")]
    UnknownInstruction(String),
    /// A TAP_SCAN_* attribute not written the way Annex B has it.
    #[error("{attribute} must be written `signal is {expected}`, found `{found}`")]
    BadTapAttribute {
        /// The attribute.
        attribute: String,
        /// What follows `signal is`.
        expected: &'static str,
        /// The text as written, from the class to the end of the value.
        found: String,
    },
    /// A boundary cell on a port that a TAP_SCAN_* attribute makes a TAP signal.
    #[error("boundary cell {cell} is on port {port}, which {attribute} on line {line}, column {column} makes a TAP signal; a TAP signal has no boundary cell")]
    TapPortWithCell {
        /// The cell.
        cell: u32,
        /// The port, as the cell names it.
        port: String,
        /// The TAP_SCAN_* attribute.
        attribute: String,
        /// Line of the attribute.
        line: u32,
        /// Column of the attribute.
        column: u32,
    },
    /// A byte that is not part of UTF-8 text.
    #[error("the file is not text: byte 0x{0:02X} is not UTF-8 (a BSDL file is plain ASCII or UTF-8 text)")]
    NotUtf8(u8),
    /// A control character no text file holds (a binary file).
    #[error("the file is not text: control character U+{0:04X} (a BSDL file is plain ASCII or UTF-8 text)")]
    ControlCharacter(u32),
}

/// A BSDL error with its place: `path:line:column: message`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct BsdlError {
    /// The file, when the text came from one.
    pub path: Option<PathBuf>,
    /// Where in the text.
    pub span: Span,
    /// What is wrong.
    pub kind: BsdlErrorKind,
}

impl fmt::Display for BsdlError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let path = self
            .path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_else(|| "<bsdl>".to_string());
        write!(
            f,
            "{}:{}:{}: {}",
            path, self.span.line, self.span.column, self.kind
        )
    }
}
