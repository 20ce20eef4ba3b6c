//! The fault universe of a board: the single defects a campaign simulates.

use std::collections::{BTreeSet, HashMap};

use serde::{Deserialize, Serialize};
use virtual_board::{DefectSpec, LoadedBoard, PackageStyle};

use super::pad_geometry::device_neighbours;

/// A class of faults, switched on or off as a whole.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FaultClass {
    /// A net stuck at 0 or 1.
    Stuck,
    /// A whole net cut from its drivers.
    OpenNet,
    /// One receiving pin lifted from its net.
    OpenPin,
    /// A solder bridge between physically adjacent pins of one package.
    AdjacentShort,
    /// A short between any two nets (on request: N² faults).
    AnyShort,
    /// Broken links, stuck TDO, TMS or TCK open, TRST* stuck.
    Chain,
    /// A non-scan part's pin stuck or open.
    ClusterPin,
}

impl FaultClass {
    /// Every class, in report order.
    pub const ALL: [FaultClass; 7] = [
        FaultClass::Stuck,
        FaultClass::OpenNet,
        FaultClass::OpenPin,
        FaultClass::AdjacentShort,
        FaultClass::AnyShort,
        FaultClass::Chain,
        FaultClass::ClusterPin,
    ];

    /// The name used on the command line and in reports.
    pub fn name(self) -> &'static str {
        match self {
            FaultClass::Stuck => "stuck",
            FaultClass::OpenNet => "open-net",
            FaultClass::OpenPin => "open-pin",
            FaultClass::AdjacentShort => "adjacent-short",
            FaultClass::AnyShort => "any-short",
            FaultClass::Chain => "chain",
            FaultClass::ClusterPin => "cluster-pin",
        }
    }

    /// Parses a class name.
    pub fn parse(name: &str) -> Option<FaultClass> {
        FaultClass::ALL.into_iter().find(|c| c.name() == name)
    }
}

/// One fault of the universe.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Fault {
    /// Its class.
    pub class: FaultClass,
    /// The defect, in the defect-list format.
    pub defect: DefectSpec,
    /// In repair words.
    pub label: String,
    /// When set, no scan cell can see the fault: why.
    pub untestable: Option<String>,
}

/// Adjacent pins of one package, read from the pin names: numbered pins of a
/// leaded package neighbour the next number (common practice: bridges form
/// between adjacent leads); grid pins such as `B3` neighbour the next column
/// (`B4`) and the next row (`C3`) of a ball-grid array.
pub fn adjacent_pairs(pins: &[String]) -> Vec<(String, String)> {
    let numeric = pins.iter().all(|p| p.parse::<u32>().is_ok());
    adjacent_pairs_as(
        pins,
        if numeric {
            PackageStyle::Leaded
        } else {
            PackageStyle::Grid
        },
    )
}

/// [`adjacent_pairs`] for a package style stated in the board file.
pub fn adjacent_pairs_as(pins: &[String], style: PackageStyle) -> Vec<(String, String)> {
    let set: BTreeSet<&str> = pins.iter().map(String::as_str).collect();
    let mut out = Vec::new();
    if style == PackageStyle::Leaded {
        for p in pins.iter().filter(|p| p.parse::<u32>().is_ok()) {
            let n: u32 = p.parse().unwrap_or(0);
            let next = (n + 1).to_string();
            if set.contains(next.as_str()) {
                out.push((p.clone(), next));
            }
        }
        return out;
    }
    let split = |p: &str| {
        let letters: String = p.chars().take_while(|c| c.is_ascii_alphabetic()).collect();
        let digits = &p[letters.len()..];
        digits
            .parse::<u32>()
            .ok()
            .filter(|_| !letters.is_empty())
            .map(|n| (letters.to_ascii_uppercase(), n))
    };
    let next_row = |row: &str| {
        // A, B, … Z, AA: the next row name (skipping nothing; real grids skip I, O, Q … — from memory).
        let mut chars: Vec<u8> = row.bytes().collect();
        for i in (0..chars.len()).rev() {
            if chars[i] < b'Z' {
                chars[i] += 1;
                return String::from_utf8(chars).unwrap_or_default();
            }
            chars[i] = b'A';
        }
        format!("A{}", String::from_utf8(chars).unwrap_or_default())
    };
    for p in pins {
        if let Some((row, col)) = split(p) {
            for q in [
                format!("{row}{}", col + 1),
                format!("{}{col}", next_row(&row)),
            ] {
                if let Some(q) = pins.iter().find(|x| x.eq_ignore_ascii_case(&q)) {
                    out.push((p.clone(), q.clone()));
                }
            }
        }
    }
    out
}

