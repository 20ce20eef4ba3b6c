//! Reading and planning a generated IPC-D-356A netlist of 20,000 nets and
//! 100,000 pins (issue 12's size): `cargo bench -p harness --bench import_ipc356`.
//!
//! The netlist: 400 parts of 200 pins (U1…U400) and 10,000 two-pin
//! resistors (R1…R10000); net i holds four part pins and one resistor pin.
//! The assembly file names no scan device, so the plan classifies every
//! part and resistor (the work that grows with the netlist).

use std::fmt::Write as _;
use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use harness::import::{plan, read_assembly, read_ipc356};

fn netlist() -> String {
    let mut t = String::from("C  generated\nP  UNITS CUST 0\n");
    for net in 0..20_000usize {
        let name = format!("N{net}");
        for k in 0..4 {
            let pin = net * 4 + k;
            let _ = writeln!(
                t,
                "327{name:<14}   {:<6}-{:<4}       A01X+{:06}Y+{:06}X0300Y0100R000 S1",
                format!("U{}", pin / 200 + 1),
                pin % 200 + 1,
                pin % 1000,
                pin / 1000
            );
        }
        let _ = writeln!(
            t,
            "327{name:<14}   {:<6}-{:<4}       A01X+{:06}Y+{:06}X0300Y0100R000 S1",
            format!("R{}", net / 2 + 1),
            net % 2 + 1,
            net % 1000,
            net / 1000
        );
    }
    t.push_str("999\n");
    t
}

fn bench(c: &mut Criterion) {
    let text = netlist();
    let path = Path::new("generated.ipc");
    let n = read_ipc356(&text, path).expect("reads");
    assert_eq!((n.nets.len(), n.pin_count()), (20_000, 100_000));
    let asm = read_assembly("devices: {}\n", Path::new("assembly.yaml")).expect("assembly");
    let mut g = c.benchmark_group("import_20000_nets_100000_pins");
    g.sample_size(10);
    g.bench_function("read_ipc356", |b| {
        b.iter(|| read_ipc356(&text, path).expect("reads"))
    });
    g.bench_function("read_and_plan", |b| {
        b.iter(|| {
            let n = read_ipc356(&text, path).expect("reads");
            plan(&n, &asm).expect("plan")
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
