//! The assembly file (YAML, read through `virtual_board::read_yaml`): what a
//! netlist does not carry — which parts are scan devices and their BSDL
//! files, the TAP connectors, rails, resistors, parts not fitted, and the
//! board settings and non-scan parts given by hand.
//!
//! ```yaml
//! name: My board                 # board name (default: the netlist's file name)
//! float: high                    # as in the board file; also shorts, seed
//! bsdl_folder: ../devices        # where `part:` looks (relative to this file)
//! devices:                       # the scan devices, by designator
//!   U1: { bsdl: ../devices/a.bsd, idcode: 0x27420A01 }   # any board-file device key
//!   U2: { part: QM3310 }         # the BSDL file in bsdl_folder whose entity
//!                                # (or file name) holds this part name
//! tap_ports:
//!   - { name: J1_MAIN, connector: J901, tdi: "1", tdo: "2", tms: "3", tck: "4", trst: "5" }
//!   - { name: J2_AUX, chain: [U2, U5], trst: false }     # given by hand
//! power: [P3V3]                  # rails by hand; default: by name, confirmed by BSDL
//! ground: [GND]
//! resistor_prefix: R             # designators of resistors (default R)
//! not_fitted: [R17, U9]          # parts of the netlist not on this assembly
//! float_overrides: { PG: random }
//! clusters: { U30: { kind: buffer, a: N1, y: N2 } }      # as in the board file
//! part_numbers: { U11: QB244, "RN*": QR16I }  # designator or pattern → part
//! part_files: [../parts/logic.yaml]   # part tables (a file's `parts:` key)
//! parts: { QB244: { kind: three-state, pins: 20, gates: [...] } }  # inline
//! ```
//!
//! The part table's format is in `part_table.rs`. A designator with a part
//! number the table defines becomes clusters (one a gate) and pulls (a
//! resistor between a net and a rail) in the board file; the CSV netlist's
//! optional `part` column gives part numbers too, `part_numbers:` winning.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use virtual_board::{
    read_yaml, Bystander, FloatPolicy, PackageStyle, PathStep, ShortRule, Span, YamlNode,
};

use super::netlist::{ImportError, ImportErrorKind};
use super::part_table::PartDef;

/// The assembly file as written.
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Assembly {
    /// Board name.
    #[serde(default)]
    pub name: Option<String>,
    /// Float policy of the board.
    #[serde(default)]
    pub float: Option<FloatPolicy>,
    /// Short rule of the board.
    #[serde(default)]
    pub shorts: Option<ShortRule>,
    /// Seed.
    #[serde(default)]
    pub seed: Option<u64>,
    /// Folder of BSDL files for `part:` entries.
    #[serde(default)]
    pub bsdl_folder: Option<PathBuf>,
    /// Scan devices by designator.
    #[serde(default)]
    pub devices: BTreeMap<String, AssemblyDevice>,
    /// TAP ports.
    #[serde(default)]
    pub tap_ports: Vec<AssemblyPort>,
    /// Power rails by hand.
    #[serde(default)]
    pub power: Option<Vec<String>>,
    /// Ground rails by hand.
    #[serde(default)]
    pub ground: Option<Vec<String>>,
    /// Designator prefix of resistors.
    #[serde(default)]
    pub resistor_prefix: Option<String>,
    /// Parts not fitted.
    #[serde(default)]
    pub not_fitted: Vec<String>,
    /// Float policy per net.
    #[serde(default)]
    pub float_overrides: BTreeMap<String, FloatPolicy>,
    /// Non-scan parts by hand, in the board file's format.
    #[serde(default)]
    pub clusters: BTreeMap<String, serde_yaml::Value>,
    /// Part numbers by designator or designator pattern.
    #[serde(default)]
    pub part_numbers: BTreeMap<String, String>,
    /// Part table files, relative to this file.
    #[serde(default)]
    pub part_files: Vec<PathBuf>,
    /// Part table entries given here.
    #[serde(default)]
    pub parts: BTreeMap<String, PartDef>,
}

