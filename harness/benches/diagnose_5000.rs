//! Diagnosis of a single short on a generated 5,000-net board: the
//! counting-sequence interconnect test, a wired-AND short between two nets
//! far apart, the capture diagnosed from the syndrome and verified by
//! simulation.
//!
//! `cargo bench -p harness --bench diagnose_5000`

use criterion::{criterion_group, criterion_main, Criterion};
use harness::diagnose::{diagnose, DiagnoseOptions};
use harness::run::{RunOptions, Runner};
use virtual_board::DefectSpec;

#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

#[path = "support/board_5000.rs"]
mod board_5000;

use board_5000::{board, counting};

fn bench(c: &mut Criterion) {
    let (loaded, dir) = board("diagnose");
    let program = counting(&loaded);
    let short = DefectSpec {
        short: Some(vec!["N3_17".into(), "N21_150".into()]),
        behaviour: Some(virtual_board::ShortRule::WiredAnd),
        ..Default::default()
    };
    let mut source = virtual_board::bsdl_files_beside(&loaded.path);
    let mut faulty = loaded
        .with_defects(std::slice::from_ref(&short), &mut source)
        .unwrap_or_else(|e| panic!("{e}"))
        .board;
    let capture: Vec<_> = Runner::new(&mut faulty, RunOptions::default())
        .run(&program)
        .scans
        .into_iter()
        .map(|s| s.record)
        .collect();
    let options = DiagnoseOptions {
        jobs: 2,
        ..Default::default()
    };
    let d = diagnose(&loaded, &program, &capture, &options).unwrap_or_else(|e| panic!("{e}"));
    println!(
        "{} failing bits; exact: {:?}",
        d.failing_bits,
        d.exact.iter().map(|c| &c.words).collect::<Vec<_>>()
    );
    let mut g = c.benchmark_group("diagnose");
    g.sample_size(10);
    g.bench_function("single short, 5000 nets", |b| {
        b.iter(|| diagnose(&loaded, &program, &capture, &options))
    });
    g.finish();
    let _ = std::fs::remove_dir_all(dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
