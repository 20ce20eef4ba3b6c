//! The EDIF 2 0 0 (EIA-548) netlist reader: the netlist view of the design's
//! top cell, its instances (parts) and nets with their `joined` port
//! references.
//!
//! What it takes from the grammar (from memory of EIA-548, not checked
//! against the text, so read leniently):
//! - `(edif NAME (edifVersion 2 0 0) (edifLevel 0) (keywordMap …) …)` holds
//!   `library` and `external` forms (libraries of cells) and a `design`
//!   whose `cellRef` (with `libraryRef`) names the top cell. Without a
//!   `design` the last cell whose contents hold instances is the top (EDIF
//!   defines a cell before its use).
//! - `(cell NAME (view NAME (interface (port NAME …) …) (contents …)))`;
//!   a port may be `(array NAME WIDTH)`, referenced as `(member NAME I)`
//!   (pin name `NAME[I]`, I from 0).
//! - `(instance NAME (viewRef VIEW (cellRef CELL (libraryRef LIB))) …)`.
//! - `(net NAME (joined (portRef PORT (instanceRef INST)) …))`; a `portRef`
//!   without `instanceRef` is a port of the top cell itself (the board's
//!   own terminal, no connector part): not a pin, counted in a warning.
//!   `portList` forms inside `joined` are flattened.
//! - A name is an identifier, or `(rename IDENT "real name")` when the real
//!   name holds characters identifiers cannot (an identifier is a letter or
//!   `&` followed by letters, digits and `_`; the `&` is dropped from the
//!   real name). Identifiers match in any case.
//!
//! Common practice of CAD tools, not of the grammar: an instance's reference
//! designator is its `(designator "…")`, else a `property` named `REFDES`,
//! `DESIGNATOR`, `REFERENCE` or `REF`, else its real name; a port's pin is
//! its `(designator "…")`, else its real name. An instance's part number
//! (for the assembly file's part tables) is a `property` named
//! `PART_NUMBER`, `PARTNUMBER`, `PART` or `PARTNO`, else the real name of
//! the cell it instantiates (a library cell per part type). Other forms (status,
//! technology, property values, userData, comments …) are read and skipped.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::HashMap;
use std::path::Path;

use super::netlist::{ImportError, ImportErrorKind, Netlist, NetlistPin, Notice, Record};
use super::sexpr::{read_sexpr, Item, Node};

/// Property names read as an instance's reference designator (common
/// practice of CAD tools), in order of preference.
pub const DESIGNATOR_PROPERTIES: [&str; 4] = ["REFDES", "DESIGNATOR", "REFERENCE", "REF"];

/// Property names read as an instance's part number (common practice of
/// CAD tools), in order of preference; without one, the cell's name.
pub const PART_PROPERTIES: [&str; 4] = ["PART_NUMBER", "PARTNUMBER", "PART", "PARTNO"];

/// A port of a cell's interface.
struct Port {
    /// Pin name.
    pin: String,
    /// Width of an array port.
    width: Option<u64>,
}

/// One view of a cell.
struct View<'a> {
    /// Identifier, lower case.
    key: String,
    /// Ports by identifier (lower case).
    ports: HashMap<String, Port>,
    /// The `contents` form.
    contents: Option<&'a Node>,
}

/// A cell of a library: its views.
struct Cell<'a> {
    views: Vec<View<'a>>,
}

/// An instance of the top cell.
struct Instance<'a> {
    designator: String,
    /// The view of its cell, when the file defines that cell.
    view: Option<&'a View<'a>>,
}

