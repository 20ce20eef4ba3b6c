//! The good run that diagnosis reads: the program on the board as designed,
//! with the cell layout of every scan that compares (and only those).
//!
//! The runner asks for the layout of every scan; on a large board building
//! it costs more than the scan, and diagnosis reads only the compared
//! bits' places. So the run goes through [`Unplaced`] and the layouts are
//! taken before each comparing scan, once per distinct set of selected
//! registers on its TAP port. A scan from a Pause state passes Update on
//! its way to Capture, so the registers could change after that moment: a
//! program with scans that end in a Pause state takes the runner's own
//! layouts instead. `harness/tests/diagnose_unplaced.rs` checks the two
//! equal on random boards and programs.

use std::collections::HashMap;

use virtual_board::{Board, LoadedBoard, PathSegment, Selected, TapState, TapTarget};

use super::unplaced::Unplaced;
use crate::program::{Action, Program, ScanKind};
use crate::run::{RunOptions, RunReport, Runner};

/// True when step `i` of `program` is a scan that compares bits.
pub fn compares(program: &Program, i: usize) -> bool {
    matches!(program.steps.get(i).map(|s| &s.action),
        Some(Action::Scan(x)) if x.expect.is_some() && x.mask.count_ones() > 0)
}

/// What a port's layout depends on: each device's selected register and
/// its length.
type Key = (usize, bool, Vec<(Selected, usize)>);

/// Runs `program` on a copy of the good board, calling `observe` before
/// every step with the board; the report holds the layout of every scan
/// that compares.
pub fn good_run(
    loaded: &LoadedBoard,
    program: &Program,
    observe: &mut dyn FnMut(usize, &Board),
) -> RunReport {
    let mut board = loaded.board.clone();
    let pauses = program.steps.iter().any(|s| {
        matches!(&s.action, Action::Scan(x)
            if matches!(x.end, TapState::PauseDr | TapState::PauseIr))
    });
    if pauses {
        return Runner::new(&mut board, RunOptions::default())
            .run_observed(program, &mut |i, b| observe(i, b));
    }
    let ports = TapTarget::port_names(&board);
    let mut cache: Vec<(Key, std::sync::Arc<[PathSegment]>)> = Vec::new();
    let mut at_step: HashMap<usize, usize> = HashMap::new();
    let mut report = Runner::new(&mut Unplaced(&mut board), RunOptions::default()).run_observed(
        program,
        &mut |i, u| {
            let b: &Board = u.0;
            observe(i, b);
            if !compares(program, i) {
                return;
            }
            let step = &program.steps[i];
            let (Action::Scan(x), Some(p)) =
                (&step.action, ports.iter().position(|n| *n == step.port))
            else {
                return;
            };
            let ir = x.kind == ScanKind::Ir;
            let key: Key = (
                p,
                ir,
                b.ports()[p]
                    .chain
                    .iter()
                    .map(|&d| {
                        let dev = &b.devices()[d];
                        (dev.instruction().register, dev.data_register_len())
                    })
                    .collect(),
            );
            let k = match cache.iter().position(|(c, _)| *c == key) {
                Some(k) => k,
                None => {
                    let Some(layout) = b.scan_layout(p, ir) else {
                        return;
                    };
                    cache.push((key, layout.into()));
                    cache.len() - 1
                }
            };
            at_step.insert(i, k);
        },
    );
    // The k-th scan of the run is the k-th scan step.
    let scan_steps = program
        .steps
        .iter()
        .enumerate()
        .filter(|(_, s)| matches!(&s.action, Action::Scan(x) if !x.tdi.is_empty()))
        .map(|(i, _)| i);
    for (scan, step) in report.scans.iter_mut().zip(scan_steps) {
        if let Some(&k) = at_step.get(&step) {
            scan.layout = Some(cache[k].1.clone());
        }
    }
    report
}
