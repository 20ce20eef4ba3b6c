//! The board file (YAML): devices, TAP ports, nets, pulls, rails and float policy.
//!
//! ```yaml
//! name: example
//! float: high            # what an undriven, unpulled input reads: high | low | previous | random
//! shorts: wired-and      # what disagreeing strong drivers give: wired-and | wired-or
//! seed: 1                # seed of every arbitrary value (X captures, power-up latches)
//! devices:
//!   U1:
//!     bsdl: ../devices/part.bsd   # relative to this file
//!     package: TQ64               # optional: another PIN_MAP_STRING of the file
//!     idcode: 0x17420A01          # optional: concrete IDCODE (fills the file's X bits)
//!     outputs: off                # system logic on output pins: low | high | off
//!     pins: { LED_N: low, "17": follow NET_A, "18": off data high }
//!                                 # per-pin overrides; `off data high|low`
//!                                 # disables the driver with its data line
//!                                 # at a level (enable and data apart)
//! tap_ports:
//!   - { name: J1, chain: [U1], trst: true }      # chain lists devices TDI to TDO
//! nets:
//!   NET_A: [U1.17, U2.D(0)]                       # designator.pin or designator.port
//! pulls: { NET_A: up }
//! power: [VCC]
//! ground: [GND]
//! float_overrides: { NET_A: random }
//! bridge_distance_mm: 1.3   # pads of one part this close can bridge (devices with pads:)
//! ```
//!
//! A device may also give `pads: { "1": [0.0, 0.0], "2": [1.27, 0.0] }`
//! (pad centres in mm, written by `boardtwin import` from a netlist with
//! coordinates) and `package_style: leaded | grid`.

use std::collections::{BTreeMap, HashMap, HashSet};
use std::fmt;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde::Deserialize;

use crate::board::{
    Board, BoardParts, Cluster, ClusterKind, ClusterPin, FloatPolicy, Net, PinName, ShortResolve,
    ShortRule, TapPort,
};
use crate::bsdl::{parse_bsdl_package, read_bsdl_text, BsdlError, BsdlErrorKind};
use crate::device::{pads_of, Device, DeviceError, DeviceSetup, SystemDrive};
use crate::model::device::{DeviceModel, PortMode};
use crate::rng::seed_for;
use crate::span::Span;
use crate::yaml::{read_yaml, NodeKind, YamlNode};

/// The board file as written.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoardFile {
    /// Board name.
    #[serde(default)]
    pub name: String,
    /// Float policy of every net without an override.
    #[serde(default)]
    pub float: FloatPolicy,
    /// What contention resolves to.
    #[serde(default)]
    pub shorts: ShortRule,
    /// Seed of arbitrary values.
    #[serde(default)]
    pub seed: u64,
    /// Devices by designator.
    pub devices: BTreeMap<String, DeviceEntry>,
    /// TAP ports.
    pub tap_ports: Vec<PortEntry>,
    /// Nets: name → pins.
    #[serde(default)]
    pub nets: BTreeMap<String, Vec<String>>,
    /// Pull resistors: net → up | down.
    #[serde(default)]
    pub pulls: BTreeMap<String, PullEntry>,
    /// Power nets.
    #[serde(default)]
    pub power: Vec<String>,
    /// Ground nets.
    #[serde(default)]
    pub ground: Vec<String>,
    /// Float policy per net.
    #[serde(default)]
    pub float_overrides: BTreeMap<String, FloatPolicy>,
    /// Non-scan parts between the scan devices, by designator.
    #[serde(default)]
    pub clusters: BTreeMap<String, ClusterEntry>,
    /// Greatest centre-to-centre distance, in millimetres, between two pads
    /// of one part that a solder bridge is expected to join, for devices
    /// with `pads:`. Default [`DEFAULT_BRIDGE_DISTANCE_MM`].
    #[serde(default)]
    pub bridge_distance_mm: Option<f64>,
}

/// Default of `bridge_distance_mm`: 1.3 mm, just over 1.27 mm (50 mil),
/// the coarsest common surface-mount pitch (SOIC leads, 1.27 mm ball
/// grids; common practice). Pads one pitch apart on such parts and on every
/// finer pitch count as neighbours; diagonal balls of a 1.0 mm or coarser
/// grid (1.41 mm and more) and 2.54 mm through-hole rows do not.
pub const DEFAULT_BRIDGE_DISTANCE_MM: f64 = 1.3;

/// A non-scan part as written.
///
/// ```yaml
/// clusters:
///   U20: { kind: buffer, a: NET_IN, y: NET_OUT }            # also: inverter
///   U21: { kind: nand, inputs: [N1, N2], y: N3 }            # and, or, nand, nor, xor
///   U22: { kind: three-state, a: N1, enable: OE_N, y: N2 }  # enable_active: low (default) | high
///   U23: { kind: transceiver, a: NA, b: NB, dir: DIR, enable: OE_N, a_to_b: high }
///   R30: { kind: resistor, a: N1, b: N2 }                   # b follows a
///   R31: { kind: pull, net: N1, to: up }
///   P1:  { kind: loopback, pairs: [[N1, N2], [N3, N4]] }    # a plug joining pins
/// ```
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct ClusterEntry {
    /// What it is.
    pub kind: String,
    /// Input (or side A).
    #[serde(default)]
    pub a: Option<String>,
    /// Side B (transceiver, resistor).
    #[serde(default)]
    pub b: Option<String>,
    /// Output.
    #[serde(default)]
    pub y: Option<String>,
    /// Inputs of a gate.
    #[serde(default)]
    pub inputs: Vec<String>,
    /// Enable net.
    #[serde(default)]
    pub enable: Option<String>,
    /// Direction net (transceiver).
    #[serde(default)]
    pub dir: Option<String>,
    /// Level of `enable` that enables: low (default) or high.
    #[serde(default)]
    pub enable_active: Option<String>,
    /// Level of `dir` that drives b from a: high (default) or low.
    #[serde(default)]
    pub a_to_b: Option<String>,
    /// Net of a pull resistor.
    #[serde(default)]
    pub net: Option<String>,
    /// Direction of a pull resistor.
    #[serde(default)]
    pub to: Option<PullEntry>,
    /// Net pairs a loopback plug joins.
    #[serde(default)]
    pub pairs: Vec<[String; 2]>,
}

