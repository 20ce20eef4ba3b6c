//! `play`'s runner against the engine alone on the same TCK stream: the
//! runner plays a program on a board while a wrapper logs every call that
//! moves TCK or TRST* (`clock`, `shift`, `idle`, `set_trst`); the log is then
//! replayed straight on a fresh copy of the board. Prints one statistics
//! line per board: the best and median of fifteen interleaved runs of each,
//! and their ratio (play / engine) three ways: of the bests, of the
//! medians, and the median of each run's ratio to the engine run beside it.
//!
//! `cargo bench -p harness --bench play_vs_engine`

use std::path::Path;
use std::time::Instant;

use harness::program::native::load_program;
use harness::program::{Action, Origin, Program, Scan, ScanKind, Step};
use harness::run::{RunOptions, Runner};
use virtual_board::{
    load_board, load_board_text, Bits, Board, BoardEvent, EventGroup, EventView, LoadedBoard,
    PathSegment, PortId, TapPins, TapState, TapTarget, TargetError, TckLimit,
};

#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

/// One call that moves TCK or TRST*.
#[derive(Clone, Debug)]
enum Call {
    Clock(PortId, TapPins),
    Shift(PortId, Bits),
    Idle(PortId, bool, u64),
    Trst(PortId, bool),
}

/// Forwards everything to the board and logs the calls that move the TAP.
struct CallLog {
    board: Board,
    calls: Vec<Call>,
}

impl TapTarget for CallLog {
    fn port_count(&self) -> usize {
        self.board.port_count()
    }
    fn port_names(&self) -> Vec<String> {
        self.board.port_names()
    }
    fn take_events(&mut self) -> Vec<BoardEvent> {
        TapTarget::take_events(&mut self.board)
    }
    fn drain_events(&mut self, f: &mut dyn FnMut(&EventView<'_>)) {
        self.board.drain_events(f)
    }
    fn drain_event_groups(&mut self, f: &mut dyn FnMut(&EventGroup<'_>)) {
        self.board.drain_event_groups(f)
    }
    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        self.board.scan_layout(port, ir)
    }
    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.board.tck_limits(port)
    }
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        self.calls.push(Call::Clock(port, pins));
        self.board.clock(port, pins)
    }
    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        self.calls.push(Call::Trst(port, asserted));
        self.board.set_trst(port, asserted)
    }
    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        self.calls.push(Call::Idle(port, tms, count));
        self.board.idle(port, tms, count)
    }
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        self.calls.push(Call::Shift(port, tdi.clone()));
        self.board.shift(port, tdi)
    }
}

/// The engine alone: the logged calls, straight on the board, its events
/// handed out and dropped after every scan's shift as any caller takes them
/// (left alone, the board's bounded store would stop keeping them once
/// full and only count them, which no run does).
fn replay(board: &mut Board, calls: &[Call]) -> u64 {
    let mut ones = 0u64;
    for c in calls {
        match c {
            Call::Clock(p, pins) => {
                ones += u64::from(board.clock(*p, *pins).ok().flatten() == Some(true))
            }
            Call::Shift(p, tdi) => {
                ones += board
                    .shift(*p, tdi)
                    .map(|b| b.count_ones() as u64)
                    .unwrap_or(0);
                board.drain_event_groups(&mut |_| {});
            }
            Call::Idle(p, tms, n) => board.idle(*p, *tms, *n).unwrap_or(()),
            Call::Trst(p, a) => board.set_trst(*p, *a).unwrap_or(()),
        }
    }
    board.drain_event_groups(&mut |_| {});
    ones
}

fn step(port: &str, action: Action) -> Step {
    Step {
        port: port.into(),
        action,
        origin: Origin::default(),
    }
}

fn scan(kind: ScanKind, tdi: Bits, expect: Option<Bits>) -> Action {
    let mask = Bits::ones(tdi.len());
    Action::Scan(Scan {
        kind,
        tdi,
        expect,
        mask,
        smask: None,
        end: TapState::RunTestIdle,
    })
}