/// Which classes to build, and the short behaviour to give shorts.
#[derive(Clone, Debug)]
pub struct UniverseOptions {
    /// Classes switched on.
    pub classes: BTreeSet<FaultClass>,
}

impl Default for UniverseOptions {
    fn default() -> UniverseOptions {
        let mut classes: BTreeSet<FaultClass> = FaultClass::ALL.into_iter().collect();
        classes.remove(&FaultClass::AnyShort);
        UniverseOptions { classes }
    }
}

/// One electrical net of a board as the fault universe names it: nets the
/// board file joins (a loopback plug) are one net, named by their first
/// name in the board file, with the others as aliases.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ElectricalNet {
    /// Index of the net on the board.
    pub index: usize,
    /// The name faults on it use.
    pub name: String,
    /// The board file's other names of the same net.
    pub aliases: Vec<String>,
}

/// The signal nets of a board (no power or ground rails), once each, in the
/// board's net order (fixed by the board file's sorted net names).
pub fn electrical_nets(loaded: &LoadedBoard) -> Vec<ElectricalNet> {
    let board = &loaded.board;
    board
        .nets()
        .iter()
        .enumerate()
        .filter(|(_, n)| n.rail.is_none())
        .map(|(index, n)| match n.members.split_first() {
            Some((first, rest)) => ElectricalNet {
                index,
                name: first.clone(),
                aliases: rest.to_vec(),
            },
            None => ElectricalNet {
                index,
                name: n.name.clone(),
                aliases: Vec::new(),
            },
        })
        .collect()
}

