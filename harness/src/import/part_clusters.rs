//! Every fitted instance of a part the part table defines → clusters (one
//! per gate, one per series resistor element) and pull candidates (a
//! resistor element between a signal net and a rail), each with where it
//! came from; what cannot be modelled is said, placed where possible.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::{BTreeMap, BTreeSet, HashMap};

use serde::Serialize;
use virtual_board::PathStep;

use super::assembly::AssemblySource;
use super::netlist::{Netlist, Notice};
use super::part_table::{
    designator_matches, is_pattern, PartDef, PartKind, PartNumberOf, PartTable,
};
use super::plan::PlannedPull;

/// A cluster made from the part table.
#[derive(Clone, Debug, Serialize, PartialEq, Eq)]
pub struct PlannedCluster {
    /// Its name in the board file: the designator, or `DESIGNATOR_N` for
    /// gate (or element) N of a part with several.
    pub name: String,
    /// Designator of the part.
    pub designator: String,
    /// Part number.
    pub part: String,
    /// The board file's entry (a mapping, `kind` first).
    pub entry: serde_yaml::Value,
    /// The nets it names.
    pub nets: Vec<String>,
    /// Where it came from, in words.
    pub origin: String,
}

/// What the board knows that the part table needs.
pub(super) struct PartInputs<'a> {
    /// The netlist.
    pub netlist: &'a Netlist,
    /// Fitted designator → its records (net index, pin index).
    pub parts: &'a BTreeMap<&'a str, Vec<(usize, usize)>>,
    /// Part number of each designator that has one.
    pub numbers: &'a BTreeMap<String, PartNumberOf>,
    /// The table.
    pub table: &'a PartTable,
    /// Designators the table must leave alone (scan devices, TAP
    /// connectors, clusters given by hand).
    pub skip: &'a dyn Fn(&str) -> bool,
    /// Rails: net name → power (true) or ground.
    pub rail_of: &'a HashMap<&'a str, bool>,
    /// TAP wiring nets (by index).
    pub tap_nets: &'a BTreeSet<usize>,
    /// Nets a scan cell can drive (by index).
    pub scan_driven: &'a BTreeSet<usize>,
}

/// What the part table gave.
#[derive(Debug, Default)]
pub(super) struct PartOutcome {
    /// Clusters, by designator then gate.
    pub clusters: Vec<PlannedCluster>,
    /// Pull candidates, each with the guess that explains it.
    pub pulls: Vec<PlannedPull>,
    /// Designators the table modelled, wholly or in part.
    pub handled: BTreeSet<String>,
    /// Designators of table parts of which nothing could be modelled → why.
    pub left: BTreeMap<String, String>,
    /// Warnings, placed.
    pub warnings: Vec<Notice>,
    /// Decisions made, in words.
    pub guesses: Vec<String>,
}

