//! The part table: non-scan part numbers → cluster kinds with their pin
//! roles, and the designator → part number map, both read from the
//! assembly file (`parts:`, `part_numbers:`) and from part files it names
//! (`part_files:`, each holding a `parts:` mapping of the same shape).
//!
//! ```yaml
//! parts:
//!   QB244:                          # an octal three-state buffer, 20 pins
//!     kind: three-state             # buffer, inverter, and, or, nand, nor,
//!     pins: 20                      # xor, three-state, transceiver, resistors
//!     enable_active: low            # (`pins`: a count 1..N, or a list of names)
//!     gates:
//!       - { a: 2, y: 18, enable: 1 }
//!       - { a: 4, y: 16, enable: 1 }
//!   QB245:                          # a transceiver: a, b, dir, enable
//!     kind: transceiver
//!     pins: 20
//!     a_to_b: high
//!     gates: [{ a: 2, b: 18, dir: 1, enable: 19 }]
//!   QB08:                           # gates: `inputs` and `y`
//!     kind: and
//!     pins: 14
//!     gates: [{ inputs: [1, 2], y: 3 }]
//!   QR16I:                          # a resistor pack: each element joins two pins
//!     kind: resistors               # (a bussed pack repeats its common pin)
//!     pins: 16
//!     elements: [[1, 16], [2, 15]]
//! part_numbers:                     # designator, or a pattern (`*` any run of
//!   U11: QB244                      # characters, `?` one), → part number
//!   "RN1?": QR16I
//! ```
//!
//! Every mistake of the table itself (a role naming a pin the part does not
//! have, a role missing or not of its kind, one output pin in two gates, a
//! part defined twice) is an error placed in the file that holds it.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::{BTreeMap, BTreeSet};
use std::fmt;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Deserializer};
use virtual_board::{read_yaml, PathStep, Span, YamlNode};

use super::assembly::AssemblySource;
use super::netlist::{read_text, ImportError, ImportErrorKind};

/// A pin name as the table writes it: a number or a name.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct PinName(pub String);

impl<'de> Deserialize<'de> for PinName {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<PinName, D::Error> {
        #[derive(Deserialize)]
        #[serde(untagged)]
        enum Raw {
            Number(u64),
            Text(String),
        }
        Ok(PinName(match Raw::deserialize(d)? {
            Raw::Number(n) => n.to_string(),
            Raw::Text(t) => t,
        }))
    }
}

impl fmt::Display for PinName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

/// What a part of the table is.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "kebab-case")]
pub enum PartKind {
    /// Gates y = a.
    Buffer,
    /// Gates y = not a.
    Inverter,
    /// Gates y = and of `inputs`.
    And,
    /// Gates y = or of `inputs`.
    Or,
    /// Gates y = nand of `inputs`.
    Nand,
    /// Gates y = nor of `inputs`.
    Nor,
    /// Gates y = xor of `inputs`.
    Xor,
    /// Gates y = a while `enable` is active.
    ThreeState,
    /// Bus transceiver gates: a, b, dir, enable.
    Transceiver,
    /// Resistors: each element joins two pins.
    Resistors,
}

impl PartKind {
    /// The board file's `kind:` word for one gate of this part.
    pub fn word(self) -> &'static str {
        match self {
            PartKind::Buffer => "buffer",
            PartKind::Inverter => "inverter",
            PartKind::And => "and",
            PartKind::Or => "or",
            PartKind::Nand => "nand",
            PartKind::Nor => "nor",
            PartKind::Xor => "xor",
            PartKind::ThreeState => "three-state",
            PartKind::Transceiver => "transceiver",
            PartKind::Resistors => "resistor",
        }
    }

    /// The roles one gate of this kind has: (required, of which outputs).
    fn roles(self) -> (&'static [&'static str], &'static [&'static str]) {
        match self {
            PartKind::Buffer | PartKind::Inverter => (&["a", "y"], &["y"]),
            PartKind::And | PartKind::Or | PartKind::Nand | PartKind::Nor | PartKind::Xor => {
                (&["inputs", "y"], &["y"])
            }
            PartKind::ThreeState => (&["a", "y", "enable"], &["y"]),
            PartKind::Transceiver => (&["a", "b", "dir", "enable"], &["a", "b"]),
            PartKind::Resistors => (&[], &[]),
        }
    }
}

