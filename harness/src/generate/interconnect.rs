//! The interconnect test of a board: every scan-accessible net gets a code of a method, driven from one chosen driver and expected at its receivers.
//!
//! A net is *scan-accessible* when a scan cell can drive it and a scan cell
//! can read it, and it is not a power or ground rail. Each such net gets
//! the code of [`Method`] with its position; vector k drives every coded
//! net to bit k of its code from its chosen driver and expects that value at
//! every receiver. The result is a [`PatternSet`] (net level; the compiler
//! in `program::net_level` turns it into PRELOAD, EXTEST and the scans) and
//! the text of a native program holding it.
//!
//! # Choosing drivers
//!
//! Enabling a driver enables every pad that shares its control cell (a
//! *control group*; a pad with no control cell, a two-state output, is a
//! group of its own and always drives). So drivers are chosen by group, a
//! greedy pass over the nets: nets with fewer candidate drivers first (a
//! net with one candidate has no choice), then in board order; a net's
//! candidates (the first pad of each device that can drive it) are tried
//! in board order, but a driver that is the net's only receiver itself (a
//! bidirectional pad reading back its own drive) last, so that the test
//! goes through the wire where it can. A candidate is taken when every pad
//! of its group can drive too:
//!
//! - a pad on another scan-accessible net not yet coded becomes that net's
//!   driver;
//! - a pad on a net that is not coded is driven at its safe value (listed in
//!   [`InterconnectTest::safe_driven`]);
//! - refused: a pad onto a rail, onto a net a non-scan output drives, onto a
//!   net where another enabled or two-state pad already drives (this is
//!   what the compiler refuses as a shared control cell enabling a pad onto
//!   a net driven by another driver or onto a receiving pad), or two pads of
//!   the group on one net.
//!
//! A net none of whose candidates can be taken is left out, with the reason
//! for each candidate. A last check looks at the devices that take no part
//! (they wait in BYPASS or SAMPLE with their pins under system logic): a group that
//! would drive against such a device's system output is banned and the
//! choice made again.

use std::collections::{BTreeMap, BTreeSet};
use std::fmt::Write as _;

use serde::Serialize;
use virtual_board::{Board, LoadedBoard, Net, PinName, SystemDrive};

use super::methods::{code_of, codes, Method};
use super::native_write::{comment, scalar};
use super::through_clusters::{cluster_nets, ClusterNet};
use crate::program::net_level::{compile_patterns, PatternSet, Schedule, Vector};
use crate::program::PatternError;
use crate::program::{Action, Origin, Program, Step};

/// Why no interconnect test could be made.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum GenerateError {
    /// No net has both a scan driver and a scan receiver.
    #[error("the board has no net that a scan cell drives and a scan cell reads (rails aside)")]
    NoScanNets,
    /// Every scan-accessible net was left out, each for its reason.
    #[error("no scan-accessible net can be driven without a driver fight: {}", .0.iter().map(|l| format!("{}: {}", l.net, l.reason)).collect::<Vec<_>>().join("; "))]
    NothingCoded(Vec<LeftOut>),
    /// The method gives no vector for so few nets.
    #[error("the {method} method gives no vector for {}; use modified-counting", crate::count(*.nets, "net"))]
    NoVectors {
        /// The method.
        method: Method,
        /// Nets coded.
        nets: usize,
    },
}

/// A net that got a code.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct CodedNet {
    /// Net name.
    pub net: String,
    /// Its values, vector 1 first.
    pub code: Vec<bool>,
    /// The pin that drives it.
    pub driver: PinName,
    /// The TAP port of the driving device.
    pub driver_port: String,
    /// The pins that read it, with their TAP ports.
    pub receivers: Vec<(PinName, String)>,
}

/// A scan-accessible net left out of the test.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct LeftOut {
    /// Net name.
    pub net: String,
    /// Why, for each driver that was tried.
    pub reason: String,
}

/// A net not coded but driven during the test, at the pin's safe value,
/// because the pin shares a control cell with a coded net's driver.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct SafeDriven {
    /// Net name.
    pub net: String,
    /// The pin that drives it.
    pub pin: PinName,
}

/// A net no scan cell drives whose level the board file fixes (a pull
/// resistor, or a rail an input is strapped to): every vector expects that
/// level at its receivers.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct StaticNet {
    /// Net name.
    pub net: String,
    /// The level it holds.
    pub level: bool,
    /// What holds it: `pull-up`, `pull-down`, `power rail` or `ground rail`.
    pub held_by: &'static str,
    /// The pins that read it, with their TAP ports.
    pub receivers: Vec<(PinName, String)>,
}

