//! `Netlist`: the nets of a CAD netlist (net → designator/pin records, each
//! with its place), what every reader produces, and the import's located
//! errors and warnings.

use std::collections::HashMap;
use std::fmt;
use std::path::{Path, PathBuf};

use serde::Serialize;
use virtual_board::Span;

/// One pin record of a netlist: a part's pin on a net.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NetlistPin {
    /// Reference designator of the part.
    pub designator: String,
    /// Pin (number or ball name) of the part.
    pub pin: String,
    /// Pad centre in millimetres, where the netlist gives it.
    pub xy: Option<(f64, f64)>,
    /// Line of the record (1-based).
    pub line: u32,
    /// Column of the record's designator (1-based).
    pub column: u32,
}

/// One net: its name and pins, in the netlist's order.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NetlistNet {
    /// Net name as written (long names already resolved).
    pub name: String,
    /// Pins on it.
    pub pins: Vec<NetlistPin>,
}

/// A whole netlist: nets in the order they first appear.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Netlist {
    /// The file it was read from.
    pub path: PathBuf,
    /// Nets, in first-appearance order.
    pub nets: Vec<NetlistNet>,
    /// Things read but not used, and repeated records, each with its place.
    pub warnings: Vec<Notice>,
    /// Part numbers by designator, where the netlist gives them (the CSV
    /// `part` column), with the line that gave each.
    pub part_numbers: std::collections::BTreeMap<String, (String, u32)>,
}

/// A warning with its place in an input file.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Notice {
    /// File.
    pub path: PathBuf,
    /// Line (1-based; 0 when the notice is about the whole file).
    pub line: u32,
    /// Column (1-based).
    pub column: u32,
    /// What.
    pub text: String,
}

impl fmt::Display for Notice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 {
            write!(f, "{}: {}", self.path.display(), self.text)
        } else {
            write!(
                f,
                "{}:{}:{}: {}",
                self.path.display(),
                self.line,
                self.column,
                self.text
            )
        }
    }
}

/// What is wrong with an import input.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum ImportErrorKind {
    /// The file could not be read.
    #[error("cannot read the file: {0}")]
    Io(String),
    /// The file is not UTF-8 text.
    #[error("not text: byte {0:#04x} is not UTF-8")]
    NotText(u8),
    /// A CSV header without a needed column.
    #[error("the header has no `{0}` column (it needs net, designator and pin)")]
    MissingColumn(&'static str),
    /// A CSV record with too few fields.
    #[error("{found} fields, but the header has {wanted}")]
    FieldCount {
        /// Fields in the record.
        found: usize,
        /// Fields the header names.
        wanted: usize,
    },
    /// A quoted CSV field that never ends.
    #[error("a quoted field is not closed on this line")]
    OpenQuote,
    /// An empty net, designator or pin.
    #[error("the {0} is empty")]
    Empty(&'static str),
    /// A coordinate that is not a number.
    #[error("`{0}` is not a coordinate")]
    BadNumber(String),
    /// One pin on two nets.
    #[error("pin {pin} is on net {second} here and on net {first} at line {first_line}")]
    PinOnTwoNets {
        /// `DESIGNATOR-PIN`.
        pin: String,
        /// The net of its first record.
        first: String,
        /// Line of the first record.
        first_line: u32,
        /// The net of this record.
        second: String,
    },
    /// An IPC-D-356A test record with no `designator-pin` field.
    #[error("a test record needs `designator-pin` after the net name (columns 21–31)")]
    NoPinField,
    /// An IPC-D-356A net-name alias used but never declared.
    #[error("net alias {0} is used but no `P  NNAME` record declares it")]
    UnknownAlias(String),
    /// The file has no records at all.
    #[error("the netlist holds no pin records")]
    NoRecords,
    /// An s-expression list (EDIF) whose `(` has no `)`.
    #[error("this list is never closed")]
    OpenList,
    /// A `)` that closes nothing.
    #[error("`)` with no list open")]
    StrayClose,
    /// An EDIF `instanceRef` to an instance the design does not hold.
    #[error("no instance `{0}` in the design")]
    UnknownInstance(String),
    /// Anything else, in words.
    #[error("{0}")]
    Other(String),
}

/// An import error with its place.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{}:{}:{}: {kind}", .path.display(), .span.line, .span.column)]
pub struct ImportError {
    /// The file.
    pub path: PathBuf,
    /// Where (line 0 when the place is the whole file).
    pub span: Span,
    /// What.
    pub kind: ImportErrorKind,
}

impl ImportError {
    /// An error at 1-based `line`, `column` of `path`.
    pub fn at(path: &Path, line: u32, column: u32, kind: ImportErrorKind) -> ImportError {
        ImportError {
            path: path.to_path_buf(),
            span: Span {
                offset: 0,
                len: 1,
                line,
                column,
            },
            kind,
        }
    }
}

/// Reads a file as text for a netlist reader: an I/O error or the first
/// byte that is not UTF-8, placed.
///
/// # Errors
/// As above.
pub fn read_text(path: &Path) -> Result<String, ImportError> {
    let bytes = std::fs::read(path)
        .map_err(|e| ImportError::at(path, 0, 0, ImportErrorKind::Io(e.to_string())))?;
    text_of(path, bytes)
}

/// Bytes to text, or the place of the first byte that is not UTF-8.
///
/// # Errors
/// As above.
pub fn text_of(path: &Path, bytes: Vec<u8>) -> Result<String, ImportError> {
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let bytes = e.into_bytes();
        let line = bytes[..at].iter().filter(|&&b| b == b'\n').count() as u32 + 1;
        let column = (at
            - bytes[..at]
                .iter()
                .rposition(|&b| b == b'\n')
                .map_or(0, |p| p + 1)) as u32
            + 1;
        ImportError::at(path, line, column, ImportErrorKind::NotText(bytes[at]))
    })
}

