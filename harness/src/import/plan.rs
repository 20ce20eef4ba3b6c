//! `plan`: a netlist and an assembly file → what the board file will hold
//! (scan devices, chains found by following the TAP nets, rails, pulls,
//! nets), with every guess and warning listed.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::path::PathBuf;

use serde::Serialize;
use virtual_board::{parse_bsdl_package, read_bsdl_text, DeviceModel, PathStep, PortMode};

use super::assembly::{AssemblyDevice, AssemblySource, TrstEntry};
use super::netlist::{ImportError, ImportErrorKind, Netlist, Notice};
use super::pads::{pad_map, PlannedPad};
use super::part_clusters::{expand, PartInputs, PlannedCluster};
use super::part_table::{part_numbers, read_part_table, PartNumberOf};

/// One scan device of the plan.
#[derive(Clone, Debug)]
pub struct PlannedDevice {
    /// Designator.
    pub designator: String,
    /// BSDL file, as found (relative to the working folder or absolute).
    pub bsdl: PathBuf,
    /// Package chosen, when the file has several pin maps.
    pub package: Option<String>,
    /// Pad centres by pin, where the netlist gives coordinates.
    pub pads: BTreeMap<String, PlannedPad>,
    /// The model read (for the chosen package).
    pub model: DeviceModel,
    /// The assembly entry (system logic, codes …).
    pub entry: AssemblyDevice,
    /// Where the BSDL file came from, in words.
    pub origin: String,
}

/// One TAP port of the plan.
#[derive(Clone, Debug, Serialize)]
pub struct PlannedPort {
    /// Port name.
    pub name: String,
    /// Devices TDI to TDO.
    pub chain: Vec<String>,
    /// TRST* wired.
    pub trst: bool,
    /// How the chain was found, in words.
    pub origin: String,
}

/// One net of the plan.
#[derive(Clone, Debug)]
pub struct PlannedNet {
    /// Pins, `DESIGNATOR.PIN`, in netlist order.
    pub pins: Vec<String>,
    /// Line of its first record in the netlist.
    pub line: u32,
}

/// A rail, with why it is one.
#[derive(Clone, Debug, Serialize)]
pub struct PlannedRail {
    /// Net name.
    pub net: String,
    /// True for power, false for ground.
    pub power: bool,
    /// Why.
    pub origin: String,
}

/// A pull resistor found.
#[derive(Clone, Debug, Serialize)]
pub struct PlannedPull {
    /// The signal net.
    pub net: String,
    /// Up (to power) or down.
    pub up: bool,
    /// The resistor's designator.
    pub resistor: String,
    /// The rail at its other end.
    pub rail: String,
    /// Netlist line of the resistor's first pin.
    pub line: u32,
}

/// A part of the netlist the board does not model.
#[derive(Clone, Debug, Serialize, PartialEq, Eq)]
pub struct UnmodelledPart {
    /// Designator.
    pub designator: String,
    /// Part number, where the assembly file or the netlist gives one.
    pub part: Option<String>,
    /// Nets it touches, sorted.
    pub nets: Vec<String>,
    /// Why it is left out, when there is more to say than "not a scan device".
    pub note: String,
}

/// What the board file will hold.
#[derive(Clone, Debug)]
pub struct ImportPlan {
    /// Board name.
    pub name: String,
    /// Scan devices, by designator.
    pub devices: Vec<PlannedDevice>,
    /// TAP ports.
    pub ports: Vec<PlannedPort>,
    /// Nets by name.
    pub nets: BTreeMap<String, PlannedNet>,
    /// Pulls by net.
    pub pulls: BTreeMap<String, PlannedPull>,
    /// Rails.
    pub rails: Vec<PlannedRail>,
    /// Parts left unmodelled, most nets first.
    pub unmodelled: Vec<UnmodelledPart>,
    /// Clusters made from the part table.
    pub clusters: Vec<PlannedCluster>,
    /// Every guess made, in words.
    pub guesses: Vec<String>,
    /// Warnings, placed where possible.
    pub warnings: Vec<Notice>,
}

