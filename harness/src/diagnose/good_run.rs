//! The good run that diagnosis reads: the program on the board as designed,
//! with the cell layout of every scan as the runner records it (the runner
//! asks the board once per TAP port and instruction set, and again after
//! Update-IR or Test-Logic-Reset).

use virtual_board::{Board, LoadedBoard};

use crate::program::{Action, Program};
use crate::run::{RunOptions, RunReport, Runner};

/// True when step `i` of `program` is a scan that compares bits.
pub fn compares(program: &Program, i: usize) -> bool {
    matches!(program.steps.get(i).map(|s| &s.action),
        Some(Action::Scan(x)) if x.expect.is_some() && x.mask.count_ones() > 0)
}

/// Runs `program` on a copy of the good board, calling `observe` before
/// every step with the board; the report holds the layout of every scan.
pub fn good_run(
    loaded: &LoadedBoard,
    program: &Program,
    observe: &mut dyn FnMut(usize, &Board),
) -> RunReport {
    let mut board = loaded.board.clone();
    Runner::new(&mut board, RunOptions::default()).run_observed(program, &mut |i, b| observe(i, b))
}
