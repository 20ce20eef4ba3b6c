//! Verification by simulation: each candidate explanation run through the
//! cycle-level board (the reference), and its response compared with the
//! capture on the recorded bits.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;

use virtual_board::{DefectSpec, LoadedBoard};

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
    let next = AtomicUsize::new(0);
    let done = AtomicUsize::new(0);
    let out: Mutex<Vec<(usize, Explanation)>> = Mutex::new(Vec::new());
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
                    let distance = recorded.distance(&response_of(&report));
                    if let Ok(mut v) = out.lock() {
                        v.push((
                            i,
                            Explanation {
                                defects: defects.clone(),
                                distance,
                            },
                        ));
                    }
                }
                (options.progress)(stage, done.fetch_add(1, Ordering::SeqCst) + 1, total);
            });
        }
    });
    let mut out = out.into_inner().unwrap_or_default();
    out.sort_by_key(|(i, _)| *i);
    out.into_iter().map(|(_, e)| e).collect()
}
