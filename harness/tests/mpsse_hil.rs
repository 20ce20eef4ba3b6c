//! The MPSSE encoder against an MPSSE interpreter written independently
//! from the chip maker's command description (FTDI AN_108, from memory; see
//! support/mpsse_interpreter.rs): every bundled scenario gives the records
//! of the in-process run; random scans, TMS paths, waits and TRST* give the
//! board's own answers; a scan is one write and one read; bad bytes are
//! faults, never panics; the safety gate refuses and checks as it must.

#[path = "support/demo.rs"]
mod demo;
#[path = "support/mpsse_interpreter.rs"]
mod mpsse_interpreter;

use std::cell::RefCell;
use std::rc::Rc;

use harness::mpsse::safety::{HardwareGate, SafetyError, CAUTIONS};
use harness::mpsse::{
    ChannelSpec, GpioPin, HardwareSession, MpsseTarget, PinMap, SessionError, TckSetting, Transport,
};
use harness::program::native::load_program;
use harness::run::{RunOptions, RunReport, Runner};
use harness::scenario::{find_all, replay, replay_on, TargetSource};
use proptest::prelude::*;
use virtual_board::{Bits, Board, DefectSpec, LoadedBoard, TapPins, TapTarget};

use demo::{demo, repo};
use mpsse_interpreter::{Chip, ChipLink};

/// TRST* on ADBUS4 and the power sense on ACBUS0 (common practice).
const TRST: (bool, u8) = (false, 4);
const POWER: (bool, u8) = (true, 0);

fn pins() -> PinMap {
    PinMap::new(GpioPin::parse("ADBUS4").ok(), GpioPin::parse("ACBUS0").ok()).unwrap()
}

/// `board` behind one interpreted chip per TAP port, and the chips.
fn on_chips(board: Board, powered: bool) -> (MpsseTarget, Vec<Rc<RefCell<Chip>>>) {
    let names = board.port_names();
    let limits: Vec<_> = (0..names.len()).map(|p| board.tck_limits(p)).collect();
    let board = Rc::new(RefCell::new(board));
    let mut chips = Vec::new();
    let mut specs = Vec::new();
    for (p, (name, limits)) in names.into_iter().zip(limits).enumerate() {
        let chip = Chip::new(board.clone(), p, Some(TRST), Some(POWER), powered).shared();
        chips.push(chip.clone());
        specs.push(ChannelSpec {
            name,
            pins: pins(),
            link: Box::new(ChipLink(chip)),
            limits,
        });
    }
    let target = MpsseTarget::new(specs, TckSetting::for_hz(1e6).unwrap()).unwrap();
    (target, chips)
}

fn no_faults(chips: &[Rc<RefCell<Chip>>]) {
    for (p, c) in chips.iter().enumerate() {
        assert_eq!(c.borrow().fault, None, "chip of port {p}");
    }
}

/// Scenario replay through encoder → interpreter → board.
struct Interpreted;