/// A device entry.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DeviceEntry {
    /// BSDL file, relative to the board file.
    pub bsdl: PathBuf,
    /// Package (PIN_MAP_STRING constant) if not the file's default.
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
    /// The instruction a net-level test leaves this device in when the test
    /// does not use it: bypass (default) or sample.
    #[serde(default)]
    pub bystander: Option<Bystander>,
    /// How the package's pins neighbour each other, for the fault universe:
    /// `leaded` (pin n next to n+1) or `grid` (ball-grid rows and columns).
    /// Default: read from the pin names.
    #[serde(default)]
    pub package_style: Option<PackageStyle>,
    /// Pad centres by pin, `[x, y]` in millimetres (what a netlist with
    /// coordinates gives). When present, the fault universe takes pads
    /// within `bridge_distance_mm` of each other as neighbours instead of
    /// reading the pin names; pins without a pad have no neighbours.
    #[serde(default)]
    pub pads: BTreeMap<String, [f64; 2]>,
}

/// How a package's pins neighbour each other.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum PackageStyle {
    /// A leaded package: pin n neighbours pin n+1.
    Leaded,
    /// A ball-grid array: a ball neighbours the next one in its row and column.
    Grid,
}

/// Where a device not taking part in a net-level test waits.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq, Default)]
#[serde(rename_all = "lowercase")]
pub enum Bystander {
    /// BYPASS: a one-bit register in the path.
    #[default]
    Bypass,
    /// SAMPLE (or SAMPLE/PRELOAD): the boundary register in the path, pins under system logic.
    Sample,
}

/// A TAP port entry.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PortEntry {
    /// Port name.
    pub name: String,
    /// Devices, TDI first.
    pub chain: Vec<String>,
    /// TRST* wired to the devices that have it.
    #[serde(default)]
    pub trst: bool,
}

/// A pull resistor.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum PullEntry {
    /// To the supply.
    Up,
    /// To ground.
    Down,
}

/// What is wrong with a board file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum BoardErrorKind {
    /// The file could not be read.
    #[error("cannot read the file: {0}")]
    Io(String),
    /// YAML syntax or a key of the wrong shape.
    #[error("{0}")]
    Yaml(String),
    /// A BSDL file named by the board failed to read.
    #[error("device {device}: {error}")]
    Bsdl {
        /// Designator.
        device: String,
        /// The BSDL error, with its own file:line:column.
        error: Box<BsdlError>,
    },
    /// A device cannot be modelled.
    #[error("device {device}: {error}")]
    Device {
        /// Designator.
        device: String,
        /// Why.
        error: DeviceError,
        /// The BSDL place of the problem, if any.
        bsdl: Option<(PathBuf, Span)>,
    },
    /// A designator that names no device.
    #[error("unknown device `{0}`")]
    UnknownDevice(String),
    /// A pin reference that names no pin or port of the device.
    #[error("device {device} has no pin or port `{pin}`")]
    UnknownPin {
        /// Designator.
        device: String,
        /// The pin as written.
        pin: String,
    },
    /// A pin reference without `designator.`.
    #[error("`{0}` is not designator.pin or designator.port")]
    BadPinRef(String),
    /// A pin on two nets.
    #[error("pin {pin} is on net {first} and on net {second}")]
    PinOnTwoNets {
        /// The pin.
        pin: String,
        /// First net.
        first: String,
        /// Second net.
        second: String,
    },
    /// A TAP port without devices.
    #[error("TAP port {0} has no devices")]
    EmptyPort(String),
    /// A device on two TAP ports (or twice on one).
    #[error("device {device} is on TAP port {first} and on {second}")]
    DeviceOnTwoPorts {
        /// Designator.
        device: String,
        /// First port.
        first: String,
        /// Second port.
        second: String,
    },
    /// A device on no TAP port.
    #[error("device {0} is on no TAP port")]
    DeviceOnNoPort(String),
    /// A net named in pulls, power, ground or overrides that the nets list lacks.
    #[error("unknown net `{0}`")]
    UnknownNet(String),
    /// A system-logic value that is not low, high, off or `follow NET`.
    #[error("`{0}` is not a system-logic drive (low, high, off, off data high, off data low, follow NET)")]
    BadDrive(String),
    /// `follow NET` of a net the nets list lacks.
    #[error("`{0}` follows a net that is not in the nets list")]
    FollowUnknownNet(String),
    /// System logic asked to drive a pin that has no output cell.
    #[error("device {device}: pin {pin} has no output, so its system logic cannot drive it")]
    NotAnOutput {
        /// Designator.
        device: String,
        /// Pin.
        pin: String,
    },
    /// Follow drives that chase each other round a loop.
    #[error("system-logic pass-throughs form a loop through net {0}")]
    FollowLoop(String),
    /// A net both a power and a ground rail.
    #[error("net {0} is both power and ground")]
    RailClash(String),
    /// A pull resistor on a power or ground net.
    #[error("net {0} is a power or ground rail; a pull resistor on it means nothing")]
    PullOnRail(String),
    /// A TAP signal pin on a net: the TAP ports wire those.
    #[error("pin {pin} is port {port} of {entity}, which {attribute} makes a TAP signal ({bsdl}:{line}); the tap_ports section wires it, not a net")]
    TapPinOnNet {
        /// `DESIGNATOR.PIN`.
        pin: String,
        /// The device's port on that pin.
        port: String,
        /// The device's entity.
        entity: String,
        /// The TAP_SCAN_* attribute that makes the port a TAP signal.
        attribute: &'static str,
        /// The BSDL file.
        bsdl: String,
        /// Line of the attribute in the BSDL file (0 when unknown).
        line: u32,
    },
    /// A pad position that is not two finite numbers.
    #[error("device {device}: the pad of pin {pin} is not two finite numbers [x, y] in mm")]
    BadPad {
        /// Designator.
        device: String,
        /// Pin.
        pin: String,
    },
    /// A bridge distance that is not a positive number.
    #[error("bridge_distance_mm must be a positive number of millimetres, not {0}")]
    BadBridgeDistance(String),
    /// One pin listed twice on a net.
    #[error("pin {pin} is listed twice on net {net}")]
    PinTwiceOnNet {
        /// The pin.
        pin: String,
        /// The net.
        net: String,
    },
    /// A cluster entry of the wrong shape.
    #[error("cluster {cluster}: {problem}")]
    BadCluster {
        /// Designator.
        cluster: String,
        /// What is wrong.
        problem: String,
    },
    /// Non-scan parts whose outputs feed their own inputs.
    #[error("a combinational loop runs through net {0}")]
    CombinationalLoop(String),
    /// An IDCODE or USERCODE that does not fit the 32-bit register.
    #[error("device {device}: {key} {value:#X} is wider than 32 bits (the register holds 32)")]
    WiderThan32 {
        /// Designator.
        device: String,
        /// `idcode` or `usercode`.
        key: &'static str,
        /// The value as written.
        value: u64,
    },
    /// Two TAP ports with one name.
    #[error("two TAP ports are called {0}")]
    DuplicatePort(String),
}

