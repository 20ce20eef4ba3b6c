//! TCK periods per second over loopback: bursts of 4,096 TCK (pipelined and
//! one at a time), whole scans as single requests, and the demo
//! interconnect program through `RemoteBoard` (a program's navigation
//! periods are one round trip each).
//!
//! `cargo bench -p harness --bench remote_tck`

use std::path::Path;
use std::sync::Arc;
use std::time::Duration;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use harness::program::native::load_program;
use harness::remote::{run, BoardService, Burst, RemoteBoard, ServerConfig};
use harness::run::{RunOptions, Runner};
use virtual_board::{load_board, Bits, LoadedBoard, TapTarget};

const BURST: usize = 4096;
const PIPELINED: usize = 16;

fn demo() -> LoadedBoard {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    load_board(&root.join("scenarios/boards/harbor_controller.yaml"))
        .unwrap_or_else(|e| panic!("{e}"))
}

/// A server on 127.0.0.1:0 in a thread of its own; runs until the process ends.
fn start(design: &LoadedBoard) -> String {
    let service = Arc::new(BoardService::new(
        design.clone(),
        design.board.clone(),
        Vec::new(),
        false,
        None,
    ));
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .unwrap_or_else(|e| panic!("{e}"));
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
        .unwrap_or_else(|e| panic!("{e}"));
    let address = listener
        .local_addr()
        .unwrap_or_else(|e| panic!("{e}"))
        .to_string();
    std::thread::spawn(move || {
        runtime.block_on(run(
            listener,
            service,
            ServerConfig::default(),
            std::future::pending::<()>(),
        ));
    });
    address
}

/// A DR scan of 4,096 periods after a TMS reset (the IDCODE path), ending
/// in Run-Test/Idle: what a tester streams.
fn scan_burst(k: u64) -> Burst {
    let mut tms = vec![true; 5];
    tms.extend([false, true, false, false]);
    tms.resize(BURST - 3, false);
    tms.extend([true, true, false]);
    let tdi = Bits::from_words(
        (0..BURST as u64 / 64)
            .map(|i| (i ^ k).wrapping_mul(0x9E37_79B9_7F4A_7C15))
            .collect(),
        BURST,
    );
    Burst {
        tms: Bits::from_bools(&tms),
        tdi,
        trst_n: Bits::ones(BURST),
    }
}

fn bursts(c: &mut Criterion) {
    let design = demo();
    let address = start(&design);
    let mut remote =
        RemoteBoard::connect(&address, Duration::from_secs(30)).unwrap_or_else(|e| panic!("{e}"));
    let batch: Vec<Burst> = (0..PIPELINED as u64).map(scan_burst).collect();
    let mut group = c.benchmark_group("remote_burst_4096");
    group.throughput(Throughput::Elements((BURST * PIPELINED) as u64));
    for (name, window) in [("pipelined_window_8", 8), ("one_at_a_time", 1)] {
        for port in [0, 1] {
            group.bench_function(format!("{name}/port{port}"), |b| {
                b.iter(|| {
                    remote
                        .bursts(port, &batch, window)
                        .unwrap_or_else(|e| panic!("{e}"))
                })
            });
        }
    }
    group.finish();
}

fn whole_scans(c: &mut Criterion) {
    let design = demo();
    let address = start(&design);
    let mut remote =
        RemoteBoard::connect(&address, Duration::from_secs(30)).unwrap_or_else(|e| panic!("{e}"));
    let mut group = c.benchmark_group("remote_whole_scan");
    // One shift request of 4,096 bits from Shift-DR, and the 4-period
    // burst back to Shift-DR from Exit1-DR: two round trips.
    let to_shift = Burst {
        tms: Bits::from_bools(&[true, true, true, true, true, false, true, false, false]),
        tdi: Bits::ones(9),
        trst_n: Bits::ones(9),
    };
    let back = Burst {
        tms: Bits::from_bools(&[true, true, false, false]),
        tdi: Bits::ones(4),
        trst_n: Bits::ones(4),
    };
    remote.burst(0, &to_shift).unwrap_or_else(|e| panic!("{e}"));
    let tdi = scan_burst(7).tdi;
    group.throughput(Throughput::Elements(BURST as u64 + 4));
    group.bench_function("shift_4096_and_return", |b| {
        b.iter(|| {
            let out = remote.shift(0, &tdi).unwrap_or_else(|e| panic!("{e}"));
            remote.burst(0, &back).unwrap_or_else(|e| panic!("{e}"));
            out
        })
    });
    // The demo interconnect program, as `play --target` runs it.
    let program = load_program(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/programs/interconnect.yaml"),
        &design,
        None,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let mut probe =
        RemoteBoard::connect(&address, Duration::from_secs(30)).unwrap_or_else(|e| panic!("{e}"));
    let cycles = Runner::new(&mut probe, RunOptions::default())
        .run(&program)
        .tck_cycles;
    group.throughput(Throughput::Elements(cycles));
    group.sample_size(20);
    group.bench_function("interconnect_program", |b| {
        b.iter(|| {
            let mut remote = RemoteBoard::connect(&address, Duration::from_secs(30))
                .unwrap_or_else(|e| panic!("{e}"));
            let report = Runner::new(&mut remote, RunOptions::default()).run(&program);
            assert!(report.passed());
            report.tck_cycles
        })
    });
    group.finish();
}

criterion_group!(benches, bursts, whole_scans);
criterion_main!(benches);