/// A generated interconnect test.
#[derive(Clone, Debug, PartialEq)]
pub struct InterconnectTest {
    /// Board name.
    pub board: String,
    /// The method.
    pub method: Method,
    /// The coded nets, in code order (net i has code i of the method).
    pub nets: Vec<CodedNet>,
    /// Scan-accessible nets left out, with the reason.
    pub left_out: Vec<LeftOut>,
    /// Nets driven at safe values as a side effect.
    pub safe_driven: Vec<SafeDriven>,
    /// Nets checked for the level a pull or a rail gives them.
    pub static_nets: Vec<StaticNet>,
    /// Nets only non-scan parts drive, checked through them.
    pub cluster_nets: Vec<ClusterNet>,
    /// Nets no scan cell reads, coded (after `nets`, with the codes that
    /// follow) because they drive the inputs of non-scan parts whose
    /// outputs are read (`cluster_nets`).
    pub into_clusters: Vec<CodedNet>,
    /// Coded nets read back only by the cell of their own driving pin (a
    /// self-monitoring output): a stuck-at or a short shows, an open does not.
    pub read_back_at_driver: Vec<String>,
    /// Drives the test cannot avoid that may meet a device's system logic.
    pub cautions: Vec<String>,
    /// The net-level vectors.
    pub patterns: PatternSet,
    /// Every TAP port of the board (each gets a TMS reset first).
    pub ports: Vec<String>,
}

/// The caution at the head of every generated EXTEST program (comment lines).
pub(super) const CAUTION: &str =
    "#\n# CAUTION (real hardware): EXTEST drives the board's pins from the boundary cells.\n\
     # Follow the board maker's test procedures and the lock-out procedure and local\n\
     # electrical codes of the equipment the board sits in; disconnect loads that a pin\n\
     # could switch (see the board file's cautions); keep the PRELOAD before EXTEST and\n\
     # the order of the scans; power the board from a current-limited supply; handle it\n\
     # at an ESD-safe bench.\n";

type PadRef = (usize, usize);

/// Nets and the pads that would drive them.
type Drives = Vec<(usize, PadRef)>;

/// A control group: the pads one control cell enables, or one two-state pad.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
enum Group {
    Control(usize, u32),
    Always(usize, usize),
}

