//! The default fault universe of a generated board of 400-cell devices whose
//! nets are bidirectional at both ends, against its generated modified
//! counting test, on two threads; prints a statistics line.
//!
//! `cargo bench -p harness --bench campaign_bidir` (5,000 nets);
//! `BOARDTWIN_BENCH_NETS=600` for another size; `BOARDTWIN_BENCH_NO_CHAIN=1`
//! leaves out the chain faults (which run the faulty board through the
//! program, whole scans on the faulted chain);
//! `BOARDTWIN_BENCH_COUNT_ONLY=1` only counts the faults the net-level
//! model does not answer;
//! `BOARDTWIN_BENCH_CLASSES=any-short` runs other classes (here: every pair
//! of nets shorted); `BOARDTWIN_BENCH_SCANS=apply-then-capture` runs the
//! two-scan form of the test instead of the pipelined one.

use std::time::Instant;

use harness::campaign::{run_campaign, universe, FastModel, FaultClass, UniverseOptions};
use harness::generate::{interconnect_test, Method};

#[path = "support/bidir_board.rs"]
mod bidir_board;

fn main() {
    let nets: usize = std::env::var("BOARDTWIN_BENCH_NETS")
        .ok()
        .and_then(|n| n.parse().ok())
        .unwrap_or(5000);
    let setup = Instant::now();
    let loaded = bidir_board::board(nets);
    let mut test = interconnect_test(&loaded.board, Method::ModifiedCounting)
        .unwrap_or_else(|e| panic!("{e}"));
    // `BOARDTWIN_BENCH_SCANS=apply-then-capture`: the two-scan form.
    if let Ok(s) = std::env::var("BOARDTWIN_BENCH_SCANS") {
        test.patterns.schedule = s.parse().unwrap_or_else(|e| panic!("{e}"));
    }
    let program = test.program(&loaded).unwrap_or_else(|e| panic!("{e}"));
    let mut options = UniverseOptions::default();
    // Chain faults always run the faulty board; leave them out to see the
    // net-level part alone.
    if std::env::var("BOARDTWIN_BENCH_NO_CHAIN").is_ok() {
        options.classes.remove(&FaultClass::Chain);
    }
    // Other classes, comma-separated (`any-short` for the all-pairs shorts).
    if let Ok(list) = std::env::var("BOARDTWIN_BENCH_CLASSES") {
        options.classes = list
            .split(',')
            .map(|c| FaultClass::parse(c).unwrap_or_else(|| panic!("no fault class `{c}`")))
            .collect();
    }
    let faults = universe(&loaded, &options);
    let setup_s = setup.elapsed().as_secs_f64();
    // How many faults the net-level model leaves to a board run, by class.
    let mut slow: std::collections::BTreeMap<&str, usize> = Default::default();
    if let Some(model) = FastModel::build(&loaded, &program) {
        for f in &faults {
            if model.flips(f).is_none() {
                *slow.entry(f.class.name()).or_default() += 1;
            }
        }
    }
    println!("faults for a board run, by class: {slow:?}");
    if std::env::var("BOARDTWIN_BENCH_COUNT_ONLY").is_ok() {
        return;
    }
    let result = run_campaign(&loaded, &program, &faults, 2, (1, 1), &|_| {})
        .unwrap_or_else(|e| panic!("{e}"));
    println!(
        "{} nets ({} coded), {} devices, {} vectors, {} faults: {} detected, {} undetected, {} untestable; {:.2} s on 2 threads, {:.0} faults/s (setup {:.1} s)",
        loaded.board.nets().len(),
        test.nets.len(),
        loaded.board.devices().len(),
        test.vector_count(),
        result.faults,
        result.detected,
        result.undetected,
        result.untestable,
        result.wall_seconds,
        result.faults_per_second,
        setup_s
    );
    println!("evaluated by (path → class → faults): {:?}", result.paths);
}
