//! Net-level patterns: tests written as nets to drive and nets to expect,
//! turned into the scans that run on the board.
//!
//! ```yaml
//! patterns:
//!   name: cross-port interconnect
//!   from: { LB_D0: U1 }          # optional: the scan driver of a net that has several
//!   scans: pipelined             # optional: or apply-then-capture (when not written)
//!   vectors:
//!     - drive: { LB_D0: 1, HOST_A6: 0 }
//!       expect: { LB_D0: 1, HOST_A6: 0 }
//! ```
//!
//! What the harness works out (common practice for EXTEST interconnect
//! tests): the devices that drive or receive go to EXTEST; the others wait
//! in BYPASS (or SAMPLE where the board file says `bystander: sample`). Each
//! boundary bit is set: data cells of the named drivers to their value,
//! their control cells to enable, every other control cell to its disable
//! value, every other cell to its safe value (X as 0).
//!
//! The scans, so that no two drivers fight on any TAP port's account
//! (`handover` has the reasons):
//!
//! 1. SAMPLE/PRELOAD and the *safe vector* (every control cell at its
//!    disable value, every other cell at its safe value) into every port;
//! 2. EXTEST on every port, in an order in which no two-state output meets a
//!    device still under its system logic;
//! 3. the vectors, by one of two schedules (`scans:`):
//!    - `apply-then-capture`: for each vector, the ports that drive are
//!      updated before the ports that capture; a port that takes a net over
//!      from another port's driver is updated after that port, or first
//!      scans a release vector; then every receiving port scans the vector
//!      again and compares;
//!    - `pipelined` (`pipeline`): each DR scan captures the response to the
//!      vector before and applies the next, one DR scan per TAP port per
//!      vector, with the same break-before-make order and every capture
//!      under the whole vector it compares;
//!
//!    only the receivers' input cells are compared;
//! 4. the safe vector into every port again (in the pipelined schedule it
//!    captures the last vector's response), then a TMS reset of each port
//!    in the reverse order, so the board goes back to its system logic.
//!
//! A vector (or the safe vector) that would put two drivers on one net at
//! opposite levels, counting devices the test leaves under their system
//! logic, is refused.

use std::collections::{BTreeMap, BTreeSet};
use std::fmt;
use std::marker::PhantomData;

use serde::de::{Deserializer, Error as _, MapAccess, Visitor};
use serde::{Deserialize, Serialize};
use virtual_board::{Bits, Board, Bystander, LoadedBoard, TapState};

use super::{
    handover, pipeline, Action, Origin, PatternError, Scan, ScanKind, Step, UnknownSchedule,
};

/// A set of net-level vectors, as written.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct PatternSet {
    /// Name, for reports.
    #[serde(default)]
    pub name: String,
    /// Which device drives a net that several scan cells could drive.
    #[serde(default, deserialize_with = "from_map")]
    pub from: BTreeMap<String, String>,
    /// The vectors, applied in order.
    pub vectors: Vec<Vector>,
    /// How the vectors become scans (`scans:`; apply then capture when
    /// not written).
    #[serde(default, rename = "scans")]
    pub schedule: Schedule,
}

/// How the vectors of a pattern set become DR scans.
#[derive(Clone, Copy, Debug, Default, Deserialize, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Schedule {
    /// Per vector, the driving TAP ports scan it in (apply), then every
    /// receiving port scans it again to capture the response: two DR scans
    /// on a port that both drives and receives.
    #[default]
    ApplyThenCapture,
    /// Each DR scan captures the response to the vector before and applies
    /// the next one: one DR scan per TAP port per vector, and the safe
    /// vector at the end captures the last response (`pipeline`).
    Pipelined,
}

impl Schedule {
    /// The word `scans:` takes.
    pub fn word(self) -> &'static str {
        match self {
            Schedule::ApplyThenCapture => "apply-then-capture",
            Schedule::Pipelined => "pipelined",
        }
    }
}

impl fmt::Display for Schedule {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.word())
    }
}

impl std::str::FromStr for Schedule {
    type Err = UnknownSchedule;
    fn from_str(s: &str) -> Result<Schedule, UnknownSchedule> {
        match s {
            "apply-then-capture" => Ok(Schedule::ApplyThenCapture),
            "pipelined" => Ok(Schedule::Pipelined),
            other => Err(UnknownSchedule(other.to_string())),
        }
    }
}