/// Makes the interconnect test of `board` with `method`.
///
/// # Errors
/// No scan-accessible net, none that can be driven, or a method that gives
/// no vector for the nets coded (counting with one net).
pub fn interconnect_test(board: &Board, method: Method) -> Result<InterconnectTest, GenerateError> {
    let read: Vec<usize> = (0..board.nets().len())
        .filter(|&i| scan_accessible(&board.nets()[i]))
        .collect();
    if read.is_empty() {
        return Err(GenerateError::NoScanNets);
    }
    // Nets driven into non-scan parts come after the read nets: they are
    // chosen last and take the last codes, so they change nothing of the
    // read nets' test.
    let feeders = feeder_nets(board);
    let accessible: Vec<usize> = read.iter().chain(&feeders).copied().collect();
    let mut banned: BTreeMap<Group, String> = BTreeMap::new();
    let plan = loop {
        let plan = Plan::new(board, &accessible, banned.clone())
            .later(&feeders)
            .choose();
        let bans = plan.bystander_conflicts();
        if bans.is_empty() {
            break plan;
        }
        let before = banned.len();
        for (g, why) in bans {
            banned.entry(g).or_insert(why);
        }
        if banned.len() == before {
            break plan;
        }
    };
    let order: Vec<usize> = accessible
        .iter()
        .copied()
        .filter(|m| plan.coded.contains_key(m))
        .collect();
    let left_out: Vec<LeftOut> = accessible
        .iter()
        .filter_map(|m| {
            plan.left.get(m).map(|reason| LeftOut {
                net: board.nets()[*m].name.clone(),
                reason: reason.clone(),
            })
        })
        .collect();
    if order.is_empty() {
        return Err(GenerateError::NothingCoded(left_out));
    }
    let vectors = codes(method, order.len());
    if vectors.is_empty() {
        return Err(GenerateError::NoVectors {
            method,
            nets: order.len(),
        });
    }
    let port_of = |d: usize| {
        board
            .chain_position(d)
            .map(|(p, _)| board.ports()[p].name.clone())
            .unwrap_or_default()
    };
    let pin = |d: usize, p: usize| pin_of(board, d, p);
    let mut nets: Vec<CodedNet> = order
        .iter()
        .enumerate()
        .map(|(i, &m)| {
            let (d, p) = plan.coded[&m];
            let net = &board.nets()[m];
            CodedNet {
                net: net.name.clone(),
                code: code_of(&vectors, i),
                driver: pin(d, p),
                driver_port: port_of(d),
                receivers: receivers_of(net, &port_of),
            }
        })
        .collect();
    let into_clusters = nets.split_off(nets.partition_point(|n| !n.receivers.is_empty()));
    let read_back_at_driver: Vec<String> = order
        .iter()
        .filter(|m| !board.nets()[**m].receivers.is_empty())
        .filter(|m| {
            let (d, p) = plan.coded[*m];
            board.nets()[**m]
                .receivers
                .iter()
                .all(|&(x, q, _)| (x, q) == (d, p))
        })
        .map(|&m| board.nets()[m].name.clone())
        .collect();
    let (static_index, static_nets): (Vec<usize>, Vec<StaticNet>) = board
        .nets()
        .iter()
        .enumerate()
        .filter_map(|(i, net)| {
            let (level, held_by) = static_level(net)?;
            Some((
                i,
                StaticNet {
                    net: net.name.clone(),
                    level,
                    held_by,
                    receivers: receivers_of(net, &port_of),
                },
            ))
        })
        .unzip();
    // What every coded or static net holds in each vector, by net index.
    let known: BTreeMap<usize, Vec<bool>> = order
        .iter()
        .zip(nets.iter().chain(&into_clusters))
        .map(|(&m, n)| (m, n.code.clone()))
        .chain(
            static_index
                .iter()
                .zip(&static_nets)
                .map(|(&i, n)| (i, vec![n.level; vectors.len()])),
        )
        .collect();
    let cluster_nets = cluster_nets(board, &known, vectors.len(), &port_of);
    let names: Vec<String> = nets
        .iter()
        .chain(&into_clusters)
        .map(|n| n.net.clone())
        .collect();
    let patterns = PatternSet {
        name: "interconnect".into(),
        from: order
            .iter()
            .map(|m| {
                let d = plan.coded[m].0;
                (
                    board.nets()[*m].name.clone(),
                    board.devices()[d].designator().to_string(),
                )
            })
            .collect(),
        vectors: vectors
            .iter()
            .enumerate()
            .map(|(k, v)| {
                let values: BTreeMap<String, u8> = names
                    .iter()
                    .zip(v)
                    .map(|(n, &b)| (n.clone(), u8::from(b)))
                    .collect();
                // Nets driven into non-scan parts have no receiver: they
                // are seen through the parts (`cluster_nets`).
                let mut expect: BTreeMap<String, u8> = names
                    .iter()
                    .zip(v)
                    .take(nets.len())
                    .map(|(n, &b)| (n.clone(), u8::from(b)))
                    .collect();
                expect.extend(
                    static_nets
                        .iter()
                        .map(|n| (n.net.clone(), u8::from(n.level))),
                );
                expect.extend(
                    cluster_nets
                        .iter()
                        .filter_map(|n| Some((n.net.clone(), u8::from(n.expect[k]?)))),
                );
                Vector {
                    name: Some(method.vector_name(k, &names)),
                    drive: values,
                    expect,
                }
            })
            .collect(),
        schedule: Schedule::Pipelined,
    };
    let safe_driven = plan
        .safe
        .iter()
        .map(|(&m, &(d, p))| SafeDriven {
            net: board.nets()[m].name.clone(),
            pin: pin(d, p),
        })
        .collect();
    Ok(InterconnectTest {
        board: board.name().to_string(),
        method,
        nets,
        left_out,
        safe_driven,
        static_nets,
        cluster_nets,
        into_clusters,
        read_back_at_driver,
        cautions: plan.cautions(),
        patterns,
        ports: board.ports().iter().map(|p| p.name.clone()).collect(),
    })
}

/// The pins that read `net`, with their TAP ports.
pub(super) fn receivers_of(net: &Net, port_of: &dyn Fn(usize) -> String) -> Vec<(PinName, String)> {
    net.receivers
        .iter()
        .map(|&(x, _, k)| (net.pins[k].clone(), port_of(x)))
        .collect()
}

/// Receivers as the program's comments write them: `U3.5 (J1_MAIN)`.
fn receiver_words(receivers: &[(PinName, String)]) -> Vec<String> {
    receivers
        .iter()
        .map(|(p, port)| format!("{}.{} ({port})", p.device, p.pin))
        .collect()
}

fn scan_accessible(net: &Net) -> bool {
    net.rail.is_none() && !net.drivers.is_empty() && !net.receivers.is_empty()
}

/// Nets a scan cell drives but none reads, that drive an input of a
/// non-scan part whose output goes to a net a scan cell reads and none
/// drives: what a cluster test drives.
fn feeder_nets(board: &Board) -> Vec<usize> {
    let nets = board.nets();
    let read_through = |c: &virtual_board::Cluster| {
        c.outputs.iter().any(|o| {
            o.net.is_some_and(|n| {
                let n = &nets[n as usize];
                n.rail.is_none() && n.drivers.is_empty() && !n.receivers.is_empty()
            })
        })
    };
    let mut feeders: BTreeSet<usize> = BTreeSet::new();
    for c in board.clusters().iter().filter(|c| read_through(c)) {
        for pin in &c.inputs {
            if let Some(n) = pin.net.map(|n| n as usize) {
                let net = &nets[n];
                if net.rail.is_none() && !net.drivers.is_empty() && net.receivers.is_empty() {
                    feeders.insert(n);
                }
            }
        }
    }
    feeders.into_iter().collect()
}

