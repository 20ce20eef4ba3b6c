//! `board_text`: an import plan written as a board file (today's format),
//! in a stable order, each entry with a comment saying where it came from.

use std::fmt::Write as _;
use std::path::{Component, Path, PathBuf};

use virtual_board::{Bystander, PackageStyle};

use super::assembly::AssemblySource;
use super::plan::ImportPlan;

/// The board file text for `plan`, to be written at `out` (BSDL paths are
/// made relative to its folder).
pub fn board_text(plan: &ImportPlan, asm: &AssemblySource, netlist: &Path, out: &Path) -> String {
    let a = &asm.assembly;
    let base = out.parent().unwrap_or(Path::new("."));
    let mut t = String::new();
    let file_name = |p: &Path| {
        p.file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default()
    };
    let _ = writeln!(
        t,
        "# Board file written by `boardtwin import` from the netlist {} and the\n# assembly file {}. Change those and import again rather than editing\n# this file. Line numbers below are the netlist's.\n",
        file_name(netlist),
        file_name(&asm.path)
    );
    let _ = writeln!(t, "name: {}", scalar(&plan.name));
    if let Some(f) = a.float {
        let _ = writeln!(t, "float: {}  # assembly file", word(&f));
    }
    if let Some(s) = a.shorts {
        let _ = writeln!(t, "shorts: {}  # assembly file", word(&s));
    }
    if let Some(s) = a.seed {
        let _ = writeln!(t, "seed: {s}  # assembly file");
    }
    t.push_str("\ndevices:\n");
    for d in &plan.devices {
        let _ = writeln!(
            t,
            "  # {}: {} ({}).",
            d.designator, d.model.entity, d.origin
        );
        let _ = writeln!(t, "  {}:", scalar(&d.designator));
        let _ = writeln!(
            t,
            "    bsdl: {}",
            scalar(&relative(&d.bsdl, base).to_string_lossy())
        );
        let e = &d.entry;
        if let Some(p) = &d.package {
            let _ = writeln!(t, "    package: {}", scalar(p));
        }
        if let Some(v) = e.idcode {
            let _ = writeln!(t, "    idcode: {v:#010X}");
        }
        if let Some(v) = e.usercode {
            let _ = writeln!(t, "    usercode: {v:#010X}");
        }
        if let Some(v) = &e.outputs {
            let _ = writeln!(t, "    outputs: {}", scalar(v));
        }
        if !e.pins.is_empty() {
            t.push_str("    pins:\n");
            for (k, v) in &e.pins {
                let _ = writeln!(t, "      {}: {}", scalar(k), scalar(v));
            }
        }
        if let Some(b) = e.bystander {
            let w = match b {
                Bystander::Bypass => "bypass",
                Bystander::Sample => "sample",
            };
            let _ = writeln!(t, "    bystander: {w}");
        }
        if let Some(s) = e.package_style {
            let w = match s {
                PackageStyle::Leaded => "leaded",
                PackageStyle::Grid => "grid",
            };
            let _ = writeln!(t, "    package_style: {w}");
        }
        if !d.pads.is_empty() {
            t.push_str("    pads:  # pad centres in mm, from the netlist's coordinates\n");
            for (pin, ([x, y], line)) in &d.pads {
                let _ = writeln!(t, "      {}: [{x}, {y}]  # line {line}", scalar(pin));
            }
        }
    }
    t.push_str("\ntap_ports:\n");
    for p in &plan.ports {
        let _ = writeln!(t, "  # {}", p.origin);
        let chain: Vec<String> = p.chain.iter().map(|c| scalar(c)).collect();
        let _ = writeln!(
            t,
            "  - {{ name: {}, chain: [{}], trst: {} }}",
            scalar(&p.name),
            chain.join(", "),
            p.trst
        );
    }
    t.push_str("\nnets:\n");
    for (name, n) in &plan.nets {
        let pins: Vec<String> = n.pins.iter().map(|p| scalar(p)).collect();
        let _ = writeln!(
            t,
            "  {}: [{}]  # line {}",
            scalar(name),
            pins.join(", "),
            n.line
        );
    }
    if !plan.pulls.is_empty() {
        t.push_str("\npulls:\n");
        for (net, p) in &plan.pulls {
            let _ = writeln!(
                t,
                "  {}: {}  # {} to {}, line {}",
                scalar(net),
                if p.up { "up" } else { "down" },
                p.resistor,
                p.rail,
                p.line
            );
        }
    }
    for (key, power) in [("power", true), ("ground", false)] {
        let rails: Vec<_> = plan.rails.iter().filter(|r| r.power == power).collect();
        if rails.is_empty() {
            continue;
        }
        let _ = writeln!(t, "\n{key}:");
        for r in rails {
            let _ = writeln!(t, "  - {}  # {}", scalar(&r.net), r.origin);
        }
    }
    if !a.float_overrides.is_empty() {
        t.push_str("\nfloat_overrides:  # assembly file\n");
        for (net, f) in &a.float_overrides {
            let _ = writeln!(t, "  {}: {}", scalar(net), word(f));
        }
    }
    if !a.clusters.is_empty() || !plan.clusters.is_empty() {
        t.push_str("\nclusters:\n");
        for (des, v) in &a.clusters {
            let _ = writeln!(t, "  {}: {}  # assembly file", scalar(des), flow(v));
        }
        for c in &plan.clusters {
            let _ = writeln!(t, "  # {}", c.origin);
            let _ = writeln!(t, "  {}: {}", scalar(&c.name), flow(&c.entry));
        }
    }
    t
}