/// A level word: `low` or `high`.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum Level {
    /// 0.
    Low,
    /// 1.
    High,
}

impl Level {
    /// `low` or `high`.
    pub fn word(self) -> &'static str {
        match self {
            Level::Low => "low",
            Level::High => "high",
        }
    }
}

/// The pins of a part: a count (1..N) or the names.
#[derive(Clone, Debug, Deserialize, PartialEq, Eq)]
#[serde(untagged)]
pub enum PinList {
    /// Pins 1 to N.
    Count(u32),
    /// These names.
    Names(Vec<PinName>),
}

impl PinList {
    /// True when the part has `pin`.
    pub fn has(&self, pin: &str) -> bool {
        match self {
            PinList::Count(n) => pin
                .parse::<u32>()
                .is_ok_and(|p| p >= 1 && p <= *n && p.to_string() == pin),
            PinList::Names(v) => v.iter().any(|p| p.0 == pin),
        }
    }

    /// In words, for messages.
    pub fn describe(&self) -> String {
        match self {
            PinList::Count(n) => format!("{n} pins"),
            PinList::Names(v) => format!("{} named pins", v.len()),
        }
    }
}

/// One gate (or buffer, transceiver bit) of a part: its pin roles.
#[derive(Clone, Debug, Deserialize, Default, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct GateRoles {
    /// Input (or side A).
    #[serde(default)]
    pub a: Option<PinName>,
    /// Side B of a transceiver.
    #[serde(default)]
    pub b: Option<PinName>,
    /// Output.
    #[serde(default)]
    pub y: Option<PinName>,
    /// Inputs of a logic gate.
    #[serde(default)]
    pub inputs: Vec<PinName>,
    /// Enable.
    #[serde(default)]
    pub enable: Option<PinName>,
    /// Direction (transceiver).
    #[serde(default)]
    pub dir: Option<PinName>,
}

impl GateRoles {
    /// Every role given, with its pin, in a fixed order (`inputs` as `in1` …).
    pub fn given(&self) -> Vec<(String, &PinName)> {
        let mut v: Vec<(String, &PinName)> = Vec::new();
        for (k, p) in [("a", &self.a), ("b", &self.b)] {
            if let Some(p) = p {
                v.push((k.to_string(), p));
            }
        }
        for (i, p) in self.inputs.iter().enumerate() {
            v.push((format!("in{}", i + 1), p));
        }
        for (k, p) in [("enable", &self.enable), ("dir", &self.dir), ("y", &self.y)] {
            if let Some(p) = p {
                v.push((k.to_string(), p));
            }
        }
        v
    }
}

/// A part of the table as written.
#[derive(Clone, Debug, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct PartDef {
    /// What it is.
    pub kind: PartKind,
    /// Its pins.
    pub pins: PinList,
    /// Words for the reader of the table.
    #[serde(default)]
    pub description: Option<String>,
    /// Level of `enable` that enables (three-state, transceiver); default low.
    #[serde(default)]
    pub enable_active: Option<Level>,
    /// Level of `dir` that drives b from a (transceiver); default high.
    #[serde(default)]
    pub a_to_b: Option<Level>,
    /// The gates.
    #[serde(default)]
    pub gates: Vec<GateRoles>,
    /// The resistors (kind `resistors`), each joining two pins.
    #[serde(default)]
    pub elements: Vec<[PinName; 2]>,
}

/// A part file: `parts:` only.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct PartFile {
    #[serde(default)]
    parts: BTreeMap<String, PartDef>,
}

/// A part of the table, with where it is defined.
#[derive(Clone, Debug)]
pub struct TablePart {
    /// Part number.
    pub number: String,
    /// The definition.
    pub def: PartDef,
    /// The file that defines it.
    pub path: PathBuf,
    /// Where its entry starts.
    pub span: Span,
}