/// Expands every instance of a table part; also warns of `part_numbers`
/// entries that name no designator of the netlist.
pub(super) fn expand(inp: &PartInputs<'_>, asm: &AssemblySource) -> PartOutcome {
    let mut out = PartOutcome::default();
    let n = inp.netlist;
    let note_at = |line: u32, column: u32, text: String| Notice {
        path: n.path.clone(),
        line,
        column,
        text,
    };
    // Entries of `part_numbers` that reach nothing.
    for (key, number) in &asm.assembly.part_numbers {
        let hits = if is_pattern(key) {
            inp.parts.keys().any(|d| designator_matches(key, d))
        } else {
            inp.parts.contains_key(key.as_str())
        };
        if !hits {
            let s = asm.span_at(&[PathStep::Key("part_numbers"), PathStep::Key(key)]);
            out.warnings.push(Notice {
                path: asm.path.clone(),
                line: s.line,
                column: s.column,
                text: if is_pattern(key) {
                    format!("pattern `{key}` matches no fitted part of the netlist")
                } else {
                    format!("{key} has part number {number} but is on no net of the netlist (or not fitted)")
                },
            });
        }
    }
    // The instances: designator → (part, definition, pin → net).
    struct Instance<'a> {
        des: &'a str,
        number: &'a PartNumberOf,
        def: &'a PartDef,
        net_of: BTreeMap<&'a str, usize>,
        line: u32,
        column: u32,
    }
    let mut instances: Vec<Instance<'_>> = Vec::new();
    for (des, recs) in inp.parts {
        if (inp.skip)(des) {
            continue;
        }
        let Some(number) = inp.numbers.get(*des) else {
            continue;
        };
        let Some(tp) = inp.table.parts.get(&number.number) else {
            continue;
        };
        // Its first record in the file, for placing what is said of it.
        let Some(first) = recs
            .iter()
            .map(|&(ni, k)| &n.nets[ni].pins[k])
            .min_by_key(|p| (p.line, p.column))
        else {
            continue;
        };
        let mut net_of = BTreeMap::new();
        for &(ni, k) in recs {
            let p = &n.nets[ni].pins[k];
            if tp.def.pins.has(&p.pin) {
                net_of.insert(p.pin.as_str(), ni);
            } else {
                out.warnings.push(note_at(
                    p.line,
                    p.column,
                    format!(
                        "pin {des}-{} (net {}) is not a pin of part {} ({}): left out",
                        p.pin,
                        n.nets[ni].name,
                        number.number,
                        tp.def.pins.describe()
                    ),
                ));
            }
        }
        instances.push(Instance {
            des,
            number,
            def: &tp.def,
            net_of,
            line: first.line,
            column: first.column,
        });
    }

    // Gates first: their outputs drive nets that resistor elements may lead on.
    let mut part_driven: BTreeSet<usize> = BTreeSet::new();
    let mut made: BTreeMap<&str, usize> = BTreeMap::new();
    let mut why: BTreeMap<&str, Vec<String>> = BTreeMap::new();
    for inst in instances
        .iter()
        .filter(|i| i.def.kind != PartKind::Resistors)
    {
        let (des, def) = (inst.des, inst.def);
        for (g, gate) in def.gates.iter().enumerate() {
            let label = format!("{des} gate {} ({})", g + 1, inst.number.number);
            let roles = gate.given();
            let outputs: &[&str] = if def.kind == PartKind::Transceiver {
                &["a", "b"]
            } else {
                &["y"]
            };
            let nets: Vec<(String, &str, Option<usize>)> = roles
                .iter()
                .map(|(r, p)| {
                    (
                        r.clone(),
                        p.0.as_str(),
                        inst.net_of.get(p.0.as_str()).copied(),
                    )
                })
                .collect();
            if nets.iter().all(|(_, _, x)| x.is_none()) {
                out.guesses.push(format!(
                    "{label}: no pin on a net, an unused gate: not modelled"
                ));
                why.entry(des)
                    .or_default()
                    .push("its gates are on no net".into());
                continue;
            }
            let open_out: Vec<&str> = nets
                .iter()
                .filter(|(r, _, x)| outputs.contains(&r.as_str()) && x.is_none())
                .map(|(_, p, _)| *p)
                .collect();
            if !open_out.is_empty() {
                out.guesses.push(format!(
                    "{label}: output pin {} on no net, an unused gate: not modelled",
                    open_out.join(", ")
                ));
                why.entry(des).or_default().push("outputs on no net".into());
                continue;
            }
            if let Some((r, p, _)) = nets.iter().find(|(_, _, x)| x.is_none()) {
                out.warnings.push(note_at(
                    inst.line,
                    inst.column,
                    format!("{label}: its {r} pin {p} is on no net, so the gate cannot be evaluated: not modelled"),
                ));
                why.entry(des)
                    .or_default()
                    .push(format!("{r} pin {p} on no net"));
                continue;
            }
            let bad_out = nets.iter().find(|(r, _, x)| {
                x.is_some_and(|i| {
                    inp.tap_nets.contains(&i)
                        || (outputs.contains(&r.as_str())
                            && inp.rail_of.contains_key(n.nets[i].name.as_str()))
                })
            });
            if let Some((r, p, Some(i))) = bad_out {
                let what = if inp.tap_nets.contains(i) {
                    "TAP wiring (the import follows TAP nets through scan devices only)"
                } else {
                    "a rail"
                };
                out.warnings.push(note_at(
                    inst.line,
                    inst.column,
                    format!(
                        "{label}: its {r} pin {p} is on net {}, {what}: not modelled",
                        n.nets[*i].name
                    ),
                ));
                why.entry(des).or_default().push(format!("a pin on {what}"));
                continue;
            }
            let name = if def.gates.len() == 1 {
                des.to_string()
            } else {
                format!("{des}_{}", g + 1)
            };
            let net = |r: &str| {
                nets.iter()
                    .find(|(x, _, _)| x == r)
                    .and_then(|(_, _, i)| *i)
                    .map(|i| n.nets[i].name.clone())
            };
            let mut entry = Entry::new(def.kind.word());
            for key in ["a", "b"] {
                if let Some(v) = net(key) {
                    entry.net(key, v);
                }
            }
            if !gate.inputs.is_empty() {
                let ins: Vec<String> = (1..=gate.inputs.len())
                    .filter_map(|k| net(&format!("in{k}")))
                    .collect();
                entry.nets_list("inputs", ins);
            }
            for key in ["enable", "dir"] {
                if let Some(v) = net(key) {
                    entry.net(key, v);
                }
            }
            if matches!(def.kind, PartKind::ThreeState | PartKind::Transceiver) {
                if let Some(l) = def.enable_active {
                    entry.word("enable_active", l.word());
                }
            }
            if def.kind == PartKind::Transceiver {
                if let Some(l) = def.a_to_b {
                    entry.word("a_to_b", l.word());
                }
            }
            if let Some(v) = net("y") {
                entry.net("y", v);
            }
            for (r, _, i) in &nets {
                if outputs.contains(&r.as_str()) {
                    part_driven.extend(*i);
                }
            }
            let pins: Vec<String> = roles.iter().map(|(r, p)| format!("{r} {p}")).collect();
            out.clusters.push(PlannedCluster {
                name,
                designator: des.to_string(),
                part: inst.number.number.clone(),
                entry: entry.map,
                nets: entry.nets,
                origin: format!(
                    "{label}, pins {}; part number from {}",
                    pins.join(", "),
                    inst.number.origin
                ),
            });
            *made.entry(des).or_default() += 1;
        }
    }

    // Resistor elements.
    for inst in instances
        .iter()
        .filter(|i| i.def.kind == PartKind::Resistors)
    {
        let (des, def) = (inst.des, inst.def);
        let several = def.elements.len() > 1;
        for (e, [p, q]) in def.elements.iter().enumerate() {
            let label = if several {
                format!(
                    "{des} element {} ({}, pins {p}–{q})",
                    e + 1,
                    inst.number.number
                )
            } else {
                format!("{des} ({}, pins {p}–{q})", inst.number.number)
            };
            let (x, y) = (
                inst.net_of.get(p.0.as_str()).copied(),
                inst.net_of.get(q.0.as_str()).copied(),
            );
            let (Some(x), Some(y)) = (x, y) else {
                if let Some(end) = x.or(y) {
                    if inp.rail_of.contains_key(n.nets[end].name.as_str()) {
                        // A bussed pack's spare element: only its common pin is wired.
                        out.guesses.push(format!(
                            "{label}: only the end on rail {} is wired, a spare element: not modelled",
                            n.nets[end].name
                        ));
                    } else {
                        out.warnings.push(note_at(
                            inst.line,
                            inst.column,
                            format!("{label} has one end unconnected: not modelled"),
                        ));
                    }
                    why.entry(des)
                        .or_default()
                        .push("one end unconnected".into());
                }
                continue;
            };
            let (nx, ny) = (&n.nets[x].name, &n.nets[y].name);
            let (rx, ry) = (
                inp.rail_of.get(nx.as_str()).copied(),
                inp.rail_of.get(ny.as_str()).copied(),
            );
            if x == y {
                why.entry(des)
                    .or_default()
                    .push("both ends on one net".into());
                continue;
            }
            match (rx, ry) {
                (Some(_), Some(_)) => {
                    why.entry(des).or_default().push("between two rails".into());
                }
                (Some(up), None) | (None, Some(up)) => {
                    let (sig, rail) = if rx.is_some() { (y, x) } else { (x, y) };
                    *made.entry(des).or_default() += 1;
                    if inp.tap_nets.contains(&sig) {
                        continue; // a pull on TAP wiring: the port's business
                    }
                    let first = &n.nets[sig].pins[0];
                    out.pulls.push(PlannedPull {
                        net: n.nets[sig].name.clone(),
                        up,
                        resistor: if several {
                            format!("{des} element {}", e + 1)
                        } else {
                            des.to_string()
                        },
                        rail: n.nets[rail].name.clone(),
                        line: first.line,
                    });
                }
                (None, None) => {
                    let driven =
                        |i: usize| inp.scan_driven.contains(&i) || part_driven.contains(&i);
                    let (a, b) = match (driven(x), driven(y)) {
                        (true, false) => (nx, ny),
                        (false, true) => (ny, nx),
                        (dx, _) => {
                            let both = if dx { "both driven" } else { "neither driven" };
                            out.guesses.push(format!(
                                "{label}: a series resistor between {nx} and {ny}, {both} by a scan cell or a modelled part, so its direction is unknown: not modelled"
                            ));
                            why.entry(des).or_default().push(format!("series, {both}"));
                            continue;
                        }
                    };
                    out.clusters.push(PlannedCluster {
                        name: if several {
                            format!("{des}_{}", e + 1)
                        } else {
                            des.to_string()
                        },
                        designator: des.to_string(),
                        part: inst.number.number.clone(),
                        entry: {
                            let mut m = Entry::new("resistor");
                            m.net("a", a.clone());
                            m.net("b", b.clone());
                            m.map
                        },
                        nets: vec![a.clone(), b.clone()],
                        origin: format!(
                            "{label}, a series resistor from the driven side {a}; part number from {}",
                            inst.number.origin
                        ),
                    });
                    *made.entry(des).or_default() += 1;
                }
            }
        }
    }
    for inst in &instances {
        if made.contains_key(inst.des) {
            out.handled.insert(inst.des.to_string());
        } else {
            let mut reasons = why.remove(inst.des).unwrap_or_default();
            reasons.sort();
            reasons.dedup();
            let text = if reasons.is_empty() {
                "none of its pins is on a net".to_string()
            } else {
                reasons.join("; ")
            };
            out.left.insert(
                inst.des.to_string(),
                format!("in the part table, nothing modelled: {text}"),
            );
        }
    }
    out
}

/// A board-file cluster entry being built, and the nets it names.
struct Entry {
    map: serde_yaml::Value,
    nets: Vec<String>,
}

impl Entry {
    fn new(kind: &str) -> Entry {
        let mut e = Entry {
            map: serde_yaml::Value::Mapping(serde_yaml::Mapping::new()),
            nets: Vec::new(),
        };
        e.word("kind", kind);
        e
    }

    fn put(&mut self, key: &str, v: serde_yaml::Value) {
        if let serde_yaml::Value::Mapping(m) = &mut self.map {
            m.insert(serde_yaml::Value::String(key.into()), v);
        }
    }

    fn word(&mut self, key: &str, w: &str) {
        self.put(key, serde_yaml::Value::String(w.into()));
    }

    fn net(&mut self, key: &str, n: String) {
        self.nets.push(n.clone());
        self.put(key, serde_yaml::Value::String(n));
    }

    fn nets_list(&mut self, key: &str, ns: Vec<String>) {
        self.nets.extend(ns.iter().cloned());
        let seq = ns.into_iter().map(serde_yaml::Value::String).collect();
        self.put(key, serde_yaml::Value::Sequence(seq));
    }
}
