//! Benches of the engine: bit-by-bit TCK cycles on the demo board, and the
//! whole-scan fast path on a long generated chain.

use std::path::Path;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use virtual_board::{load_board, Bits, Board, TapPins, TapState, TapTarget};

#[path = "support/generated_board.rs"]
mod generated_board;

/// One infrastructure-style program, every TCK through `clock`: to Shift-IR,
/// shift the port's IR length, to Shift-DR, shift the path length plus 32,
/// back to Run-Test/Idle. Returns the cycles it takes.
fn bit_by_bit_round(b: &mut Board, port: usize, ir_len: usize, dr_len: usize) -> u64 {
    let mut cycles = 0u64;
    let mut clock = |b: &mut Board, tms: bool, tdi: bool| {
        cycles += 1;
        black_box(b.clock(port, TapPins::new(tms, tdi)).ok());
    };
    for tms in [true, true, false, false] {
        clock(b, tms, true);
    }
    for i in 0..ir_len {
        clock(b, i + 1 == ir_len, true); // all ones: BYPASS
    }
    for tms in [true, true, false, false] {
        clock(b, tms, true); // Update-IR, Select-DR, Capture-DR, Shift-DR
    }
    for i in 0..dr_len {
        clock(b, i + 1 == dr_len, i % 3 == 0);
    }
    for tms in [true, false] {
        clock(b, tms, true);
    }
    cycles
}

fn demo_board_cycles(c: &mut Criterion) {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml");
    let mut board = load_board(&path).unwrap_or_else(|e| panic!("{e}")).board;
    let mut group = c.benchmark_group("demo_board");
    for port in 0..board.port_count() {
        board.goto_state(port, TapState::RunTestIdle).ok();
        let chain = board.ports()[port].chain.clone();
        let ir_len: usize = chain
            .iter()
            .map(|&d| board.devices()[d].model().ir_length)
            .sum();
        let dr_len = chain.len() + 32;
        let per_round = bit_by_bit_round(&mut board, port, ir_len, dr_len);
        group.throughput(Throughput::Elements(per_round));
        let name = format!("tck_cycles_bit_by_bit/{}", board.ports()[port].name);
        group.bench_function(name, |bench| {
            bench.iter(|| bit_by_bit_round(&mut board, port, ir_len, dr_len))
        });
    }
    group.finish();
}

fn whole_scan(c: &mut Criterion) {
    let mut board = generated_board::chain_board(20, 500);
    let total = 20 * 500;
    // SAMPLE on every device, then boundary-register DR scans through the fast path.
    board.goto_state(0, TapState::RunTestIdle).ok();
    let sample = {
        let mut ir = Bits::zeros(20 * 8);
        for d in 0..20 {
            ir.set(d * 8, true);
        }
        ir
    };
    board.scan_ir(0, &sample, TapState::RunTestIdle).ok();
    let tdi = Bits::from_bools(&(0..total).map(|i| i % 7 == 0).collect::<Vec<_>>());
    let mut group = c.benchmark_group("generated_20x500");
    group.throughput(Throughput::Elements(total as u64));
    group.bench_function("whole_scan_bits", |bench| {
        bench.iter(|| {
            board.goto_state(0, TapState::ShiftDr).ok();
            black_box(board.shift(0, &tdi).ok());
        })
    });
    group.finish();
}

criterion_group!(benches, demo_board_cycles, whole_scan);
criterion_main!(benches);
