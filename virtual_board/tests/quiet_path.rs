//! The quiet path of `TapTarget::clock`, and the resolution of only the
//! nets an edge's changes reach, equal the reference engine.
//!
//! The reference is the engine as it was before either: both edges of
//! every TCK period, device by device, with the faults, TRST* and the net
//! resolution checked on each, every net resolved after every edge that
//! changes a pin ([`Board::set_quiet_path`] `(false)` and
//! [`Board::set_changed_nets_only`] `(false)` keep it in the engine, the
//! way `set_word_shifts(false)` keeps the bit-by-bit shift). On random boards (floating nets, fights, random float
//! policy, 1–3 ports) and random TCK streams, one period at a time through
//! `clock`, both must give the same TDO every period, and the same board
//! after it: TAP states, every register (captured and shifted), TDO, net
//! levels, cycle counts and the event store; and the same events when
//! taken. Defects and TRST* land in the middle of the stream, so the quiet
//! path must notice when a port stops (or starts) being quiet.

use proptest::prelude::*;
use virtual_board::{Board, DeviceFaults, TapPins, TapTarget};

mod support;
use support::random_board::random_board;

#[path = "../benches/support/generated_board.rs"]
mod generated_board;
#[path = "../benches/support/tck_stream.rs"]
#[allow(dead_code)]
mod tck_stream;

/// One step of a stream.
#[derive(Clone, Debug)]
enum Step {
    /// One period through `clock`, TRST* as given.
    Clock {
        port: usize,
        tms: bool,
        tdi: bool,
        trst_n: bool,
    },
    /// Periods with TMS low and these TDI bits (a long stay in a state:
    /// Shift, Pause, Run-Test/Idle).
    Hold { port: usize, tdi: Vec<bool> },
    /// The tester drives TRST* (asserted or released) without TCK.
    Trst { port: usize, asserted: bool },
    /// A device fault appears (or all of a device's faults clear).
    Fault { device: usize, kind: u8 },
    /// The TDO-to-TDI link after a chain position breaks.
    Break { port: usize, after: usize },
    /// Events taken, as a runner takes them between programs.
    Take,
    /// To Run-Test/Idle, then a whole DR scan of these bits through
    /// Capture-DR and Update-DR back to Run-Test/Idle: under EXTEST the
    /// pins take new levels and the nets change.
    Dr { port: usize, tdi: Vec<bool> },
}

fn arb_step() -> impl Strategy<Value = Step> {
    prop_oneof![
        12 => (0..3usize, any::<bool>(), any::<bool>(), prop::bool::weighted(0.97)).prop_map(
            |(port, tms, tdi, trst_n)| Step::Clock { port, tms, tdi, trst_n }
        ),
        6 => (0..3usize, proptest::collection::vec(any::<bool>(), 1..150))
            .prop_map(|(port, tdi)| Step::Hold { port, tdi }),
        1 => (0..3usize, any::<bool>()).prop_map(|(port, asserted)| Step::Trst { port, asserted }),
        1 => (0..8usize, 0..5u8).prop_map(|(device, kind)| Step::Fault { device, kind }),
        1 => (0..3usize, 0..4usize).prop_map(|(port, after)| Step::Break { port, after }),
        1 => Just(Step::Take),
        4 => (0..3usize, proptest::collection::vec(any::<bool>(), 1..120))
            .prop_map(|(port, tdi)| Step::Dr { port, tdi }),
    ]
}

/// Applies `step` to `board`; returns what `clock` answered each period.
fn apply(board: &mut Board, step: &Step) -> Vec<String> {
    let ports = board.port_count();
    let mut out = Vec::new();
    let mut clock = |b: &mut Board, port: usize, pins: TapPins| {
        out.push(format!("{:?}", b.clock(port % ports, pins)));
    };
    match step {
        &Step::Clock {
            port,
            tms,
            tdi,
            trst_n,
        } => clock(board, port, TapPins { tms, tdi, trst_n }),
        Step::Hold { port, tdi } => {
            for &bit in tdi {
                clock(board, *port, TapPins::new(false, bit));
            }
        }
        &Step::Trst { port, asserted } => {
            out.push(format!("{:?}", board.set_trst(port % ports, asserted)));
        }
        &Step::Fault { device, kind } => {
            let d = device % board.devices().len();
            board.update_faults(d, |f| match kind {
                0 => f.tms_open = true,
                1 => f.tck_open = true,
                2 => f.tdo_stuck = Some(device % 2 == 0),
                3 => f.dead = true,
                _ => *f = DeviceFaults::default(),
            });
        }
        &Step::Break { port, after } => {
            let port = port % ports;
            let len = board.ports()[port].chain.len();
            board.set_broken_link(port, after % len);
        }
        Step::Take => out.push(format!("{:?}", board.take_events())),
        Step::Dr { port, tdi } => {
            let port = port % ports;
            let moved = board.goto_state(port, virtual_board::TapState::RunTestIdle);
            clock(board, port, TapPins::new(false, true));
            let n = tdi.len();
            let tms = [true, false, false]
                .into_iter()
                .map(|t| (t, true))
                .chain(tdi.iter().enumerate().map(|(i, &b)| (i + 1 == n, b)))
                .chain([(true, true), (false, true)]);
            for (t, b) in tms {
                clock(board, port, TapPins::new(t, b));
            }
            out.push(format!("{moved:?}"));
        }
    }
    out
}