/// One vector: nets to drive and nets expected.
#[derive(Clone, Debug, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct Vector {
    /// Name, for reports.
    #[serde(default)]
    pub name: Option<String>,
    /// Net → 0 or 1.
    #[serde(default, deserialize_with = "drive_map")]
    pub drive: BTreeMap<String, u8>,
    /// Net → 0 or 1.
    #[serde(default, deserialize_with = "expect_map")]
    pub expect: BTreeMap<String, u8>,
}

/// `drive`: a net named twice would ask for two drivers on one net, and a
/// plain map would silently keep the last value.
fn drive_map<'de, D: Deserializer<'de>>(d: D) -> Result<BTreeMap<String, u8>, D::Error> {
    unique_map(d, "drive", ": two drivers asked for on one net")
}

fn expect_map<'de, D: Deserializer<'de>>(d: D) -> Result<BTreeMap<String, u8>, D::Error> {
    unique_map(d, "expect", "")
}

fn from_map<'de, D: Deserializer<'de>>(d: D) -> Result<BTreeMap<String, String>, D::Error> {
    unique_map(d, "from", "")
}

/// A map of net names that refuses a name written twice.
fn unique_map<'de, D, V>(
    d: D,
    key: &'static str,
    why: &'static str,
) -> Result<BTreeMap<String, V>, D::Error>
where
    D: Deserializer<'de>,
    V: Deserialize<'de>,
{
    struct Unique<V> {
        key: &'static str,
        why: &'static str,
        value: PhantomData<V>,
    }
    impl<'de, V: Deserialize<'de>> Visitor<'de> for Unique<V> {
        type Value = BTreeMap<String, V>;
        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            write!(f, "a map of net names for `{}`", self.key)
        }
        fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Self::Value, A::Error> {
            let mut out = BTreeMap::new();
            while let Some((net, value)) = map.next_entry::<String, V>()? {
                if out.contains_key(&net) {
                    return Err(A::Error::custom(format!(
                        "net `{net}` is named twice in `{}`{}",
                        self.key, self.why
                    )));
                }
                out.insert(net, value);
            }
            Ok(out)
        }
    }
    d.deserialize_map(Unique {
        key,
        why,
        value: PhantomData,
    })
}

/// A chosen scan driver: device, pad, value.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Driver {
    device: usize,
    pad: usize,
    value: bool,
}