/// The level a net holds with no scan cell driving it, when the board file
/// fixes one: a rail, or a pull on a net that nothing else drives (no scan
/// cell, no non-scan output). A net that merely floats is not compared: its
/// level is the board's float policy, not a design fact.
fn static_level(net: &Net) -> Option<(bool, &'static str)> {
    if net.receivers.is_empty() || !net.drivers.is_empty() || !net.cluster_drivers.is_empty() {
        return None;
    }
    match (net.rail, net.pull) {
        (Some(true), _) => Some((true, "power rail")),
        (Some(false), _) => Some((false, "ground rail")),
        (None, Some(true)) => Some((true, "pull-up")),
        (None, Some(false)) => Some((false, "pull-down")),
        (None, None) => None,
    }
}

fn pin_of(board: &Board, d: usize, p: usize) -> PinName {
    let dev = &board.devices()[d];
    let pad = &dev.pads()[p];
    PinName {
        device: dev.designator().to_string(),
        pin: pad.pins.first().cloned().unwrap_or_else(|| "?".into()),
        port: pad.port.to_string(),
    }
}

/// The driver choice in progress.
struct Plan<'b> {
    board: &'b Board,
    accessible: &'b [usize],
    banned: BTreeMap<Group, String>,
    /// The net each driving pad is on (the first, as the compiler takes it).
    pad_net: BTreeMap<PadRef, usize>,
    enabled: BTreeSet<Group>,
    coded: BTreeMap<usize, PadRef>,
    safe: BTreeMap<usize, PadRef>,
    left: BTreeMap<usize, String>,
    /// Nets chosen after all others.
    later: BTreeSet<usize>,
}

