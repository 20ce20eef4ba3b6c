//! `write_edif`: exported pins as an EDIF 2 0 0 netlist — a library `parts`
//! with one cell per designator (its pins as ports), and a library `board`
//! whose cell `board` holds one instance per designator and the nets, each
//! `joined` by `portRef`s. Names that are not EDIF identifiers are written
//! as `(rename IDENT "real name")`; notes become `comment` forms.

use std::collections::{BTreeMap, HashMap, HashSet};
use std::fmt::Write as _;

use super::export::ExportPin;

/// Makes unique EDIF identifiers (a letter, or `&` then letters, digits
/// and `_`; compared in any case) for the names of one scope.
#[derive(Default)]
struct Idents {
    taken: HashSet<String>,
    given: HashMap<String, String>,
}

impl Idents {
    /// The identifier of `real`, the same each time it is asked.
    fn of(&mut self, real: &str) -> String {
        if let Some(id) = self.given.get(real) {
            return id.clone();
        }
        let mut base: String = real
            .chars()
            .take(200)
            .map(|c| if c.is_ascii_alphanumeric() { c } else { '_' })
            .collect();
        if !base.starts_with(|c: char| c.is_ascii_alphabetic()) {
            base.insert(0, '&');
        }
        let mut id = base.clone();
        let mut k = 2;
        while !self.taken.insert(id.to_ascii_lowercase()) {
            id = format!("{base}_{k}");
            k += 1;
        }
        self.given.insert(real.to_string(), id.clone());
        id
    }
}

/// `IDENT` when it spells `real`, else `(rename IDENT "real")`.
fn name_def(id: &str, real: &str) -> String {
    if id == real {
        id.to_string()
    } else {
        format!("(rename {id} {})", string(real))
    }
}

/// An EDIF string: `"` and `%` (and control characters) as `%code%`.
fn string(s: &str) -> String {
    let mut t = String::from("\"");
    for c in s.chars() {
        if c == '"' || c == '%' || c.is_control() {
            let _ = write!(t, "%{}%", c as u32);
        } else {
            t.push(c);
        }
    }
    t.push('"');
    t
}

/// The pins as an EDIF 2 0 0 netlist (nets in first-appearance order).
pub fn write_edif(pins: &[ExportPin], notes: &[String]) -> String {
    // Parts and their pins, sorted; nets in first-appearance order.
    let mut parts: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
    let mut nets: Vec<(&str, Vec<(&str, &str)>)> = Vec::new();
    let mut net_at: HashMap<&str, usize> = HashMap::new();
    for ExportPin {
        net: n,
        designator: d,
        pin: p,
        ..
    } in pins
    {
        let ports = parts.entry(d.as_str()).or_default();
        if !ports.contains(&p.as_str()) {
            ports.push(p);
        }
        let k = *net_at.entry(n.as_str()).or_insert_with(|| {
            nets.push((n.as_str(), Vec::new()));
            nets.len() - 1
        });
        nets[k].1.push((d.as_str(), p.as_str()));
    }
    let mut t = String::from(
        "(edif boardtwin_export\n  (edifVersion 2 0 0)\n  (edifLevel 0)\n  (keywordMap (keywordLevel 0))\n",
    );
    let _ = writeln!(
        t,
        "  (comment {})",
        string("EDIF netlist written by boardtwin board --export-netlist edif")
    );
    for n in notes {
        let _ = writeln!(t, "  (comment {})", string(n));
    }
    t.push_str("  (library parts\n    (edifLevel 0)\n    (technology (numberDefinition))\n");
    let mut cell_ids = Idents::default();
    let mut inst_ids = Idents::default();
    // Per part: its cell identifier and its ports' identifiers.
    let mut port_ids: HashMap<&str, Idents> = HashMap::new();
    for (d, ps) in &parts {
        let cell = cell_ids.of(&format!("{d}_part"));
        let _ = writeln!(
            t,
            "    (cell {cell} (cellType GENERIC)\n      (view netlist (viewType NETLIST)\n        (interface"
        );
        let ids = port_ids.entry(d).or_default();
        for p in ps {
            let id = ids.of(p);
            let _ = writeln!(t, "          (port {} (direction INOUT))", name_def(&id, p));
        }
        t.push_str("        )))\n");
    }
    t.push_str("  )\n  (library board\n    (edifLevel 0)\n    (technology (numberDefinition))\n");
    t.push_str("    (cell board (cellType GENERIC)\n      (view netlist (viewType NETLIST)\n        (interface)\n        (contents\n");
    for d in parts.keys() {
        let id = inst_ids.of(d);
        let cell = cell_ids.of(&format!("{d}_part"));
        let _ = writeln!(
            t,
            "          (instance {} (viewRef netlist (cellRef {cell} (libraryRef parts)))\n            (property REFDES (string {})))",
            name_def(&id, d),
            string(d)
        );
    }
    let mut net_ids = Idents::default();
    for (n, refs) in &nets {
        let id = net_ids.of(n);
        let _ = writeln!(
            t,
            "          (net {}\n            (joined",
            name_def(&id, n)
        );
        for (d, p) in refs {
            let pid = port_ids.get_mut(d).map(|ids| ids.of(p)).unwrap_or_default();
            let _ = writeln!(
                t,
                "              (portRef {pid} (instanceRef {}))",
                inst_ids.of(d)
            );
        }
        t.push_str("            ))\n");
    }
    t.push_str("        ))))\n  (design board (cellRef board (libraryRef board)))\n)\n");
    t
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_become_unique_identifiers() {
        let mut ids = Idents::default();
        assert_eq!(ids.of("U1"), "U1");
        assert_eq!(ids.of("17"), "&17");
        assert_eq!(ids.of("D(0)"), "D_0_");
        assert_eq!(ids.of("D[0]"), "D_0__2");
        assert_eq!(ids.of("u1"), "u1_2");
        assert_eq!(ids.of("U1"), "U1");
        assert_eq!(string("a\"b%c"), "\"a%34%b%37%c\"");
    }
}
