//! Diagnosis's two short cuts through the runner equal the runner on the
//! board itself, on random boards, programs and defects: `Unplaced` (no
//! layout per scan) captures every bit the board captures, and `good_run`
//! (layouts taken once per set of selected registers, for comparing scans
//! only) gives the same scans and, for each comparing scan, the same layout.

#[path = "support/random_board.rs"]
mod random_board;

use harness::campaign::{universe, UniverseOptions};
use harness::diagnose::{good_run, Unplaced};
use harness::generate::{infrastructure_program, interconnect_test, Method};
use harness::program::Program;
use harness::run::{RunOptions, RunReport, Runner};
use proptest::prelude::*;
use random_board::{random_board, source};
use virtual_board::{Board, LoadedBoard, Rng};

/// The generated programs of the board: its infrastructure test and, where
/// one can be made and passes, an interconnect test of a random method.
fn programs(loaded: &LoadedBoard, rng: &mut Rng) -> Vec<Program> {
    let mut out = vec![infrastructure_program(&loaded.board)];
    let method = Method::ALL[(rng.next_u64() % Method::ALL.len() as u64) as usize];
    if let Some(p) = interconnect_test(&loaded.board, method)
        .ok()
        .and_then(|t| t.program(loaded).ok())
    {
        out.push(p);
    }
    out
}

fn plain(board: &Board, program: &Program) -> RunReport {
    Runner::new(&mut board.clone(), RunOptions::default()).run(program)
}

/// The records (what was shifted and captured) of every scan.
fn records(r: &RunReport) -> Vec<harness::run::ScanRecord> {
    r.scans.iter().map(|s| s.record.clone()).collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    #[test]
    fn unplaced_runs_capture_what_the_board_captures(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        let faults = universe(&loaded, &UniverseOptions::default());
        for program in programs(&loaded, &mut rng) {
            // The good board, and a few random faults of every class.
            let mut boards = vec![loaded.board.clone()];
            for _ in 0..3 {
                if faults.is_empty() {
                    break;
                }
                let f = &faults[(rng.next_u64() % faults.len() as u64) as usize];
                if let Ok(faulty) = loaded.with_defects(std::slice::from_ref(&f.defect), &mut source()) {
                    boards.push(faulty.board);
                }
            }
            for board in boards {
                let want = plain(&board, &program);
                let mut b = board.clone();
                let got = Runner::new(&mut Unplaced(&mut b), RunOptions::default()).run(&program);
                prop_assert_eq!(records(&got), records(&want));
                prop_assert_eq!(got.error, want.error);
                prop_assert_eq!(got.tck_cycles, want.tck_cycles);
            }
        }
    }

    #[test]
    fn the_good_run_has_the_runners_layouts_where_it_compares(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        for program in programs(&loaded, &mut rng) {
            let want = plain(&loaded.board, &program);
            let got = good_run(&loaded, &program, &mut |_, _| {});
            prop_assert_eq!(records(&got), records(&want));
            for (g, w) in got.scans.iter().zip(&want.scans) {
                if w.record.mask.as_deref().is_some_and(|m| m.chars().any(|c| c != '0')) {
                    prop_assert_eq!(&g.layout, &w.layout);
                }
            }
        }
    }
}