/// Turns the vectors into scans.
///
/// # Errors
/// An unknown net, a net with no scan driver or receiver, a value other
/// than 0 or 1, two drivers asked for on one net, or a driver whose shared
/// control cell would enable another driver onto a net driven from elsewhere.
pub fn compile_patterns(set: &PatternSet, loaded: &LoadedBoard) -> Result<Vec<Step>, PatternError> {
    let board = &loaded.board;
    if set.vectors.is_empty() {
        return Err(PatternError::NoVectors);
    }
    let net = |name: &str| {
        board
            .net_index(name)
            .ok_or_else(|| PatternError::UnknownNet(name.to_string()))
    };
    let bit = |name: &str, v: u8| match v {
        0 => Ok(false),
        1 => Ok(true),
        _ => Err(PatternError::NotABit {
            net: name.to_string(),
            value: v,
        }),
    };
    for (n, d) in &set.from {
        net(n)?;
        board
            .device_index(d)
            .ok_or_else(|| PatternError::UnknownDevice {
                device: d.clone(),
                net: n.clone(),
            })?;
    }

    // Drivers and receivers of every vector.
    let mut drivers: Vec<Vec<Driver>> = Vec::new();
    let mut receivers: Vec<Vec<(usize, usize, bool, String)>> = Vec::new();
    for (k, v) in set.vectors.iter().enumerate() {
        let mut chosen: Vec<Driver> = Vec::new();
        for (name, &value) in &v.drive {
            let i = net(name)?;
            let n = &board.nets()[i];
            let candidates: Vec<&(usize, usize, usize)> = match set.from.get(name) {
                Some(d) => n
                    .drivers
                    .iter()
                    .filter(|(x, _, _)| board.devices()[*x].designator() == d)
                    .collect(),
                None => n.drivers.iter().collect(),
            };
            let &&(device, pad, _) = candidates.first().ok_or_else(|| PatternError::NoDriver {
                vector: k + 1,
                net: name.clone(),
                device: set.from.get(name).cloned(),
            })?;
            chosen.push(Driver {
                device,
                pad,
                value: bit(name, value)?,
            });
        }
        let mut expected = Vec::new();
        for (name, &value) in &v.expect {
            let i = net(name)?;
            let n = &board.nets()[i];
            if n.receivers.is_empty() {
                return Err(PatternError::NoReceiver {
                    vector: k + 1,
                    net: name.clone(),
                });
            }
            let value = bit(name, value)?;
            for &(d, p, _) in &n.receivers {
                expected.push((d, p, value, name.clone()));
            }
        }
        drivers.push(chosen);
        receivers.push(expected);
    }

    let involved: BTreeSet<usize> = drivers
        .iter()
        .flatten()
        .map(|d| d.device)
        .chain(receivers.iter().flatten().map(|r| r.0))
        .collect();
    let vectors: Vec<Vec<Option<Bits>>> = (0..set.vectors.len())
        .map(|k| device_vectors(board, &involved, &drivers[k], &receivers[k], k))
        .collect::<Result<_, _>>()?;
    let safe: Vec<Option<Bits>> = (0..board.devices().len())
        .map(|d| involved.contains(&d).then(|| safe_vector(board, d)))
        .collect();
    // Outputs that no control cell turns off, shared control cells and
    // devices left under their system logic can still put two drivers on
    // one net.
    for (k, v) in std::iter::once(&safe).chain(&vectors).enumerate() {
        if let Some((n, a, b)) = handover::opposing_drivers(board, v) {
            let when = match k {
                0 => "the safe vector".to_string(),
                _ => format!("vector {k}"),
            };
            let who = |(d, p): (usize, usize)| match v[d] {
                Some(_) => pin_name(board, d, p),
                None => format!(
                    "{} (system logic: the test leaves it in normal mode)",
                    pin_name(board, d, p)
                ),
            };
            return Err(PatternError::Fight(format!(
                "{when}: {} and {} would drive net {} to opposite levels",
                who(a),
                who(b),
                board.nets()[n].name
            )));
        }
    }

    let ports: Vec<usize> = (0..board.ports().len())
        .filter(|&p| board.ports()[p].chain.iter().any(|d| involved.contains(d)))
        .collect();
    let driving_ports: BTreeSet<usize> = ports
        .iter()
        .copied()
        .filter(|&p| {
            drivers
                .iter()
                .flatten()
                .any(|d| board.ports()[p].chain.contains(&d.device))
        })
        .collect();
    let bystander = |d: usize| {
        let name = board.devices()[d].designator();
        loaded
            .file
            .devices
            .get(name)
            .and_then(|e| e.bystander)
            .unwrap_or_default()
    };
    let name = if set.name.is_empty() {
        "patterns".to_string()
    } else {
        set.name.clone()
    };
    let mut steps = Vec::new();
    let mut push = |port: usize, scan: Scan, note: String| {
        steps.push(Step {
            port: board.ports()[port].name.clone(),
            action: Action::Scan(scan),
            origin: Origin {
                note,
                ..Origin::default()
            },
        })
    };
    // Enter with every driver off: the safe vector into every port, then
    // EXTEST on every port, in an order in which no two-state output (no
    // control cell) meets a device still under its system logic; leave in
    // the reverse order.
    let entry = handover::entry_order(board, &ports, &safe).map_err(|(n, a, b)| {
        PatternError::Fight(format!(
            "no order of the TAP ports enters EXTEST without a fight: {} and {} would drive net {} to opposite levels",
            pin_name(board, a.0, a.1),
            pin_name(board, b.0, b.1),
            board.nets()[n].name
        ))
    })?;
    let leave: Vec<usize> = entry.iter().rev().copied().collect();
    for &p in &entry {
        push(
            p,
            ir_scan(board, p, &involved, &bystander, Phase::Preload),
            format!("{name}: SAMPLE/PRELOAD"),
        );
        let dr = chain_vector(board, p, &involved, &safe, &bystander);
        push(
            p,
            plain(ScanKind::Dr, dr),
            format!("{name}: preload the safe vector (drivers off)"),
        );
    }
    for &p in &entry {
        push(
            p,
            ir_scan(board, p, &involved, &bystander, Phase::Extest),
            format!("{name}: EXTEST"),
        );
    }
    let labels: Vec<String> = set
        .vectors
        .iter()
        .enumerate()
        .map(|(k, v)| {
            v.name
                .clone()
                .unwrap_or_else(|| format!("vector {}", k + 1))
        })
        .collect();
    let plan = Plan {
        board,
        involved: &involved,
        bystander: &bystander,
        name: &name,
        ports: &ports,
        driving_ports: &driving_ports,
        leave: &leave,
        safe: &safe,
        vectors: &vectors,
        receivers: &receivers,
        labels,
    };
    steps.extend(match set.schedule {
        Schedule::ApplyThenCapture => apply_then_capture(&plan),
        Schedule::Pipelined => pipeline::pipelined(&plan)?,
    });
    for &p in &leave {
        steps.push(Step {
            port: board.ports()[p].name.clone(),
            action: Action::ResetTms,
            origin: Origin {
                note: format!("{name}: back to system logic"),
                ..Origin::default()
            },
        });
    }
    Ok(steps)
}

