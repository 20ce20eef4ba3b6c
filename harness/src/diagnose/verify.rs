//! Verification by simulation: each candidate explanation run through the
//! cycle-level board (the reference), and its response compared with the
//! capture on the recorded bits.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;

use virtual_board::{Bits, DefectSpec, LoadedBoard};

use super::diagnosis::{DiagnoseOptions, Explanation};
use super::recording::Recorded;
use crate::campaign::response_of;
use crate::program::Program;
use crate::run::{RunOptions, Runner};

/// Runs every candidate on the board with its defects, on `options.jobs`
/// threads; a candidate that does not fit the board is dropped.
pub fn verify(
    loaded: &LoadedBoard,
    program: &Program,
    recorded: &Recorded,
    candidates: Vec<Vec<DefectSpec>>,
    options: &DiagnoseOptions<'_>,
    stage: &str,
) -> Vec<Explanation> {
    let responses = responses(loaded, program, &candidates, options, stage);
    candidates
        .into_iter()
        .zip(responses)
        .filter_map(|(defects, response)| {
            response.map(|r| Explanation {
                distance: recorded.distance(&r),
                defects,
            })
        })
        .collect()
}

/// The response (compared bits, as [`response_of`] orders them) of
/// `program` on the board with each candidate's defects, by the reference,
/// on `options.jobs` threads; `None` for a candidate that does not fit the
/// board.
pub fn responses(
    loaded: &LoadedBoard,
    program: &Program,
    candidates: &[Vec<DefectSpec>],
    options: &DiagnoseOptions<'_>,
    stage: &str,
) -> Vec<Option<Bits>> {
    let next = AtomicUsize::new(0);
    let done = AtomicUsize::new(0);
    let out: Mutex<Vec<(usize, Bits)>> = Mutex::new(Vec::new());
    let total = candidates.len();
    std::thread::scope(|s| {
        for _ in 0..options.jobs.max(1).min(total.max(1)) {
            s.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                let Some(defects) = candidates.get(i) else {
                    break;
                };
                let mut source = virtual_board::bsdl_files_beside(&loaded.path);
                // The board's BSDL warnings were shown when it was loaded.
                let faulty = tracing::subscriber::with_default(
                    tracing::subscriber::NoSubscriber::default(),
                    || loaded.with_defects(defects, &mut source),
                );
                if let Ok(faulty) = faulty {
                    let mut board = faulty.board;
                    let report = Runner::new(&mut board, RunOptions::default()).run(program);
                    if let Ok(mut v) = out.lock() {
                        v.push((i, response_of(&report)));
                    }
                }
                (options.progress)(stage, done.fetch_add(1, Ordering::SeqCst) + 1, total);
            });
        }
    });
    let mut by_index: Vec<Option<Bits>> = vec![None; total];
    for (i, r) in out.into_inner().unwrap_or_default() {
        by_index[i] = Some(r);
    }
    by_index
}