/// Reads an EDIF netlist from text (`path` only names the file).
///
/// # Errors
/// Unbalanced lists, unclosed strings, a file that is not `(edif …)`, no
/// top cell with contents, an instance named twice, a `portRef` to an
/// instance the design does not hold or to a port its cell does not have,
/// an empty designator or pin, a pin on two nets — each at its place.
pub fn read_edif(text: &str, path: &Path) -> Result<Netlist, ImportError> {
    let root = read_sexpr(text, path)?;
    let at =
        |n: &Node, s: String| ImportError::at(path, n.line, n.column, ImportErrorKind::Other(s));
    if !root.is("edif") {
        return Err(at(
            &root,
            "not an EDIF file: the top-level list is not `(edif …)`".into(),
        ));
    }
    let mut warnings = Vec::new();
    let mut warn = |n: &Node, text: String| {
        warnings.push(Notice {
            path: path.to_path_buf(),
            line: n.line,
            column: n.column,
            text,
        })
    };
    if let Some(v) = root.form("edifVersion") {
        let nums: Vec<&str> = v.items().iter().skip(1).filter_map(Node::word).collect();
        if nums != ["2", "0", "0"] {
            warn(v, format!("EDIF version {} read as 2 0 0", nums.join(" ")));
        }
    }
    if let Some(l) = root.form("keywordMap").and_then(|k| k.form("keywordLevel")) {
        if l.items().get(1).and_then(Node::word) != Some("0") {
            warn(
                l,
                "keyword macros (keyword level above 0) are not expanded".into(),
            );
        }
    }

    // Libraries → cells → views.
    let mut cells: HashMap<(String, String), Cell<'_>> = HashMap::new();
    let mut order: Vec<(String, String)> = Vec::new();
    for lib in root
        .items()
        .iter()
        .filter(|n| n.is("library") || n.is("external"))
    {
        let Some((lib_key, _)) = lib.items().get(1).and_then(name_def) else {
            return Err(at(lib, "a library needs a name".into()));
        };
        for cell in lib.forms("cell") {
            let Some((cell_key, _)) = cell.items().get(1).and_then(name_def) else {
                return Err(at(cell, "a cell needs a name".into()));
            };
            let mut views = Vec::new();
            for view in cell.forms("view") {
                let key = view
                    .items()
                    .get(1)
                    .and_then(name_def)
                    .map(|(k, _)| k)
                    .unwrap_or_default();
                let mut ports = HashMap::new();
                for port in view
                    .form("interface")
                    .into_iter()
                    .flat_map(|i| i.forms("port"))
                {
                    let Some(def) = port.items().get(1) else {
                        return Err(at(port, "a port needs a name".into()));
                    };
                    let (pkey, mut pin, width) = if def.is("array") {
                        let Some((k, real)) = def.items().get(1).and_then(name_def) else {
                            return Err(at(def, "an array needs a name".into()));
                        };
                        let width = def.items().get(2).and_then(Node::word);
                        let Some(width) = width.and_then(|w| w.parse::<u64>().ok()) else {
                            return Err(at(def, "an array needs a width".into()));
                        };
                        (k, real, Some(width))
                    } else {
                        let Some((k, real)) = name_def(def) else {
                            return Err(at(def, "a port needs a name".into()));
                        };
                        (k, real, None)
                    };
                    if let Some(d) = designator_of(port) {
                        pin = d;
                    }
                    ports.insert(pkey, Port { pin, width });
                }
                views.push(View {
                    key,
                    ports,
                    contents: view.form("contents"),
                });
            }
            let k = (lib_key.clone(), cell_key);
            if !cells.contains_key(&k) {
                order.push(k.clone());
            }
            cells.insert(k, Cell { views });
        }
    }

    // The top cell and its contents.
    let has_instances = |c: &Cell<'_>| {
        c.views
            .iter()
            .any(|v| v.contents.is_some_and(|n| n.form("instance").is_some()))
    };
    let top_key = match root.form("design").and_then(|d| d.form("cellRef")) {
        Some(cr) => {
            let cell = cr.items().get(1).and_then(name_def).map(|(k, _)| k);
            let lib = cr
                .form("libraryRef")
                .and_then(|l| l.items().get(1))
                .and_then(name_def)
                .map(|(k, _)| k);
            let found = order.iter().find(|(l, c)| {
                Some(c) == cell.as_ref() && lib.as_ref().is_none_or(|want| want == l)
            });
            match found {
                Some(k) => k.clone(),
                None => {
                    return Err(at(
                        cr,
                        "the design's cell is not defined in this file".into(),
                    ))
                }
            }
        }
        None => match order
            .iter()
            .rev()
            .find(|k| cells.get(*k).is_some_and(has_instances))
        {
            Some(k) => k.clone(),
            None => {
                return Err(at(
                    &root,
                    "no cell has contents with instances: there is no netlist view".into(),
                ))
            }
        },
    };
    let top_lib = top_key.0.clone();
    let Some(contents) = cells
        .get(&top_key)
        .and_then(|c| c.views.iter().find_map(|v| v.contents))
    else {
        return Err(at(&root, "the design's cell has no contents".into()));
    };

    // Instances.
    let mut instances: HashMap<String, Instance<'_>> = HashMap::new();
    let mut part_numbers = std::collections::BTreeMap::new();
    let mut deep = false;
    for inst in contents.forms("instance") {
        let Some(def) = inst.items().get(1) else {
            return Err(at(inst, "an instance needs a name".into()));
        };
        if def.is("array") {
            warn(def, "instance arrays are not read".into());
            continue;
        }
        let Some((key, real)) = name_def(def) else {
            return Err(at(def, "an instance needs a name".into()));
        };
        let view_ref = inst.form("viewRef");
        let cell_ref = view_ref.and_then(|v| v.form("cellRef"));
        let part = property_value(inst, &PART_PROPERTIES).or_else(|| {
            cell_ref
                .and_then(|cr| cr.items().get(1))
                .and_then(name_def)
                .map(|(_, real)| real)
        });
        let view = cell_ref.and_then(|cr| {
            let cell = cr.items().get(1).and_then(name_def)?.0;
            let lib = cr
                .form("libraryRef")
                .and_then(|l| l.items().get(1))
                .and_then(name_def)
                .map_or_else(|| top_lib.clone(), |(k, _)| k);
            let c = cells.get(&(lib, cell))?;
            let want = view_ref
                .and_then(|v| v.items().get(1))
                .and_then(name_def)
                .map(|(k, _)| k);
            c.views
                .iter()
                .find(|v| Some(&v.key) == want.as_ref())
                .or(c.views.first())
        });
        if view.is_some_and(|v| v.contents.is_some_and(|n| n.form("instance").is_some())) && !deep {
            deep = true;
            warn(
                inst,
                "hierarchy is read one level deep: the parts inside this instance's cell are not read".into(),
            );
        }
        let designator = designator_of(inst)
            .or_else(|| property_value(inst, &DESIGNATOR_PROPERTIES))
            .unwrap_or(real);
        if designator.trim().is_empty() {
            return Err(ImportError::at(
                path,
                def.line,
                def.column,
                ImportErrorKind::Empty("designator"),
            ));
        }
        if instances.contains_key(&key) {
            return Err(at(
                def,
                format!("instance `{}` is defined twice", word_of(def)),
            ));
        }
        if let Some(part) = part.filter(|p| !p.trim().is_empty()) {
            part_numbers.insert(designator.clone(), (part, def.line));
        }
        instances.insert(key, Instance { designator, view });
    }

    // Nets.
    let mut records = Vec::new();
    let mut own_ports: Vec<String> = Vec::new();
    let mut first_own: Option<&Node> = None;
    for net in contents.forms("net") {
        let Some(def) = net.items().get(1) else {
            return Err(at(net, "a net needs a name".into()));
        };
        if def.is("array") {
            warn(def, "net arrays are not read".into());
            continue;
        }
        let Some((_, name)) = name_def(def) else {
            return Err(at(def, "a net needs a name".into()));
        };
        if name.trim().is_empty() {
            return Err(ImportError::at(
                path,
                def.line,
                def.column,
                ImportErrorKind::Empty("net name"),
            ));
        }
        let refs = net.forms("joined").flat_map(|j| {
            j.items().iter().skip(1).flat_map(|r| {
                if r.is("portList") {
                    r.items().iter().skip(1).collect::<Vec<_>>()
                } else {
                    vec![r]
                }
            })
        });
        for r in refs.filter(|r| r.is("portRef")) {
            let Some(port) = r.items().get(1) else {
                return Err(at(r, "a portRef needs a port".into()));
            };
            let Some(iref) = r.form("instanceRef") else {
                if !own_ports.contains(&name) {
                    own_ports.push(name.clone());
                }
                first_own.get_or_insert(r);
                continue;
            };
            let Some(iname) = iref.items().get(1) else {
                return Err(at(iref, "an instanceRef needs an instance".into()));
            };
            if iname.is("member") {
                warn(iname, "references into instance arrays are not read".into());
                continue;
            }
            let Some(ikey) = ident(iname) else {
                return Err(at(iname, "an instanceRef needs an instance name".into()));
            };
            let Some(inst) = instances.get(&ikey) else {
                return Err(ImportError::at(
                    path,
                    iname.line,
                    iname.column,
                    ImportErrorKind::UnknownInstance(word_of(iname)),
                ));
            };
            let (pkey, member) = if port.is("member") {
                let k = port.items().get(1).and_then(ident);
                let i = port
                    .items()
                    .get(2)
                    .and_then(Node::word)
                    .and_then(|w| w.parse::<u64>().ok());
                match (k, i) {
                    (Some(k), Some(i)) => (k, Some(i)),
                    _ => return Err(at(port, "a member needs a name and an index".into())),
                }
            } else {
                match ident(port) {
                    Some(k) => (k, None),
                    None => return Err(at(port, "a portRef needs a port name".into())),
                }
            };
            let base = match inst.view {
                Some(v) => match v.ports.get(&pkey) {
                    Some(p) => {
                        if let (Some(i), Some(w)) = (member, p.width) {
                            if i >= w {
                                return Err(at(
                                    port,
                                    format!("member {i} of port `{pkey}`, which is {w} wide"),
                                ));
                            }
                        }
                        p.pin.clone()
                    }
                    None => {
                        return Err(at(
                            port,
                            format!(
                                "the cell of instance {} has no port `{}`",
                                inst.designator,
                                word_of(port.items().get(1).unwrap_or(port))
                            ),
                        ))
                    }
                },
                None => real_of(&pkey),
            };
            let pin = match member {
                Some(i) => format!("{base}[{i}]"),
                None => base,
            };
            if pin.trim().is_empty() {
                return Err(ImportError::at(
                    path,
                    port.line,
                    port.column,
                    ImportErrorKind::Empty("pin"),
                ));
            }
            records.push(Record {
                net: name.clone(),
                pin: NetlistPin {
                    designator: inst.designator.clone(),
                    pin,
                    xy: None,
                    line: r.line,
                    column: r.column,
                },
            });
        }
    }
    if let Some(first) = first_own {
        let shown: Vec<&str> = own_ports.iter().take(5).map(String::as_str).collect();
        warn(
            first,
            format!(
                "{} net(s) reach the design's own ports (no connector part; not pins): {}{}",
                own_ports.len(),
                shown.join(", "),
                if own_ports.len() > 5 { " …" } else { "" }
            ),
        );
    }
    let mut netlist = Netlist::from_records(path, records, warnings)?;
    netlist.part_numbers = part_numbers;
    Ok(netlist)
}

