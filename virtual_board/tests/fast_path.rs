//! The whole-scan and idle fast paths equal the bit-by-bit reference, on
//! random boards, random instruction sequences, scan lengths and waits.

use proptest::prelude::*;
use virtual_board::{Bits, Board, PortId, TapPins, TapState, TapTarget, TargetError};

mod support;
use support::random_board::random_board;

#[path = "../benches/support/generated_board.rs"]
mod generated_board;

/// Forwards only `clock`, so `shift` falls back to the bit-by-bit default.
struct Reference(Board);

impl TapTarget for Reference {
    fn port_count(&self) -> usize {
        self.0.port_count()
    }
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        self.0.clock(port, pins)
    }
}

#[derive(Clone, Debug)]
enum Op {
    Clock {
        port: usize,
        tms: bool,
        tdi: bool,
    },
    Scan {
        port: usize,
        ir: bool,
        bits: Vec<bool>,
        end: TapState,
    },
    Trst {
        port: usize,
    },
    Idle {
        port: usize,
        tms: bool,
        count: u64,
    },
    /// To Shift-DR, then one period per bit with TMS low: the shift stops
    /// midway, in Shift-DR.
    Clocks {
        port: usize,
        tdi: Vec<bool>,
    },
}

fn arb_op() -> impl Strategy<Value = Op> {
    let end = prop_oneof![
        Just(TapState::RunTestIdle),
        Just(TapState::PauseDr),
        Just(TapState::PauseIr),
        Just(TapState::TestLogicReset)
    ];
    prop_oneof![
        (0..3usize, any::<bool>(), any::<bool>()).prop_map(|(port, tms, tdi)| Op::Clock {
            port,
            tms,
            tdi
        }),
        (
            0..3usize,
            any::<bool>(),
            proptest::collection::vec(any::<bool>(), 0..300),
            end
        )
            .prop_map(|(port, ir, bits, end)| Op::Scan {
                port,
                ir,
                bits,
                end
            }),
        (0..3usize).prop_map(|port| Op::Trst { port }),
        (0..3usize, any::<bool>(), 0..40u64).prop_map(|(port, tms, count)| Op::Idle {
            port,
            tms,
            count
        }),
    ]
}

/// Runs one op through any target; the TAP state comes from the board inside.
fn apply<T: TapTarget>(
    t: &mut T,
    board: fn(&T) -> &Board,
    op: &Op,
) -> Vec<Result<Option<bool>, TargetError>> {
    let ports = t.port_count();
    let mut out = Vec::new();
    let goto = |t: &mut T, port: usize, target: TapState, out: &mut Vec<_>| {
        let from = board(t)
            .port_state(port)
            .unwrap_or(TapState::TestLogicReset);
        for tms in from.path_to(target) {
            out.push(t.clock(port, TapPins::new(tms, true)));
        }
    };
    match op {
        Op::Clock { port, tms, tdi } => out.push(t.clock(port % ports, TapPins::new(*tms, *tdi))),
        Op::Trst { port } => out.push(t.clock(
            port % ports,
            TapPins {
                tms: true,
                tdi: true,
                trst_n: false,
            },
        )),
        Op::Clocks { port, tdi } => {
            let port = port % ports;
            goto(t, port, TapState::ShiftDr, &mut out);
            for &bit in tdi {
                out.push(t.clock(port, TapPins::new(false, bit)));
            }
        }
        Op::Idle { port, tms, count } => {
            if let Err(e) = t.idle(port % ports, *tms, *count) {
                out.push(Err(e));
            }
        }
        Op::Scan {
            port,
            ir,
            bits,
            end,
        } => {
            let port = port % ports;
            goto(
                t,
                port,
                if *ir {
                    TapState::ShiftIr
                } else {
                    TapState::ShiftDr
                },
                &mut out,
            );
            match t.shift(port, &Bits::from_bools(bits)) {
                Ok(b) => out.extend(b.to_bools().into_iter().map(|v| Ok(Some(v)))),
                Err(e) => out.push(Err(e)),
            }
            goto(t, port, *end, &mut out);
        }
    }
    out
}