impl TargetSource for Interpreted {
    fn open(
        &self,
        _design: &LoadedBoard,
        built: &LoadedBoard,
        _defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, harness::scenario::TargetError> {
        Ok(Box::new(on_chips(built.board.clone(), true).0))
    }
}

/// Scan records, origins, errors and TCK periods of two runs. A real
/// adapter sees no board event, so hazards are not compared; an error the
/// board raised comes back through the link, so the in-process words must
/// be inside the adapter's.
fn same_records(a: &[RunReport], b: &[RunReport]) -> Result<(), String> {
    if a.len() != b.len() {
        return Err(format!("{} runs against {}", a.len(), b.len()));
    }
    for (x, y) in a.iter().zip(b) {
        let records = |r: &RunReport| -> Vec<_> {
            r.scans
                .iter()
                .map(|s| (s.record.clone(), s.origin.clone()))
                .collect()
        };
        if records(x) != records(y) {
            return Err(format!("{}: scan records differ", x.program));
        }
        match (&x.error, &y.error) {
            (None, None) => {}
            (Some(e), Some(f)) if f.contains(e.split(": ").last().unwrap_or(e)) => {}
            other => return Err(format!("{}: errors differ: {other:?}", x.program)),
        }
        if x.tck_cycles != y.tck_cycles {
            return Err(format!(
                "{}: {} TCK periods against {}",
                x.program, x.tck_cycles, y.tck_cycles
            ));
        }
    }
    Ok(())
}

#[test]
fn every_bundled_scenario_gives_the_in_process_records_through_the_interpreter() {
    let scenarios = find_all(&repo().join("scenarios"));
    assert!(scenarios.len() >= 20, "found {}", scenarios.len());
    let mut scans = 0;
    for path in scenarios {
        let local = replay(&path).unwrap_or_else(|e| panic!("{e}"));
        let far = replay_on(&path, &Interpreted).unwrap_or_else(|e| panic!("{e}"));
        assert!(!local.runs.is_empty());
        same_records(&local.runs, &far.runs).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        scans += far.runs.iter().map(|r| r.scans.len()).sum::<usize>();
    }
    assert!(scans > 100, "{scans} scans");
}

#[test]
fn a_scan_is_one_write_and_one_read_and_a_wait_reads_nothing() {
    let (mut target, chips) = on_chips(demo().board.clone(), true);
    let chip = &chips[0];
    for _ in 0..5 {
        target.clock(0, TapPins::new(true, true)).unwrap();
    }
    for tms in [false, true, false, false] {
        target.clock(0, TapPins::new(tms, true)).unwrap();
    }
    let (w, r) = (chip.borrow().writes, chip.borrow().reads);
    let tdi = Bits::from_words(vec![0x0123_4567_89AB_CDEF; 16], 1000);
    target.shift(0, &tdi).unwrap();
    assert_eq!(chip.borrow().writes - w, 1);
    assert_eq!(chip.borrow().reads - r, 1);
    let (w, r) = (chip.borrow().writes, chip.borrow().reads);
    target.idle(0, false, 1 << 20).unwrap();
    assert_eq!((chip.borrow().writes - w, chip.borrow().reads - r), (1, 0));
    // 40,000 bits: pieces of 4 KiB read back, one round trip each.
    let long = Bits::from_words(vec![0xF0F0_A5A5_0F0F_5A5Au64; 626], 40_000);
    let before = target.statistics().round_trips;
    target.shift(0, &long).unwrap();
    assert_eq!(target.statistics().round_trips - before, 2);
    no_faults(&chips);
}

#[test]
fn the_divisor_written_gives_the_frequency_asked() {
    // TCK = base / ((1 + divisor) × 2), base 60 MHz or 12 MHz with
    // divide-by-5 (FTDI AN_108, from memory), worked by the interpreter's
    // own numbers.
    for hz in [30e6, 1e6, 100e3, 10e3, 1e3, 200.0] {
        let (mut target, chips) = on_chips(demo().board.clone(), true);
        let setting = TckSetting::for_hz(hz).unwrap();
        target.set_clock(setting).unwrap();
        let chip = chips[0].borrow();
        let base = if chip.divide_by_5.unwrap() {
            12e6
        } else {
            60e6
        };
        let got = base / ((1.0 + f64::from(chip.divisor.unwrap())) * 2.0);
        assert!((got - hz).abs() < 1e-6 * hz, "{hz} Hz asked, {got} Hz set");
    }
    assert!(TckSetting::for_hz(31e6).is_err());
    assert!(TckSetting::for_hz(90.0).is_err());
}

#[test]
fn power_sense_and_trst_through_gpio() {
    let (mut target, chips) = on_chips(demo().board.clone(), false);
    assert_eq!(target.power_sensed(0).unwrap(), Some(false));
    let (mut target_on, _) = on_chips(demo().board.clone(), true);
    assert_eq!(target_on.power_sensed(1).unwrap(), Some(true));
    // TRST* asserted by GPIO puts the port's TAP in Test-Logic-Reset
    // (IEEE 1149.1 clause 6, from memory): the same answers as the board.
    let mut board = demo().board.clone();
    for t in [&mut target as &mut dyn TapTarget, &mut board] {
        t.set_trst(0, true).unwrap();
        t.set_trst(0, false).unwrap();
    }
    let tdi = Bits::from_words(vec![u64::MAX], 40);
    for tms in [false, true, false, false] {
        assert_eq!(
            target
                .clock(0, TapPins::new(tms, true))
                .unwrap()
                .unwrap_or(true),
            board
                .clock(0, TapPins::new(tms, true))
                .unwrap()
                .unwrap_or(true)
        );
    }
    assert_eq!(
        target.shift(0, &tdi).unwrap(),
        board.shift(0, &tdi).unwrap()
    );
    no_faults(&chips);
}

#[test]
fn bad_bytes_are_faults_not_panics() {
    let board = Rc::new(RefCell::new(demo().board.clone()));
    for bad in [
        &[0xAAu8][..],
        &[0x84],
        &[0x80, 0x0A, 0x0B, 0x3B, 9, 0],
        &[0x80, 0, 0, 0x6B, 0, 1],
    ] {
        let chip = Chip::new(board.clone(), 0, None, None, true).shared();
        let mut link = ChipLink(chip.clone());
        assert!(link.write(bad).is_err(), "{bad:02X?}");
        assert!(chip.borrow().fault.is_some());
    }
    // A read of more than the chip has is a fault too.
    let chip = Chip::new(board, 0, None, None, true).shared();
    let mut link = ChipLink(chip.clone());
    assert!(link.read(&mut [0u8; 2]).is_err());
}

/// One operation of a random session.
#[derive(Clone, Debug)]
enum Op {
    Clock {
        port: usize,
        tms: bool,
        tdi: bool,
        trst_n: bool,
    },
    Shift {
        port: usize,
        bits: Vec<bool>,
    },
    Idle {
        port: usize,
        tms: bool,
        count: u64,
    },
    Trst {
        port: usize,
        asserted: bool,
    },
}

fn op() -> impl Strategy<Value = Op> {
    prop_oneof![
        6 => (0..2usize, any::<bool>(), any::<bool>(), prop::bool::weighted(0.95))
            .prop_map(|(port, tms, tdi, trst_n)| Op::Clock { port, tms, tdi, trst_n }),
        3 => (0..2usize, prop::collection::vec(any::<bool>(), 1..200))
            .prop_map(|(port, bits)| Op::Shift { port, bits }),
        1 => (0..2usize, any::<bool>(), 0..40u64)
            .prop_map(|(port, tms, count)| Op::Idle { port, tms, count }),
        1 => (0..2usize, any::<bool>()).prop_map(|(port, asserted)| Op::Trst { port, asserted }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// Random TMS paths, scans, waits and TRST*: the answers through the
    /// encoder and interpreter are the board's own (TDO high-impedance
    /// reads 1 through an adapter, as the pull-up makes it).
    #[test]
    fn random_sessions_answer_as_the_board(ops in prop::collection::vec(op(), 1..80)) {
        let (mut target, chips) = on_chips(demo().board.clone(), true);
        let mut board = demo().board.clone();
        for op in &ops {
            match op {
                Op::Clock { port, tms, tdi, trst_n } => {
                    let pins = TapPins { tms: *tms, tdi: *tdi, trst_n: *trst_n };
                    let a = target.clock(*port, pins).map(|t| t.unwrap_or(true));
                    let b = board.clock(*port, pins).map(|t| t.unwrap_or(true));
                    prop_assert_eq!(a.is_ok(), b.is_ok());
                    if let (Ok(a), Ok(b)) = (a, b) {
                        prop_assert_eq!(a, b);
                    }
                }
                Op::Shift { port, bits } => {
                    let tdi = Bits::from_bools(bits);
                    let a = target.shift(*port, &tdi);
                    let b = board.shift(*port, &tdi);
                    prop_assert_eq!(a.is_ok(), b.is_ok());
                    if let (Ok(a), Ok(b)) = (a, b) {
                        prop_assert_eq!(a, b);
                    }
                }
                Op::Idle { port, tms, count } => {
                    prop_assert_eq!(
                        target.idle(*port, *tms, *count).is_ok(),
                        board.idle(*port, *tms, *count).is_ok()
                    );
                }
                Op::Trst { port, asserted } => {
                    target.set_trst(*port, *asserted).unwrap();
                    board.set_trst(*port, *asserted).unwrap();
                }
            }
        }
        // No fault of the byte stream (a board refusal is not one).
        for c in &chips {
            prop_assert_eq!(&c.borrow().fault, &None);
        }
    }

    /// Any byte stream: the interpreter answers or faults, never panics.
    #[test]
    fn any_bytes_fault_or_run(bytes in prop::collection::vec(any::<u8>(), 0..64)) {
        let board = Rc::new(RefCell::new(demo().board.clone()));
        let chip = Chip::new(board, 0, Some(TRST), None, true).shared();
        let mut link = ChipLink(chip.clone());
        let _ = link.write(&bytes);
        let mut one = [0u8];
        let _ = link.read(&mut one);
    }
}

fn program(name: &str) -> harness::program::Program {
    load_program(&repo().join("scenarios/programs").join(name), demo(), None).unwrap()
}

#[test]
fn a_program_with_hazards_is_refused_unless_checked() {
    let hazardous = program("hazard_extest_without_preload.yaml");
    let (mut target, chips) = on_chips(demo().board.clone(), true);
    let mut gate = HardwareGate::new(false);
    let mut notice = Vec::new();
    let e = gate
        .admit(&mut target, demo(), &hazardous, &mut notice)
        .unwrap_err();
    assert!(matches!(e, SafetyError::Hazards { .. }), "{e}");
    assert!(e.to_string().contains("--i-have-checked"));
    // Nothing reached the chip but the set-up.
    assert_eq!(chips[0].borrow().periods, 0);
    let mut gate = HardwareGate::new(true);
    gate.admit(&mut target, demo(), &hazardous, &mut notice)
        .unwrap();
    assert!(gate.chain_passed());
}

#[test]
fn the_cautions_come_once_and_the_chain_test_runs_before_the_first_extest() {
    let interconnect = program("interconnect.yaml");
    let infrastructure = program("infrastructure.yaml");
    let (mut target, chips) = on_chips(demo().board.clone(), true);
    let mut gate = HardwareGate::new(false);
    let mut notice = Vec::new();
    // The infrastructure program selects no boundary register: no cautions.
    gate.admit(&mut target, demo(), &infrastructure, &mut notice)
        .unwrap();
    assert!(notice.is_empty() && !gate.chain_passed());
    let periods = chips[0].borrow().periods;
    gate.admit(&mut target, demo(), &interconnect, &mut notice)
        .unwrap();
    assert_eq!(String::from_utf8(notice.clone()).unwrap(), CAUTIONS);
    assert!(gate.chain_passed());
    // The chain test clocked the real (interpreted) board.
    assert!(chips[0].borrow().periods > periods);
    let run = Runner::new(&mut target, RunOptions::default()).run(&interconnect);
    assert!(run.passed(), "{:?}", run.error);
    gate.admit(&mut target, demo(), &interconnect, &mut notice)
        .unwrap();
    assert_eq!(notice.len(), CAUTIONS.len(), "the cautions are shown once");
    no_faults(&chips);
}

#[test]
fn a_broken_chain_stops_the_interconnect_test_before_it_runs() {
    let defects: Vec<DefectSpec> =
        serde_yaml::from_str("- { broken_link: U1 }").expect("a defect list");
    let mut source = virtual_board::bsdl_files_beside(&demo().path);
    let broken = demo().with_defects(&defects, &mut source).unwrap();
    let (mut target, _chips) = on_chips(broken.board.clone(), true);
    let mut gate = HardwareGate::new(false);
    let e = gate
        .admit(
            &mut target,
            demo(),
            &program("interconnect.yaml"),
            &mut Vec::new(),
        )
        .unwrap_err();
    assert!(matches!(e, SafetyError::Chain { .. }), "{e}");
    assert!(e.to_string().contains("failing: scan 0"), "{e}");
}

#[test]
fn a_session_sends_nothing_without_target_power() {
    let (target, chips) = on_chips(demo().board.clone(), false);
    let mut session = HardwareSession::new(target, demo().clone(), false);
    let e = session
        .prepare(&program("infrastructure.yaml"), &mut Vec::new())
        .unwrap_err();
    assert_eq!(e, SessionError::NoPower("J1_MAIN".into()));
    assert_eq!(chips[0].borrow().periods, 0);
}

#[test]
fn a_session_clocks_tck_from_the_programs_frequency() {
    let (target, chips) = on_chips(demo().board.clone(), true);
    let mut session = HardwareSession::new(target, demo().clone(), false);
    let mut p = program("infrastructure.yaml");
    p.frequency = Some(250e3);
    let (_, setting) = session.prepare(&p, &mut Vec::new()).unwrap();
    assert_eq!(setting.hz, 250e3);
    // 60 MHz / ((1 + 119) × 2) = 250 kHz (FTDI AN_108, from memory).
    assert_eq!(chips[0].borrow().divisor, Some(119));
    assert_eq!(chips[1].borrow().divide_by_5, Some(false));
    p.frequency = Some(40e6);
    let e = session.prepare(&p, &mut Vec::new()).unwrap_err();
    assert!(
        e.to_string().contains("the fastest it can is 30000000 Hz"),
        "{e}"
    );
}

#[test]
#[ignore = "prints figures: cargo test -p harness --test mpsse_hil figures -- --ignored --nocapture"]
fn figures() {
    let p = program("interconnect.yaml");
    let (mut target, _chips) = on_chips(demo().board.clone(), true);
    let start = std::time::Instant::now();
    let run = Runner::new(&mut target, RunOptions::default()).run(&p);
    let s = target.statistics();
    println!(
        "interconnect: {} scans, {} TCK, {} round trips, {} bytes written, {:.1} ms through the interpreter",
        run.scans.len(),
        run.tck_cycles,
        s.round_trips,
        s.written,
        start.elapsed().as_secs_f64() * 1e3
    );
}
