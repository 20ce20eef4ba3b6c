//! Hazards grouped by place: one hazard per kind and place (its first
//! occurrence in full, then how many times it happened), and a floating
//! capture only where the program compares the bit.
//!
//! The runner takes the board's events as views with ids, a device's
//! floating captures of one Capture-DR together
//! (`TapTarget::drain_event_groups`); a target that hands its events one
//! by one with ids (`drain_events` only) goes through the trait's default
//! grouping, one event at a time; and a target that can only name its
//! events (a remote board) goes through the trait's default, which views
//! the named events. All three must give the same hazards: an internal
//! comparison of the paths, not an outside check. The counts on the
//! generated board are worked out by hand below.

use std::path::Path;
use std::sync::OnceLock;

use harness::program::native::load_program;
use harness::program::{Action, Origin, Program, Scan, ScanKind, Step};
use harness::run::{RunOptions, RunReport, Runner};
use virtual_board::{
    load_board, load_board_text, Bits, Board, BoardEvent, DefectSpec, EventView, LoadedBoard,
    PathSegment, PortId, TapPins, TapState, TapTarget, TargetError, TckLimit,
};

#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

/// The board behind a target that hands its events out one at a time:
/// with ids (`ids`: `drain_events` passed on, the trait's default
/// `drain_event_groups`), or named only (the trait's defaults for both), as
/// a remote board does.
struct OneByOne {
    board: Board,
    ids: bool,
}

impl TapTarget for OneByOne {
    fn port_count(&self) -> usize {
        self.board.port_count()
    }
    fn port_names(&self) -> Vec<String> {
        self.board.port_names()
    }
    fn take_events(&mut self) -> Vec<BoardEvent> {
        self.board.take_events()
    }
    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        if self.ids {
            self.board.drain_events(f);
        } else {
            for e in self.board.take_events() {
                f(&EventView::named(&e));
            }
        }
    }
    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        self.board.scan_layout(port, ir)
    }
    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.board.tck_limits(port)
    }
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        self.board.clock(port, pins)
    }
    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        self.board.set_trst(port, asserted)
    }
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        self.board.idle(port, tms, count)
    }
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        self.board.shift(port, tdi)
    }
}

/// The same program on the board's own grouped drain, one event at a time
/// with ids, and on the named path: the same report, hazards and their
/// counts included.
fn both_paths(board: &Board, program: &Program) -> RunReport {
    let mut direct = board.clone();
    let a = Runner::new(&mut direct, RunOptions::default()).run(program);
    for ids in [true, false] {
        let mut one = OneByOne {
            board: board.clone(),
            ids,
        };
        let b = Runner::new(&mut one, RunOptions::default()).run(program);
        assert_eq!(a.hazards, b.hazards, "{} (ids: {ids})", program.name);
        assert_eq!(a.scans, b.scans, "{} (ids: {ids})", program.name);
    }
    a
}

fn scenarios() -> &'static Path {
    static DIR: OnceLock<std::path::PathBuf> = OnceLock::new();
    DIR.get_or_init(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios"))
}

fn demo() -> LoadedBoard {
    load_board(&scenarios().join("boards/harbor_controller.yaml")).unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn ids_and_names_group_the_demo_hazards_alike() {
    let loaded = demo();
    let programs = [
        "infrastructure.yaml",
        "interconnect.yaml",
        "cluster_path.yaml",
        "hazard_extest_without_preload.yaml",
    ];
    let defects = [
        "[]",
        "[{open: LB_A0}]",
        "[{short: [LB_D0, LB_D1]}]",
        "[{open: LB_A0}, {short: [HOST_A6, HOST_A7]}]",
    ];
    let mut seen = 0;
    for list in defects {
        let specs: Vec<DefectSpec> = serde_yaml::from_str(list).unwrap_or_else(|e| panic!("{e}"));
        let faulty = loaded
            .with_defects(&specs, &mut |p: &Path| {
                let full = scenarios().join("boards").join(p);
                std::fs::read_to_string(&full)
                    .map(|t| (t, full.clone()))
                    .map_err(|e| virtual_board::BsdlError {
                        path: Some(full.clone()),
                        span: Default::default(),
                        kind: virtual_board::BsdlErrorKind::Io(e.to_string()),
                    })
            })
            .unwrap_or_else(|e| panic!("{list}: {e}"));
        for name in programs {
            // Written for the board as designed, played on the faulty one.
            let program = load_program(&scenarios().join("programs").join(name), &loaded, None)
                .unwrap_or_else(|e| panic!("{e}"));
            let report = both_paths(&faulty.board, &program);
            seen += report.hazards.len();
        }
    }
    // The comparison means something only if hazards were raised.
    assert!(seen >= 3, "{seen} hazards in all");
}

fn step(action: Action) -> Step {
    Step {
        port: "P".into(),
        action,
        origin: Origin::default(),
    }
}

#[test]
fn a_floating_cell_read_on_every_scan_is_one_hazard_counted_per_scan() {
    // Three generated devices of 50 cells on port P, U0 → U1 → U2 (TDI to
    // TDO). Per group of ten cells: inputs I at cells 0–4, outputs Q at 6–9;
    // U(d).Q(k) drives U(d+1).I(k) for k < 20, so inputs I(20)–I(24) (cells
    // 40–44) of U1 and U2 are on no net and float, and all of U0's do.
    let text = generated_board::bsdl(50);
    let yaml = generated_board::chain_board_yaml("three", 3, 50);
    let board = load_board_text(&yaml, Path::new("three.yaml"), &mut |_: &Path| {
        Ok((text.clone(), "gen.bsd".into()))
    })
    .unwrap_or_else(|e| panic!("{e}"))
    .board;
    // SAMPLE (00000001) on all three, then four DR scans of the 150
    // boundary bits. Bit 0 leaves TDO first: bits 0–49 are U2's cells,
    // 50–99 U1's, 100–149 U0's. The mask compares U1's bits only.
    let mut ir = Bits::zeros(24);
    for d in 0..3 {
        ir.set(d * 8, true);
    }
    let mask = Bits::from_bools(&(0..150).map(|i| (50..100).contains(&i)).collect::<Vec<_>>());
    let mut steps = vec![
        step(Action::ResetTms),
        step(Action::Scan(Scan {
            kind: ScanKind::Ir,
            mask: Bits::ones(24),
            tdi: ir,
            expect: None,
            smask: None,
            end: TapState::RunTestIdle,
        })),
    ];
    for _ in 0..4 {
        steps.push(step(Action::Scan(Scan {
            kind: ScanKind::Dr,
            tdi: Bits::zeros(150),
            expect: Some(Bits::zeros(150)),
            mask: mask.clone(),
            smask: None,
            end: TapState::RunTestIdle,
        })));
    }
    let program = Program {
        name: "floating".into(),
        steps,
        ..Program::default()
    };
    let report = both_paths(&board, &program);
    // Each capture reads 25 + 5 + 5 floating inputs; only U1's five are
    // compared: five hazards, first seen in the first DR scan (scan 1),
    // each read on all four scans.
    let got: Vec<(Option<usize>, String, u32, u64)> = report
        .hazards
        .iter()
        .map(|h| match &h.event {
            BoardEvent::FloatingCapture { device, cell, .. } => {
                (h.scan, device.clone(), *cell, h.repeats)
            }
            other => panic!("unexpected hazard {other:?}"),
        })
        .collect();
    let want: Vec<_> = (40..45)
        .map(|c| (Some(1), "U1".to_string(), c, 4))
        .collect();
    assert_eq!(got, want);
}