/// An identifier (lower case, for matching) and real name of a name
/// definition: `IDENT`, `(rename IDENT "real")` or `(name IDENT …)`.
fn name_def(n: &Node) -> Option<(String, String)> {
    match &n.item {
        Item::Word(w) => Some((w.to_ascii_lowercase(), real_of(w))),
        Item::List(items) if n.is("rename") => {
            let key = items.get(1).and_then(ident)?;
            let real = items
                .get(2)
                .and_then(|r| {
                    r.string()
                        .map(String::from)
                        .or_else(|| r.items().get(1).and_then(Node::string).map(String::from))
                })
                .unwrap_or_else(|| real_of(&key));
            Some((key, real))
        }
        Item::List(items) if n.is("name") => items.get(1).and_then(name_def),
        _ => None,
    }
}

/// The identifier of a name reference (a word, or the identifier of a
/// `rename`/`name` form), lower case.
fn ident(n: &Node) -> Option<String> {
    name_def(n).map(|(k, _)| k)
}

/// An identifier as a real name: without its leading `&`.
fn real_of(w: &str) -> String {
    w.strip_prefix('&').unwrap_or(w).to_string()
}

/// The word as written, for messages.
fn word_of(n: &Node) -> String {
    match &n.item {
        Item::Word(w) => w.clone(),
        Item::Str(s) => s.clone(),
        Item::List(_) => n.items().get(1).map_or_else(String::new, word_of),
    }
}