/// A receiving pad in one vector: device, pad, expected level, net name.
pub(super) type Receiver = (usize, usize, bool, String);

/// What a schedule turns into scans: the devices in the test, how the
/// chains are laid out during it, and each vector's boundary bits.
pub(super) struct Plan<'a> {
    pub board: &'a Board,
    pub involved: &'a BTreeSet<usize>,
    pub bystander: &'a dyn Fn(usize) -> Bystander,
    /// The pattern set's name, for the notes.
    pub name: &'a str,
    /// The TAP ports with a device in the test, in port order.
    pub ports: &'a [usize],
    /// The ports with a driver in some vector.
    pub driving_ports: &'a BTreeSet<usize>,
    /// The order the ports leave EXTEST in.
    pub leave: &'a [usize],
    /// Each device's safe vector (`None`: not in the test).
    pub safe: &'a [Option<Bits>],
    /// Each vector's boundary bits per device.
    pub vectors: &'a [Vec<Option<Bits>>],
    /// Each vector's receiving pads.
    pub receivers: &'a [Vec<Receiver>],
    /// Each vector's name.
    pub labels: Vec<String>,
}

impl Plan<'_> {
    /// The DR bits of `port` with `vectors` in its devices.
    pub fn dr(&self, port: usize, vectors: &[Option<Bits>]) -> Bits {
        chain_vector(self.board, port, self.involved, vectors, self.bystander)
    }

    /// A DR scan of `tdi` into `port` that compares the receivers of vector
    /// `k` on that port, or `None` when the port has none.
    pub fn compared(&self, port: usize, k: usize, tdi: Bits, end: TapState) -> Option<Scan> {
        let here: Vec<&Receiver> = self.receivers[k]
            .iter()
            .filter(|r| self.board.ports()[port].chain.contains(&r.0))
            .collect();
        if here.is_empty() {
            return None;
        }
        let mut expect = Bits::zeros(tdi.len());
        let mut mask = Bits::zeros(tdi.len());
        for &&(d, pad, value, _) in &here {
            let cell = self.board.devices()[d].pads()[pad].input.unwrap_or(0) as usize;
            let at = offset_of(self.board, port, d, self.involved, self.bystander) + cell;
            expect.set(at, value);
            mask.set(at, true);
        }
        Some(Scan {
            kind: ScanKind::Dr,
            tdi,
            expect: Some(expect),
            mask,
            smask: None,
            end,
        })
    }

    /// A step on `port`, made by the compiler; `vector`: the vector (0-based)
    /// it applies, `None` outside the vectors.
    pub fn step(&self, port: usize, action: Action, note: String, vector: Option<usize>) -> Step {
        Step {
            port: self.board.ports()[port].name.clone(),
            action,
            origin: Origin {
                note,
                vector: vector.and_then(|k| u32::try_from(k + 1).ok()),
                ..Origin::default()
            },
        }
    }

    /// The safe vector into every port, in the leave order, with no compare.
    pub fn safe_scans(&self) -> Vec<Step> {
        self.leave
            .iter()
            .map(|&p| {
                let scan = plain(ScanKind::Dr, self.dr(p, self.safe));
                let note = format!("{}: safe vector (drivers off)", self.name);
                self.step(p, Action::Scan(scan), note, None)
            })
            .collect()
    }
}