/// A board-file error with its place.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct BoardError {
    /// The board file.
    pub path: PathBuf,
    /// Where in it (line 0 when the place is unknown).
    pub span: Span,
    /// What is wrong (boxed: errors are rare, results are common).
    pub kind: Box<BoardErrorKind>,
}

impl fmt::Display for BoardError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &*self.kind {
            // A BSDL error already carries its own file:line:column.
            BoardErrorKind::Bsdl { device, error } => write!(
                f,
                "{error} (device {device}, named at {}:{}:{})",
                self.path.display(),
                self.span.line,
                self.span.column
            ),
            kind => write!(
                f,
                "{}:{}:{}: {}",
                self.path.display(),
                self.span.line,
                self.span.column,
                kind
            ),
        }
    }
}

/// A loaded board and the facts the summary needs.
#[derive(Clone, Debug)]
pub struct LoadedBoard {
    /// The board, powered up.
    pub board: Board,
    /// The board file as written.
    pub file: BoardFile,
    /// Where it was read from.
    pub path: PathBuf,
    /// The board file as written, for placing errors when the board is rebuilt.
    pub source: BoardSource,
}

/// A board file as written: its text and its node tree (the places of its
/// keys and values).
#[derive(Clone, Debug)]
pub struct BoardSource {
    /// The text.
    pub text: Arc<String>,
    /// The nodes, with their places.
    pub tree: Arc<YamlNode>,
}

/// Where `needle` is written, found in the file's node tree: under each
/// anchor in turn (a section key, an entry's name, or the name a sequence
/// item holds), the first key or value that reads `needle`; the deepest
/// anchor's place when no node does. Places errors that serde cannot place.
fn locate(tree: &YamlNode, anchors: &[&str], needle: &str) -> Span {
    let mut node = tree;
    for anchor in anchors {
        if let Some(next) = entry_named(node, anchor) {
            node = next;
        }
    }
    node.find_scalar(needle).unwrap_or(node).span
}

/// The value under key `name` anywhere below `node` (outermost first), or
/// the sequence item whose own mapping has a value `name`.
fn entry_named<'t>(node: &'t YamlNode, name: &str) -> Option<&'t YamlNode> {
    let mut queue = std::collections::VecDeque::from([node]);
    while let Some(n) = queue.pop_front() {
        match &n.kind {
            NodeKind::Map(entries) => {
                if let Some((_, v)) = entries.iter().find(|(k, _)| k.scalar() == Some(name)) {
                    return Some(v);
                }
                queue.extend(entries.iter().map(|(_, v)| v));
            }
            NodeKind::Seq(items) => {
                let holder = items.iter().find(|i| match &i.kind {
                    NodeKind::Map(e) => e.iter().any(|(_, v)| v.scalar() == Some(name)),
                    _ => false,
                });
                if holder.is_some() {
                    return holder;
                }
                queue.extend(items.iter());
            }
            _ => {}
        }
    }
    None
}

/// Reads and checks a board file, reads its BSDL files, and powers the board up.
///
/// # Errors
/// The first problem, located in the board file (and, for BSDL problems, in
/// the BSDL file too).
pub fn load_board(path: &Path) -> Result<LoadedBoard, BoardError> {
    let text = std::fs::read_to_string(path).map_err(|e| BoardError {
        path: path.to_path_buf(),
        span: Span::default(),
        kind: Box::new(BoardErrorKind::Io(e.to_string())),
    })?;
    load_board_text(&text, path, &mut bsdl_files_beside(path))
}

/// A BSDL source that reads files relative to the folder of `board_path`
/// (what [`load_board`] uses; a wrong device's BSDL given as an absolute
/// path reads as it is).
pub fn bsdl_files_beside(
    board_path: &Path,
) -> impl FnMut(&Path) -> Result<(String, PathBuf), BsdlError> {
    let base = board_path.parent().unwrap_or(Path::new(".")).to_path_buf();
    move |p: &Path| {
        let full = base.join(p);
        let text = read_bsdl_text(&full)?;
        Ok((text, full))
    }
}

/// A BSDL source for [`load_board_text`]: path as written → (text, path to report).
pub type BsdlSource<'a> = dyn FnMut(&Path) -> Result<(String, PathBuf), BsdlError> + 'a;

/// [`load_board`] over text, with BSDL files supplied by `bsdl` (tests and
/// embedded scenarios use this). Models read once are shared between devices.
///
/// # Errors
/// As [`load_board`].
pub fn load_board_text(
    text: &str,
    path: &Path,
    bsdl: &mut BsdlSource<'_>,
) -> Result<LoadedBoard, BoardError> {
    let (file, tree): (BoardFile, YamlNode) = read_yaml(text).map_err(|e| BoardError {
        path: path.to_path_buf(),
        span: e.span,
        kind: Box::new(BoardErrorKind::Yaml(e.kind.to_string())),
    })?;
    let source = BoardSource {
        text: Arc::new(text.to_string()),
        tree: Arc::new(tree),
    };
    assemble(
        file,
        &source,
        path,
        bsdl,
        &NetEdits::default(),
        &KnownModels::new(),
    )
}

/// Device models already read, by BSDL file as the board file writes it
/// and package (upper case): a board rebuilt with defects takes the good
/// board's models instead of reading and parsing its BSDL files again.
pub(crate) type KnownModels = HashMap<(PathBuf, Option<String>), Arc<DeviceModel>>;

impl LoadedBoard {
    /// The models of the board's devices, by BSDL file and package.
    pub(crate) fn known_models(&self) -> KnownModels {
        let mut out = KnownModels::new();
        for (name, entry) in &self.file.devices {
            if let Some(i) = self.board.device_index(name) {
                let key = (
                    entry.bsdl.clone(),
                    entry.package.as_ref().map(|p| p.to_ascii_uppercase()),
                );
                out.insert(key, Arc::clone(self.board.devices()[i].model()));
            }
        }
        out
    }
}