/// Which rail a name suggests: `Some(true)` power, `Some(false)` ground
/// (common practice, no standard: GND*, AGND, DGND, PGND, VSS*, 0V are
/// ground; VCC*, VDD*, VIO*, VBAT*, and `3V3`, `P3V3`, `+3V3`, `1V8`, `5V` are power).
pub fn rail_by_name(name: &str) -> Option<bool> {
    let u = name.trim_start_matches('+').to_ascii_uppercase();
    if ["GND", "AGND", "DGND", "PGND", "VSS", "0V"]
        .iter()
        .any(|p| u.starts_with(p))
    {
        return Some(false);
    }
    if ["VCC", "VDD", "VIO", "VBAT"]
        .iter()
        .any(|p| u.starts_with(p))
    {
        return Some(true);
    }
    // [P]<digits>V[<digits>]…
    let rest = u.strip_prefix('P').unwrap_or(&u);
    let digits = rest.chars().take_while(char::is_ascii_digit).count();
    if digits > 0 && rest[digits..].starts_with('V') {
        let after = &rest[digits + 1..];
        if after.is_empty() || after.starts_with(|c: char| c.is_ascii_digit() || c == '_') {
            return Some(true);
        }
    }
    None
}

fn linkage_kind(model: &DeviceModel, port: &str) -> Option<Option<bool>> {
    let p = model.port(port)?;
    matches!(p.mode, PortMode::Linkage | PortMode::OtherLinkage(_)).then(|| rail_by_name(&p.name))
}