impl<'b> Plan<'b> {
    fn new(board: &'b Board, accessible: &'b [usize], banned: BTreeMap<Group, String>) -> Plan<'b> {
        let mut pad_net = BTreeMap::new();
        for (i, net) in board.nets().iter().enumerate() {
            for &(d, p, _) in &net.drivers {
                pad_net.entry((d, p)).or_insert(i);
            }
        }
        Plan {
            board,
            accessible,
            banned,
            pad_net,
            enabled: BTreeSet::new(),
            coded: BTreeMap::new(),
            safe: BTreeMap::new(),
            left: BTreeMap::new(),
            later: BTreeSet::new(),
        }
    }

    /// Chooses drivers for `nets` after every other net.
    fn later(mut self, nets: &[usize]) -> Plan<'b> {
        self.later = nets.iter().copied().collect();
        self
    }

    fn group(&self, (d, p): PadRef) -> Group {
        match self.board.devices()[d].pads()[p].control {
            Some(c) => Group::Control(d, c.cell),
            None => Group::Always(d, p),
        }
    }

    fn members(&self, g: Group) -> Vec<PadRef> {
        match g {
            Group::Always(d, p) => vec![(d, p)],
            Group::Control(d, cell) => self.board.devices()[d]
                .pads()
                .iter()
                .enumerate()
                .filter(|(_, pad)| {
                    pad.output.is_some() && pad.control.is_some_and(|c| c.cell == cell)
                })
                .map(|(p, _)| (d, p))
                .collect(),
        }
    }

    fn active(&self, pad: PadRef) -> bool {
        match self.group(pad) {
            g @ Group::Control(..) => self.enabled.contains(&g),
            Group::Always(..) => true,
        }
    }

    fn pin(&self, (d, p): PadRef) -> String {
        pin_of(self.board, d, p).to_string()
    }

    /// Candidate drivers of net `m`: the first pad of each device, best first.
    fn candidates(&self, m: usize) -> Vec<PadRef> {
        let net = &self.board.nets()[m];
        let mut seen = BTreeSet::new();
        let mut out: Vec<PadRef> = net
            .drivers
            .iter()
            .filter(|(d, _, _)| seen.insert(*d))
            .map(|&(d, p, _)| (d, p))
            .collect();
        // Prefer a driver whose net has receivers besides the driving pad.
        let others = |c: &PadRef| {
            net.receivers
                .iter()
                .filter(|&&(d, p, _)| (d, p) != *c)
                .count()
        };
        out.sort_by_key(|c| usize::from(others(c) == 0));
        out
    }

    /// The nets group `g` (enabled for candidate `c`) would code and drive
    /// at safe values, or why it cannot be enabled.
    fn try_enable(&self, g: Group, c: PadRef) -> Result<(Drives, Drives), String> {
        let pads = self.members(g);
        let mut coded = Vec::new();
        let mut safe = Vec::new();
        let mut nets_seen: BTreeMap<usize, PadRef> = BTreeMap::new();
        // What enabling does to pad q, in words.
        let act = |q: PadRef| match g {
            Group::Control(_, cell) if q != c => format!(
                "would also enable {} (shared control cell {cell}) and drive",
                self.pin(q)
            ),
            _ => "would drive".to_string(),
        };
        for &q in &pads {
            let Some(&m) = self.pad_net.get(&q) else {
                continue;
            };
            let net = &self.board.nets()[m];
            if let Some(&other) = nets_seen.get(&m) {
                return Err(format!(
                    "would enable {} and {} together (one control cell), both on net {}",
                    self.pin(other),
                    self.pin(q),
                    net.name
                ));
            }
            nets_seen.insert(m, q);
            if let Some(v) = net.rail {
                return Err(format!(
                    "{} the {} rail {}",
                    act(q),
                    if v { "power" } else { "ground" },
                    net.name
                ));
            }
            if let Some(&(k, o)) = net.cluster_drivers.first() {
                let cl = &self.board.clusters()[k];
                return Err(format!(
                    "{} net {} against the non-scan output {}.{}",
                    act(q),
                    net.name,
                    cl.name,
                    cl.outputs[o].name
                ));
            }
            if let Some(&(x, y, _)) = net
                .drivers
                .iter()
                .find(|&&(x, y, _)| (x, y) != q && self.group((x, y)) != g && self.active((x, y)))
            {
                return Err(format!(
                    "{} net {}, which {} drives",
                    act(q),
                    net.name,
                    self.pin((x, y))
                ));
            }
            // The compiler drives a net from the first pad of the named device.
            let first = net
                .drivers
                .iter()
                .find(|&&(x, _, _)| x == q.0)
                .map(|&(x, y, _)| (x, y));
            let open = self.accessible.contains(&m)
                && !self.left.contains_key(&m)
                && !self.coded.contains_key(&m);
            if open && first != Some(q) {
                return Err(format!(
                    "{} net {}, which {} of the same device is also on",
                    act(q),
                    net.name,
                    self.pin(first.unwrap_or(q))
                ));
            }
            if open {
                coded.push((m, q));
            } else if !self.coded.contains_key(&m) {
                safe.push((m, q));
            }
        }
        Ok((coded, safe))
    }

    fn choose(mut self) -> Plan<'b> {
        let mut order: Vec<(bool, usize, usize)> = self
            .accessible
            .iter()
            .map(|&m| (self.later.contains(&m), self.candidates(m).len(), m))
            .collect();
        order.sort();
        for (_, _, m) in order {
            if self.coded.contains_key(&m) || self.left.contains_key(&m) {
                continue;
            }
            let net = &self.board.nets()[m];
            let always: Vec<PadRef> = net
                .drivers
                .iter()
                .map(|&(d, p, _)| (d, p))
                .filter(|&pad| matches!(self.group(pad), Group::Always(..)))
                .collect();
            if always.len() > 1 {
                let pins: Vec<String> = always.iter().map(|&q| self.pin(q)).collect();
                self.left.insert(
                    m,
                    format!(
                        "outputs without a control cell fight on it: {}",
                        pins.join(", ")
                    ),
                );
                continue;
            }
            let candidates = if always.is_empty() {
                self.candidates(m)
            } else {
                always
            };
            let mut reasons = Vec::new();
            let mut taken = false;
            for c in candidates {
                let g = self.group(c);
                if let Some(why) = self.banned.get(&g) {
                    reasons.push(format!(
                        "driving it from {} is ruled out: {why}",
                        self.pin(c)
                    ));
                    continue;
                }
                match self.try_enable(g, c) {
                    Ok((coded, safe)) if coded.contains(&(m, c)) => {
                        self.enabled.insert(g);
                        self.coded.extend(coded);
                        self.safe.extend(safe);
                        taken = true;
                        break;
                    }
                    Ok(_) => reasons.push(format!("{} drives another net first", self.pin(c))),
                    Err(why) => reasons.push(format!("driving it from {} {why}", self.pin(c))),
                }
            }
            if !taken {
                self.left.insert(m, reasons.join("; "));
            }
        }
        self
    }

    /// Devices taking part: the drivers, and the receivers of coded nets.
    fn involved(&self) -> BTreeSet<usize> {
        let mut out: BTreeSet<usize> = self.coded.values().map(|p| p.0).collect();
        for &m in self.coded.keys() {
            out.extend(self.board.nets()[m].receivers.iter().map(|r| r.0));
        }
        out
    }

    /// Pads that drive during the test on nets where a device taking no part
    /// drives from its system logic: (pad, bystander pad, net).
    fn against_bystanders(&self) -> Vec<(PadRef, PadRef, usize)> {
        let involved = self.involved();
        let mut out = Vec::new();
        for (m, net) in self.board.nets().iter().enumerate() {
            let drivers: Vec<PadRef> = net.drivers.iter().map(|&(d, p, _)| (d, p)).collect();
            let ours = drivers
                .iter()
                .copied()
                .filter(|&q| involved.contains(&q.0) && self.active(q));
            for q in ours {
                for &b in &drivers {
                    let system = self.board.devices()[b.0].system().get(b.1).copied();
                    if !involved.contains(&b.0)
                        && !matches!(
                            system,
                            Some(SystemDrive::Off | SystemDrive::OffData(_)) | None
                        )
                    {
                        out.push((q, b, m));
                    }
                }
            }
        }
        out
    }

    fn bystander_conflicts(&self) -> Vec<(Group, String)> {
        self.against_bystanders()
            .into_iter()
            .filter_map(|(q, b, m)| match self.group(q) {
                g @ Group::Control(..) => Some((
                    g,
                    format!(
                        "{} takes no part in the test, so its pins stay under system logic, and it drives net {} through {}",
                        self.board.devices()[b.0].designator(),
                        self.board.nets()[m].name,
                        self.pin(b)
                    ),
                )),
                Group::Always(..) => None,
            })
            .collect()
    }

    fn cautions(&self) -> Vec<String> {
        self.against_bystanders()
            .into_iter()
            .filter(|&(q, _, _)| matches!(self.group(q), Group::Always(..)))
            .map(|(q, b, m)| {
                format!(
                    "net {}: the two-state output {} drives its safe value while {} drives it from system logic",
                    self.board.nets()[m].name,
                    self.pin(q),
                    self.pin(b)
                )
            })
            .collect()
    }
}