/// Builds the board from a parsed board file (`source` is the file as
/// written, for placing errors).
pub(crate) fn assemble(
    file: BoardFile,
    source: &BoardSource,
    path: &Path,
    bsdl: &mut BsdlSource<'_>,
    edits: &NetEdits,
    known: &KnownModels,
) -> Result<LoadedBoard, BoardError> {
    let tree = &*source.tree;
    let err = |span: Span, kind: BoardErrorKind| BoardError {
        path: path.to_path_buf(),
        span,
        kind: Box::new(kind),
    };
    let at = |section: Option<&str>, needle: &str| locate(tree, section.as_slice(), needle);
    let within = |anchors: &[&str], needle: &str| locate(tree, anchors, needle);

    if let Some(d) = file
        .bridge_distance_mm
        .filter(|d| !(d.is_finite() && *d > 0.0))
    {
        return Err(err(
            at(None, "bridge_distance_mm"),
            BoardErrorKind::BadBridgeDistance(d.to_string()),
        ));
    }

    // Devices and their models.
    let mut texts: HashMap<PathBuf, (String, PathBuf)> = HashMap::new();
    let mut models: KnownModels = known.clone();
    let mut designators: Vec<String> = Vec::new();
    let mut device_models: Vec<Arc<DeviceModel>> = Vec::new();
    for (name, entry) in &file.devices {
        let place = || at(Some("devices"), &entry.bsdl.display().to_string());
        let key = (
            entry.bsdl.clone(),
            entry.package.as_ref().map(|p| p.to_ascii_uppercase()),
        );
        if !models.contains_key(&key) && !texts.contains_key(&entry.bsdl) {
            let t = bsdl(&entry.bsdl).map_err(|e| {
                err(
                    place(),
                    BoardErrorKind::Bsdl {
                        device: name.clone(),
                        error: Box::new(e),
                    },
                )
            })?;
            texts.insert(entry.bsdl.clone(), t);
        }
        let model = match models.get(&key) {
            Some(m) => Arc::clone(m),
            None => {
                let (bsdl_text, full) = &texts[&entry.bsdl];
                let parsed = tracing::warn_span!("bsdl", file = %full.display())
                    .in_scope(|| parse_bsdl_package(bsdl_text, entry.package.as_deref()));
                let mut m = parsed.map_err(|mut e| {
                    e.path = Some(full.clone());
                    let span = match (&e.kind, &entry.package) {
                        (BsdlErrorKind::UnknownPackage { .. }, Some(p)) => at(Some(name), p),
                        _ => place(),
                    };
                    err(
                        span,
                        BoardErrorKind::Bsdl {
                            device: name.clone(),
                            error: Box::new(e),
                        },
                    )
                })?;
                m.source = Some(full.clone());
                let m = Arc::new(m);
                models.insert(key, Arc::clone(&m));
                m
            }
        };
        designators.push(name.clone());
        device_models.push(model);
    }
    let device_of = |d: &str| designators.iter().position(|x| x == d);

    // TAP ports.
    let mut ports = Vec::new();
    let mut port_of: HashMap<usize, String> = HashMap::new();
    for p in &file.tap_ports {
        if ports.iter().any(|q: &TapPort| q.name == p.name) {
            return Err(err(
                at(Some("tap_ports"), &p.name),
                BoardErrorKind::DuplicatePort(p.name.clone()),
            ));
        }
        if p.chain.is_empty() {
            return Err(err(
                within(&["tap_ports", &p.name], "chain"),
                BoardErrorKind::EmptyPort(p.name.clone()),
            ));
        }
        let mut chain = Vec::new();
        for d in &p.chain {
            let place = || within(&["tap_ports", &p.name], d);
            let i = device_of(d)
                .ok_or_else(|| err(place(), BoardErrorKind::UnknownDevice(d.clone())))?;
            if let Some(first) = port_of.insert(i, p.name.clone()) {
                return Err(err(
                    place(),
                    BoardErrorKind::DeviceOnTwoPorts {
                        device: d.clone(),
                        first,
                        second: p.name.clone(),
                    },
                ));
            }
            chain.push(i);
        }
        ports.push(TapPort::new(p.name.clone(), chain, p.trst));
    }
    if let Some(d) = (0..designators.len()).find(|i| !port_of.contains_key(i)) {
        return Err(err(
            at(Some("devices"), &designators[d]),
            BoardErrorKind::DeviceOnNoPort(designators[d].clone()),
        ));
    }

    // Pins: designator.pin or designator.port → (device, pin).
    let pin_maps: Vec<BTreeMap<String, crate::model::device::PortRef>> =
        device_models.iter().map(|m| m.pin_map()).collect();
    let all_pads: Vec<_> = device_models.iter().map(|m| pads_of(m)).collect();
    // Per device: each physical pin's first pad, as a search in order finds it.
    let pad_of_pin: Vec<HashMap<&str, usize>> = all_pads
        .iter()
        .map(|pads| {
            let mut m = HashMap::new();
            for (p, pad) in pads.iter().enumerate() {
                for pin in &pad.pins {
                    m.entry(pin.as_str()).or_insert(p);
                }
            }
            m
        })
        .collect();
    let resolve_pin = |text_ref: &str, net: &str| -> Result<Vec<(usize, String)>, BoardError> {
        let key = format!("{net}:");
        let place = || within(&["nets", &key], text_ref);
        let (d, rest) = text_ref
            .split_once('.')
            .ok_or_else(|| err(place(), BoardErrorKind::BadPinRef(text_ref.to_string())))?;
        let i = device_of(d)
            .ok_or_else(|| err(place(), BoardErrorKind::UnknownDevice(d.to_string())))?;
        pins_named(&device_models[i], &pin_maps[i], rest)
            .map(|pins| pins.into_iter().map(|p| (i, p)).collect())
            .ok_or_else(|| {
                err(
                    place(),
                    BoardErrorKind::UnknownPin {
                        device: d.to_string(),
                        pin: rest.to_string(),
                    },
                )
            })
    };

    // Nets. A loopback plug joins nets, and a short defect merges them:
    // each group of joined nets becomes one electrical net.
    let net_names: Vec<String> = file.nets.keys().cloned().collect();
    let name_at: HashMap<&str, usize> = net_names
        .iter()
        .enumerate()
        .map(|(i, n)| (n.as_str(), i))
        .collect();
    let name_index = |n: &str| name_at.get(n).copied();
    let mut group_of: Vec<usize> = (0..net_names.len()).collect();
    let find = |g: &mut Vec<usize>, mut x: usize| {
        while g[x] != x {
            x = g[x];
        }
        x
    };
    let mut joins: Vec<(Vec<String>, Option<ShortSpec>)> = Vec::new();
    for (cname, c) in &file.clusters {
        if c.kind == "loopback" {
            for pair in &c.pairs {
                for n in pair {
                    if name_index(n).is_none() {
                        return Err(err(
                            within(&["clusters", cname.as_str()], n),
                            BoardErrorKind::UnknownNet(n.clone()),
                        ));
                    }
                }
                joins.push((pair.to_vec(), None));
            }
        }
    }
    joins.extend(
        edits
            .shorts
            .iter()
            .map(|(n, r)| (n.clone(), Some(r.clone()))),
    );
    // Rules are keyed by a member first and by the group's root once every
    // join is made (two shorts may share a net and grow one group).
    let mut rule_of_member: Vec<(usize, ShortSpec)> = Vec::new();
    for (members, rule) in &joins {
        let idx: Vec<usize> = members.iter().filter_map(|m| name_index(m)).collect();
        for w in idx.windows(2) {
            let (a, b) = (find(&mut group_of, w[0]), find(&mut group_of, w[1]));
            if a != b {
                group_of[b] = a;
            }
        }
        if let (Some(r), Some(&first)) = (rule, idx.first()) {
            rule_of_member.push((first, r.clone()));
        }
    }
    let roots: Vec<usize> = (0..net_names.len())
        .map(|i| find(&mut group_of, i))
        .collect();
    // The nets of each group, in file order.
    let mut members_of: HashMap<usize, Vec<usize>> = HashMap::new();
    for (i, &r) in roots.iter().enumerate() {
        members_of.entry(r).or_default().push(i);
    }
    let mut group_rule: HashMap<usize, ShortSpec> = HashMap::new();
    for (member, rule) in rule_of_member {
        group_rule.insert(roots[member], rule);
    }
    let mut group_index: HashMap<usize, usize> = HashMap::new();
    for &r in &roots {
        let len = group_index.len();
        group_index.entry(r).or_insert(len);
    }
    let net_of_name = |n: &str| name_index(n).map(|i| group_index[&roots[i]]);
    let mut pin_net: HashMap<(usize, String), usize> = HashMap::new();
    let mut nets: Vec<Net> = Vec::new();
    // For a dominant short: which member net each pin of a group came from.
    let mut pin_member: Vec<Vec<usize>> = Vec::new();
    for (name, pins) in &file.nets {
        let Some(index) = net_of_name(name) else {
            continue;
        };
        if index == nets.len() {
            let root = roots[name_index(name).unwrap_or(0)];
            let members: Vec<&String> = members_of
                .get(&root)
                .map_or(&[][..], Vec::as_slice)
                .iter()
                .map(|&i| &net_names[i])
                .collect();
            let joined = members
                .iter()
                .map(|m| m.as_str())
                .collect::<Vec<_>>()
                .join("+");
            let member_names: Vec<String> = if members.len() > 1 {
                members.iter().map(|m| m.to_string()).collect()
            } else {
                Vec::new()
            };
            nets.push(Net {
                name: joined,
                pins: Vec::new(),
                drivers: Vec::new(),
                receivers: Vec::new(),
                pull: None,
                rail: None,
                float: file
                    .float_overrides
                    .get(name)
                    .copied()
                    .unwrap_or(file.float),
                cluster_drivers: Vec::new(),
                stuck: None,
                short: None,
                defect: group_rule.contains_key(&root),
                members: member_names,
            });
            pin_member.push(Vec::new());
        }
        let member = name_index(name).unwrap_or(0);
        for r in pins {
            let key = format!("{name}:");
            let place = || within(&["nets", &key], r);
            for (d, pin) in resolve_pin(r, name)? {
                let full = format!("{}.{}", designators[d], pin);
                if let Some(&first) = pin_net.get(&(d, pin.clone())) {
                    let kind = if first == index && nets[index].name == *name {
                        BoardErrorKind::PinTwiceOnNet {
                            pin: full,
                            net: name.clone(),
                        }
                    } else {
                        BoardErrorKind::PinOnTwoNets {
                            pin: full,
                            first: nets[first].name.clone(),
                            second: name.clone(),
                        }
                    };
                    return Err(err(place(), kind));
                }
                let model = &device_models[d];
                let port_name = pin_maps[d]
                    .get(&pin)
                    .map(|p| p.name.clone())
                    .unwrap_or_default();
                if let Some((attribute, at)) = model.tap.signal_of(&port_name) {
                    let kind = BoardErrorKind::TapPinOnNet {
                        pin: full,
                        port: port_name,
                        entity: model.entity.clone(),
                        attribute,
                        bsdl: model
                            .source
                            .as_ref()
                            .map(|p| p.display().to_string())
                            .unwrap_or_else(|| "<bsdl>".into()),
                        line: at.map_or(0, |s| s.line),
                    };
                    return Err(err(place(), kind));
                }
                pin_net.insert((d, pin.clone()), index);
                let port = pin_maps[d]
                    .get(&pin)
                    .map(|p| p.to_string())
                    .unwrap_or_default();
                let net = &mut nets[index];
                let k = net.pins.len();
                net.pins.push(PinName {
                    device: designators[d].clone(),
                    pin: pin.clone(),
                    port,
                });
                pin_member[index].push(member);
                if let Some(&p) = pad_of_pin[d].get(pin.as_str()) {
                    if all_pads[d][p].output.is_some() {
                        net.drivers.push((d, p, k));
                    }
                    if all_pads[d][p].input.is_some() {
                        net.receivers.push((d, p, k));
                    }
                }
            }
        }
    }
    // How each short resolves.
    for (&root, rule) in &group_rule {
        let index = group_index[&root];
        nets[index].short = Some(match rule {
            ShortSpec::Wired(r) => ShortResolve::Wired(*r),
            ShortSpec::Dominant(member) => {
                let m = name_index(member).unwrap_or(usize::MAX);
                let dominant = nets[index]
                    .drivers
                    .iter()
                    .enumerate()
                    .filter(|(_, &(_, _, k))| pin_member[index][k] == m)
                    .map(|(i, _)| i)
                    .collect();
                ShortResolve::Dominant(dominant)
            }
        });
    }
    // An open net: cut from all its drivers (they now drive nothing the receivers see).
    // An open net: the trace is cut between the net's scan drivers and the
    // rest. What stays on the net: its pulls, its rail, its non-scan (cluster)
    // drivers, every input pin, and the input side of every bidirectional
    // pin (which reads the net's pulls or float level, and drives nothing).
    // What goes: each output-only pin, alone on a floating net of its own.
    for n in &edits.open_nets {
        if let Some(i) = net_of_name(n) {
            let drivers: Vec<(usize, usize, usize)> = std::mem::take(&mut nets[i].drivers);
            let cut: Vec<(usize, usize, usize)> = drivers
                .into_iter()
                .filter(|&(d, p, _)| all_pads[d][p].input.is_none())
                .collect();
            nets[i].defect = true;
            for (d, p, k) in cut {
                let pin = nets[i].pins[k].pin.clone();
                isolate(
                    &mut nets,
                    &mut pin_net,
                    &all_pads,
                    (d, &designators[d]),
                    p,
                    &pin,
                    i,
                );
            }
        }
    }
    // An open pin: the pin alone on a net of its own, floating by the
    // original net's float policy (or its own disable result); the net keeps
    // its pulls and every other pin.
    for (d, pin) in &edits.open_pins {
        if let Some(&i) = pin_net.get(&(*d, pin.clone())) {
            let p = all_pads[*d].iter().position(|pad| pad.pins.contains(pin));
            if let Some(p) = p {
                nets[i].drivers.retain(|x| !(x.0 == *d && x.1 == p));
                nets[i].receivers.retain(|x| !(x.0 == *d && x.1 == p));
                isolate(
                    &mut nets,
                    &mut pin_net,
                    &all_pads,
                    (*d, &designators[*d]),
                    p,
                    pin,
                    i,
                );
            } else {
                pin_net.remove(&(*d, pin.clone()));
            }
            nets[i].defect = true;
        }
    }
    for (n, v) in &edits.stuck {
        if let Some(i) = net_of_name(n) {
            nets[i].stuck = Some(*v);
            nets[i].defect = true;
        }
    }
    for (name, pull) in &file.pulls {
        let i = net_of_name(name).ok_or_else(|| {
            err(
                at(Some("pulls"), name),
                BoardErrorKind::UnknownNet(name.clone()),
            )
        })?;
        nets[i].pull = Some(*pull == PullEntry::Up);
    }
    for (list, level, section) in [
        (&file.power, true, "power"),
        (&file.ground, false, "ground"),
    ] {
        for name in list {
            let i = net_of_name(name).ok_or_else(|| {
                err(
                    at(Some(section), name),
                    BoardErrorKind::UnknownNet(name.clone()),
                )
            })?;
            if nets[i].rail.is_some_and(|r| r != level) {
                return Err(err(
                    at(Some(section), name),
                    BoardErrorKind::RailClash(name.clone()),
                ));
            }
            nets[i].rail = Some(level);
        }
    }
    for name in file.pulls.keys() {
        if let Some(i) = net_of_name(name).filter(|&i| nets[i].rail.is_some()) {
            return Err(err(
                at(Some("pulls"), name),
                BoardErrorKind::PullOnRail(nets[i].name.clone()),
            ));
        }
    }
    for name in file.float_overrides.keys() {
        net_of_name(name).ok_or_else(|| {
            err(
                at(Some("float_overrides"), name),
                BoardErrorKind::UnknownNet(name.clone()),
            )
        })?;
    }

    // System logic, then the devices themselves.
    let mut devices = Vec::new();
    let mut follows: Vec<Vec<usize>> = vec![Vec::new(); nets.len()];
    for (i, (name, entry)) in file.devices.iter().enumerate() {
        let pads = &all_pads[i];
        let default = match entry.outputs.as_deref() {
            None => SystemDrive::Off,
            Some(v) => parse_drive(v, &net_of_name)
                .ok_or_else(|| err(at(Some(name), v), BoardErrorKind::BadDrive(v.to_string())))?,
        };
        let mut system: Vec<SystemDrive> = pads
            .iter()
            .map(|p| {
                if p.output.is_some() {
                    default
                } else {
                    SystemDrive::Off
                }
            })
            .collect();
        if let SystemDrive::Follow(_) = default {
            return Err(err(
                at(Some(name), "outputs"),
                BoardErrorKind::BadDrive(entry.outputs.clone().unwrap_or_default()),
            ));
        }
        for (pin_ref, value) in &entry.pins {
            let drive = parse_drive(value, &net_of_name).ok_or_else(|| {
                let kind = if value.trim().starts_with("follow") {
                    BoardErrorKind::FollowUnknownNet(value.clone())
                } else {
                    BoardErrorKind::BadDrive(value.clone())
                };
                err(at(Some(name), value), kind)
            })?;
            let pins = pins_named(&device_models[i], &pin_maps[i], pin_ref).ok_or_else(|| {
                err(
                    at(Some(name), pin_ref),
                    BoardErrorKind::UnknownPin {
                        device: name.clone(),
                        pin: pin_ref.clone(),
                    },
                )
            })?;
            for pin in pins {
                let Some(p) = pads
                    .iter()
                    .position(|pad| pad.pins.contains(&pin) && pad.output.is_some())
                else {
                    return Err(err(
                        at(Some(name), pin_ref),
                        BoardErrorKind::NotAnOutput {
                            device: name.clone(),
                            pin,
                        },
                    ));
                };
                system[p] = drive;
                if let (SystemDrive::Follow(src), Some(&dst)) =
                    (drive, pin_net.get(&(i, pin.clone())))
                {
                    // A pass-through shorted to the net it follows holds its level.
                    if !(src as usize == dst && nets[dst].defect) {
                        follows[dst].push(src as usize);
                    }
                }
            }
        }
        if !entry.pads.is_empty() {
            let map = device_models[i].pin_map();
            for (pin, xy) in &entry.pads {
                let place = || within(&["devices", name, "pads"], pin);
                if !map.contains_key(pin) {
                    return Err(err(
                        place(),
                        BoardErrorKind::UnknownPin {
                            device: name.clone(),
                            pin: pin.clone(),
                        },
                    ));
                }
                if !xy.iter().all(|v| v.is_finite()) {
                    return Err(err(
                        place(),
                        BoardErrorKind::BadPad {
                            device: name.clone(),
                            pin: pin.clone(),
                        },
                    ));
                }
            }
        }
        for (key, code) in [("idcode", entry.idcode), ("usercode", entry.usercode)] {
            if let Some(value) = code.filter(|c| *c > u64::from(u32::MAX)) {
                return Err(err(
                    within(&["devices", name], key),
                    BoardErrorKind::WiderThan32 {
                        device: name.clone(),
                        key,
                        value,
                    },
                ));
            }
        }
        let setup = DeviceSetup {
            designator: name.clone(),
            idcode: entry.idcode,
            usercode: entry.usercode,
            seed: seed_for(file.seed, name),
            system,
        };
        let device = Device::new(Arc::clone(&device_models[i]), setup).map_err(|e| {
            let bsdl_place = match &e {
                DeviceError::CellNotModelled { span, .. } => {
                    device_models[i].source.clone().map(|p| (p, *span))
                }
                _ => None,
            };
            err(
                at(Some("devices"), name),
                BoardErrorKind::Device {
                    device: name.clone(),
                    error: e,
                    bsdl: bsdl_place,
                },
            )
        })?;
        devices.push(device);
    }

    // Non-scan clusters: their outputs drive nets computed from their inputs.
    follows.resize(nets.len(), Vec::new());
    let mut clusters: Vec<Cluster> = Vec::new();
    let mut cluster_edges = 0usize;
    for (cname, c) in &file.clusters {
        let bad = |problem: String| {
            err(
                at(Some("clusters"), cname),
                BoardErrorKind::BadCluster {
                    cluster: cname.clone(),
                    problem,
                },
            )
        };
        let net = |n: &Option<String>, role: &str| -> Result<u32, BoardError> {
            let n = n.as_ref().ok_or_else(|| bad(format!("needs `{role}`")))?;
            net_of_name(n).map(|i| i as u32).ok_or_else(|| {
                err(
                    within(&["clusters", cname.as_str()], n),
                    BoardErrorKind::UnknownNet(n.clone()),
                )
            })
        };
        let level = |v: &Option<String>, default: bool, what: &str| -> Result<bool, BoardError> {
            match v.as_deref() {
                None => Ok(default),
                Some("high") | Some("1") => Ok(true),
                Some("low") | Some("0") => Ok(false),
                Some(other) => Err(bad(format!("{what} is low or high, not `{other}`"))),
            }
        };
        let pin = |name: &str, n: u32| ClusterPin {
            name: name.to_string(),
            net: Some(n),
            stuck: None,
            open: false,
        };
        let (kind, inputs, outputs) = match c.kind.as_str() {
            "loopback" => continue,
            "pull" => {
                let n = net(&c.net, "net")? as usize;
                let up = c.to.ok_or_else(|| bad("needs `to: up` or `to: down`".into()))? == PullEntry::Up;
                if nets[n].pull.is_some_and(|p| p != up) {
                    // On a board as drawn this is a mistake; on a short that
                    // joined two pulled nets it is the defect: the resistors
                    // divide, and nothing can rely on the level (floating).
                    if !nets[n].defect {
                        return Err(bad(format!("net {} is already pulled the other way", nets[n].name)));
                    }
                    nets[n].pull = None;
                    continue;
                }
                nets[n].pull = Some(up);
                continue;
            }
            "buffer" | "inverter" => {
                let kind = if c.kind == "buffer" { ClusterKind::Buffer } else { ClusterKind::Inverter };
                (kind, vec![pin("a", net(&c.a, "a")?)], vec![pin("y", net(&c.y, "y")?)])
            }
            "and" | "or" | "nand" | "nor" | "xor" => {
                let kind = match c.kind.as_str() {
                    "and" => ClusterKind::And,
                    "or" => ClusterKind::Or,
                    "nand" => ClusterKind::Nand,
                    "nor" => ClusterKind::Nor,
                    _ => ClusterKind::Xor,
                };
                if c.inputs.len() < 2 {
                    return Err(bad("a gate needs at least two `inputs`".into()));
                }
                let mut ins = Vec::new();
                for (k, n) in c.inputs.iter().enumerate() {
                    ins.push(pin(&format!("in{}", k + 1), net(&Some(n.clone()), "inputs")?));
                }
                (kind, ins, vec![pin("y", net(&c.y, "y")?)])
            }
            "three-state" => (
                ClusterKind::ThreeState,
                vec![pin("a", net(&c.a, "a")?), pin("enable", net(&c.enable, "enable")?)],
                vec![pin("y", net(&c.y, "y")?)],
            ),
            "transceiver" => {
                let (a, b) = (net(&c.a, "a")?, net(&c.b, "b")?);
                (
                    ClusterKind::Transceiver,
                    vec![pin("a", a), pin("b", b), pin("dir", net(&c.dir, "dir")?), pin("enable", net(&c.enable, "enable")?)],
                    vec![pin("a", a), pin("b", b)],
                )
            }
            "resistor" => (ClusterKind::Resistor, vec![pin("a", net(&c.a, "a")?)], vec![pin("b", net(&c.b, "b")?)]),
            other => return Err(bad(format!("`{other}` is not a cluster kind (buffer, inverter, and, or, nand, nor, xor, three-state, transceiver, resistor, pull, loopback)"))),
        };
        let index = clusters.len();
        for (o, out) in outputs.iter().enumerate() {
            let n = out.net.unwrap_or(0) as usize;
            nets[n].cluster_drivers.push((index, o));
            if kind != ClusterKind::Transceiver {
                for i in &inputs {
                    let src = i.net.unwrap_or(0) as usize;
                    // A short across the part (its output net joined to its
                    // input net) holds what the net last read; on a board as
                    // drawn the same self-loop is refused as a loop.
                    if !(src == n && nets[n].defect) {
                        follows[n].push(src);
                    }
                    cluster_edges += 1;
                }
            }
        }
        clusters.push(Cluster {
            name: cname.clone(),
            kind,
            inputs,
            outputs,
            enable_active: level(&c.enable_active, false, "enable_active")?,
            a_to_b: level(&c.a_to_b, true, "a_to_b")?,
        });
    }
    let _ = cluster_edges;

    // Order the nets so a net any driver depends on resolves first.
    let order = topological(&follows).map_err(|n| {
        let kind = if clusters.is_empty() {
            BoardErrorKind::FollowLoop(nets[n].name.clone())
        } else {
            BoardErrorKind::CombinationalLoop(nets[n].name.clone())
        };
        err(
            at(Some("nets"), nets[n].name.split('+').next().unwrap_or("")),
            kind,
        )
    })?;
    let mut new_index = vec![0u32; nets.len()];
    for (pos, &old) in order.iter().enumerate() {
        new_index[old] = pos as u32;
    }
    let mut slots: Vec<Option<Net>> = nets.into_iter().map(Some).collect();
    let nets: Vec<Net> = order.iter().filter_map(|&old| slots[old].take()).collect();
    let remap = |d: SystemDrive| match d {
        SystemDrive::Follow(n) => SystemDrive::Follow(new_index[n as usize]),
        other => other,
    };
    for c in &mut clusters {
        for p in c.inputs.iter_mut().chain(c.outputs.iter_mut()) {
            p.net = p.net.map(|n| new_index[n as usize]);
        }
    }
    let mut pad_net = Vec::new();
    let mut pad_nets = Vec::new();
    for (i, device) in devices.iter_mut().enumerate() {
        let system: Vec<SystemDrive> = device.system().iter().map(|&d| remap(d)).collect();
        let mut setup_pads = Vec::new();
        let mut setup_all = Vec::new();
        for pad in all_pads[i].iter() {
            let on: Vec<u32> = pad
                .pins
                .iter()
                .filter_map(|pin| pin_net.get(&(i, pin.clone())).map(|&n| new_index[n]))
                .collect();
            setup_pads.push(on.first().copied());
            setup_all.push(on);
        }
        pad_net.push(setup_pads);
        pad_nets.push(setup_all);
        device.set_system(system);
    }
    let board = Board::new(BoardParts {
        name: if file.name.is_empty() {
            path.display().to_string()
        } else {
            file.name.clone()
        },
        devices,
        ports,
        nets,
        pad_net,
        pad_nets,
        short_rule: file.shorts,
        unconnected: file.float,
        seed: seed_for(file.seed, "nets"),
        clusters,
    });
    Ok(LoadedBoard {
        board,
        file,
        path: path.to_path_buf(),
        source: source.clone(),
    })
}

