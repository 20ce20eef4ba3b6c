//! The MPSSE encoder against an MPSSE interpreter written independently
//! from the chip maker's command description (FTDI AN_108, from memory; see
//! support/mpsse_interpreter.rs): every bundled scenario gives the records
//! of the in-process run, with the chip running the bytes as they come and
//! as late as it may; random scans, TMS paths, waits and TRST* give the
//! board's own answers, and random programs on random boards the runner's
//! in-process records; a scan with its moves is one write and one read and
//! moves alone cost none; one port's held Update-DR is done before another
//! port's Capture-DR; each program's FREQUENCY sets the divisor; bad
//! bytes are faults, never panics; the safety gate refuses and checks as
//! it must.

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
use harness::program::{Action, Origin, Program, Scan, ScanKind, Step, TrstMode};
use harness::run::{RunOptions, RunReport, Runner};
use harness::scenario::{find_all, replay, replay_on, TargetSource};
use proptest::prelude::*;
use virtual_board::{Bits, Board, DefectSpec, LoadedBoard, Rng, TapPins, TapState, TapTarget};

use demo::{demo, repo};
use mpsse_interpreter::{Chip, ChipLink};
use random_generated::{generated, pick};

#[path = "support/random_generated.rs"]
mod random_generated;

/// TRST* on ADBUS4 and the power sense on ACBUS0 (common practice).
const TRST: (bool, u8) = (false, 4);
const POWER: (bool, u8) = (true, 0);

fn pins() -> PinMap {
    PinMap::new(GpioPin::parse("ADBUS4").ok(), GpioPin::parse("ACBUS0").ok()).unwrap()
}

/// `board` behind one interpreted chip per TAP port, and the chips.
fn on_chips(board: Board, powered: bool) -> (MpsseTarget, Vec<Rc<RefCell<Chip>>>) {
    on_chips_run(board, powered, false)
}

