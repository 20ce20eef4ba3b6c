//! Diagnosis of a single short on a generated 5,000-net board: the
//! counting-sequence interconnect test, a wired-AND short between two nets
//! far apart, the capture diagnosed from the syndrome and verified by
//! simulation.
//!
//! `cargo bench -p harness --bench diagnose_5000`

use std::path::PathBuf;

use criterion::{criterion_group, criterion_main, Criterion};
use harness::diagnose::{diagnose, DiagnoseOptions};
use harness::program::net_level::{compile_patterns, PatternSet, Schedule, Vector};
use harness::program::Program;
use harness::run::{RunOptions, Runner};
use virtual_board::{load_board, DefectSpec, LoadedBoard};

#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

/// 26 generated devices of 500 cells on one TAP port: each device's 200
/// outputs drive the next device's inputs, 25 × 200 = 5,000 nets. Written
/// to a temporary folder, so defects can re-read the BSDL file.
fn board() -> (LoadedBoard, PathBuf) {
    let devices = 26;
    let cells = 500;
    let dir = std::env::temp_dir().join(format!("boardtwin-bench-diagnose-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(dir.join("gen.bsd"), generated_board::bsdl(cells))
        .unwrap_or_else(|e| panic!("{e}"));
    let yaml = generated_board::chain_board_yaml("generated 5000 nets", devices, cells);
    let path = dir.join("generated.yaml");
    std::fs::write(&path, yaml).unwrap_or_else(|e| panic!("{e}"));
    (load_board(&path).unwrap_or_else(|e| panic!("{e}")), dir)
}

/// The counting sequence (W. H. Kautz, 1974): net i gets code i + 1 (no
/// all-0 code), over ceil(log2(N + 1)) vectors.
fn counting(loaded: &LoadedBoard) -> Program {
    let nets: Vec<String> = loaded.file.nets.keys().cloned().collect();
    let width = (usize::BITS - nets.len().leading_zeros()) as usize;
    let vectors = (0..width)
        .map(|k| {
            let mut v = Vector::default();
            for (i, n) in nets.iter().enumerate() {
                let bit = (((i + 1) >> k) & 1) as u8;
                v.drive.insert(n.clone(), bit);
                v.expect.insert(n.clone(), bit);
            }
            v
        })
        .collect();
    let set = PatternSet {
        name: "counting".into(),
        from: Default::default(),
        vectors,
        schedule: Schedule::ApplyThenCapture,
    };
    Program {
        name: "counting sequence".into(),
        steps: compile_patterns(&set, loaded).unwrap_or_else(|e| panic!("{e}")),
        ..Program::default()
    }
}

fn bench(c: &mut Criterion) {
    let (loaded, dir) = board();
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