/// A designator's part number and where it was given.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PartNumberOf {
    /// Part number.
    pub number: String,
    /// Where it was given, in words (`assembly.yaml:12:3`, a netlist line).
    pub origin: String,
}

/// The part table: parts by number.
#[derive(Clone, Debug, Default)]
pub struct PartTable {
    /// Parts by number.
    pub parts: BTreeMap<String, TablePart>,
}

/// Reads the part table of an assembly file: its `parts:` and the files
/// named in `part_files:` (relative to it).
///
/// # Errors
/// A part file that cannot be read or is not a part file; a part defined
/// twice; a definition at odds with itself (see the module doc) — placed.
pub fn read_part_table(asm: &AssemblySource) -> Result<PartTable, ImportError> {
    let mut table = PartTable::default();
    let a = &asm.assembly;
    let mut add =
        |number: &str, def: &PartDef, path: &Path, tree: &YamlNode| -> Result<(), ImportError> {
            let here = [PathStep::Key("parts"), PathStep::Key(number)];
            let place = |steps: &[PathStep<'_>], kind: ImportErrorKind| ImportError {
                path: path.to_path_buf(),
                span: tree.span_at(steps),
                kind,
            };
            if let Some(first) = table.parts.get(number) {
                return Err(place(
                    &here,
                    ImportErrorKind::Other(format!(
                        "part {number} is defined again (first in {}:{}:{})",
                        first.path.display(),
                        first.span.line,
                        first.span.column
                    )),
                ));
            }
            check_def(number, def, &|steps: &[PathStep<'_>], text: String| {
                let mut full = here.to_vec();
                full.extend_from_slice(steps);
                place(&full, ImportErrorKind::Other(text))
            })?;
            table.parts.insert(
                number.to_string(),
                TablePart {
                    number: number.to_string(),
                    def: def.clone(),
                    path: path.to_path_buf(),
                    span: tree.span_at(&here),
                },
            );
            Ok(())
        };
    for (i, file) in a.part_files.iter().enumerate() {
        let path = asm.resolve(file);
        let text = read_text(&path).map_err(|e| {
            asm.error_at(
                &[PathStep::Key("part_files"), PathStep::Index(i)],
                ImportErrorKind::Other(format!("part file {}: {}", file.display(), e.kind)),
            )
        })?;
        let (pf, tree): (PartFile, YamlNode) = read_yaml(&text).map_err(|e| ImportError {
            path: path.clone(),
            span: e.span,
            kind: ImportErrorKind::Other(e.kind.to_string()),
        })?;
        for (number, def) in &pf.parts {
            add(number, def, &path, &tree)?;
        }
    }
    for (number, def) in &a.parts {
        add(number, def, &asm.path, &asm.tree)?;
    }
    Ok(table)
}