/// 20 devices × 500 cells: SAMPLE on all, then `scans` boundary scans of
/// 10,000 bits comparing every bit (device 0's floating inputs included:
/// each capture raises 250 compared floating-capture hazards), expecting
/// what the good board captures.
fn generated(scans: usize) -> (Board, Program) {
    let text = generated_board::bsdl(500);
    let yaml = generated_board::chain_board_yaml("generated 20x500", 20, 500);
    let loaded: LoadedBoard =
        load_board_text(&yaml, Path::new("generated.yaml"), &mut |_: &Path| {
            Ok((text.clone(), "gen.bsd".into()))
        })
        .unwrap_or_else(|e| panic!("{e}"));
    let mut ir = Bits::zeros(160);
    for d in 0..20 {
        ir.set(d * 8, true); // SAMPLE = 00000001
    }
    let mut steps = vec![
        step("P", Action::ResetTms),
        step("P", scan(ScanKind::Ir, ir, None)),
    ];
    for k in 0..scans {
        let tdi = Bits::from_bools(&(0..10_000).map(|i| (i + k) % 7 == 0).collect::<Vec<_>>());
        steps.push(step("P", scan(ScanKind::Dr, tdi, None)));
    }
    let mut program = Program {
        name: "generated".into(),
        steps,
        ..Program::default()
    };
    // Expect what the good board gives.
    let mut good = loaded.board.clone();
    let report = Runner::new(&mut good, RunOptions::default()).run(&program);
    for (s, r) in program
        .steps
        .iter_mut()
        .skip(2)
        .zip(report.scans.iter().skip(1))
    {
        if let Action::Scan(sc) = &mut s.action {
            sc.expect = r.record.tdo_bits();
        }
    }
    (loaded.board, program)
}

/// The bundled demo board and its interconnect program.
fn demo() -> (Board, Program) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios");
    let loaded =
        load_board(&root.join("boards/harbor_controller.yaml")).unwrap_or_else(|e| panic!("{e}"));
    let program = load_program(&root.join("programs/interconnect.yaml"), &loaded, None)
        .unwrap_or_else(|e| panic!("{e}"));
    (loaded.board, program)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Interleaved runs of play and of the engine alone; one statistics line.
fn compare(name: &str, board: &Board, program: &Program, repeat: usize, runs: usize) {
    let mut log = CallLog {
        board: board.clone(),
        calls: Vec::new(),
    };
    let report = Runner::new(&mut log, RunOptions::default()).run(program);
    assert!(report.error.is_none(), "{:?}", report.error);
    let calls = log.calls;
    let tck = report.tck_cycles * repeat as u64;
    let (mut play, mut engine) = (Vec::new(), Vec::new());
    let (mut hazards, mut occurrences) = (0, 0);
    for _ in 0..runs {
        let mut boards: Vec<Board> = (0..repeat).map(|_| board.clone()).collect();
        let t = Instant::now();
        for b in &mut boards {
            let report = Runner::new(b, RunOptions::default()).run(program);
            hazards = report.hazards.len();
            occurrences = report.hazards.iter().map(|h| h.repeats).sum::<u64>();
        }
        play.push(t.elapsed().as_secs_f64());
        let mut boards: Vec<Board> = (0..repeat).map(|_| board.clone()).collect();
        let t = Instant::now();
        for b in &mut boards {
            std::hint::black_box(replay(b, &calls));
        }
        engine.push(t.elapsed().as_secs_f64());
    }
    let best = |v: &[f64]| v.iter().copied().fold(f64::INFINITY, f64::min);
    let (pb, eb) = (best(&play), best(&engine));
    // Each run of play against the engine run right after it: on a shared
    // machine whose speed drifts, the ratio of neighbours is steadier than
    // the ratio of two bests taken minutes apart.
    let pairs = median(play.iter().zip(&engine).map(|(p, e)| p / e).collect());
    let (pm, em) = (median(play), median(engine));
    println!(
        "{name}: {tck} TCK ({} program runs, {hazards} hazards of {occurrences} events each), {runs} runs each: play best {:.2} ms median {:.2} ms ({:.1} M TCK/s); engine alone best {:.2} ms median {:.2} ms ({:.1} M TCK/s); play/engine {:.2} (best) {:.2} (median) {:.2} (median of neighbouring runs)",
        repeat,
        pb * 1e3,
        pm * 1e3,
        tck as f64 / pb / 1e6,
        eb * 1e3,
        em * 1e3,
        tck as f64 / eb / 1e6,
        pb / eb,
        pm / em,
        pairs,
    );
}

fn main() {
    // `cargo bench` passes `--bench`; nothing to parse.
    let (board, program) = demo();
    compare(
        "demo board, interconnect program",
        &board,
        &program,
        200,
        15,
    );
    let (board, program) = generated(40);
    compare(
        "generated 20x500, 40 boundary scans",
        &board,
        &program,
        1,
        15,
    );
}
