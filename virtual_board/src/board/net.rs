//! Nets and their resolution: strong beats weak, keepers hold, disagreeing
//! strong drivers are contention.

use serde::{Deserialize, Serialize};

/// What an input reads on a net that nothing drives, not even weakly.
///
/// Common practice: TTL-style inputs float high; CMOS inputs are
/// unpredictable, hence `Previous` and `Random`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum FloatPolicy {
    /// Reads 1.
    #[default]
    High,
    /// Reads 0.
    Low,
    /// Reads the last level the net was driven to (0 before any).
    Previous,
    /// Reads an arbitrary value at every read (seeded).
    Random,
}

/// What a net reads when strong drivers disagree (the board's short behaviour).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum ShortRule {
    /// 0 dominates (common practice for TTL-style drivers).
    #[default]
    WiredAnd,
    /// 1 dominates.
    WiredOr,
}

impl ShortRule {
    /// The level a group of disagreeing strong drivers gives.
    pub fn resolve(self) -> bool {
        matches!(self, ShortRule::WiredOr)
    }
}

/// A pin of a device as the board knows it: designator, pin and port element.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct PinName {
    /// Device designator.
    pub device: String,
    /// Physical pin.
    pub pin: String,
    /// Port element bonded to it.
    pub port: String,
}

impl std::fmt::Display for PinName {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}.{} ({})", self.device, self.pin, self.port)
    }
}

/// One net of the board.
#[derive(Clone, Debug, PartialEq)]
pub struct Net {
    /// Net name.
    pub name: String,
    /// Every device pin on the net.
    pub pins: Vec<PinName>,
    /// The pads that can drive it: (device index, pad index, index into `pins`).
    pub drivers: Vec<(usize, usize, usize)>,
    /// The pads that read it: (device index, pad index, index into `pins`).
    pub receivers: Vec<(usize, usize, usize)>,
    /// A pull resistor: `Some(true)` up, `Some(false)` down.
    pub pull: Option<bool>,
    /// A power (`Some(true)`) or ground (`Some(false)`) rail.
    pub rail: Option<bool>,
    /// What an input reads when it floats.
    pub float: FloatPolicy,
    /// Non-scan outputs driving the net: (cluster index, output index).
    pub cluster_drivers: Vec<(usize, usize)>,
    /// Defect: the net is stuck at this level, whatever drives it.
    pub stuck: Option<bool>,
    /// Defect: the nets of a short, merged into this one, resolve this way.
    pub short: Option<ShortResolve>,
    /// True when a defect changed this net; its drivers' fights are the
    /// defect's doing, not the program's, so they raise no hazard.
    pub defect: bool,
    /// The board file's nets joined into this one (by a loopback plug or a
    /// short); empty for a net as drawn.
    pub members: Vec<String>,
}

/// How the strong drivers of a shorted group resolve.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ShortResolve {
    /// By a wired rule.
    Wired(ShortRule),
    /// The named drivers (indices into `drivers`) win when they drive;
    /// otherwise the others, wired-AND.
    Dominant(Vec<usize>),
}

/// A driver on a net during a contention, by name, and the level it drives.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct DriverLevel {
    /// The pin or rail driving.
    pub driver: String,
    /// The level.
    pub level: bool,
}

/// Something the board saw happen that a tester should know about.
///
/// Serialize and Deserialize give one JSON form, used by reports, capture
/// logs and the remote protocol alike.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum BoardEvent {
    /// Strong drivers disagree on a net: on a real board, drivers fighting.
    Contention {
        /// TAP port whose TCK edge caused it (`None`: at load).
        port: Option<String>,
        /// That port's TCK cycle.
        cycle: u64,
        /// The net.
        net: String,
        /// The strong drivers and their levels.
        drivers: Vec<DriverLevel>,
    },
    /// An input cell captured a net that nothing drives.
    FloatingCapture {
        /// TAP port of the capturing device.
        port: String,
        /// That port's TCK cycle.
        cycle: u64,
        /// The capturing pin.
        pin: String,
        /// The net (`None`: the pin is on no net).
        net: Option<String>,
        /// Designator of the capturing device.
        device: String,
        /// The capturing cell.
        cell: u32,
    },
    /// A scan cell drives a power or ground rail.
    ScanDrivesRail {
        /// TAP port whose edge made it happen.
        port: Option<String>,
        /// That port's TCK cycle.
        cycle: u64,
        /// The rail net.
        net: String,
        /// The scan driver.
        driver: String,
    },
    /// A scan cell drives a net that a non-scan output also drives.
    ScanMeetsCluster {
        /// TAP port whose edge made it happen.
        port: Option<String>,
        /// That port's TCK cycle.
        cycle: u64,
        /// The net.
        net: String,
        /// The scan driver.
        driver: String,
        /// The non-scan output.
        cluster: String,
    },
    /// EXTEST became active while the update latches held values never
    /// loaded by a PRELOAD (or any boundary-register Update-DR).
    ExtestWithoutPreload {
        /// TAP port.
        port: String,
        /// That port's TCK cycle.
        cycle: u64,
        /// The device.
        device: String,
    },
    /// The program clocks a port faster than a device on it allows (BSDL
    /// `TAP_SCAN_CLOCK`): seen by the runner against the board's devices.
    TckTooFast {
        /// TAP port.
        port: String,
        /// That port's TCK cycle when the frequency took effect.
        cycle: u64,
        /// The program's TCK frequency, Hz.
        hz: u64,
        /// The slowest device's maximum, Hz.
        max_hz: u64,
        /// The slowest device's designator.
        device: String,
        /// Its part (BSDL entity).
        part: String,
    },
    /// The program's tester stops TCK high, and a device allows stopping it
    /// only low (BSDL `TAP_SCAN_CLOCK … LOW`).
    TckStopNotAllowed {
        /// TAP port.
        port: String,
        /// That port's TCK cycle.
        cycle: u64,
        /// The device.
        device: String,
        /// Its part (BSDL entity).
        part: String,
    },
    /// A scan's length is not the length of the port's present path (the
    /// sum of the IR lengths, or of the registers the instructions select).
    ScanLength {
        /// TAP port.
        port: String,
        /// That port's TCK cycle at the start of the shift.
        cycle: u64,
        /// `IR` or `DR`.
        register: String,
        /// Where the scan is in the program (file:line).
        origin: String,
        /// Bits the program shifts.
        given: usize,
        /// Bits of the present path.
        path_length: usize,
        /// The path, TDI end first: each device, its part, register and length.
        path: String,
    },
}

impl BoardEvent {
    /// A short name of the kind, for tables.
    pub fn kind(&self) -> &'static str {
        match self {
            BoardEvent::Contention { .. } => "contention",
            BoardEvent::FloatingCapture { .. } => "floating capture",
            BoardEvent::ScanDrivesRail { .. } => "scan output on a rail",
            BoardEvent::ScanMeetsCluster { .. } => "scan output against a non-scan output",
            BoardEvent::ExtestWithoutPreload { .. } => "EXTEST without PRELOAD",
            BoardEvent::TckTooFast { .. } => "TCK faster than a device allows",
            BoardEvent::TckStopNotAllowed { .. } => "TCK stopped high",
            BoardEvent::ScanLength { .. } => "scan length is not the chain's",
        }
    }
}