impl InterconnectTest {
    /// Number of vectors.
    pub fn vector_count(&self) -> usize {
        self.patterns.vectors.len()
    }

    /// The program: a TMS reset per TAP port, then the compiled patterns.
    ///
    /// # Errors
    /// [`PatternError`] when the patterns do not fit `loaded` (a board
    /// other than the one the test was made for).
    pub fn program(&self, loaded: &LoadedBoard) -> Result<Program, PatternError> {
        self.program_with(loaded, &self.program_name(), &self.patterns)
    }

    /// A program of other vectors over the same nets and drivers (a
    /// follow-up test): a TMS reset per TAP port, then `patterns` compiled.
    ///
    /// # Errors
    /// [`PatternError`] when the patterns do not fit `loaded`.
    pub fn program_with(
        &self,
        loaded: &LoadedBoard,
        name: &str,
        patterns: &PatternSet,
    ) -> Result<Program, PatternError> {
        let mut steps: Vec<Step> = self
            .ports
            .iter()
            .map(|p| Step {
                port: p.clone(),
                action: Action::ResetTms,
                origin: Origin {
                    note: "reset".into(),
                    ..Origin::default()
                },
            })
            .collect();
        steps.extend(compile_patterns(patterns, loaded)?);
        Ok(Program {
            name: name.to_string(),
            frequency: None,
            tck_stops_high: false,
            steps,
        })
    }

    fn program_name(&self) -> String {
        format!("{} interconnect ({})", self.board, self.method)
    }