/// The string of a `(designator "…")` form.
fn designator_of(n: &Node) -> Option<String> {
    n.form("designator")
        .and_then(|d| d.items().get(1))
        .and_then(string_value)
}

/// A string, or the string of a `(stringDisplay "…" …)`.
fn string_value(n: &Node) -> Option<String> {
    if let Some(s) = n.string() {
        return Some(s.to_string());
    }
    if n.is("stringDisplay") {
        return n.items().get(1).and_then(Node::string).map(String::from);
    }
    None
}

/// The value of the first property of `inst` named in `names` (in their
/// order, any case).
fn property_value(inst: &Node, names: &[&str]) -> Option<String> {
    names.iter().find_map(|want| {
        let p = inst.forms("property").find(|p| {
            p.items()
                .get(1)
                .and_then(name_def)
                .is_some_and(|(k, r)| k.eq_ignore_ascii_case(want) || r.eq_ignore_ascii_case(want))
        })?;
        let v = p.items().get(2)?;
        // (string "U1"), (integer 5), or a bare string.
        let inner = if v.is("string") || v.is("integer") {
            v.items().get(1)?
        } else {
            v
        };
        string_value(inner).or_else(|| inner.word().map(String::from))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(t: &str) -> Result<Netlist, ImportError> {
        read_edif(t, Path::new("n.edf"))
    }

    const SMALL: &str = r#"(edif small (edifVersion 2 0 0) (edifLevel 0)
 (keywordMap (keywordLevel 0))
 (library parts (edifLevel 0) (technology (numberDefinition))
  (cell R (cellType GENERIC)
   (view net (viewType NETLIST)
    (interface (port &1 (direction INOUT)) (port (rename &2 "2") (designator "2"))))))
 (library top (edifLevel 0) (technology (numberDefinition))
  (cell board (cellType GENERIC)
   (view net (viewType NETLIST) (interface (port EXT))
    (contents
     (instance (rename R_1 "R-1") (viewRef net (cellRef R (libraryRef parts))))
     (instance r2 (viewRef NET (cellRef r (libraryRef PARTS)))
      (property REFDES (string "R7")))
     (net (rename N_A "A/1") (joined (portRef &1 (instanceRef R_1)) (portRef &2 (instanceRef R2))))
     (net B (joined (portRef &2 (instanceRef r_1)) (portRef EXT)))))))
 (design d (cellRef board (libraryRef top))))"#;

    #[test]
    fn part_numbers_come_from_a_part_property_else_the_cell_name() {
        let n = read(&SMALL.replace(
            r#"(property REFDES (string "R7"))"#,
            r#"(property REFDES (string "R7")) (property (rename PART_NO "PartNo") (string "QR10K"))"#,
        ))
        .unwrap();
        let got: Vec<(&str, &str)> = n
            .part_numbers
            .iter()
            .map(|(d, (p, _))| (d.as_str(), p.as_str()))
            .collect();
        // R-1 names no part: its cell `R`; R7's `PartNo` property (any case).
        assert_eq!(got, vec![("R-1", "R"), ("R7", "QR10K")]);
        assert_eq!(n.part_numbers["R7"].1, 12, "the instance's line");
    }

    #[test]
    fn reads_instances_nets_and_renames() {
        let n = read(SMALL).unwrap();
        let got: Vec<(String, Vec<(String, String)>)> = n
            .nets
            .iter()
            .map(|x| {
                let pins = x
                    .pins
                    .iter()
                    .map(|p| (p.designator.clone(), p.pin.clone()))
                    .collect();
                (x.name.clone(), pins)
            })
            .collect();
        let s = |a: &str, b: &str| (a.to_string(), b.to_string());
        assert_eq!(
            got,
            vec![
                ("A/1".to_string(), vec![s("R-1", "1"), s("R7", "2")]),
                ("B".to_string(), vec![s("R-1", "2")]),
            ]
        );
        // Line 14: 5 spaces, `(net ` 5, `(rename N_A "A/1") ` 19, `(joined `
        // 8, `(portRef &1 (instanceRef R_1)) ` 31: column 69.
        assert_eq!((n.nets[0].pins[1].line, n.nets[0].pins[1].column), (14, 69));
        assert_eq!(n.warnings.len(), 1);
        assert!(n.warnings[0]
            .text
            .starts_with("1 net(s) reach the design's own ports"));
    }

    #[test]
    fn errors_are_placed() {
        let e = |t: &str| read(t).unwrap_err().to_string();
        // 68 + `(portRef &2 ` 12 + `(instanceRef ` 13: column 94.
        let bad = SMALL.replace("(instanceRef R2)", "(instanceRef R9)");
        assert_eq!(e(&bad), "n.edf:14:94: no instance `R9` in the design");
        // Line 15: 5 + `(net B ` 7 + `(joined ` 8 + `(portRef ` 9: column 30.
        let bad = SMALL.replace(
            "(portRef &2 (instanceRef r_1))",
            "(portRef &3 (instanceRef r_1))",
        );
        assert_eq!(
            e(&bad),
            "n.edf:15:30: the cell of instance R-1 has no port `&3`"
        );
        assert_eq!(
            e("(edof x)"),
            "n.edf:1:1: not an EDIF file: the top-level list is not `(edif …)`"
        );
        // An extra `(` inside `design`: every later `)` closes one level
        // further in, so the list left open is the outermost.
        assert_eq!(
            e(&SMALL.replace("(design d", "(design d (")),
            "n.edf:1:1: this list is never closed"
        );
    }
}