/// Runs `ops` on both targets, comparing every output and the whole board
/// state after each.
fn lockstep(fast: &mut Board, slow: &mut Reference, ops: &[Op]) -> Result<(), TestCaseError> {
    for op in ops {
        let a = apply(fast, |b| b, op);
        let b = apply(slow, |r| &r.0, op);
        prop_assert_eq!(a, b, "outputs differ after {:?}", op);
        prop_assert!(*fast == slow.0, "board state differs after {:?}", op);
    }
    Ok(())
}

/// An IR scan loading EXTEST, SAMPLE or IDCODE (`opcodes`, repeated) into
/// each of `devices` devices of the generated board, so the boundary
/// register (longer than a word) or a 32-bit one is selected.
fn select_registers(devices: usize, opcodes: &[u64]) -> Op {
    let bits = (0..devices)
        .flat_map(|d| {
            let op = opcodes[d % opcodes.len()];
            (0..8).map(move |i| op >> i & 1 == 1)
        })
        .collect();
    Op::Scan {
        port: 0,
        ir: true,
        bits,
        end: TapState::RunTestIdle,
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn whole_scan_equals_bit_by_bit(seed in any::<u64>(), ops in proptest::collection::vec(arb_op(), 1..25)) {
        let board = random_board(seed, &["high", "low", "previous", "random"]);
        let mut fast = board.clone();
        let mut slow = Reference(board);
        lockstep(&mut fast, &mut slow, &ops)?;
        prop_assert_eq!(fast.take_events(), slow.0.take_events());
    }
}

/// Devices of `cells` cells (Shift-DR gathers up to a word before it moves
/// the register), chained on one port.
fn long_register_board(devices: usize, cells: usize) -> Board {
    generated_board::chain_board(devices, cells)
}

fn arb_long_op() -> impl Strategy<Value = Op> {
    let end = prop_oneof![
        Just(TapState::RunTestIdle),
        Just(TapState::PauseDr),
        Just(TapState::TestLogicReset)
    ];
    prop_oneof![
        2 => (any::<bool>(), any::<bool>()).prop_map(|(tms, tdi)| Op::Clock { port: 0, tms, tdi }),
        1 => (any::<bool>(), proptest::collection::vec(any::<bool>(), 0..700), end)
            .prop_map(|(ir, bits, end)| Op::Scan { port: 0, ir, bits, end }),
        1 => Just(Op::Trst { port: 0 }),
        2 => proptest::collection::vec(any::<bool>(), 1..300)
            .prop_map(|tdi| Op::Clocks { port: 0, tdi }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    // Word-at-a-time Shift-DR equals the bit-by-bit reference: every TDO,
    // and the registers (bits gathered but not applied count as applied),
    // on registers of 10–250 cells (shorter than a word they gather their
    // own length, longer ones a word), with scans of any length, single
    // periods stopping mid-shift, and the whole-scan path starting mid-shift.
    #[test]
    fn word_shifts_equal_bit_by_bit(
        devices in 1..4usize,
        tens in 1..26usize,
        opcodes in proptest::collection::vec(0..3u64, 1..4),
        ops in proptest::collection::vec(arb_long_op(), 1..40),
    ) {
        let mut fast = long_register_board(devices, tens * 10);
        let mut slow = fast.clone();
        slow.set_word_shifts(false);
        let mut slow = Reference(slow);
        lockstep(&mut fast, &mut slow, &[select_registers(devices, &opcodes)])?;
        lockstep(&mut fast, &mut slow, &ops)?;
    }
}

/// One chain fault of the campaign's chain class (or a dead device) on a
/// device or port chosen by `pick`, as a defect list would put it.
fn inject_chain_fault(board: &mut Board, pick: u64) {
    let d = (pick / 7) as usize % board.devices().len();
    match pick % 7 {
        0 => {
            if let Some((p, k)) = board.chain_position(d) {
                board.set_broken_link(p, k);
            }
        }
        1 | 2 => board.update_faults(d, |f| f.tdo_stuck = Some(pick % 7 == 2)),
        3 => board.update_faults(d, |f| f.tms_open = true),
        4 => board.update_faults(d, |f| f.tck_open = true),
        5 => board.update_faults(d, |f| f.dead = true),
        _ => board.set_trst_stuck((pick / 7) as usize % board.port_count()),
    }
    board.refresh();
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    // The whole-scan path on chains with faults (a broken link, TDO stuck
    // at 0 or 1, TMS or TCK open, a dead device, TRST* stuck) equals the
    // bit-by-bit reference: every TDO and the whole board state, on random
    // boards with one or two such faults.
    #[test]
    fn faulted_chain_scans_equal_bit_by_bit(
        seed in any::<u64>(),
        picks in proptest::collection::vec(any::<u64>(), 1..3),
        ops in proptest::collection::vec(arb_op(), 1..25),
    ) {
        let mut board = random_board(seed, &["high", "low", "previous", "random"]);
        for &p in &picks {
            inject_chain_fault(&mut board, p);
        }
        let mut fast = board.clone();
        board.set_chain_fault_words(false);
        let mut slow = Reference(board);
        lockstep(&mut fast, &mut slow, &ops)?;
        prop_assert_eq!(fast.take_events(), slow.0.take_events());
    }

    // The same on long boundary registers (Shift-DR gathers words), where a
    // fault in the middle of the chain cuts the stream copy in two.
    #[test]
    fn faulted_long_chain_scans_equal_bit_by_bit(
        devices in 2..5usize,
        tens in 7..20usize,
        pick in any::<u64>(),
        opcodes in proptest::collection::vec(0..3u64, 1..4),
        ops in proptest::collection::vec(arb_long_op(), 1..30),
    ) {
        let mut fast = long_register_board(devices, tens * 10);
        inject_chain_fault(&mut fast, pick);
        let mut slow = fast.clone();
        slow.set_word_shifts(false);
        slow.set_chain_fault_words(false);
        let mut slow = Reference(slow);
        lockstep(&mut fast, &mut slow, &[select_registers(devices, &opcodes)])?;
        lockstep(&mut fast, &mut slow, &ops)?;
    }
}

/// Four devices in BYPASS on one port, a scan of eight bits, by hand: the
/// chain delays TDI by one bit per device (IEEE 1149.1 clause 10: BYPASS is
/// one bit that captures 0, from memory), a link broken after the second device gives
/// the third device's TDI its pull-up level 1 (IEEE 1149.1 clause 4: TDI
/// has a pull-up, from memory), and a TDO stuck at 1 on the third gives the
/// fourth ones.
#[test]
fn faulted_chain_scans_by_hand() {
    let tdi = Bits::from_bools(&[true, false, true, true, false, false, true, false]);
    let scan = |board: &mut Board| {
        // Test-Logic-Reset, then BYPASS (all ones) in every instruction
        // register, then a DR scan from Run-Test/Idle.
        board.reset_by_tms(0).unwrap();
        let ir = Bits::ones(4 * 8);
        board.scan_ir(0, &ir, TapState::RunTestIdle).unwrap();
        board.scan_dr(0, &tdi, TapState::RunTestIdle).unwrap()
    };
    let bools = |b: &Bits| b.to_bools();
    let healthy = scan(&mut generated_board::chain_board(4, 70));
    assert_eq!(
        bools(&healthy),
        [false, false, false, false, true, false, true, true]
    );
    let mut broken = generated_board::chain_board(4, 70);
    broken.set_broken_link(0, 1);
    broken.refresh();
    assert_eq!(
        bools(&scan(&mut broken)),
        [false, false, true, true, true, true, true, true]
    );
    let mut stuck = generated_board::chain_board(4, 70);
    stuck.update_faults(2, |f| f.tdo_stuck = Some(true));
    stuck.refresh();
    assert_eq!(
        bools(&scan(&mut stuck)),
        [false, true, true, true, true, true, true, true]
    );
}