    /// The test as a native program: comments with the code table, the nets
    /// left out and the cautions, a TMS reset per TAP port, then `patterns:`.
    pub fn native_yaml(&self) -> String {
        let mut t = String::new();
        let _ = writeln!(
            t,
            "# Interconnect test of {}, generated by `boardtwin generate --method {}`.",
            comment(&self.board),
            self.method
        );
        let _ = writeln!(t, "#");
        for line in wrap(&format!("Method: {}.", self.method.describe()), 88) {
            let _ = writeln!(t, "# {line}");
        }
        let _ = writeln!(
            t,
            "# {} nets coded, {} vectors. The harness works out the instructions, the PRELOAD\n\
             # before EXTEST, every boundary bit and the order of the TAP ports.\n#\n\
             # code: the level each vector drives the net to, vector 1 first{}.\n#",
            self.nets.len() + self.into_clusters.len(),
            self.vector_count(),
            if self.method.is_counting() {
                "; value: the\n# code as a number, vector 1 its least significant bit"
            } else {
                ""
            }
        );
        let width = self
            .nets
            .iter()
            .map(|n| n.net.len())
            .max()
            .unwrap_or(3)
            .max(3);
        let code_width = self.vector_count().max(4);
        let _ = writeln!(
            t,
            "#   {:<width$}  {:<code_width$}  {}driven by -> received by",
            "net",
            "code",
            if self.method.is_counting() {
                "value  "
            } else {
                ""
            }
        );
        for n in self.nets.iter().chain(&self.into_clusters) {
            let code: String = n.code.iter().map(|&b| if b { '1' } else { '0' }).collect();
            let value = if self.method.is_counting() {
                let v = n
                    .code
                    .iter()
                    .take(self.method_bits())
                    .enumerate()
                    .fold(0u64, |acc, (k, &b)| acc | (u64::from(b) << k));
                format!("{v:>5}  ")
            } else {
                String::new()
            };
            let mut receivers = receiver_words(&n.receivers);
            if receivers.is_empty() {
                receivers.push("non-scan parts (below)".into());
            }
            let _ = writeln!(
                t,
                "#   {:<width$}  {:<code_width$}  {value}{}.{} ({}) -> {}",
                comment(&n.net),
                code,
                n.driver.device,
                n.driver.pin,
                n.driver_port,
                receivers.join(", ")
            );
        }
        if !self.left_out.is_empty() {
            let _ = writeln!(
                t,
                "#\n# Left out (no driver that does not make another fight):"
            );
            for l in &self.left_out {
                for (k, line) in wrap(&format!("{}: {}", l.net, l.reason), 86)
                    .into_iter()
                    .enumerate()
                {
                    let _ = writeln!(
                        t,
                        "#   {}{}",
                        if k == 0 { "" } else { "  " },
                        comment(&line)
                    );
                }
            }
        }
        if !self.safe_driven.is_empty() {
            let list: Vec<String> = self
                .safe_driven
                .iter()
                .map(|s| format!("{} ({}.{})", s.net, s.pin.device, s.pin.pin))
                .collect();
            let _ = writeln!(
                t,
                "#\n# Also driven, at their safe values, because their pins share a control cell\n\
                 # with a coded net's driver (nothing is compared on them):"
            );
            for line in wrap(&list.join(", "), 86) {
                let _ = writeln!(t, "#   {}", comment(&line));
            }
        }
        if !self.static_nets.is_empty() {
            let _ = writeln!(
                t,
                "#\n# Static nets: no scan cell drives them; every vector expects the level their\n\
                 # pull or rail gives (a constant code, which no coded net gets):"
            );
            for n in &self.static_nets {
                let receivers = receiver_words(&n.receivers);
                let line = format!(
                    "{}: {} ({}) -> {}",
                    n.net,
                    u8::from(n.level),
                    n.held_by,
                    receivers.join(", ")
                );
                for line in wrap(&line, 86) {
                    let _ = writeln!(t, "#   {}", comment(&line));
                }
            }
        }
        if !self.cluster_nets.is_empty() {
            let _ = writeln!(
                t,
                "#\n# Through non-scan parts: the level each vector gives the part's output, from\n\
                 # its truth table and the levels on its inputs (- = not compared: it floats):"
            );
            for n in &self.cluster_nets {
                let code: String = n
                    .expect
                    .iter()
                    .map(|b| match b {
                        Some(true) => '1',
                        Some(false) => '0',
                        None => '-',
                    })
                    .collect();
                let receivers = receiver_words(&n.receivers);
                let line = format!(
                    "{}: {code} through {} -> {}",
                    n.net,
                    n.through.join(", "),
                    receivers.join(", ")
                );
                for line in wrap(&line, 86) {
                    let _ = writeln!(t, "#   {}", comment(&line));
                }
            }
        }
        if !self.read_back_at_driver.is_empty() {
            let _ = writeln!(
                t,
                "#\n# Read back at the driver only (opens not detectable; stuck-ats and shorts are):"
            );
            for line in wrap(&self.read_back_at_driver.join(", "), 86) {
                let _ = writeln!(t, "#   {}", comment(&line));
            }
        }
        for c in &self.cautions {
            let _ = writeln!(t, "# WARNING: {}", comment(c));
        }
        t.push_str(CAUTION);
        self.write_body(&mut t, &self.program_name(), &self.patterns);
        t
    }