/// Moves pad `p` of device `d` (pin `pin`, on net `from`) to a net of its own.
fn isolate(
    nets: &mut Vec<Net>,
    pin_net: &mut HashMap<(usize, String), usize>,
    pads: &[Vec<crate::device::Pad>],
    (d, designator): (usize, &str),
    p: usize,
    pin: &str,
    from: usize,
) {
    let original = &nets[from];
    let name = format!("{designator}.{pin} (open)");
    let pin_name = original
        .pins
        .iter()
        .find(|x| x.pin == pin && x.device == designator)
        .cloned();
    let mut net = Net {
        name,
        pins: pin_name.into_iter().collect(),
        drivers: Vec::new(),
        receivers: Vec::new(),
        pull: None,
        rail: None,
        float: original.float,
        cluster_drivers: Vec::new(),
        stuck: None,
        short: None,
        defect: true,
        members: Vec::new(),
    };
    if pads[d][p].output.is_some() {
        net.drivers.push((d, p, 0));
    }
    if pads[d][p].input.is_some() {
        net.receivers.push((d, p, 0));
    }
    pin_net.insert((d, pin.to_string()), nets.len());
    nets.push(net);
}

/// How a short defect resolves (the board-level form of a defect's behaviour).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ShortSpec {
    /// Wired-AND or wired-OR.
    Wired(ShortRule),
    /// The drivers of this member net win.
    Dominant(String),
}

