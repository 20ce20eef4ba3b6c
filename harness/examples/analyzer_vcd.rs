//! Rewrites a VCD written by `boardtwin play --vcd` the way a logic analyzer
//! would record the same wires: one TAP port's wires under the analyzer's own
//! channel names, another timescale (1 ps), a sample clock that puts every
//! edge on a 12.5 ns grid with some jitter (uneven spacing, several samples
//! per TCK period), and an extra signal the probe also picked up.
//!
//! `cargo run -p harness --example analyzer_vcd -- IN.vcd PORT OUT.vcd`
//!
//! The bundled real-capture scenario's recording was made with it.

use std::collections::BTreeMap;

fn main() -> std::process::ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [input, port, output] = args.as_slice() else {
        eprintln!("usage: analyzer_vcd IN.vcd PORT OUT.vcd");
        return std::process::ExitCode::from(2);
    };
    let text = match std::fs::read_to_string(input) {
        Ok(t) => t,
        Err(e) => {
            eprintln!("{input}: {e}");
            return std::process::ExitCode::from(2);
        }
    };
    // Channel names of the invented analyzer, by wire.
    let channels = [
        ("TCK", "ch0_tck"),
        ("TMS", "ch1_tms"),
        ("TDI", "ch2_tdi"),
        ("TDO", "ch3_tdo"),
        ("TRST_N", "ch4_trst"),
    ];
    let mut keep: BTreeMap<String, &str> = BTreeMap::new();
    for line in text.lines() {
        let f: Vec<&str> = line.split_whitespace().collect();
        if f.first() == Some(&"$var") && f.len() >= 5 {
            if let Some((_, ch)) = channels.iter().find(|(w, _)| f[4] == format!("{port}_{w}")) {
                keep.insert(f[3].to_string(), ch);
            }
        }
    }
    let mut out = String::from("$date\n\tcaptured on the bench (invented analyzer)\n$end\n$timescale 1 ps $end\n$scope module probe $end\n");
    for (code, name) in &keep {
        out.push_str(&format!("$var wire 1 {code} {name} $end\n"));
    }
    out.push_str("$var wire 1 ~ sys_clk $end\n$upscope $end\n$enddefinitions $end\n");
    // Times: ns → ps, jittered by up to ±6 ns, then snapped to the 12.5 ns sample grid.
    let mut seed = 0x5EEDu64;
    let mut jitter = || {
        seed = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((seed >> 33) % 12001) as i64 - 6000
    };
    let mut body: Vec<(u64, Vec<String>)> = Vec::new();
    let mut in_defs = true;
    for line in text.lines() {
        let t = line.trim();
        if in_defs {
            if t.starts_with("$enddefinitions") {
                in_defs = false;
            }
            continue;
        }
        if let Some(time) = t.strip_prefix('#') {
            let ns: i64 = time.parse().unwrap_or(0);
            let ps = (ns * 1000 + if ns == 0 { 0 } else { jitter() }).max(0) as u64;
            let snapped = (ps + 6250) / 12500 * 12500;
            body.push((snapped, Vec::new()));
        } else if let Some(code) = t.get(1..) {
            if keep.contains_key(code) {
                if let Some(last) = body.last_mut() {
                    last.1.push(t.to_string());
                }
            }
        }
    }
    let end = body.last().map(|b| b.0).unwrap_or(0);
    // The extra signal: a 27 MHz-ish system clock toggling every 18.5 ns.
    let mut events: BTreeMap<u64, Vec<String>> = BTreeMap::new();
    for (t, changes) in body {
        events.entry(t).or_default().extend(changes);
    }
    let mut t = 0u64;
    let mut level = false;
    while t <= end {
        events
            .entry(t)
            .or_default()
            .push(format!("{}~", level as u8));
        level = !level;
        t += 18_500;
    }
    for (t, changes) in events {
        if changes.is_empty() {
            continue;
        }
        out.push_str(&format!("#{t}\n"));
        for c in changes {
            out.push_str(&c);
            out.push('\n');
        }
    }
    if let Err(e) = std::fs::write(output, out) {
        eprintln!("{output}: {e}");
        return std::process::ExitCode::from(2);
    }
    std::process::ExitCode::SUCCESS
}