    /// `name:`, a TMS reset per TAP port and the `patterns:` block of
    /// `patterns` (the nets in code order, each with its driver).
    pub(super) fn write_body(&self, t: &mut String, name: &str, patterns: &PatternSet) {
        let _ = writeln!(t, "name: {}", scalar(name));
        t.push_str("steps:\n");
        for p in &self.ports {
            let _ = writeln!(t, "  - {{ port: {}, reset: tms }}", scalar(p));
        }
        t.push_str("  - patterns:\n");
        let _ = writeln!(t, "      name: {}", scalar(&patterns.name));
        let _ = writeln!(t, "      scans: {}", patterns.schedule);
        t.push_str("      from:\n");
        for n in self.nets.iter().chain(&self.into_clusters) {
            let _ = writeln!(
                t,
                "        {}: {}",
                scalar(&n.net),
                scalar(&self.patterns.from[&n.net])
            );
        }
        t.push_str("      vectors:\n");
        for v in &patterns.vectors {
            let _ = writeln!(
                t,
                "        - name: {}",
                scalar(v.name.as_deref().unwrap_or_default())
            );
            for (key, map) in [("drive", &v.drive), ("expect", &v.expect)] {
                let statics = self.static_nets.iter().map(|n| &n.net);
                let through = self.cluster_nets.iter().map(|n| &n.net);
                let feeders = self.into_clusters.iter().map(|n| &n.net);
                let items: Vec<String> = self
                    .nets
                    .iter()
                    .map(|n| &n.net)
                    .chain(feeders.filter(|_| key == "drive"))
                    .chain(statics.chain(through).filter(|_| key == "expect"))
                    .filter_map(|n| Some(format!("{}: {}", scalar(n), map.get(n)?)))
                    .collect();
                let lead = format!("          {key}: {{ ");
                let _ = writeln!(t, "{}", flow_lines(&lead, &items, 100));
            }
        }
    }

    /// Bits of the binary code (the first half of true/complement).
    fn method_bits(&self) -> usize {
        match self.method {
            Method::TrueComplement => self.vector_count() / 2,
            _ => self.vector_count(),
        }
    }

    /// A few lines for the command's summary on stderr.
    pub fn summary(&self) -> String {
        let mut s = format!(
            "{}: {} coded, {} vectors ({})\n",
            self.board,
            plural(self.nets.len() + self.into_clusters.len(), "net"),
            self.vector_count(),
            self.method
        );
        if self.left_out.is_empty() {
            s.push_str("no scan-accessible net left out\n");
        } else {
            let _ = writeln!(
                s,
                "{} left out:",
                plural(self.left_out.len(), "scan-accessible net")
            );
            for l in &self.left_out {
                let _ = writeln!(s, "  {}: {}", l.net, l.reason);
            }
        }
        if !self.read_back_at_driver.is_empty() {
            let _ = writeln!(
                s,
                "{} read back at the driver only, opens not detectable: {}",
                plural(self.read_back_at_driver.len(), "coded net"),
                self.read_back_at_driver.join(", ")
            );
        }
        if !self.static_nets.is_empty() {
            let _ = writeln!(
                s,
                "{} checked at the level of their pull or rail",
                plural(self.static_nets.len(), "static net")
            );
        }
        if !self.cluster_nets.is_empty() {
            let _ = writeln!(
                s,
                "{} checked through non-scan parts, driven by {} more coded {}",
                plural(self.cluster_nets.len(), "net"),
                self.into_clusters.len(),
                if self.into_clusters.len() == 1 {
                    "net"
                } else {
                    "nets"
                }
            );
        }
        if !self.safe_driven.is_empty() {
            let _ = writeln!(
                s,
                "{} driven at safe values through shared control cells",
                plural(self.safe_driven.len(), "uncoded net")
            );
        }
        for c in &self.cautions {
            let _ = writeln!(s, "warning: {c}");
        }
        s
    }
}

fn plural(n: usize, what: &str) -> String {
    format!("{n} {what}{}", if n == 1 { "" } else { "s" })
}

/// A YAML flow mapping over several lines: `lead` then the items, wrapped
/// before `width` columns, continuation lines indented under the first item.
fn flow_lines(lead: &str, items: &[String], width: usize) -> String {
    let indent = " ".repeat(lead.len());
    let mut out = lead.to_string();
    let mut col = lead.len();
    for (k, item) in items.iter().enumerate() {
        let piece = if k + 1 == items.len() {
            format!("{item} }}")
        } else {
            format!("{item},")
        };
        if col > lead.len() && col + 1 + piece.len() > width {
            out.push('\n');
            out.push_str(&indent);
            col = indent.len();
        } else if col > lead.len() {
            out.push(' ');
            col += 1;
        }
        out.push_str(&piece);
        col += piece.len();
    }
    if items.is_empty() {
        out.push('}');
    }
    out
}

/// Words wrapped to lines of at most `width` characters.
pub(super) fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.len() + 1 + word.len() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flow_maps_wrap_under_the_first_item() {
        let items: Vec<String> = (0..4).map(|i| format!("N{i}: 1")).collect();
        assert_eq!(
            flow_lines("x: { ", &items, 20),
            "x: { N0: 1, N1: 1,\n     N2: 1, N3: 1 }"
        );
        let one = vec!["A: 0".to_string()];
        assert_eq!(flow_lines("x: { ", &one, 20), "x: { A: 0 }");
    }

    #[test]
    fn words_wrap() {
        assert_eq!(wrap("aa bb cc", 5), vec!["aa bb", "cc"]);
    }
}
