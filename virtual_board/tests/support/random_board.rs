//! Random boards for the property tests: demo devices on random TAP ports,
//! random nets between their pins, random system logic and float policy.

use std::path::{Path, PathBuf};

use virtual_board::{load_board_text, Board, Rng};

const DEVICES: [&str; 4] = [
    "qm7420_bus_bridge.bsd",
    "qm3310_io_expander.bsd",
    "qm5508_port_controller.bsd",
    "qm2040_clock_buffer.bsd",
];

/// A board file's text whose devices read the demo BSDL files.
pub fn demo_board(yaml: &str) -> Board {
    let dir = devices_dir();
    load_board_text(yaml, Path::new("inline.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    })
    .unwrap_or_else(|e| panic!("{e}"))
    .board
}

pub fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

/// A random board: 1–3 TAP ports, 1–6 demo devices, random nets between
/// random pins of their output and input ports, random system logic, a
/// float policy drawn from `floats`.
pub fn random_board(seed: u64, floats: &[&str]) -> Board {
    let mut rng = Rng::new(seed);
    let mut pick = |n: usize| (rng.next_u64() % n as u64) as usize;
    let ports = 1 + pick(3);
    let count = ports.max(1 + pick(6));
    let dir = devices_dir();
    let models: Vec<_> = DEVICES
        .iter()
        .map(|f| virtual_board::read_bsdl(&dir.join(f)).expect("demo BSDL reads"))
        .collect();
    let mut yaml = format!(
        "name: random-{seed}\nseed: {seed}\nshorts: {}\ndevices:\n",
        if pick(2) == 0 {
            "wired-and"
        } else {
            "wired-or"
        }
    );
    let mut chains = vec![Vec::new(); ports];
    let mut pins = Vec::new();
    for i in 0..count {
        let m = pick(4);
        let outputs = ["low", "high", "off"][pick(3)];
        yaml += &format!("  U{i}: {{ bsdl: {}, outputs: {outputs} }}\n", DEVICES[m]);
        chains[if i < ports { i } else { pick(ports) }].push(format!("U{i}"));
        for cell in &models[m].cells {
            if let Some(p) = &cell.port {
                let pin = models[m]
                    .port(&p.name)
                    .and_then(|x| x.pins_of(p.index))
                    .and_then(|v| v.first().cloned());
                if let Some(pin) = pin {
                    let r = format!("U{i}.{pin}");
                    if !pins.contains(&r) {
                        pins.push(r);
                    }
                }
            }
        }
    }
    yaml += "tap_ports:\n";
    for (k, chain) in chains.iter().enumerate() {
        yaml += &format!(
            "  - {{ name: P{k}, chain: [{}], trst: {} }}\n",
            chain.join(", "),
            pick(2) == 0
        );
    }
    yaml += "nets:\n";
    // Shuffle the pins and group them into nets of 1–3 pins.
    for i in (1..pins.len()).rev() {
        let j = pick(i + 1);
        pins.swap(i, j);
    }
    let mut k = 0;
    let mut net = 0;
    while k < pins.len() {
        let size = (1 + pick(3)).min(pins.len() - k);
        yaml += &format!("  N{net}: [{}]\n", pins[k..k + size].join(", "));
        k += size;
        net += 1;
    }
    yaml += &format!("float: {}\n", floats[pick(floats.len())]);
    let loaded = load_board_text(&yaml, Path::new("random.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    });
    match loaded {
        Ok(l) => l.board,
        Err(e) => panic!("random board does not load: {e}\n{yaml}"),
    }
}