/// [`on_chips`], the chips running what they are sent only when the host
/// reads (`lazy`).
fn on_chips_run(board: Board, powered: bool, lazy: bool) -> (MpsseTarget, Vec<Rc<RefCell<Chip>>>) {
    let names = board.port_names();
    let limits: Vec<_> = (0..names.len()).map(|p| board.tck_limits(p)).collect();
    let board = Rc::new(RefCell::new(board));
    let mut chips = Vec::new();
    let mut specs = Vec::new();
    for (p, (name, limits)) in names.into_iter().zip(limits).enumerate() {
        let mut chip = Chip::new(board.clone(), p, Some(TRST), Some(POWER), powered);
        chip.lazy = lazy;
        let chip = chip.shared();
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

/// Scenario replay through encoder → interpreter → board; `.0`: the chips
/// run the bytes only when the host reads; `.1`: the chips of the last
/// scenario opened.
#[derive(Default)]
struct Interpreted(bool, RefCell<Vec<Rc<RefCell<Chip>>>>);

impl TargetSource for Interpreted {
    fn open(
        &self,
        _design: &LoadedBoard,
        built: &LoadedBoard,
        _defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, harness::scenario::TargetError> {
        let (target, chips) = on_chips_run(built.board.clone(), true, self.0);
        *self.1.borrow_mut() = chips;
        Ok(Box::new(target))
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
        assert!(!local.runs.is_empty());
        // The chip running bytes as they come, and as late as it may (only
        // when the host reads): a host that counted on a write being done
        // before it clocks another port would show here.
        for lazy in [false, true] {
            let source = Interpreted(lazy, RefCell::default());
            let far = replay_on(&path, &source).unwrap_or_else(|e| panic!("{e}"));
            same_records(&local.runs, &far.runs)
                .unwrap_or_else(|e| panic!("{} (lazy {lazy}): {e}", path.display()));
            scans += far.runs.iter().map(|r| r.scans.len()).sum::<usize>();
        }
    }
    assert!(scans > 200, "{scans} scans");
}

/// A cross-port program whose driving port's Update-DR is a held move:
/// J1_MAIN preloads safe values, loads EXTEST, shifts a pattern onto the
/// local data bus LB_D and stops in Pause-DR; then it goes to
/// Run-Test/Idle through Update-DR with moves only (nothing read). J2_AUX
/// then captures LB_D at U5's switch inputs with SAMPLE.
///
/// Bit strings: most significant first, the rightmost bit nearest TDO.
/// The IR captures are each BSDL's INSTRUCTION_CAPTURE (01 in the two
/// lowest bits, IEEE 1149.1-2001 clause 7, from memory).
/// J1_MAIN is TDI → U1 (QM7420, IR 4, boundary 40) → U3 (QM5508, IR 8,
/// in BYPASS) → TDO; J2_AUX is TDI → U2 (QM3310, IR 6, BYPASS) → U5
/// (QM3310, IR 6, SAMPLE) → U4 (QM2040, IR 5, BYPASS) → TDO.
///
/// U1's safe values, cells 39 to 0, from the safe column of its BSDL:
/// LB_D's shared control cell 37 = 1 (off), the CONTROLR cell 28 = 0
/// (LB_A and strobes off), HOST_D's control cell 8 = 0 (off), the status
/// control cell 3 = 1 (off), the strobes' data cells 23..20 and the status
/// data cells 2, 1 = 1; every X cell 0. The pattern is the same with cell
/// 37 = 0 (LB_D driven) and LB_D(7..0) = 1001 0110 in cells 36..29.
const HELD_UPDATE_PROGRAM: &str = "\
name: a held Update-DR on one port before a capture on the other
steps:
  - { port: J1_MAIN, reset: tms }
  - { port: J2_AUX, reset: tms }
  # U1 SAMPLE/PRELOAD 0001, U3 BYPASS 11111111; captures U1 0101, U3 000XXX01.
  - port: J1_MAIN
    scan_ir: { tdi: \"0001_11111111\", expect: \"0101_000XXX01\" }
  # PRELOAD of the safe values; U3's bypass bit (rightmost) captures 0.
  - port: J1_MAIN
    scan_dr: { tdi: \"00_1_00000000_0_0000_1111_00000000000_0_0000_1_11_0_0\", expect: \"XXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXX_0\" }
  # U1 EXTEST 0000: the preloaded safe values go to the pins.
  - port: J1_MAIN
    scan_ir: { tdi: \"0000_11111111\", expect: \"0101_000XXX01\" }
  # The pattern, ending in Pause-DR: not yet on the pins.
  - port: J1_MAIN
    scan_dr: { tdi: \"00_0_10010110_0_0000_1111_00000000000_0_0000_1_11_0_0\", expect: \"XXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXXX_0\", end: drpause }
  # Exit2-DR, Update-DR (the pattern drives LB_D), Run-Test/Idle: moves only.
  - { port: J1_MAIN, goto: idle }
  # U2 BYPASS 111111, U5 SAMPLE 000001, U4 BYPASS 11111.
  - port: J2_AUX
    scan_ir: { tdi: \"111111_000001_11111\", expect: \"XX0001_XX0001_00001\" }
  # U2 bypass; U5 cells 28..0: SW_IN(7..0) = LB_D(7..0), outputs and
  # controls, EXP_MODE, ADDR(2..0) = 001 (R-straps); U4 bypass.
  - port: J2_AUX
    scan_dr: { tdi: \"0_00000000_00000000000000000_0_000_0\", expect: \"0_10010110_XXXXXXXXXXXXXXXXX_X_001_0\" }
";

#[test]
fn one_ports_held_update_dr_comes_before_the_other_ports_capture() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("held_update.yaml");
    std::fs::write(&path, HELD_UPDATE_PROGRAM).unwrap();
    let p = load_program(&path, demo(), None).unwrap_or_else(|e| panic!("{e}"));
    let mut board = demo().board.clone();
    let local = Runner::new(&mut board, RunOptions::default()).run(&p);
    assert!(local.passed(), "{:?} {:?}", local.error, local.scans);
    // The capture on J2_AUX worked by hand, TDO end first (bit 0 first
    // out): U4's bypass bit captures 0 (IEEE 1149.1-2001 clause 10, from
    // memory); U5's ADDR(0..2) cells 0..2 read the straps EXPB_ADDR0..2
    // (pull-up, pull-down, pull-down); U5's SW_IN(0..7) cells 21..28 read
    // LB_D0..7 as U1 drives them. EXTEST drives the pins from the update
    // latches, which Update-DR loads, and SAMPLE captures the pins at
    // Capture-DR (clause 8 for the instructions, clause 11 for the cells,
    // from memory); U2's bypass bit captures 0. Were J2_AUX to capture
    // before J1_MAIN's Update-DR, U1's latches would still hold the safe
    // values, LB_D would float and read 1111 1111 (the board's
    // `float: high`): bits 22, 25, 27 and 28 would differ.
    let mut want: Vec<(usize, bool)> = vec![(0, false), (1, true), (2, false), (3, false)];
    let lb_d = [false, true, true, false, true, false, false, true];
    want.extend(lb_d.iter().enumerate().map(|(k, &b)| (1 + 21 + k, b)));
    want.push((30, false));
    let check = |run: &RunReport| {
        let capture = run.scans.last().unwrap();
        assert_eq!(
            (capture.record.port.as_str(), capture.record.length),
            ("J2_AUX", 31)
        );
        let tdo = capture.record.tdo_bits().unwrap();
        let got: Vec<(usize, bool)> = want.iter().map(|&(i, _)| (i, tdo.get(i))).collect();
        assert_eq!(got, want);
    };
    check(&local);
    // The chips run what they are sent as it comes, and only when the host
    // reads: J1_MAIN's held moves must be sent and answered before J2_AUX
    // clocks, or J2_AUX captures the bus before U1 drives it.
    for lazy in [false, true] {
        let (mut target, chips) = on_chips_run(demo().board.clone(), true, lazy);
        let far = Runner::new(&mut target, RunOptions::default()).run(&p);
        no_faults(&chips);
        assert!(far.passed(), "lazy {lazy}: {:?} {:?}", far.error, far.scans);
        same_records(std::slice::from_ref(&local), std::slice::from_ref(&far))
            .unwrap_or_else(|e| panic!("lazy {lazy}: {e}"));
        check(&far);
    }
}

#[test]
fn moves_and_waits_wait_for_the_next_read_and_a_scan_with_its_moves_is_one_exchange() {
    let (mut target, chips) = on_chips(demo().board.clone(), true);
    let chip = &chips[0];
    let (w, r) = (chip.borrow().writes, chip.borrow().reads);
    // Test-Logic-Reset, Run-Test/Idle, a wait, then to Shift-DR: nothing sent.
    target.moves(0, &[true; 5], true).unwrap();
    target.moves(0, &[false], true).unwrap();
    target.idle(0, false, 1 << 20).unwrap();
    target.moves(0, &[true, false, false], true).unwrap();
    assert_eq!((chip.borrow().writes - w, chip.borrow().reads - r), (0, 0));
    assert_eq!(chip.borrow().periods, 0);
    // The scan, and Exit1-DR → Update-DR → Run-Test/Idle after it: one
    // write (the held moves and wait first) and one read.
    let tdi = Bits::from_words(vec![0x0123_4567_89AB_CDEF; 16], 1000);
    let tdo = target.shift_then_move(0, &tdi, &[true, false]).unwrap();
    assert_eq!(chip.borrow().writes - w, 1);
    assert_eq!(chip.borrow().reads - r, 1);
    assert_eq!(chip.borrow().periods, 5 + 1 + (1 << 20) + 3 + 1000 + 2);
    // The same on the board, clock by clock.
    let mut board = demo().board.clone();
    let mut reference = |tms: &[bool]| {
        for &t in tms {
            board.clock(0, TapPins::new(t, true)).unwrap();
        }
    };
    reference(&[true, true, true, true, true, false]);
    for _ in 0..1 << 20 {
        reference(&[false]);
    }
    reference(&[true, false, false]);
    let mut want = Bits::zeros(1000);
    for i in 0..1000 {
        let t = board.clock(0, TapPins::new(i == 999, tdi.get(i))).unwrap();
        want.set(i, t.unwrap_or(true));
    }
    assert_eq!(tdo, want);
    // A flush after a scan has nothing to send.
    let (w, r) = (chip.borrow().writes, chip.borrow().reads);
    target.flush().unwrap();
    assert_eq!((chip.borrow().writes - w, chip.borrow().reads - r), (0, 0));
    // After a wait, a flush sends it and waits for a one-byte answer.
    target.idle(0, false, 16).unwrap();
    target.flush().unwrap();
    assert_eq!((chip.borrow().writes - w, chip.borrow().reads - r), (1, 1));
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
        // Held until the next read, or a flush.
        assert_eq!(chips[0].borrow().divisor, Some(29));
        target.flush().unwrap();
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
    Moves {
        port: usize,
        tms: Vec<bool>,
    },
    ShiftThenMove {
        port: usize,
        bits: Vec<bool>,
        after: Vec<bool>,
    },
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
        4 => (0..2usize, prop::collection::vec(any::<bool>(), 0..12))
            .prop_map(|(port, tms)| Op::Moves { port, tms }),
        3 => (0..2usize, prop::collection::vec(any::<bool>(), 1..200), prop::collection::vec(any::<bool>(), 0..9))
            .prop_map(|(port, bits, after)| Op::ShiftThenMove { port, bits, after }),
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

    /// Random TMS paths, held moves, scans with moves after them, waits
    /// and TRST*: the answers through the encoder and interpreter are the
    /// board's own (TDO high-impedance reads 1 through an adapter, as the
    /// pull-up makes it), with the chips running bytes as they come or
    /// only when the host reads.
    #[test]
    fn random_sessions_answer_as_the_board(ops in prop::collection::vec(op(), 1..80), lazy in any::<bool>()) {
        let (mut target, chips) = on_chips_run(demo().board.clone(), true, lazy);
        let mut board = demo().board.clone();
        // The session ends at the board's first refusal (an instruction the
        // model does not run): a held move meets it only at the next read.
        let mut refused = false;
        for op in &ops {
            match op {
                Op::Moves { port, tms } => {
                    if board.moves(*port, tms, true).is_err() {
                        refused = true;
                    } else {
                        target.moves(*port, tms, true).unwrap();
                    }
                }
                Op::ShiftThenMove { port, bits, after } => {
                    let tdi = Bits::from_bools(bits);
                    let a = target.shift_then_move(*port, &tdi, after);
                    let b = board.shift_then_move(*port, &tdi, after);
                    prop_assert_eq!(a.is_ok(), b.is_ok());
                    refused = b.is_err();
                    if let (Ok(a), Ok(b)) = (a, b) {
                        prop_assert_eq!(a, b);
                    }
                }
                Op::Clock { port, tms, tdi, trst_n } => {
                    let pins = TapPins { tms: *tms, tdi: *tdi, trst_n: *trst_n };
                    let a = target.clock(*port, pins).map(|t| t.unwrap_or(true));
                    let b = board.clock(*port, pins).map(|t| t.unwrap_or(true));
                    prop_assert_eq!(a.is_ok(), b.is_ok());
                    refused = b.is_err();
                    if let (Ok(a), Ok(b)) = (a, b) {
                        prop_assert_eq!(a, b);
                    }
                }
                Op::Shift { port, bits } => {
                    let tdi = Bits::from_bools(bits);
                    let a = target.shift(*port, &tdi);
                    let b = board.shift(*port, &tdi);
                    prop_assert_eq!(a.is_ok(), b.is_ok());
                    refused = b.is_err();
                    if let (Ok(a), Ok(b)) = (a, b) {
                        prop_assert_eq!(a, b);
                    }
                }
                Op::Idle { port, tms, count } => {
                    let b = board.idle(*port, *tms, *count);
                    refused = b.is_err();
                    if !refused {
                        target.idle(*port, *tms, *count).unwrap();
                    }
                }
                Op::Trst { port, asserted } => {
                    target.set_trst(*port, *asserted).unwrap();
                    board.set_trst(*port, *asserted).unwrap();
                }
            }
            if refused {
                break;
            }
        }
        // Everything held is done; no fault of the byte stream (a board
        // refusal is not one); every period the board clocked, the chips did.
        if !refused {
            target.flush().unwrap();
        }
        for c in &chips {
            prop_assert_eq!(&c.borrow().fault, &None);
        }
        if refused {
            return Ok(());
        }
        let clocked: u64 = chips.iter().map(|c| c.borrow().periods).sum();
        prop_assert_eq!(clocked, board.total_cycles());
    }

    /// Random programs on random boards (generated devices on one or two
    /// TAP ports): the runner's records, errors and TCK counts through the
    /// encoder and interpreter are those of the in-process board.
    #[test]
    fn random_programs_on_random_boards_give_the_in_process_records(seed in any::<u64>(), lazy in any::<bool>()) {
        let mut rng = Rng::new(seed);
        let (_dir, loaded) = generated(&mut rng);
        let program = random_program(&mut rng, &loaded.board);
        let mut board = loaded.board.clone();
        let local = Runner::new(&mut board, RunOptions::default()).run(&program);
        let (mut target, chips) = on_chips_run(loaded.board.clone(), true, lazy);
        let far = Runner::new(&mut target, RunOptions::default()).run(&program);
        prop_assert_eq!(same_records(&[local], &[far]), Ok(()));
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

/// A random program for `board`: resets, TRST*, moves to stable states
/// (shortest or through Pause states), waits, IR and DR scans of about the
/// path's length ending in any stable state, frequency changes.
fn random_program(rng: &mut Rng, board: &Board) -> Program {
    const STABLE: [TapState; 4] = [
        TapState::TestLogicReset,
        TapState::RunTestIdle,
        TapState::PauseDr,
        TapState::PauseIr,
    ];
    let ports = board.port_names();
    let mut steps = Vec::new();
    for _ in 0..1 + pick(rng, 24) {
        let port = ports[pick(rng, ports.len())].clone();
        let end = STABLE[pick(rng, 4)];
        let action = match pick(rng, 10) {
            0 => Action::ResetTms,
            1 => Action::Trst([TrstMode::On, TrstMode::Off][pick(rng, 2)]),
            2 => Action::Goto {
                path: Vec::new(),
                end,
            },
            3 => Action::Idle {
                state: [TapState::RunTestIdle, TapState::PauseDr][pick(rng, 2)],
                cycles: pick(rng, 40) as u64,
                min_seconds: None,
                end,
            },
            4 => Action::Frequency(Some([1e6, 250e3, 7e6][pick(rng, 3)])),
            _ => {
                let ir = pick(rng, 3) == 0;
                let n = board
                    .scan_layout(ports.iter().position(|p| p == &port).unwrap_or(0), ir)
                    .map_or(16, |l| l.iter().map(|s| s.length).sum::<usize>())
                    + pick(rng, 3);
                let tdi = Bits::from_bools(&(0..n).map(|_| rng.bit()).collect::<Vec<_>>());
                let mut mask = Bits::zeros(n);
                for i in 0..n {
                    mask.set(i, rng.bit());
                }
                Action::Scan(Scan {
                    kind: if ir { ScanKind::Ir } else { ScanKind::Dr },
                    expect: Some(tdi.clone()),
                    tdi,
                    mask,
                    smask: None,
                    end,
                })
            }
        };
        steps.push(Step {
            port,
            action,
            origin: Origin::default(),
        });
    }
    Program {
        name: "random".into(),
        steps,
        ..Program::default()
    }
}

/// The fastest TCK at or below `hz` by the interpreter's own numbers:
/// TCK = base / ((1 + divisor) × 2), base 60 MHz, or 12 MHz with
/// divide-by-5 (FTDI AN_108, "Set TCK/SK Divisor", from memory), the
/// 60 MHz base wherever its 16-bit divisor reaches.
fn expected_setting(hz: f64) -> (bool, u16) {
    for (d5, base) in [(false, 60e6), (true, 12e6)] {
        let d = (0..=u16::MAX).find(|&d| base / ((1.0 + f64::from(d)) * 2.0) <= hz * (1.0 + 1e-12));
        if let Some(d) = d {
            return (d5, d);
        }
    }
    panic!("{hz} Hz is out of reach")
}

#[test]
fn each_program_of_a_scenario_run_sets_the_divisor_of_its_frequency() {
    // A scenario of three programs at their own frequencies, one of them
    // changing it half-way, replayed as `boardtwin run --target usb://…`
    // replays it: the divisor bytes (0x86 ll hh) the chip gets before each
    // program's periods are those of its FREQUENCY.
    let dir = tempfile::tempdir().unwrap();
    let programs = repo().join("scenarios/programs");
    let infrastructure = std::fs::read_to_string(programs.join("infrastructure.yaml")).unwrap();
    assert!(infrastructure.contains("frequency: 10000000\n"));
    std::fs::write(
        dir.path().join("slow.yaml"),
        infrastructure.replace("frequency: 10000000\n", "frequency: 250000\n"),
    )
    .unwrap();
    std::fs::write(
        dir.path().join("default.yaml"),
        infrastructure.replace("frequency: 10000000\n", ""),
    )
    .unwrap();
    // IR capture of J1_MAIN (U1 0101, U3 000XXX01), at 7 MHz then 400 Hz.
    std::fs::write(
        dir.path().join("two.svf"),
        "FREQUENCY 7E6 HZ;\nSTATE RESET;\nSIR 12 TDI(FFF) TDO(501) MASK(FE3);\n\
         FREQUENCY 4E2 HZ;\nSIR 12 TDI(FFF) TDO(501) MASK(FE3);\n",
    )
    .unwrap();
    let board = repo().join("scenarios/boards/harbor_controller.yaml");
    let scenario = dir.path().join("clocks.yaml");
    std::fs::write(
        &scenario,
        format!(
            "description: three programs, four frequencies\nboard: {}\nprograms:\n  - slow.yaml\n  - {{ file: two.svf, port: J1_MAIN }}\n  - default.yaml\n",
            board.display()
        ),
    )
    .unwrap();
    let source = Interpreted::default();
    let outcome = replay_on(&scenario, &source).unwrap_or_else(|e| panic!("{e}"));
    assert!(outcome.met(), "{}", outcome.report());
    let chip = source.1.borrow()[0].clone();
    let chip = chip.borrow();
    assert_eq!(chip.fault, None);
    // Each setting as the chip got it, and the periods clocked under it.
    let log = &chip.clock_log;
    let settings: Vec<(bool, u16)> = log.iter().map(|&(_, d5, d)| (d5, d)).collect();
    let asked = [1e6, 250e3, 7e6, 400.0, 10e6];
    let want: Vec<(bool, u16)> = asked.iter().map(|&hz| expected_setting(hz)).collect();
    assert_eq!(settings, want);
    // Worked by hand: 60 MHz / 2 / 250 kHz − 1 = 119; 7 MHz cannot be
    // made, 30 MHz / 5 = 6 MHz is the fastest below (divisor 4); 400 Hz
    // needs the 12 MHz base: 6 MHz / 400 − 1 = 14,999; 10 MHz: divisor 2.
    assert_eq!(
        want,
        [
            (false, 29),
            (false, 119),
            (false, 4),
            (true, 14_999),
            (false, 2)
        ]
    );
    // Every program's setting came before its periods, and each clocked some.
    for k in 1..log.len() {
        let next = log.get(k + 1).map_or(chip.periods, |e| e.0);
        assert!(next > log[k].0, "no periods at {:?}", log[k]);
    }
    assert_eq!(
        log[1].0, 0,
        "the first program's periods run at its own frequency"
    );
}

#[test]
fn a_frequency_the_chip_cannot_make_is_refused_before_a_period_is_clocked() {
    let dir = tempfile::tempdir().unwrap();
    let svf = dir.path().join("fast.svf");
    std::fs::write(
        &svf,
        "STATE RESET;\nSIR 12 TDI(FFF) TDO(501) MASK(FE3);\nFREQUENCY 4E7 HZ;\nSIR 12 TDI(FFF);\n",
    )
    .unwrap();
    let p = load_program(&svf, demo(), Some("J1_MAIN")).unwrap();
    let (mut target, chips) = on_chips(demo().board.clone(), true);
    let run = Runner::new(&mut target, RunOptions::default()).run(&p);
    let e = run.error.unwrap();
    assert!(e.contains("the fastest it can is 30000000 Hz"), "{e}");
    assert!(run.scans.is_empty());
    assert_eq!(chips[0].borrow().periods, 0);
    // The in-process board has no clock to refuse it.
    let mut board = demo().board.clone();
    assert_eq!(
        Runner::new(&mut board, RunOptions::default()).run(&p).error,
        None
    );
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
    session.target.flush().unwrap();
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
    // Since the adapter was opened: its set-up write included.
    let s = target.statistics();
    println!(
        "interconnect: {} scans, {} TCK, {} round trips, {} writes, {} bytes written, {:.1} ms through the interpreter",
        run.scans.len(),
        run.tck_cycles,
        s.round_trips,
        s.writes,
        s.written,
        start.elapsed().as_secs_f64() * 1e3
    );
}