/// The vectors as apply and capture scans: per vector, the driving ports
/// scan it in (break before make: a port that takes a net over from
/// another port's driver is updated after it, or first scans its vector
/// with that driver still off), then every receiving port scans it again
/// and compares; then the safe vector into every port.
fn apply_then_capture(plan: &Plan<'_>) -> Vec<Step> {
    let (name, board) = (plan.name, plan.board);
    let mut steps = Vec::new();
    for (k, label) in plan.labels.iter().enumerate() {
        let prev = if k == 0 {
            plan.safe
        } else {
            &plan.vectors[k - 1]
        };
        let handover = handover::handover(board, prev, &plan.vectors[k]);
        let (takers, others): (Vec<usize>, Vec<usize>) = plan
            .driving_ports
            .iter()
            .partition(|p| handover.takes_from.contains_key(p));
        if handover.needs_release() {
            for &p in &takers {
                let scan = plain(ScanKind::Dr, plan.dr(p, &handover.release));
                let note =
                    format!("{name}: {label}: release (another port's driver lets go first)");
                steps.push(plan.step(p, Action::Scan(scan), note, Some(k)));
            }
        }
        for &p in others.iter().chain(&takers) {
            let scan = plain(ScanKind::Dr, plan.dr(p, &plan.vectors[k]));
            let note = format!("{name}: {label}: apply");
            steps.push(plan.step(p, Action::Scan(scan), note, Some(k)));
        }
        for &p in plan.ports {
            let tdi = plan.dr(p, &plan.vectors[k]);
            if let Some(scan) = plan.compared(p, k, tdi, TapState::RunTestIdle) {
                let note = format!("{name}: {label}: capture");
                steps.push(plan.step(p, Action::Scan(scan), note, Some(k)));
            }
        }
    }
    steps.extend(plan.safe_scans());
    steps
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Phase {
    Preload,
    Extest,
}

pub(super) fn plain(kind: ScanKind, tdi: Bits) -> Scan {
    let n = tdi.len();
    Scan {
        kind,
        tdi,
        expect: None,
        mask: Bits::zeros(n),
        smask: None,
        end: TapState::RunTestIdle,
    }
}

/// The opcode bits of the first opcode of `name` (X bits as 0).
fn opcode(board: &Board, d: usize, names: &[&str]) -> Bits {
    let m = board.devices()[d].model();
    let found = names
        .iter()
        .find_map(|n| m.instruction(n))
        .and_then(|i| i.opcodes.first());
    match found {
        Some(op) => Bits::from_bools(&op.resolve(0)),
        None => Bits::ones(m.ir_length),
    }
}

fn ir_scan(
    board: &Board,
    port: usize,
    involved: &BTreeSet<usize>,
    bystander: &dyn Fn(usize) -> Bystander,
    phase: Phase,
) -> Scan {
    let mut tdi = Bits::zeros(0);
    let mut expect = Bits::zeros(0);
    let mut mask = Bits::zeros(0);
    for &d in board.ports()[port].chain.iter().rev() {
        let op = if involved.contains(&d) {
            match phase {
                Phase::Preload => opcode(board, d, &["PRELOAD", "SAMPLE"]),
                Phase::Extest => opcode(board, d, &["EXTEST"]),
            }
        } else {
            match bystander(d) {
                Bystander::Bypass => opcode(board, d, &["BYPASS"]),
                Bystander::Sample => opcode(board, d, &["SAMPLE", "PRELOAD"]),
            }
        };
        tdi.extend(&op);
        // The IR capture pattern of each device, X bits masked (IEEE 1149.1 clause 7).
        let capture = &board.devices()[d].model().ir_capture;
        expect.extend(&Bits::from_bools(&capture.resolve(0)));
        mask.extend(&Bits::from_u64(capture.mask_u64(), capture.len()));
    }
    Scan {
        kind: ScanKind::Ir,
        tdi,
        expect: Some(expect),
        mask,
        smask: None,
        end: TapState::RunTestIdle,
    }
}

/// Bit offset of device `d` in the DR chain of `port` during the test.
fn offset_of(
    board: &Board,
    port: usize,
    d: usize,
    involved: &BTreeSet<usize>,
    bystander: &dyn Fn(usize) -> Bystander,
) -> usize {
    let mut at = 0;
    for &x in board.ports()[port].chain.iter().rev() {
        if x == d {
            return at;
        }
        at += dr_length(board, x, involved, bystander);
    }
    at
}

fn dr_length(
    board: &Board,
    d: usize,
    involved: &BTreeSet<usize>,
    bystander: &dyn Fn(usize) -> Bystander,
) -> usize {
    if involved.contains(&d) || bystander(d) == Bystander::Sample {
        board.devices()[d].model().boundary_length
    } else {
        1
    }
}

/// The DR bits of `port`: each device's vector (or bypass bit), TDO end first.
fn chain_vector(
    board: &Board,
    port: usize,
    involved: &BTreeSet<usize>,
    vectors: &[Option<Bits>],
    bystander: &dyn Fn(usize) -> Bystander,
) -> Bits {
    let mut out = Bits::zeros(0);
    for &d in board.ports()[port].chain.iter().rev() {
        match &vectors[d] {
            Some(v) => out.extend(v),
            None if bystander(d) == Bystander::Sample => out.extend(&safe_vector(board, d)),
            None => out.extend(&Bits::zeros(dr_length(board, d, involved, bystander))),
        }
    }
    out
}

/// Safe values (X as 0), every control cell at its disable value.
fn safe_vector(board: &Board, d: usize) -> Bits {
    let dev = &board.devices()[d];
    let m = dev.model();
    let mut v = Bits::zeros(m.boundary_length);
    for c in &m.cells {
        if c.safe == Some(true) {
            v.set(c.num as usize, true);
        }
    }
    for pad in dev.pads() {
        if let Some(c) = pad.control {
            v.set(c.cell as usize, c.disable_value);
        }
    }
    v
}

/// Each involved device's boundary vector for one test vector (`None` for the others).
fn device_vectors(
    board: &Board,
    involved: &BTreeSet<usize>,
    drivers: &[Driver],
    receivers: &[(usize, usize, bool, String)],
    k: usize,
) -> Result<Vec<Option<Bits>>, PatternError> {
    let mut out: Vec<Option<Bits>> = (0..board.devices().len())
        .map(|d| involved.contains(&d).then(|| safe_vector(board, d)))
        .collect();
    // Nets driven in this vector, by which pad.
    let mut driven: BTreeMap<usize, (usize, usize)> = BTreeMap::new();
    let net_of = |d: usize, p: usize| {
        board
            .nets()
            .iter()
            .position(|n| n.drivers.iter().any(|&(x, y, _)| x == d && y == p))
    };
    for dr in drivers {
        let dev = &board.devices()[dr.device];
        let pad = &dev.pads()[dr.pad];
        let Some(v) = out[dr.device].as_mut() else {
            continue;
        };
        if let Some(cell) = pad.output {
            v.set(cell as usize, dr.value);
        }
        if let Some(n) = net_of(dr.device, dr.pad) {
            if let Some(&(od, op)) = driven.get(&n).filter(|&&x| x != (dr.device, dr.pad)) {
                return Err(PatternError::Fight(format!(
                    "vector {}: two drivers asked for on net {}: {} and {}",
                    k + 1,
                    board.nets()[n].name,
                    pin_name(board, od, op),
                    pin_name(board, dr.device, dr.pad)
                )));
            }
            driven.insert(n, (dr.device, dr.pad));
        }
    }
    // Enable the named drivers; every pad sharing their control cell drives too.
    for dr in drivers {
        let dev = &board.devices()[dr.device];
        let Some(ctl) = dev.pads()[dr.pad].control else {
            continue;
        };
        if let Some(v) = out[dr.device].as_mut() {
            v.set(ctl.cell as usize, !ctl.disable_value);
        }
        for (p, sibling) in dev.pads().iter().enumerate() {
            if p == dr.pad || sibling.control.map(|c| c.cell) != Some(ctl.cell) {
                continue;
            }
            if drivers.iter().any(|x| x.device == dr.device && x.pad == p) {
                continue;
            }
            if let Some(n) = net_of(dr.device, p) {
                if let Some(&(od, op)) = driven.get(&n) {
                    return Err(PatternError::Fight(format!(
                        "vector {}: driving {} also enables {} (same control cell {}) onto net {}, which {} drives",
                        k + 1,
                        pin_name(board, dr.device, dr.pad),
                        pin_name(board, dr.device, p),
                        ctl.cell,
                        board.nets()[n].name,
                        pin_name(board, od, op)
                    )));
                }
                if let Some(r) = receivers.iter().find(|r| r.0 == dr.device && r.1 == p) {
                    return Err(PatternError::Fight(format!(
                        "vector {}: receiver {} on net {} is enabled as a driver by the control cell of {}",
                        k + 1,
                        pin_name(board, r.0, r.1),
                        r.3,
                        pin_name(board, dr.device, dr.pad)
                    )));
                }
            }
        }
    }
    Ok(out)
}

fn pin_name(board: &Board, d: usize, p: usize) -> String {
    let dev = &board.devices()[d];
    let pad = &dev.pads()[p];
    format!(
        "{}.{} ({})",
        dev.designator(),
        pad.pins.first().map(String::as_str).unwrap_or("?"),
        pad.port
    )
}