/// Builds the plan.
///
/// # Errors
/// A BSDL file that cannot be found or read, a TAP port without its
/// connector pins, a chain naming a designator that is no scan device, a
/// hand rail that is no net — placed in the assembly file.
pub fn plan(netlist: &Netlist, asm: &AssemblySource) -> Result<ImportPlan, ImportError> {
    let a = &asm.assembly;
    let mut warnings: Vec<Notice> = netlist.warnings.clone();
    let mut guesses: Vec<String> = Vec::new();
    let asm_note = |steps: &[PathStep<'_>], text: String| {
        let s = asm.span_at(steps);
        Notice {
            path: asm.path.clone(),
            line: s.line,
            column: s.column,
            text,
        }
    };
    let net_note = |line: u32, column: u32, text: String| Notice {
        path: netlist.path.clone(),
        line,
        column,
        text,
    };

    // Parts not fitted.
    let not_fitted: BTreeSet<&str> = a.not_fitted.iter().map(String::as_str).collect();
    // Designator → [(net, pin index)].
    let mut parts: BTreeMap<&str, Vec<(usize, usize)>> = BTreeMap::new();
    for (n, net) in netlist.nets.iter().enumerate() {
        for (k, p) in net.pins.iter().enumerate() {
            if !not_fitted.contains(p.designator.as_str()) {
                parts.entry(p.designator.as_str()).or_default().push((n, k));
            }
        }
    }
    for (i, d) in a.not_fitted.iter().enumerate() {
        if !netlist
            .nets
            .iter()
            .any(|n| n.pins.iter().any(|p| &p.designator == d))
        {
            warnings.push(asm_note(
                &[PathStep::Key("not_fitted"), PathStep::Index(i)],
                format!("{d} is listed as not fitted but is not in the netlist"),
            ));
        }
    }

    // Scan devices and their BSDL files.
    let mut folder_cache: Option<Vec<(PathBuf, String)>> = None;
    let mut devices: Vec<PlannedDevice> = Vec::new();
    for (des, entry) in &a.devices {
        let here = [PathStep::Key("devices"), PathStep::Key(des)];
        let (bsdl, origin) = match (&entry.bsdl, &entry.part) {
            (Some(p), _) => (
                asm.resolve(p),
                "BSDL file named in the assembly file".to_string(),
            ),
            (None, Some(part)) => {
                let Some(folder) = &a.bsdl_folder else {
                    return Err(asm.error_at(
                        &here,
                        ImportErrorKind::Other(format!("device {des} names part {part} but the assembly file has no bsdl_folder")),
                    ));
                };
                let files = folder_cache.get_or_insert_with(|| bsdl_folder(&asm.resolve(folder)));
                let want = part.to_ascii_lowercase();
                let by_entity = files
                    .iter()
                    .find(|(_, e)| e.to_ascii_lowercase().contains(&want));
                let by_name = files.iter().find(|(p, _)| {
                    p.file_stem()
                        .is_some_and(|s| s.to_string_lossy().to_ascii_lowercase().contains(&want))
                });
                match (by_entity, by_name) {
                    (Some((p, e)), _) => (
                        p.clone(),
                        format!("part {part} matched entity {e} in the BSDL folder"),
                    ),
                    (None, Some((p, _))) => {
                        guesses.push(format!(
                            "{des}: part {part} matched by file name {}",
                            p.display()
                        ));
                        (
                            p.clone(),
                            format!("part {part} matched by file name in the BSDL folder"),
                        )
                    }
                    (None, None) => {
                        return Err(asm.error_at(
                            &here,
                            ImportErrorKind::Other(format!(
                                "no BSDL file in {} has an entity or file name holding `{part}`",
                                folder.display()
                            )),
                        ))
                    }
                }
            }
            (None, None) => {
                return Err(asm.error_at(
                    &here,
                    ImportErrorKind::Other(format!(
                        "device {des} needs `bsdl:` (a file) or `part:` (found in bsdl_folder)"
                    )),
                ))
            }
        };
        let text = read_bsdl_text(&bsdl).map_err(|e| {
            asm.error_at(&here, ImportErrorKind::Other(format!("device {des}: {e}")))
        })?;
        let parse = |pkg: Option<&str>| {
            parse_bsdl_package(&text, pkg).map_err(|mut e| {
                e.path = Some(bsdl.clone());
                asm.error_at(&here, ImportErrorKind::Other(format!("device {des}: {e}")))
            })
        };
        let mut model = parse(entry.package.as_deref())?;
        let pins: Vec<&str> = parts
            .get(des.as_str())
            .map(|v| {
                v.iter()
                    .map(|&(n, k)| netlist.nets[n].pins[k].pin.as_str())
                    .collect()
            })
            .unwrap_or_default();
        if pins.is_empty() {
            warnings.push(asm_note(
                &here,
                format!("scan device {des} is in the assembly file but not in the netlist"),
            ));
        }
        let mut package = entry.package.clone();
        if package.is_none() && model.packages.len() > 1 && !pins.is_empty() {
            let covers = |m: &DeviceModel| {
                let map = m.pin_map();
                pins.iter().all(|p| map.contains_key(*p))
            };
            if !covers(&model) {
                for pkg in model.packages.clone() {
                    let other = parse(Some(&pkg))?;
                    if covers(&other) {
                        guesses.push(format!(
                            "{des}: package {pkg} chosen, the pin map of {} that holds all {} netlist pins",
                            model.entity,
                            pins.len()
                        ));
                        package = Some(pkg);
                        model = other;
                        break;
                    }
                }
            }
        }
        let pads = pad_map(netlist, parts.get(des.as_str()), &model);
        devices.push(PlannedDevice {
            designator: des.clone(),
            bsdl,
            package,
            pads,
            model,
            entry: entry.clone(),
            origin,
        });
    }
    let dev_index: HashMap<&str, usize> = devices
        .iter()
        .enumerate()
        .map(|(i, d)| (d.designator.as_str(), i))
        .collect();

    // Pin maps; netlist pins of scan devices that the BSDL lacks.
    let maps: Vec<BTreeMap<String, virtual_board::PortRef>> =
        devices.iter().map(|d| d.model.pin_map()).collect();
    let mut dropped: BTreeSet<(usize, usize)> = BTreeSet::new();
    for (i, d) in devices.iter().enumerate() {
        for &(n, k) in parts
            .get(d.designator.as_str())
            .map(Vec::as_slice)
            .unwrap_or(&[])
        {
            let p = &netlist.nets[n].pins[k];
            if !maps[i].contains_key(&p.pin) {
                dropped.insert((n, k));
                warnings.push(net_note(
                    p.line,
                    p.column,
                    format!(
                        "pin {}-{} (net {}) is not in the pin map of {} ({}): left out",
                        p.designator, p.pin, netlist.nets[n].name, d.model.entity, d.model.package
                    ),
                ));
            }
        }
    }
    // TAP signal of each scan-device pin.
    let mut tap_of: HashMap<(&str, &str), &'static str> = HashMap::new();
    for d in &devices {
        let t = &d.model.tap;
        for (sig, port) in [
            ("TDI", &t.tdi),
            ("TDO", &t.tdo),
            ("TMS", &t.tms),
            ("TCK", &t.tck),
            ("TRST*", &t.trst),
        ] {
            if let Some(p) = port.as_deref().and_then(|p| d.model.port(p)) {
                for pin in p.pins.iter().flatten() {
                    tap_of.insert((d.designator.as_str(), pin.as_str()), sig);
                }
            }
        }
    }
    // Net of each (designator, pin).
    let mut net_of: HashMap<(&str, &str), usize> = HashMap::new();
    for (n, net) in netlist.nets.iter().enumerate() {
        for p in &net.pins {
            net_of.insert((p.designator.as_str(), p.pin.as_str()), n);
        }
    }
    let tap_pins_on = |n: usize, sig: &str| -> Vec<&str> {
        let mut v: Vec<&str> = netlist.nets[n]
            .pins
            .iter()
            .filter(|p| tap_of.get(&(p.designator.as_str(), p.pin.as_str())) == Some(&sig))
            .map(|p| p.designator.as_str())
            .collect();
        v.sort_unstable();
        v
    };
    let pin_of = |des: &str, sig: &str| -> Option<&str> {
        tap_of
            .iter()
            .filter(|((d, _), s)| *d == des && **s == sig)
            .map(|((_, p), _)| *p)
            .min()
    };

    // TAP ports.
    let mut ports: Vec<PlannedPort> = Vec::new();
    let mut connectors: BTreeSet<String> = BTreeSet::new();
    let mut tap_nets: BTreeSet<usize> = BTreeSet::new();
    for (pi, port) in a.tap_ports.iter().enumerate() {
        let here = [PathStep::Key("tap_ports"), PathStep::Index(pi)];
        if let Some(chain) = &port.chain {
            for (ci, des) in chain.iter().enumerate() {
                if !dev_index.contains_key(des.as_str()) {
                    return Err(asm.error_at(
                        &[
                            PathStep::Key("tap_ports"),
                            PathStep::Index(pi),
                            PathStep::Key("chain"),
                            PathStep::Index(ci),
                        ],
                        ImportErrorKind::Other(format!(
                            "{des} is not a scan device of the assembly file"
                        )),
                    ));
                }
            }
            let trst = match &port.trst {
                Some(TrstEntry::Wired(b)) => *b,
                Some(TrstEntry::Pin(_)) | None => false,
            };
            ports.push(PlannedPort {
                name: port.name.clone(),
                chain: chain.clone(),
                trst,
                origin: "chain given by hand in the assembly file".into(),
            });
            continue;
        }
        let Some(conn) = &port.connector else {
            return Err(asm.error_at(
                &here,
                ImportErrorKind::Other(format!(
                    "TAP port {} needs `connector:` with its pins, or `chain:`",
                    port.name
                )),
            ));
        };
        connectors.insert(conn.clone());
        let conn_net =
            |key: &'static str, pin: &Option<String>| -> Result<Option<usize>, ImportError> {
                let Some(pin) = pin else { return Ok(None) };
                net_of
                    .get(&(conn.as_str(), pin.as_str()))
                    .copied()
                    .map(Some)
                    .ok_or_else(|| {
                        asm.error_at(
                            &[
                                PathStep::Key("tap_ports"),
                                PathStep::Index(pi),
                                PathStep::Key(key),
                            ],
                            ImportErrorKind::Other(format!(
                                "connector pin {conn}-{pin} ({key}) is on no net of the netlist"
                            )),
                        )
                    })
            };
        let need = |key: &'static str, pin: &Option<String>| -> Result<usize, ImportError> {
            conn_net(key, pin)?.ok_or_else(|| {
                asm.error_at(
                    &here,
                    ImportErrorKind::Other(format!(
                        "TAP port {} needs `{key}:`, the connector's pin",
                        port.name
                    )),
                )
            })
        };
        let tdi_net = need("tdi", &port.tdi)?;
        let tdo_net = need("tdo", &port.tdo)?;
        let tms_net = conn_net("tms", &port.tms)?;
        let tck_net = conn_net("tck", &port.tck)?;
        let trst_pin = match &port.trst {
            Some(TrstEntry::Pin(p)) => Some(p.clone()),
            _ => None,
        };
        let trst_net = conn_net("trst", &trst_pin)?;
        tap_nets.extend(
            [Some(tdi_net), Some(tdo_net), tms_net, tck_net, trst_net]
                .into_iter()
                .flatten(),
        );
        // Follow TDI → device → TDO → next TDI … → the connector's TDO.
        let mut chain: Vec<String> = Vec::new();
        let mut path = vec![format!("TDI net {}", netlist.nets[tdi_net].name)];
        let mut cur = tdi_net;
        loop {
            let next: Vec<&str> = tap_pins_on(cur, "TDI")
                .into_iter()
                .filter(|d| !chain.iter().any(|c| c == d))
                .collect();
            if next.is_empty() {
                if cur != tdo_net {
                    warnings.push(asm_note(
                        &here,
                        format!(
                            "TAP port {}: the chain breaks {}: net {} reaches no further device's TDI and not the connector's TDO ({})",
                            port.name,
                            chain.last().map_or("at the connector".to_string(), |d| format!("after {d}")),
                            netlist.nets[cur].name,
                            netlist.nets[tdo_net].name
                        ),
                    ));
                }
                break;
            }
            if next.len() > 1 {
                guesses.push(format!(
                    "TAP port {}: net {} reaches the TDI of {}; a chain cannot fork, {} taken",
                    port.name,
                    netlist.nets[cur].name,
                    next.join(" and "),
                    next[0]
                ));
            }
            let d = next[0].to_string();
            path.push(d.clone());
            chain.push(d.clone());
            let Some(tdo_pin) = pin_of(&d, "TDO") else {
                break;
            };
            let Some(&n) = net_of.get(&(d.as_str(), tdo_pin)) else {
                warnings.push(asm_note(
                    &here,
                    format!("TAP port {}: the chain breaks after {d}: its TDO (pin {tdo_pin}) is on no net", port.name),
                ));
                break;
            };
            tap_nets.insert(n);
            path.push(format!("net {}", netlist.nets[n].name));
            cur = n;
        }
        // TMS, TCK and TRST* fan out to every device of the chain.
        let mut trst = trst_net.is_some();
        for d in &chain {
            for (sig, want) in [("TMS", tms_net), ("TCK", tck_net), ("TRST*", trst_net)] {
                let Some(pin) = pin_of(d, sig) else {
                    continue;
                };
                let got = net_of.get(&(d.as_str(), pin)).copied();
                if let Some(n) = got {
                    tap_nets.insert(n);
                }
                if want.is_some() && got != want {
                    if sig == "TRST*" {
                        trst = false;
                    }
                    warnings.push(asm_note(
                        &here,
                        format!(
                            "TAP port {}: {d} {sig} (pin {pin}) is on {}, not on the connector's {sig} net {}",
                            port.name,
                            got.map_or("no net".to_string(), |n| format!("net {}", netlist.nets[n].name)),
                            want.map_or(String::new(), |n| netlist.nets[n].name.clone())
                        ),
                    ));
                }
            }
        }
        if trst_net.is_some() && !chain.iter().any(|d| pin_of(d, "TRST*").is_some()) {
            trst = false;
        }
        ports.push(PlannedPort {
            name: port.name.clone(),
            chain,
            trst,
            origin: format!(
                "found by following the TAP nets from {conn}: {}",
                path.join(" → ")
            ),
        });
    }
    // Any other net holding a TAP pin of a scan device is TAP wiring too.
    for (n, net) in netlist.nets.iter().enumerate() {
        if net
            .pins
            .iter()
            .any(|p| tap_of.contains_key(&(p.designator.as_str(), p.pin.as_str())))
        {
            tap_nets.insert(n);
        }
    }
    let on_port: BTreeSet<&str> = ports
        .iter()
        .flat_map(|p| p.chain.iter().map(String::as_str))
        .collect();
    for d in &devices {
        if !on_port.contains(d.designator.as_str()) {
            warnings.push(asm_note(
                &[PathStep::Key("devices"), PathStep::Key(&d.designator)],
                format!(
                    "scan device {} is on no TAP port found: left out of the board",
                    d.designator
                ),
            ));
        }
    }
    devices.retain(|d| on_port.contains(d.designator.as_str()));
    let dev_index: HashMap<String, usize> = devices
        .iter()
        .enumerate()
        .map(|(i, d)| (d.designator.clone(), i))
        .collect();

    // Scan pins of each net (kept devices, pins the BSDL has, no TAP pins).
    let (di, dr) = (&dev_index, &dropped);
    let scan_pins = move |n: usize| {
        netlist.nets[n]
            .pins
            .iter()
            .enumerate()
            .filter(move |(k, p)| di.contains_key(&p.designator) && !dr.contains(&(n, *k)))
    };

    // Rails.
    let mut rails: Vec<PlannedRail> = Vec::new();
    let net_named: HashMap<&str, usize> = netlist
        .nets
        .iter()
        .enumerate()
        .map(|(i, n)| (n.name.as_str(), i))
        .collect();
    if a.power.is_some() || a.ground.is_some() {
        for (key, list, power) in [("power", &a.power, true), ("ground", &a.ground, false)] {
            for (i, name) in list.iter().flatten().enumerate() {
                if !net_named.contains_key(name.as_str()) {
                    return Err(asm.error_at(
                        &[PathStep::Key(key), PathStep::Index(i)],
                        ImportErrorKind::Other(format!("rail {name} is not a net of the netlist")),
                    ));
                }
                rails.push(PlannedRail {
                    net: name.clone(),
                    power,
                    origin: "given in the assembly file".into(),
                });
            }
        }
    } else {
        for (n, net) in netlist.nets.iter().enumerate() {
            if tap_nets.contains(&n) {
                continue;
            }
            let by_name = rail_by_name(&net.name);
            let mut linkage: BTreeSet<bool> = BTreeSet::new();
            let mut linked: Vec<String> = Vec::new();
            let mut signal: Vec<String> = Vec::new();
            for (_, p) in scan_pins(n) {
                let d = &devices[dev_index[&p.designator]];
                let port = maps[dev_index[&p.designator]]
                    .get(&p.pin)
                    .map(|r| r.name.clone())
                    .unwrap_or_default();
                match linkage_kind(&d.model, &port) {
                    Some(Some(k)) => {
                        linkage.insert(k);
                        linked.push(format!("{}.{}", p.designator, port));
                    }
                    Some(None) => {}
                    None => signal.push(format!("{}-{}", p.designator, p.pin)),
                }
            }
            linked.dedup();
            let word = |p: bool| if p { "power" } else { "ground" };
            let rail = match by_name {
                Some(k) if !signal.is_empty() => {
                    warnings.push(net_note(
                        net.pins.first().map_or(0, |p| p.line),
                        1,
                        format!(
                            "net {} is named like a {} rail but holds signal pins ({}): kept as a signal net",
                            net.name,
                            word(k),
                            signal.join(", ")
                        ),
                    ));
                    None
                }
                Some(k) if linkage.iter().any(|&l| l != k) => {
                    warnings.push(net_note(
                        net.pins.first().map_or(0, |p| p.line),
                        1,
                        format!(
                            "net {} is named like a {} rail but the BSDL files make its pins {}: not taken as a rail",
                            net.name,
                            word(k),
                            linked.join(", ")
                        ),
                    ));
                    None
                }
                Some(k) if linkage.is_empty() => {
                    guesses.push(format!(
                        "{}: a {} rail by its name only (no BSDL pin confirms it)",
                        net.name,
                        word(k)
                    ));
                    Some((k, "by name only".to_string()))
                }
                Some(k) => Some((
                    k,
                    format!(
                        "by name, confirmed by the BSDL linkage pins {}",
                        linked.join(", ")
                    ),
                )),
                None if linkage.len() == 1 && signal.is_empty() => {
                    let k = linkage.iter().next().copied().unwrap_or(true);
                    guesses.push(format!(
                        "{}: a {} rail because its scan pins are all BSDL {} pins ({}), though its name is not a rail's",
                        net.name,
                        word(k),
                        word(k),
                        linked.join(", ")
                    ));
                    Some((k, format!("by its BSDL linkage pins {}", linked.join(", "))))
                }
                None => None,
            };
            if let Some((power, origin)) = rail {
                rails.push(PlannedRail {
                    net: net.name.clone(),
                    power,
                    origin,
                });
            }
        }
    }
    let rail_of: HashMap<&str, bool> = rails.iter().map(|r| (r.net.as_str(), r.power)).collect();

    // The part table: part numbers → clusters and pulls.
    let table = read_part_table(asm)?;
    let from_netlist: BTreeMap<String, PartNumberOf> = netlist
        .part_numbers
        .iter()
        .map(|(d, (number, line))| {
            (
                d.clone(),
                PartNumberOf {
                    number: number.clone(),
                    origin: format!("the netlist's line {line}"),
                },
            )
        })
        .collect();
    let numbers = part_numbers(asm, parts.keys().copied(), &from_netlist)?;
    for (d, given) in &numbers {
        if let Some(other) = from_netlist.get(d).filter(|o| o.number != given.number) {
            warnings.push(net_note(
                0,
                0,
                format!(
                    "{d}: the assembly file says part {} ({}), the netlist part {} ({}): {} used",
                    given.number, given.origin, other.number, other.origin, given.number
                ),
            ));
        }
    }
    let kept_maps: Vec<BTreeMap<String, virtual_board::PortRef>> =
        devices.iter().map(|d| d.model.pin_map()).collect();
    let mut scan_driven: BTreeSet<usize> = BTreeSet::new();
    for n in 0..netlist.nets.len() {
        let drives = scan_pins(n).any(|(_, p)| {
            let i = dev_index[&p.designator];
            kept_maps[i]
                .get(&p.pin)
                .and_then(|r| devices[i].model.port(&r.name))
                .is_some_and(|port| {
                    matches!(
                        port.mode,
                        PortMode::Out | PortMode::InOut | PortMode::Buffer
                    )
                })
        });
        if drives {
            scan_driven.insert(n);
        }
    }
    let skip =
        |d: &str| dev_index.contains_key(d) || connectors.contains(d) || a.clusters.contains_key(d);
    let from_table = expand(
        &PartInputs {
            netlist,
            parts: &parts,
            numbers: &numbers,
            table: &table,
            skip: &skip,
            rail_of: &rail_of,
            tap_nets: &tap_nets,
            scan_driven: &scan_driven,
        },
        asm,
    );
    warnings.extend(from_table.warnings);
    guesses.extend(from_table.guesses);

    // Resistors: two pins, rail to signal net → a pull.
    let prefix = a.resistor_prefix.clone().unwrap_or_else(|| "R".into());
    let is_resistor = |d: &str| {
        d.strip_prefix(prefix.as_str())
            .is_some_and(|r| r.starts_with(|c: char| c.is_ascii_digit()))
    };
    let mut pulls: BTreeMap<String, PlannedPull> = BTreeMap::new();
    for p in from_table.pulls {
        match pulls.get(&p.net) {
            Some(other) if other.up != p.up => warnings.push(net_note(
                p.line,
                1,
                format!(
                    "net {} has a pull-up and a pull-down ({} and {}): {} kept",
                    p.net, other.resistor, p.resistor, other.resistor
                ),
            )),
            Some(_) => {}
            None => {
                guesses.push(format!(
                    "{}: a pull-{} on {}, a part-table resistor between it and rail {}",
                    p.resistor,
                    if p.up { "up" } else { "down" },
                    p.net,
                    p.rail
                ));
                pulls.insert(p.net.clone(), p);
            }
        }
    }
    let mut handled: BTreeSet<String> = from_table.handled.clone();
    let mut unmodelled: Vec<UnmodelledPart> = Vec::new();
    for (des, pins) in &parts {
        if skip(des) || from_table.handled.contains(*des) {
            continue;
        }
        let mut nets: Vec<String> = pins
            .iter()
            .map(|&(n, _)| netlist.nets[n].name.clone())
            .collect();
        nets.sort();
        nets.dedup();
        let first = &netlist.nets[pins[0].0].pins[pins[0].1];
        let mut note = String::new();
        let part = numbers.get(*des).map(|n| n.number.clone());
        if let Some(why) = from_table.left.get(*des) {
            note = why.clone();
        } else if part.is_some() && !is_resistor(des) {
            // A part number the table does not define: said in the report.
        } else if is_resistor(des) {
            let alone = |n: usize| {
                netlist.nets[n]
                    .pins
                    .iter()
                    .filter(|p| !not_fitted.contains(p.designator.as_str()))
                    .count()
                    == 1
            };
            if pins.len() == 1 || pins.iter().any(|&(n, _)| alone(n)) {
                warnings.push(net_note(
                    first.line,
                    first.column,
                    format!("resistor {des} has one end unconnected: not taken as a pull"),
                ));
                note = "one end unconnected".into();
            } else if pins.len() == 2 {
                let (n0, n1) = (pins[0].0, pins[1].0);
                let r0 = rail_of.get(netlist.nets[n0].name.as_str()).copied();
                let r1 = rail_of.get(netlist.nets[n1].name.as_str()).copied();
                match (r0, r1) {
                    (Some(up), None) | (None, Some(up)) => {
                        let (sig, rail) = if r0.is_some() { (n1, n0) } else { (n0, n1) };
                        let signal = netlist.nets[sig].name.clone();
                        if tap_nets.contains(&sig) {
                            handled.insert(des.to_string());
                            continue; // a pull on TAP wiring: the port's business
                        }
                        match pulls.get(&signal) {
                            Some(other) if other.up != up => {
                                warnings.push(net_note(
                                    first.line,
                                    first.column,
                                    format!(
                                        "net {signal} has a pull-up and a pull-down ({} and {des}): {} kept",
                                        other.resistor, other.resistor
                                    ),
                                ));
                            }
                            Some(_) => {}
                            None => {
                                guesses.push(format!(
                                    "{des}: a pull-{} on {signal}, a two-pin part named like a resistor between it and rail {}",
                                    if up { "up" } else { "down" },
                                    netlist.nets[rail].name
                                ));
                                pulls.insert(
                                    signal.clone(),
                                    PlannedPull {
                                        net: signal,
                                        up,
                                        resistor: des.to_string(),
                                        rail: netlist.nets[rail].name.clone(),
                                        line: first.line,
                                    },
                                );
                            }
                        }
                        handled.insert(des.to_string());
                        continue;
                    }
                    (Some(_), Some(_)) => note = "between two rails".into(),
                    (None, None) => {
                        note = "series resistor between two signal nets: give it under clusters (kind: resistor) if a test goes through it".into()
                    }
                }
            } else {
                note = format!("{} pins: a resistor pack", pins.len());
            }
        }
        unmodelled.push(UnmodelledPart {
            designator: des.to_string(),
            part,
            nets,
            note,
        });
    }
    unmodelled.sort_by(|x, y| {
        y.nets
            .len()
            .cmp(&x.nets.len())
            .then_with(|| x.designator.cmp(&y.designator))
    });

    // Nets: every net with a scan pin (TAP wiring excluded), or named by a
    // cluster or a float override.
    let mut named: BTreeSet<String> = a.float_overrides.keys().cloned().collect();
    for v in a.clusters.values() {
        scalars(v, &mut named);
    }
    for c in &from_table.clusters {
        named.extend(c.nets.iter().cloned());
    }
    let mut nets: BTreeMap<String, PlannedNet> = BTreeMap::new();
    for (n, net) in netlist.nets.iter().enumerate() {
        let live: Vec<_> = net
            .pins
            .iter()
            .filter(|p| !not_fitted.contains(p.designator.as_str()))
            .collect();
        if live.len() == 1 {
            warnings.push(net_note(
                live[0].line,
                live[0].column,
                format!(
                    "net {} has one pin ({}-{})",
                    net.name, live[0].designator, live[0].pin
                ),
            ));
        }
        if tap_nets.contains(&n) {
            continue;
        }
        let pins: Vec<String> = scan_pins(n)
            .map(|(_, p)| format!("{}.{}", p.designator, p.pin))
            .collect();
        if pins.is_empty() && !named.contains(&net.name) {
            continue;
        }
        nets.insert(
            net.name.clone(),
            PlannedNet {
                pins,
                line: net.pins.first().map_or(0, |p| p.line),
            },
        );
    }
    pulls.retain(|net, _| nets.contains_key(net));
    rails.retain(|r| nets.contains_key(&r.net));
    let name = a.name.clone().unwrap_or_else(|| {
        netlist
            .path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default()
    });
    Ok(ImportPlan {
        name,
        devices,
        ports,
        nets,
        pulls,
        rails,
        unmodelled,
        clusters: from_table.clusters,
        guesses,
        warnings,
    })
}