/// Net-level changes made by defects, applied while the board is assembled.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct NetEdits {
    /// Groups of nets shorted together, and how each group resolves.
    pub shorts: Vec<(Vec<String>, ShortSpec)>,
    /// Nets cut from their drivers.
    pub open_nets: Vec<String>,
    /// (device index, physical pin) cut from its net.
    pub open_pins: Vec<(usize, String)>,
    /// Nets stuck at a level.
    pub stuck: Vec<(String, bool)>,
}

/// Physical pins of `name`: a pin of the package, or every pin of a port element.
pub(crate) fn pins_named(
    model: &DeviceModel,
    pin_map: &BTreeMap<String, crate::model::device::PortRef>,
    name: &str,
) -> Option<Vec<String>> {
    if pin_map.contains_key(name) {
        return Some(vec![name.to_string()]);
    }
    let (port, index) = match name.split_once('(') {
        Some((p, rest)) => (p, Some(rest.strip_suffix(')')?.trim().parse::<i64>().ok()?)),
        None => (name, None),
    };
    let port = model.port(port)?;
    if matches!(port.mode, PortMode::Linkage | PortMode::OtherLinkage(_))
        && index.is_none()
        && port.range.is_some()
    {
        return Some(port.pins.iter().flatten().cloned().collect());
    }
    port.pins_of(index).map(<[String]>::to_vec)
}

