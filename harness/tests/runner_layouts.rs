//! The runner's layout cache (a scan's layout asked of the target once per
//! TAP port and instruction set, forgotten at Update-IR, Test-Logic-Reset
//! and TRST*) against the board's layout taken afresh at the moment of
//! every scan, on random boards, generated programs and defects; and the
//! good run that diagnosis reads equal to a plain run.

#[path = "support/random_board.rs"]
mod random_board;

use std::sync::Arc;

use harness::campaign::{universe, UniverseOptions};
use harness::diagnose::good_run;
use harness::generate::{infrastructure_program, interconnect_test, Method};
use harness::program::Program;
use harness::run::{RunOptions, RunReport, Runner};
use proptest::prelude::*;
use random_board::{random_board, source};
use virtual_board::{
    Bits, Board, BoardEvent, LoadedBoard, PathSegment, PortId, Rng, TapPins, TapTarget,
    TargetError, TckLimit,
};

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

/// A scan's layouts as the board gives them afresh: of a DR and of an IR scan.
type Both = [Option<Vec<PathSegment>>; 2];

/// The board, noting its own layouts at the start of every whole scan
/// (after Capture: what the scan's bits are). Which of the two the runner
/// meant is the scan's register (on a board with a chain fault the TAP
/// need not be where the runner drove it).
struct Fresh<'a> {
    board: &'a mut Board,
    seen: Vec<Both>,
}

impl TapTarget for Fresh<'_> {
    fn port_count(&self) -> usize {
        self.board.port_count()
    }
    fn port_names(&self) -> Vec<String> {
        TapTarget::port_names(self.board)
    }
    fn take_events(&mut self) -> Vec<BoardEvent> {
        TapTarget::take_events(self.board)
    }
    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        self.board.scan_layout(port, ir)
    }
    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.board.tck_limits(port)
    }
    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        self.board.set_trst(port, asserted)
    }
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        self.board.clock(port, pins)
    }
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        self.board.idle(port, tms, count)
    }
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        self.seen.push([
            self.board.scan_layout(port, false),
            self.board.scan_layout(port, true),
        ]);
        self.board.shift(port, tdi)
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    #[test]
    fn cached_layouts_equal_the_boards_layout_at_each_scan(seed in any::<u64>()) {
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
                let mut b = board.clone();
                let mut fresh = Fresh { board: &mut b, seen: Vec::new() };
                let report = Runner::new(&mut fresh, RunOptions::default()).run(&program);
                prop_assert_eq!(report.scans.len(), fresh.seen.len());
                for (scan, seen) in report.scans.iter().zip(&fresh.seen) {
                    let ir = scan.record.register == "IR";
                    prop_assert_eq!(&scan.layout, &seen[usize::from(ir)].clone().map(Arc::from));
                }
            }
        }
    }

    #[test]
    fn the_good_run_is_a_plain_run_with_its_layouts(seed in any::<u64>()) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        for program in programs(&loaded, &mut rng) {
            let want = plain(&loaded.board, &program);
            let got = good_run(&loaded, &program, &mut |_, _| {});
            prop_assert_eq!(got.scans.len(), want.scans.len());
            for (g, w) in got.scans.iter().zip(&want.scans) {
                prop_assert_eq!(&g.record, &w.record);
                prop_assert_eq!(&g.layout, &w.layout);
            }
            prop_assert_eq!(got.tck_cycles, want.tck_cycles);
        }
    }
}
