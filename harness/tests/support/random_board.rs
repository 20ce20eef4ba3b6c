//! Random boards of the demo devices, for property tests: 2–4 devices
//! alternating between two TAP ports (so nets often cross between the
//! ports), random nets of 1–3 pins (bidirectional pins included), pulls,
//! float policy and system-logic levels.

use std::path::{Path, PathBuf};

use virtual_board::{load_board_text, BsdlError, BsdlErrorKind, LoadedBoard, Rng};

/// The demo devices the boards are made of.
pub const DEVICES: [&str; 4] = [
    "qm7420_bus_bridge.bsd",
    "qm3310_io_expander.bsd",
    "qm5508_port_controller.bsd",
    "qm2040_clock_buffer.bsd",
];

/// The demo devices' folder.
pub fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

/// Reads a demo device's BSDL file by name.
pub fn source() -> impl FnMut(&Path) -> Result<(String, PathBuf), BsdlError> {
    let dir = devices_dir();
    move |p: &Path| {
        let full = dir.join(p);
        std::fs::read_to_string(&full)
            .map(|t| (t, full.clone()))
            .map_err(|e| BsdlError {
                path: Some(full.clone()),
                span: Default::default(),
                kind: BsdlErrorKind::Io(e.to_string()),
            })
    }
}

/// A random board of demo devices on 1–2 TAP ports with random nets,
/// pulls and float policy.
pub fn random_board(rng: &mut Rng) -> LoadedBoard {
    random_board_on(rng, 2)
}

/// [`random_board`] with its devices dealt in turn to `ports` TAP ports.
#[allow(dead_code)] // not every test binary that includes this uses it
pub fn random_board_on(rng: &mut Rng, ports: usize) -> LoadedBoard {
    let (yaml, _) = random_yaml(rng, ports);
    load_board_text(&yaml, Path::new("random.yaml"), &mut source())
        .unwrap_or_else(|e| panic!("{e}\n{yaml}"))
}

/// [`random_board`] with 1–3 random non-scan parts between its nets
/// (buffers, inverters, gates, three-state buffers, series resistors; a
/// part's inputs on lower-numbered nets than its output, so no loop), and
/// the nets the parts read or drive.
#[allow(dead_code)] // not every test binary that includes this uses it
pub fn random_board_with_parts(rng: &mut Rng) -> (LoadedBoard, Vec<String>) {
    let (mut yaml, nets) = random_yaml(rng, 2);
    let mut pick = |n: usize| (rng.next_u64() % n.max(1) as u64) as usize;
    let mut near = Vec::new();
    if nets >= 3 {
        let mut parts = Vec::new();
        for c in 0..1 + pick(3) {
            let y = 1 + pick(nets - 1);
            let a = pick(y);
            let b = pick(y);
            let (na, nb, ny) = (format!("N{a}"), format!("N{b}"), format!("N{y}"));
            let entry = match pick(5) {
                0 => format!(
                    "{{ kind: {}, a: {na}, y: {ny} }}",
                    ["buffer", "inverter"][pick(2)]
                ),
                1 => format!(
                    "{{ kind: {}, inputs: [{na}, {nb}], y: {ny} }}",
                    ["and", "or", "nand", "nor", "xor"][pick(5)]
                ),
                2 => format!(
                    "{{ kind: three-state, a: {na}, enable: {nb}, enable_active: {}, y: {ny} }}",
                    ["low", "high"][pick(2)]
                ),
                _ => format!("{{ kind: resistor, a: {na}, b: {ny} }}"),
            };
            parts.push(format!("  X{c}: {entry}"));
            near.extend([na, nb, ny]);
        }
        yaml += &format!("clusters:\n{}\n", parts.join("\n"));
    }
    let loaded = load_board_text(&yaml, Path::new("random.yaml"), &mut source())
        .unwrap_or_else(|e| panic!("{e}\n{yaml}"));
    (loaded, near)
}

/// The board file of [`random_board_on`], and how many nets (`N0`…) it has.
fn random_yaml(rng: &mut Rng, ports: usize) -> (String, usize) {
    let mut pick = |n: usize| (rng.next_u64() % n as u64) as usize;
    let count = 2 + pick(3);
    let models: Vec<_> = DEVICES
        .iter()
        .map(|f| virtual_board::read_bsdl(&devices_dir().join(f)).unwrap())
        .collect();
    let mut yaml = format!(
        "name: r\nfloat: {}\nshorts: {}\ndevices:\n",
        ["high", "low", "previous"][pick(3)],
        ["wired-and", "wired-or"][pick(2)]
    );
    let mut pins = Vec::new();
    let mut chains = vec![Vec::new(); ports.max(1)];
    for i in 0..count {
        let m = pick(4);
        yaml += &format!(
            "  U{i}: {{ bsdl: {}, outputs: {} }}\n",
            DEVICES[m],
            ["low", "high", "off"][pick(3)]
        );
        let k = i % ports.max(1);
        chains[k].push(format!("U{i}"));
        for c in &models[m].cells {
            if let Some(p) = &c.port {
                if let Some(pin) = models[m]
                    .port(&p.name)
                    .and_then(|x| x.pins_of(p.index))
                    .and_then(|v| v.first().cloned())
                {
                    let r = format!("U{i}.{pin}");
                    if !pins.contains(&r) {
                        pins.push(r);
                    }
                }
            }
        }
    }
    yaml += "tap_ports:\n";
    for (k, c) in chains.iter().enumerate().filter(|(_, c)| !c.is_empty()) {
        yaml += &format!("  - {{ name: P{k}, chain: [{}] }}\n", c.join(", "));
    }
    for i in (1..pins.len()).rev() {
        let j = pick(i + 1);
        pins.swap(i, j);
    }
    yaml += "nets:\n";
    let (mut k, mut n) = (0, 0);
    let mut pulls = Vec::new();
    while k < pins.len() {
        let size = (1 + pick(3)).min(pins.len() - k);
        yaml += &format!("  N{n}: [{}]\n", pins[k..k + size].join(", "));
        if pick(5) == 0 {
            pulls.push(format!("N{n}: {}", ["up", "down"][pick(2)]));
        }
        k += size;
        n += 1;
    }
    if !pulls.is_empty() {
        yaml += &format!("pulls: {{ {} }}\n", pulls.join(", "));
    }
    (yaml, n)
}