/// Builds the universe of single faults of a board, in a fixed order: the
/// nets' stuck-at and open faults net by net, open pins, adjacent shorts,
/// all-pairs shorts, chain faults, cluster pins. A net the board file joins
/// to others is in it once (see [`electrical_nets`]).
pub fn universe(loaded: &LoadedBoard, options: &UniverseOptions) -> Vec<Fault> {
    let board = &loaded.board;
    let on = |c| options.classes.contains(&c);
    let mut out = Vec::new();
    let observed = |net: usize| !board.nets()[net].receivers.is_empty();
    let no_view = |name: &str| Some(format!("no scan cell can observe net {name}"));
    let nets = electrical_nets(loaded);
    // Board net index → position in `nets`.
    let mut slot: Vec<Option<usize>> = vec![None; board.nets().len()];
    for (k, n) in nets.iter().enumerate() {
        slot[n.index] = Some(k);
    }
    // The aliases of the nets a defect names, said in its label.
    let with_aliases: HashMap<&str, &ElectricalNet> = nets
        .iter()
        .filter(|n| !n.aliases.is_empty())
        .map(|n| (n.name.as_str(), n))
        .collect();
    let joined = |names: &[&str]| -> String {
        let said: Vec<String> = names
            .iter()
            .filter_map(|name| with_aliases.get(name))
            .map(|n| format!("{} joined with {}", n.name, n.aliases.join(", ")))
            .collect();
        if said.is_empty() {
            String::new()
        } else {
            format!(" ({})", said.join("; "))
        }
    };
    let mut push = |class, defect: DefectSpec, untestable: Option<String>| {
        let mut label = defect.describe();
        let named: Vec<&str> = match (&defect.stuck, &defect.open, &defect.short) {
            (Some(n), _, _) | (_, Some(n), _) => vec![n.as_str()],
            (_, _, Some(list)) => list.iter().map(String::as_str).collect(),
            _ => Vec::new(),
        };
        label += &joined(&named);
        out.push(Fault {
            class,
            label,
            defect,
            untestable,
        });
    };
    for net in &nets {
        let (i, name) = (net.index, &net.name);
        if on(FaultClass::Stuck) {
            for v in [0u8, 1] {
                let d = DefectSpec {
                    stuck: Some(name.clone()),
                    value: Some(v),
                    ..Default::default()
                };
                push(
                    FaultClass::Stuck,
                    d,
                    (!observed(i)).then(|| no_view(name)).flatten(),
                );
            }
        }
        if on(FaultClass::OpenNet) && !board.nets()[i].drivers.is_empty() {
            let d = DefectSpec {
                open: Some(name.clone()),
                ..Default::default()
            };
            push(
                FaultClass::OpenNet,
                d,
                (!observed(i)).then(|| no_view(name)).flatten(),
            );
        }
    }
    if on(FaultClass::OpenPin) {
        for net in &nets {
            for &(_, _, k) in &board.nets()[net.index].receivers {
                let pin = &board.nets()[net.index].pins[k];
                let d = DefectSpec {
                    open: Some(format!("{}.{}", pin.device, pin.pin)),
                    ..Default::default()
                };
                push(FaultClass::OpenPin, d, None);
            }
        }
    }
    let net_of_pin: HashMap<(&str, &str), usize> = board
        .nets()
        .iter()
        .enumerate()
        .flat_map(|(i, n)| {
            n.pins
                .iter()
                .map(move |p| ((p.device.as_str(), p.pin.as_str()), i))
        })
        .collect();
    let name_of = |i: usize| slot[i].map(|k| nets[k].name.clone());
    if on(FaultClass::AdjacentShort) {
        let mut seen = BTreeSet::new();
        for dev in board.devices() {
            for (a, b) in device_neighbours(loaded, dev.designator()) {
                let na = net_of_pin.get(&(dev.designator(), a.as_str()));
                let nb = net_of_pin.get(&(dev.designator(), b.as_str()));
                let (Some(&na), Some(&nb)) = (na, nb) else {
                    continue;
                };
                let (Some(x), Some(y)) = (name_of(na), name_of(nb)) else {
                    continue;
                };
                if na == nb || !seen.insert((na.min(nb), na.max(nb))) {
                    continue;
                }
                let untestable = (!observed(na) && !observed(nb))
                    .then(|| format!("no scan cell can observe {x} or {y}"));
                let d = DefectSpec {
                    short: Some(vec![x, y]),
                    ..Default::default()
                };
                push(FaultClass::AdjacentShort, d, untestable);
            }
        }
    }
    if on(FaultClass::AnyShort) {
        for (k, a) in nets.iter().enumerate() {
            for b in &nets[k + 1..] {
                let (x, y) = (&a.name, &b.name);
                let untestable = (!observed(a.index) && !observed(b.index))
                    .then(|| format!("no scan cell can observe {x} or {y}"));
                let d = DefectSpec {
                    short: Some(vec![x.clone(), y.clone()]),
                    ..Default::default()
                };
                push(FaultClass::AnyShort, d, untestable);
            }
        }
    }
    if on(FaultClass::Chain) {
        for dev in board.devices() {
            let name = dev.designator().to_string();
            push(
                FaultClass::Chain,
                DefectSpec {
                    broken_link: Some(name.clone()),
                    ..Default::default()
                },
                None,
            );
            for v in [0u8, 1] {
                push(
                    FaultClass::Chain,
                    DefectSpec {
                        tdo_stuck: Some(name.clone()),
                        value: Some(v),
                        ..Default::default()
                    },
                    None,
                );
            }
            push(
                FaultClass::Chain,
                DefectSpec {
                    tms_open: Some(name.clone()),
                    ..Default::default()
                },
                None,
            );
            push(
                FaultClass::Chain,
                DefectSpec {
                    tck_open: Some(name.clone()),
                    ..Default::default()
                },
                None,
            );
        }
        for p in board.ports() {
            if p.trst_wired {
                push(
                    FaultClass::Chain,
                    DefectSpec {
                        trst_stuck: Some(p.name.clone()),
                        ..Default::default()
                    },
                    None,
                );
            }
        }
    }
    if on(FaultClass::ClusterPin) {
        for c in board.clusters() {
            let mut names: Vec<&str> = c
                .inputs
                .iter()
                .chain(&c.outputs)
                .map(|p| p.name.as_str())
                .collect();
            names.dedup();
            for pin in names {
                let at = format!("{}.{pin}", c.name);
                push(
                    FaultClass::ClusterPin,
                    DefectSpec {
                        open: Some(at.clone()),
                        ..Default::default()
                    },
                    None,
                );
                for v in [0u8, 1] {
                    push(
                        FaultClass::ClusterPin,
                        DefectSpec {
                            stuck: Some(at.clone()),
                            value: Some(v),
                            ..Default::default()
                        },
                        None,
                    );
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    // Common practice: bridges form between neighbouring leads of a leaded
    // package and between neighbouring balls (same row or same column) of a
    // ball-grid array.
    #[test]
    fn adjacency_by_package_style() {
        assert_eq!(
            adjacent_pairs(&names(&["1", "2", "3", "5"])),
            vec![("1".into(), "2".into()), ("2".into(), "3".into())]
        );
        let grid = adjacent_pairs(&names(&["A1", "A2", "B1", "B2"]));
        assert_eq!(
            grid,
            vec![
                ("A1".to_string(), "A2".to_string()),
                ("A1".to_string(), "B1".to_string()),
                ("A2".to_string(), "B2".to_string()),
                ("B1".to_string(), "B2".to_string()),
            ]
        );
        // A style stated in the board file wins over the names.
        assert!(adjacent_pairs_as(&names(&["1", "2"]), PackageStyle::Grid).is_empty());
        assert_eq!(
            adjacent_pairs_as(&names(&["7", "8"]), PackageStyle::Leaded).len(),
            1
        );
    }
}