/// A serde enum's one word (its YAML spelling).
fn word<T: serde::Serialize>(v: &T) -> String {
    serde_yaml::to_string(v)
        .map(|s| s.trim().to_string())
        .unwrap_or_default()
}

/// A YAML value in flow style.
fn flow(v: &serde_yaml::Value) -> String {
    use serde_yaml::Value;
    match v {
        Value::Mapping(m) => {
            let items: Vec<String> = m
                .iter()
                .map(|(k, v)| format!("{}: {}", flow(k), flow(v)))
                .collect();
            format!("{{ {} }}", items.join(", "))
        }
        Value::Sequence(s) => {
            let items: Vec<String> = s.iter().map(flow).collect();
            format!("[{}]", items.join(", "))
        }
        Value::String(s) => scalar(s),
        Value::Tagged(t) => flow(&t.value),
        other => word(other),
    }
}

/// A string as a YAML scalar: plain when that reads back as the same
/// string, else double-quoted.
pub fn scalar(s: &str) -> String {
    let plain = !s.is_empty()
        && s.chars()
            .next()
            .is_some_and(|c| c.is_ascii_alphabetic() || c == '_' || c == '.')
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || "_.()+/-".contains(c))
        && !matches!(
            s.to_ascii_lowercase().as_str(),
            "true"
                | "false"
                | "null"
                | "yes"
                | "no"
                | "on"
                | "off"
                | "y"
                | "n"
                | "inf"
                | "nan"
                | ".inf"
                | ".nan"
        );
    if plain {
        return s.to_string();
    }
    let mut q = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => q.push_str("\\\""),
            '\\' => q.push_str("\\\\"),
            c if (c as u32) < 0x20 => q.push_str(&format!("\\x{:02x}", c as u32)),
            c => q.push(c),
        }
    }
    q.push('"');
    q
}

/// `target` relative to the folder `base` (both made absolute first).
pub fn relative(target: &Path, base: &Path) -> PathBuf {
    let abs = |p: &Path| normalise(&std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf()));
    let (t, b) = (abs(target), abs(base));
    let tc: Vec<Component> = t.components().collect();
    let bc: Vec<Component> = b.components().collect();
    let common = tc.iter().zip(&bc).take_while(|(x, y)| x == y).count();
    if common == 0 {
        return t;
    }
    let mut out = PathBuf::new();
    for _ in common..bc.len() {
        out.push("..");
    }
    for c in &tc[common..] {
        out.push(c.as_os_str());
    }
    out
}

fn normalise(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::ParentDir => {
                out.pop();
            }
            Component::CurDir => {}
            c => out.push(c.as_os_str()),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scalars_read_back() {
        assert_eq!(scalar("HOST_D(0)"), "HOST_D(0)");
        assert_eq!(scalar("3V3"), "\"3V3\"");
        assert_eq!(scalar("yes"), "\"yes\"");
        assert_eq!(scalar("a: b"), "\"a: b\"");
        assert_eq!(scalar("U1.17"), "U1.17");
    }

    #[test]
    fn relative_paths() {
        assert_eq!(
            relative(Path::new("/a/b/c.bsd"), Path::new("/a/d")),
            PathBuf::from("../b/c.bsd")
        );
        assert_eq!(
            relative(Path::new("/a/b/c.bsd"), Path::new("/a/b")),
            PathBuf::from("c.bsd")
        );
    }
}
