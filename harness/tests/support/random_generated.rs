//! Random boards of generated devices, for diagnosis tests: 2–4 devices of
//! 40 cells on one or two TAP ports, written to a temporary folder so that
//! defects can re-read the BSDL file beside the board file.

use virtual_board::{load_board, LoadedBoard, Rng};

#[path = "../../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
pub mod generated_board;

/// A number below `n`.
pub fn pick(rng: &mut Rng, n: usize) -> usize {
    (rng.next_u64() % n as u64) as usize
}

/// A random board of 2–4 generated devices (40 cells: inputs I(0..19),
/// three-state outputs Q(0..15)) on one or two TAP ports: nets from an
/// output to one or two inputs, some outputs with no receiver, some inputs
/// on their own with a pull; random float policy, short rule and system
/// output levels. The board is on disk in a temporary folder that lives as
/// long as the returned guard (defects re-read its BSDL file).
pub fn generated(rng: &mut Rng) -> (tempfile::TempDir, LoadedBoard) {
    let devices = 2 + pick(rng, 3);
    let ports = 1 + pick(rng, 2);
    let text = generated_board::bsdl(40);
    let mut yaml = format!(
        "name: random generated\nfloat: {}\nshorts: {}\ndevices:\n",
        ["high", "low"][pick(rng, 2)],
        ["wired-and", "wired-or"][pick(rng, 2)]
    );
    for d in 0..devices {
        yaml += &format!(
            "  U{d}: {{ bsdl: gen.bsd, outputs: {} }}\n",
            ["low", "high", "off"][pick(rng, 3)]
        );
    }
    yaml += "tap_ports:\n";
    for p in 0..ports {
        let chain: Vec<String> = (0..devices)
            .filter(|d| d % ports == p)
            .map(|d| format!("U{d}"))
            .collect();
        yaml += &format!("  - {{ name: P{p}, chain: [{}] }}\n", chain.join(", "));
    }
    yaml += "nets:\n";
    let mut free: Vec<Vec<usize>> = (0..devices).map(|_| (0..20).collect()).collect();
    let mut take = |rng: &mut Rng, d: usize| -> Option<String> {
        let list = &mut free[d];
        (!list.is_empty()).then(|| {
            let i = pick(rng, list.len());
            format!("U{d}.I({})", list.swap_remove(i))
        })
    };
    let mut pulls = Vec::new();
    for d in 0..devices {
        for k in 0..16 {
            if pick(rng, 10) < 3 {
                continue;
            }
            let mut pins = vec![format!("U{d}.Q({k})")];
            if pick(rng, 8) > 0 {
                let receivers = 1 + usize::from(pick(rng, 4) == 0);
                for _ in 0..receivers {
                    let e = (d + 1 + pick(rng, devices - 1)) % devices;
                    pins.extend(take(rng, e));
                }
            }
            yaml += &format!("  N{d}_{k}: [{}]\n", pins.join(", "));
        }
    }
    for d in 0..devices {
        for _ in 0..2 {
            if let Some(pin) = take(rng, d) {
                let name = format!("P{d}_{}", pulls.len());
                yaml += &format!("  {name}: [{pin}]\n");
                pulls.push(format!("{name}: {}", ["up", "down"][pick(rng, 2)]));
            }
        }
    }
    yaml += &format!("pulls: {{ {} }}\n", pulls.join(", "));
    // On disk, so defects can re-read the BSDL file beside the board file.
    let guard = tempfile::Builder::new()
        .prefix("boardtwin-diagnose-")
        .tempdir()
        .unwrap();
    let dir = guard.path();
    std::fs::write(dir.join("gen.bsd"), text).unwrap();
    std::fs::write(dir.join("generated.yaml"), &yaml).unwrap();
    let loaded = load_board(&dir.join("generated.yaml")).unwrap_or_else(|e| panic!("{e}\n{yaml}"));
    (guard, loaded)
}