/// Runs the stream on the quiet engine and on the reference, comparing
/// every answer and the whole board after every step.
fn same_on_both(board: Board, steps: &[Step]) -> Result<(), TestCaseError> {
    let mut quiet = board.clone();
    let mut reference = board;
    reference.set_quiet_path(false);
    reference.set_changed_nets_only(false);
    for (i, step) in steps.iter().enumerate() {
        let a = apply(&mut quiet, step);
        let b = apply(&mut reference, step);
        prop_assert_eq!(a, b, "answers differ at step {} ({:?})", i, step);
        prop_assert!(
            quiet == reference,
            "boards differ after step {i} ({step:?})"
        );
        for n in 0..quiet.nets().len() {
            prop_assert_eq!(quiet.net_read(n), reference.net_read(n));
            prop_assert_eq!(quiet.net_strength(n), reference.net_strength(n));
        }
        for p in 0..quiet.port_count() {
            prop_assert_eq!(quiet.peek_tdo(p), reference.peek_tdo(p));
        }
    }
    prop_assert_eq!(quiet.take_events(), reference.take_events());
    prop_assert_eq!(quiet.event_counts(), reference.event_counts());
    Ok(())
}

/// Instruction scans first, so the streams also run EXTEST, SAMPLE and
/// IDCODE (the demo devices' opcodes 0, 1, 2 in their low bits), not only
/// the IDCODE or BYPASS that Test-Logic-Reset leaves.
fn with_instructions(port: usize, opcode: u64) -> Vec<Step> {
    let to_shift_ir = [true, true, false, false];
    let mut steps: Vec<Step> = [true, true, true, true, true, false]
        .iter()
        .chain(&to_shift_ir)
        .map(|&tms| Step::Clock {
            port,
            tms,
            tdi: true,
            trst_n: true,
        })
        .collect();
    let bits: Vec<bool> = (0..64).map(|i| opcode >> (i % 8) & 1 == 1).collect();
    steps.push(Step::Hold { port, tdi: bits });
    steps.extend([true, true, false].iter().map(|&tms| Step::Clock {
        port,
        tms,
        tdi: true,
        trst_n: true,
    }));
    steps
}

/// [`same_on_both`] after loading the instruction on ports 0 and 1.
fn on_both_ports(board: Board, opcode: u64, steps: Vec<Step>) -> Result<(), TestCaseError> {
    let mut all = with_instructions(0, opcode);
    all.extend(with_instructions(1, opcode));
    all.extend(steps);
    same_on_both(board, &all)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn quiet_path_equals_reference_on_random_boards(
        seed in any::<u64>(),
        opcode in 0..3u64,
        steps in proptest::collection::vec(arb_step(), 1..60),
    ) {
        let board = random_board(seed, &["high", "low", "previous", "random"]);
        let mut all = with_instructions(0, opcode);
        all.extend(steps);
        same_on_both(board, &all)?;
    }

    // The demo board: system logic that follows a net, non-scan clusters
    // (a buffer, a series resistor, a three-state buffer), pulls and a
    // loopback plug, both ports loaded with the instruction.
    #[test]
    fn changed_nets_equal_every_net_on_the_demo_board(
        opcode in 0..3u64,
        steps in proptest::collection::vec(arb_step(), 1..60),
    ) {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../scenarios/boards/harbor_controller.yaml");
        let board = virtual_board::load_board(&path).unwrap_or_else(|e| panic!("{e}")).board;
        on_both_ports(board, opcode, steps)?;
    }

    // The small two-port board of the engine bench: fights between a scan
    // output and system logic, a net that only inputs sit on.
    #[test]
    fn changed_nets_equal_every_net_on_the_small_two_port_board(
        opcode in 0..3u64,
        steps in proptest::collection::vec(arb_step(), 1..60),
    ) {
        let board = tck_stream::small_two_port_board();
        on_both_ports(board, opcode, steps)?;
    }

    // Registers longer than a word: the quiet path's shifts meet the
    // word-at-a-time Shift-DR (bits gathered, then applied).
    #[test]
    fn quiet_path_equals_reference_on_long_registers(
        devices in 1..4usize,
        tens in 7..20usize,
        opcode in 0..3u64,
        steps in proptest::collection::vec(arb_step(), 1..40),
    ) {
        let board = generated_board::chain_board(devices, tens * 10);
        let mut all = with_instructions(0, opcode);
        all.extend(steps);
        same_on_both(board, &all)?;
    }
}
