//! The bit-level engine on every board shape, one TCK at a time through
//! `TapTarget::clock`: the bundled demo board, a small two-port board whose
//! nets float and whose program makes drivers fight, the same board with an
//! event on every Capture-DR, and 20 devices × 500 cells.
//!
//! `cargo bench -p virtual_board --bench engine_shapes`
//! (criterion reports TCK periods per second as elements per second).

use std::path::Path;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use virtual_board::{load_board, Board, TapTarget};

#[path = "support/generated_board.rs"]
mod generated_board;
#[path = "support/tck_stream.rs"]
mod tck_stream;

use tck_stream::{opcode, Stream};

/// Measures `round` played again and again on `board` (after `setup`
/// once), draining the events after each round as the runner does (each
/// looked at, none named: `play` names only the ones it reports).
fn bench_stream(
    c: &mut Criterion,
    group: &str,
    name: &str,
    mut board: Board,
    setup: &Stream,
    round: &Stream,
) {
    setup.play(&mut board);
    let _ = board.take_events();
    let mut g = c.benchmark_group(group);
    g.throughput(Throughput::Elements(round.len()));
    g.bench_function(name, |bench| {
        bench.iter(|| {
            let ones = round.play(&mut board);
            let mut seen = 0u32;
            board.drain_events(&mut |e| seen += e.floating_capture().map_or(1, |(_, c)| c & 1));
            black_box(seen);
            ones
        })
    });
    g.finish();
}

fn demo_board(c: &mut Criterion) {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml");
    let board = load_board(&path).unwrap_or_else(|e| panic!("{e}")).board;
    for port in 0..board.port_count() {
        let chain = board.ports()[port].chain.clone();
        let ir_len: usize = chain
            .iter()
            .map(|&d| board.devices()[d].model().ir_length)
            .sum();
        let mut setup = Stream::default();
        setup.reset(port);
        // All ones: BYPASS; then a DR scan through the bypass bits and 32 more.
        let mut round = Stream::default();
        round.scan(port, true, &vec![true; ir_len]);
        let dr: Vec<bool> = (0..chain.len() + 32).map(|i| i % 3 == 0).collect();
        round.scan(port, false, &dr);
        let name = board.ports()[port].name.clone();
        bench_stream(c, "engine/demo_board", &name, board.clone(), &setup, &round);
    }
}

/// Port A (U0) in EXTEST driving all 0 (fighting U2's system highs on two
/// nets) then all 1; port B (U1, U2) in SAMPLE capturing floating pins.
fn small_two_port(c: &mut Criterion) {
    let board = tck_stream::small_two_port_board();
    let (a, b) = (0, 1);
    let mut setup = Stream::default();
    setup.reset(a).reset(b);
    setup.scan(a, true, &opcode(0, 8)); // EXTEST, no PRELOAD first: a hazard
    let sample: Vec<bool> = [opcode(1, 8), opcode(1, 8)].concat();
    setup.scan(b, true, &sample);
    // Cells 5 and 15 are the controls (0 enables); 6–9 and 16–19 the outputs.
    let low = vec![false; 20];
    let high: Vec<bool> = (0..20).map(|i| matches!(i, 6..=9 | 16..=19)).collect();
    let capture: Vec<bool> = (0..40).map(|i| i % 2 == 0).collect();
    let mut hazards = Stream::default();
    hazards
        .scan(a, false, &low)
        .scan(b, false, &capture)
        .scan(a, false, &high)
        .scan(b, false, &capture);
    bench_stream(
        c,
        "engine/small_two_port",
        "fights_and_floats",
        board.clone(),
        &setup,
        &hazards,
    );
    let mut every = Stream::default();
    every.scan(b, false, &capture);
    bench_stream(
        c,
        "engine/small_two_port",
        "event_every_capture_dr",
        board.clone(),
        &setup,
        &every,
    );
    // The same stream with every event named (`take_events`: strings for
    // ports, pins, nets and devices): what naming all of them would cost.
    let mut board = board;
    setup.play(&mut board);
    let _ = board.take_events();
    let mut g = c.benchmark_group("engine/small_two_port");
    g.throughput(Throughput::Elements(every.len()));
    g.bench_function("event_every_capture_dr_named", |bench| {
        bench.iter(|| {
            let ones = every.play(&mut board);
            black_box(board.take_events().len());
            ones
        })
    });
    g.finish();
}

/// SAMPLE on all twenty devices, then boundary-register scans of 10,000
/// bits, every TCK through `clock` (device 0's inputs are on no net: they
/// float, so every Capture-DR raises events too).
fn generated_20x500(c: &mut Criterion) {
    let board = generated_board::chain_board(20, 500);
    let mut setup = Stream::default();
    setup.reset(0);
    let sample: Vec<bool> = (0..20).flat_map(|_| opcode(1, 8)).collect();
    setup.scan(0, true, &sample);
    let mut round = Stream::default();
    let dr: Vec<bool> = (0..20 * 500).map(|i| i % 7 == 0).collect();
    round.scan(0, false, &dr);
    bench_stream(
        c,
        "engine/generated_20x500",
        "bit_by_bit",
        board,
        &setup,
        &round,
    );
}

criterion_group!(benches, demo_board, small_two_port, generated_20x500);
criterion_main!(benches);