/// Checks one definition; `fail(steps, text)` places an error below the
/// part's entry.
fn check_def(
    number: &str,
    def: &PartDef,
    fail: &dyn Fn(&[PathStep<'_>], String) -> ImportError,
) -> Result<(), ImportError> {
    let kind = def.kind.word();
    let pin_ok = |p: &PinName, steps: &[PathStep<'_>]| -> Result<(), ImportError> {
        if def.pins.has(&p.0) {
            Ok(())
        } else {
            Err(fail(
                steps,
                format!(
                    "part {number} has no pin {p} (it has {})",
                    def.pins.describe()
                ),
            ))
        }
    };
    if def.kind == PartKind::Resistors {
        if !def.gates.is_empty() {
            return Err(fail(
                &[PathStep::Key("gates")],
                "a resistors part lists `elements`, not `gates`".into(),
            ));
        }
        if def.elements.is_empty() {
            return Err(fail(
                &[],
                format!("part {number} (resistors) needs `elements`, each two pins"),
            ));
        }
        for (i, [x, y]) in def.elements.iter().enumerate() {
            for (j, p) in [x, y].into_iter().enumerate() {
                pin_ok(
                    p,
                    &[
                        PathStep::Key("elements"),
                        PathStep::Index(i),
                        PathStep::Index(j),
                    ],
                )?;
            }
            if x == y {
                return Err(fail(
                    &[PathStep::Key("elements"), PathStep::Index(i)],
                    format!("element {} joins pin {x} to itself", i + 1),
                ));
            }
        }
        return Ok(());
    }
    if !def.elements.is_empty() {
        return Err(fail(
            &[PathStep::Key("elements")],
            format!("`elements` belong to kind resistors, not {kind}"),
        ));
    }
    if def.gates.is_empty() {
        return Err(fail(
            &[],
            format!("part {number} ({kind}) needs `gates`, each with its pin roles"),
        ));
    }
    let (required, outputs) = def.kind.roles();
    let mut driven: BTreeMap<&str, usize> = BTreeMap::new();
    for (g, gate) in def.gates.iter().enumerate() {
        let at = |key: &'static str| {
            [
                PathStep::Key("gates"),
                PathStep::Index(g),
                PathStep::Key(key),
            ]
        };
        let given: BTreeSet<&str> = [
            ("a", gate.a.is_some()),
            ("b", gate.b.is_some()),
            ("y", gate.y.is_some()),
            ("inputs", !gate.inputs.is_empty()),
            ("enable", gate.enable.is_some()),
            ("dir", gate.dir.is_some()),
        ]
        .into_iter()
        .filter(|(_, on)| *on)
        .map(|(k, _)| k)
        .collect();
        for r in required {
            if !given.contains(r) {
                return Err(fail(
                    &[PathStep::Key("gates"), PathStep::Index(g)],
                    format!("gate {} of {number} ({kind}) needs `{r}`", g + 1),
                ));
            }
        }
        for r in &given {
            if !required.contains(r) {
                return Err(fail(
                    &at(r),
                    format!(
                        "`{r}` is not a role of a {kind} gate (it has {})",
                        required.join(", ")
                    ),
                ));
            }
        }
        if gate.inputs.len() == 1 {
            return Err(fail(
                &at("inputs"),
                format!(
                    "gate {} of {number}: a {kind} gate needs two or more `inputs`",
                    g + 1
                ),
            ));
        }
        for (role, p) in gate.given() {
            let steps: Vec<PathStep<'_>> = match role.strip_prefix("in") {
                Some(n) if role != "enable" => {
                    let i = n.parse::<usize>().unwrap_or(1).saturating_sub(1);
                    vec![
                        PathStep::Key("gates"),
                        PathStep::Index(g),
                        PathStep::Key("inputs"),
                        PathStep::Index(i),
                    ]
                }
                _ => vec![
                    PathStep::Key("gates"),
                    PathStep::Index(g),
                    PathStep::Key(match role.as_str() {
                        "a" => "a",
                        "b" => "b",
                        "y" => "y",
                        "dir" => "dir",
                        _ => "enable",
                    }),
                ],
            };
            pin_ok(p, &steps)?;
            if outputs.contains(&role.as_str()) {
                if let Some(first) = driven.insert(p.0.as_str(), g) {
                    return Err(fail(
                        &steps,
                        format!(
                            "pin {p} is an output of gate {} and of gate {} of {number}",
                            first + 1,
                            g + 1
                        ),
                    ));
                }
            }
        }
    }
    // An output pin may not also be an input of another gate.
    for (g, gate) in def.gates.iter().enumerate() {
        for (role, p) in gate.given() {
            if !outputs.contains(&role.as_str()) {
                if let Some(&o) = driven.get(p.0.as_str()) {
                    if def.kind != PartKind::Transceiver || o != g {
                        return Err(fail(
                            &[PathStep::Key("gates"), PathStep::Index(g)],
                            format!(
                                "pin {p} is an input ({role}) of gate {} and an output of gate {} of {number}",
                                g + 1,
                                o + 1
                            ),
                        ));
                    }
                }
            }
        }
    }
    Ok(())
}