/// Every scalar string below a YAML value.
fn scalars(v: &serde_yaml::Value, out: &mut BTreeSet<String>) {
    match v {
        serde_yaml::Value::String(s) => {
            out.insert(s.clone());
        }
        serde_yaml::Value::Sequence(items) => items.iter().for_each(|i| scalars(i, out)),
        serde_yaml::Value::Mapping(m) => m.values().for_each(|i| scalars(i, out)),
        _ => {}
    }
}

/// The BSDL files of a folder (`.bsd`, `.bsdl`), with their entity names,
/// sorted by path; files that do not read are skipped.
fn bsdl_folder(dir: &std::path::Path) -> Vec<(PathBuf, String)> {
    let mut out = Vec::new();
    let Ok(entries) = std::fs::read_dir(dir) else {
        return out;
    };
    let mut paths: Vec<PathBuf> = entries
        .flatten()
        .map(|e| e.path())
        .filter(|p| {
            p.extension()
                .is_some_and(|x| x.eq_ignore_ascii_case("bsd") || x.eq_ignore_ascii_case("bsdl"))
        })
        .collect();
    paths.sort();
    for p in paths {
        if let Ok(m) = read_bsdl_text(&p).and_then(|t| parse_bsdl_package(&t, None)) {
            out.push((p, m.entity));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rail_names() {
        // Common practice, no standard.
        for (n, want) in [
            ("GND", Some(false)),
            ("AGND", Some(false)),
            ("VSS_IO", Some(false)),
            ("VCC", Some(true)),
            ("VDD_CORE", Some(true)),
            ("+3V3", Some(true)),
            ("P3V3_IO", Some(true)),
            ("3V3", Some(true)),
            ("5V", Some(true)),
            ("PA3", None),
            ("PV3", None),
            ("HOST_D0", None),
        ] {
            assert_eq!(rail_by_name(n), want, "{n}");
        }
    }
}