/// A scan device of the assembly file.
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct AssemblyDevice {
    /// BSDL file, relative to the assembly file.
    #[serde(default)]
    pub bsdl: Option<PathBuf>,
    /// Part name to find in `bsdl_folder`.
    #[serde(default)]
    pub part: Option<String>,
    /// Package (PIN_MAP_STRING); default: the one holding every netlist pin.
    #[serde(default)]
    pub package: Option<String>,
    /// Concrete IDCODE.
    #[serde(default)]
    pub idcode: Option<u64>,
    /// Concrete USERCODE.
    #[serde(default)]
    pub usercode: Option<u64>,
    /// System logic on output pins.
    #[serde(default)]
    pub outputs: Option<String>,
    /// Per-pin system-logic overrides.
    #[serde(default)]
    pub pins: BTreeMap<String, String>,
    /// Where it waits when a net-level test does not use it.
    #[serde(default)]
    pub bystander: Option<Bystander>,
    /// Pin neighbourhood style.
    #[serde(default)]
    pub package_style: Option<PackageStyle>,
}

/// A TAP port of the assembly file: a connector to follow, or a chain by hand.
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct AssemblyPort {
    /// Port name.
    pub name: String,
    /// Designator of the TAP connector.
    #[serde(default)]
    pub connector: Option<String>,
    /// Connector pin of TDI (the tester drives it into the first device).
    #[serde(default)]
    pub tdi: Option<String>,
    /// Connector pin of TDO (from the last device).
    #[serde(default)]
    pub tdo: Option<String>,
    /// Connector pin of TMS.
    #[serde(default)]
    pub tms: Option<String>,
    /// Connector pin of TCK.
    #[serde(default)]
    pub tck: Option<String>,
    /// Connector pin of TRST*, if the connector has one.
    #[serde(default, rename = "trst")]
    pub trst: Option<TrstEntry>,
    /// The chain by hand, TDI to TDO.
    #[serde(default)]
    pub chain: Option<Vec<String>>,
}

/// `trst:` is a connector pin (with `connector:`) or true/false (by hand).
#[derive(Clone, Debug, Deserialize, PartialEq, Eq)]
#[serde(untagged)]
pub enum TrstEntry {
    /// Wired or not (a chain by hand).
    Wired(bool),
    /// The connector pin.
    Pin(String),
}

/// An assembly file read, with its tree for placing later errors.
#[derive(Clone, Debug)]
pub struct AssemblySource {
    /// What it says.
    pub assembly: Assembly,
    /// Where it was read from.
    pub path: PathBuf,
    /// Its keys and values with their places.
    pub tree: YamlNode,
}

impl AssemblySource {
    /// The place of the value at `path` (the file's top when absent).
    pub fn span_at(&self, path: &[PathStep<'_>]) -> Span {
        self.tree.span_at(path)
    }

    /// An error at the value at `steps`.
    pub fn error_at(&self, steps: &[PathStep<'_>], kind: ImportErrorKind) -> ImportError {
        let span = self.span_at(steps);
        ImportError {
            path: self.path.clone(),
            span,
            kind,
        }
    }

    /// A path written in the file, relative to the file's folder.
    pub fn resolve(&self, p: &Path) -> PathBuf {
        self.path.parent().unwrap_or(Path::new(".")).join(p)
    }
}

/// Reads an assembly file from text.
///
/// # Errors
/// YAML syntax, duplicate keys, unknown keys or words, nesting too deep —
/// placed by the project's YAML layer.
pub fn read_assembly(text: &str, path: &Path) -> Result<AssemblySource, ImportError> {
    let (assembly, tree): (Assembly, YamlNode) = read_yaml(text).map_err(|e| ImportError {
        path: path.to_path_buf(),
        span: e.span,
        kind: ImportErrorKind::Other(e.kind.to_string()),
    })?;
    Ok(AssemblySource {
        assembly,
        path: path.to_path_buf(),
        tree,
    })
}
