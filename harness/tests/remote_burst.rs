//! The server's burst (`clock_burst`: Shift stretches on the board's
//! whole-scan word path) equals the reference, one `clock` per period, on
//! random boards with random defects and random bursts: TDO and high
//! impedance per period, a refused instruction in the same words, the
//! board afterwards (every register, TAP state, net level and cycle count)
//! and the hazards it raised.
//!
//! The bursts mix random periods with scans that reach Shift-DR or
//! Shift-IR by the TAP state diagram (IEEE 1149.1 clause 6, from memory:
//! five TMS-high periods reach Test-Logic-Reset from anywhere; then 0,1,0,0
//! reaches Shift-DR and 0,1,1,0,0 Shift-IR), stay there for up to 300
//! periods and sometimes leave through Exit1, sometimes not before the
//! burst ends, sometimes with TRST* asserted inside.

#[path = "support/random_board.rs"]
mod random_board;

use harness::campaign::{universe, UniverseOptions};
use harness::remote::clock_burst;
use proptest::prelude::*;
use random_board::{random_board, source};
use virtual_board::{Bits, Board, Rng, TapPins, TapTarget};

/// A piece of a burst.
#[derive(Clone, Debug)]
enum Piece {
    /// Random periods: (TMS, TDI, TRST*).
    Periods(Vec<(bool, bool, bool)>),
    /// From Test-Logic-Reset to Shift-IR (`ir`) or Shift-DR, `tdi` shifted
    /// with TMS low, TMS high on the last bit when `exit`, and TRST*
    /// asserted at period `trst_low` of the shift when it is inside.
    Scan {
        ir: bool,
        tdi: Vec<bool>,
        exit: bool,
        trst_low: Option<usize>,
    },
}

fn arb_piece() -> impl Strategy<Value = Piece> {
    prop_oneof![
        prop::collection::vec(
            (any::<bool>(), any::<bool>(), prop::bool::weighted(0.97)),
            0..30
        )
        .prop_map(Piece::Periods),
        (
            any::<bool>(),
            prop::collection::vec(any::<bool>(), 1..300),
            prop::bool::weighted(0.8),
            prop::option::weighted(0.1, 0usize..300),
        )
            .prop_map(|(ir, tdi, exit, trst_low)| Piece::Scan {
                ir,
                tdi,
                exit,
                trst_low
            }),
    ]
}

/// The periods of `pieces`, in order.
fn periods(pieces: &[Piece]) -> Vec<(bool, bool, bool)> {
    let mut out = Vec::new();
    for p in pieces {
        match p {
            Piece::Periods(v) => out.extend(v),
            Piece::Scan {
                ir,
                tdi,
                exit,
                trst_low,
            } => {
                let entry: &[bool] = if *ir {
                    &[
                        true, true, true, true, true, false, true, true, false, false,
                    ]
                } else {
                    &[true, true, true, true, true, false, true, false, false]
                };
                out.extend(entry.iter().map(|&tms| (tms, true, true)));
                for (k, &d) in tdi.iter().enumerate() {
                    let tms = *exit && k + 1 == tdi.len();
                    out.push((tms, d, *trst_low != Some(k)));
                }
            }
        }
    }
    out
}

fn bits(v: impl Iterator<Item = bool>) -> Bits {
    Bits::from_bools(&v.collect::<Vec<_>>())
}

/// The reference: one `clock` per period; TDO per period, or the refusal.
fn reference(
    board: &mut Board,
    port: usize,
    p: &[(bool, bool, bool)],
) -> Result<Vec<Option<bool>>, String> {
    p.iter()
        .map(|&(tms, tdi, trst_n)| {
            board
                .clock(port, TapPins { tms, tdi, trst_n })
                .map_err(|e| e.to_string())
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn bursts_with_word_shifts_equal_one_clock_per_period(
        seed in any::<u64>(),
        port in 0usize..2,
        bursts in prop::collection::vec(prop::collection::vec(arb_piece(), 1..5), 1..4),
    ) {
        let mut rng = Rng::new(seed);
        let loaded = random_board(&mut rng);
        let port = port % loaded.board.port_count();
        // The good board half the time, else one random fault (chain
        // faults included: there the word path must not be taken).
        let faults = universe(&loaded, &UniverseOptions::default());
        let mut board = loaded.board.clone();
        if rng.next_u64().is_multiple_of(2) && !faults.is_empty() {
            let f = &faults[(rng.next_u64() % faults.len() as u64) as usize];
            if let Ok(faulty) = loaded.with_defects(std::slice::from_ref(&f.defect), &mut source()) {
                board = faulty.board;
            }
        }
        let mut want_board = board.clone();
        for pieces in &bursts {
            let p = periods(pieces);
            let want = reference(&mut want_board, port, &p);
            let got = clock_burst(
                &mut board,
                port,
                &bits(p.iter().map(|x| x.0)),
                &bits(p.iter().map(|x| x.1)),
                &bits(p.iter().map(|x| x.2)),
            );
            match (got, want) {
                (Ok(out), Ok(want)) => {
                    prop_assert_eq!(out.tdo.len(), want.len());
                    for (i, w) in want.iter().enumerate() {
                        prop_assert_eq!(out.driven.get(i).then(|| out.tdo.get(i)), *w, "period {}", i);
                        prop_assert_eq!(w.is_none(), out.tdo.get(i) && !out.driven.get(i));
                    }
                }
                (Err(e), Err(w)) => {
                    prop_assert_eq!(e.to_string(), w);
                    prop_assert!(board == want_board);
                    break;
                }
                (got, want) => prop_assert!(false, "burst {:?}, reference {:?}", got, want),
            }
            prop_assert!(board == want_board, "the boards differ after the burst");
        }
        prop_assert_eq!(board.take_events(), want_board.take_events());
    }
}

/// The stretch inside a burst that reads IDCODE: a hand-worked case of the
/// word path. After Test-Logic-Reset the data register is IDCODE (IEEE
/// 1149.1 clause 8, from memory), 32 bits with bit 0 set (clause 12,
/// from memory), so on a one-device port the first 32 bits out of Shift-DR
/// are the IDCODE, and every one is driven.
#[test]
fn an_idcode_read_inside_a_burst_is_the_devices_idcode() {
    let mut rng = Rng::new(7);
    let loaded = random_board(&mut rng);
    let mut board = loaded.board.clone();
    let port = 0;
    let mut p = vec![(true, true, true); 5];
    p.extend([false, true, false, false].map(|t| (t, true, true)));
    p.extend((0..64).map(|k| (k == 63, false, true)));
    let out = clock_burst(
        &mut board,
        port,
        &bits(p.iter().map(|x| x.0)),
        &bits(p.iter().map(|x| x.1)),
        &bits(p.iter().map(|x| x.2)),
    )
    .unwrap();
    let chain = board.ports()[port].chain.len();
    // The last device of the chain is nearest TDO: its IDCODE comes first.
    let last = board.ports()[port].chain[chain - 1];
    let read: Vec<bool> = (9..9 + 32).map(|i| out.tdo.get(i)).collect();
    assert!(read[0], "IDCODE bit 0 is 1");
    let code = board.devices()[last].model().idcode.clone().unwrap();
    assert!(code.matches(&read), "read {read:?}");
    assert!((9..9 + 64).all(|i| out.driven.get(i)));
}