/// `true` when `designator` matches `pattern` (`*` any run of characters,
/// `?` one character; anything else itself, case and all).
pub fn designator_matches(pattern: &str, designator: &str) -> bool {
    let p: Vec<char> = pattern.chars().collect();
    let d: Vec<char> = designator.chars().collect();
    // Iterative glob match with one backtrack point.
    let (mut i, mut j) = (0usize, 0usize);
    let mut star: Option<(usize, usize)> = None;
    while j < d.len() {
        if i < p.len() && (p[i] == '?' || p[i] == d[j]) {
            i += 1;
            j += 1;
        } else if i < p.len() && p[i] == '*' {
            star = Some((i, j));
            i += 1;
        } else if let Some((si, sj)) = star {
            i = si + 1;
            j = sj + 1;
            star = Some((si, sj + 1));
        } else {
            return false;
        }
    }
    p[i..].iter().all(|&c| c == '*')
}

/// A pattern holds `*` or `?`.
pub fn is_pattern(s: &str) -> bool {
    s.contains(['*', '?'])
}

/// The part number of each designator in `designators`: from the assembly
/// file's `part_numbers` (an exact designator first, then the one pattern
/// that matches), else from the netlist's own part numbers.
///
/// # Errors
/// A designator that two patterns give different part numbers, placed at
/// the second pattern.
pub fn part_numbers<'a>(
    asm: &AssemblySource,
    designators: impl Iterator<Item = &'a str>,
    from_netlist: &BTreeMap<String, PartNumberOf>,
) -> Result<BTreeMap<String, PartNumberOf>, ImportError> {
    let map = &asm.assembly.part_numbers;
    let place = |key: &str| {
        let s = asm.span_at(&[PathStep::Key("part_numbers"), PathStep::Key(key)]);
        format!(
            "{}:{}:{}",
            asm.path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            s.line,
            s.column
        )
    };
    let mut out = BTreeMap::new();
    for d in designators {
        if let Some(n) = map.get(d) {
            out.insert(
                d.to_string(),
                PartNumberOf {
                    number: n.clone(),
                    origin: place(d),
                },
            );
            continue;
        }
        let mut hit: Option<(&str, &str)> = None;
        for (pat, n) in map.iter().filter(|(k, _)| is_pattern(k)) {
            if !designator_matches(pat, d) {
                continue;
            }
            match hit {
                Some((p0, n0)) if n0 != n => {
                    return Err(asm.error_at(
                        &[PathStep::Key("part_numbers"), PathStep::Key(pat)],
                        ImportErrorKind::Other(format!(
                            "{d} matches `{p0}` (part {n0}) and `{pat}` (part {n}): give {d} its part number by name"
                        )),
                    ))
                }
                Some(_) => {}
                None => hit = Some((pat, n)),
            }
        }
        if let Some((pat, n)) = hit {
            out.insert(
                d.to_string(),
                PartNumberOf {
                    number: n.to_string(),
                    origin: format!("{} (pattern {pat})", place(pat)),
                },
            );
        } else if let Some(n) = from_netlist.get(d) {
            out.insert(d.to_string(), n.clone());
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn patterns() {
        for (p, d, want) in [
            ("RN*", "RN12", true),
            ("RN?", "RN12", false),
            ("RN??", "RN12", true),
            ("U1*", "U1", true),
            ("*", "J9", true),
            ("U*1", "U201", true),
            ("U*1", "U210", false),
            ("R*", "RN1", true),
            ("U11", "U11", true),
            ("U11", "U111", false),
        ] {
            assert_eq!(designator_matches(p, d), want, "{p} {d}");
        }
    }

    #[test]
    fn pin_lists() {
        let c = PinList::Count(20);
        assert!(c.has("1") && c.has("20"));
        assert!(!c.has("0") && !c.has("21") && !c.has("01") && !c.has("A1"));
        let n = PinList::Names(vec![PinName("A1".into()), PinName("B2".into())]);
        assert!(n.has("B2") && !n.has("1"));
    }
}