fn parse_drive(text: &str, net_of: &dyn Fn(&str) -> Option<usize>) -> Option<SystemDrive> {
    let t = text.trim();
    match t {
        "low" | "0" => Some(SystemDrive::Low),
        "high" | "1" => Some(SystemDrive::High),
        "off" | "z" => Some(SystemDrive::Off),
        _ => {
            // `off data high`: driver disabled, data line at a level.
            if let Some(rest) = t.strip_prefix("off").or_else(|| t.strip_prefix("z")) {
                let rest = rest.trim_start();
                if let Some(level) = rest.strip_prefix("data") {
                    return match level.trim() {
                        "high" | "1" => Some(SystemDrive::OffData(true)),
                        "low" | "0" => Some(SystemDrive::OffData(false)),
                        _ => None,
                    };
                }
            }
            let net = t.strip_prefix("follow")?.trim();
            net_of(net).map(|n| SystemDrive::Follow(n as u32))
        }
    }
}

/// Kahn's algorithm over "net depends on nets"; `Err` names a net on a loop.
fn topological(deps: &[Vec<usize>]) -> Result<Vec<usize>, usize> {
    let n = deps.len();
    let mut indegree = vec![0usize; n];
    let mut users: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (net, sources) in deps.iter().enumerate() {
        let unique: HashSet<usize> = sources.iter().copied().collect();
        indegree[net] = unique.len();
        for s in unique {
            users[s].push(net);
        }
    }
    let mut ready: Vec<usize> = (0..n).rev().filter(|&i| indegree[i] == 0).collect();
    let mut order = Vec::with_capacity(n);
    while let Some(i) = ready.pop() {
        order.push(i);
        for &u in &users[i] {
            indegree[u] -= 1;
            if indegree[u] == 0 {
                ready.push(u);
            }
        }
    }
    if order.len() == n {
        Ok(order)
    } else {
        Err((0..n).find(|&i| indegree[i] > 0).unwrap_or(0))
    }
}