/// One pin record as a reader found it.
#[derive(Clone, Debug)]
pub struct Record {
    /// Net name.
    pub net: String,
    /// The pin.
    pub pin: NetlistPin,
}

impl Netlist {
    /// Groups records by net (first-appearance order). A record repeated on
    /// its net is a warning; a pin on two nets is an error at its second record.
    ///
    /// # Errors
    /// A pin on two nets; no records at all.
    pub fn from_records(
        path: &Path,
        records: Vec<Record>,
        mut warnings: Vec<Notice>,
    ) -> Result<Netlist, ImportError> {
        if records.is_empty() {
            return Err(ImportError::at(path, 0, 0, ImportErrorKind::NoRecords));
        }
        // First pass, borrowing: each record's net, or None for a repeat.
        let mut place: Vec<Option<usize>> = Vec::with_capacity(records.len());
        let mut names: Vec<&str> = Vec::new();
        {
            let mut index: HashMap<&str, usize> = HashMap::new();
            // (designator, pin) → (net index, line)
            let mut seen: HashMap<(&str, &str), (usize, u32)> =
                HashMap::with_capacity(records.len());
            for r in &records {
                let next = names.len();
                let n = *index.entry(r.net.as_str()).or_insert(next);
                if n == next {
                    names.push(r.net.as_str());
                }
                let key = (r.pin.designator.as_str(), r.pin.pin.as_str());
                if let Some(&(first, first_line)) = seen.get(&key) {
                    if first == n {
                        warnings.push(Notice {
                            path: path.to_path_buf(),
                            line: r.pin.line,
                            column: r.pin.column,
                            text: format!(
                                "pin {}-{} is listed again on net {} (first at line {first_line}); the repeat is ignored",
                                key.0, key.1, r.net
                            ),
                        });
                        place.push(None);
                        continue;
                    }
                    return Err(ImportError::at(
                        path,
                        r.pin.line,
                        r.pin.column,
                        ImportErrorKind::PinOnTwoNets {
                            pin: format!("{}-{}", key.0, key.1),
                            first: names[first].to_string(),
                            first_line,
                            second: r.net.clone(),
                        },
                    ));
                }
                seen.insert(key, (n, r.pin.line));
                place.push(Some(n));
            }
        }
        let mut nets: Vec<NetlistNet> = names
            .iter()
            .map(|n| NetlistNet {
                name: (*n).to_string(),
                pins: Vec::new(),
            })
            .collect();
        for (r, at) in records.into_iter().zip(place) {
            if let Some(n) = at {
                nets[n].pins.push(r.pin);
            }
        }
        Ok(Netlist {
            path: path.to_path_buf(),
            nets,
            warnings,
            part_numbers: Default::default(),
        })
    }

    /// Number of pin records kept.
    pub fn pin_count(&self) -> usize {
        self.nets.iter().map(|n| n.pins.len()).sum()
    }
}
