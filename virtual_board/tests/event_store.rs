//! The board's event store: events kept in full up to `EVENTS_KEPT` between
//! takes, every one counted per kind and place, names resolved when taken.

use virtual_board::{Bits, Board, BoardEvent, TapState, TapTarget, EVENTS_KEPT};

mod support;
use support::random_board::demo_board;

// U3 = QM5508 alone on its port, no nets: under SAMPLE every input and
// disabled pin without a pull or keeper floats at each Capture-DR.
const YAML: &str = r#"
name: events
float: high
devices:
  U3: { bsdl: qm5508_port_controller.bsd, outputs: off }
tap_ports:
  - { name: P, chain: [U3] }
"#;

fn board() -> Board {
    let mut b = demo_board(YAML);
    b.scan_ir(0, &Bits::from_u64(0b01, 8), TapState::RunTestIdle)
        .unwrap(); // SAMPLE
    b
}

fn capture(b: &mut Board) {
    b.scan_dr(0, &Bits::zeros(50), TapState::RunTestIdle)
        .unwrap();
}

#[test]
fn events_past_the_limit_are_counted_not_kept() {
    let mut b = board();
    let _ = b.take_events();
    capture(&mut b);
    let one = b.take_events();
    let per_capture = one.len();
    assert!(per_capture > 0, "the unconnected inputs float");
    // Names are looked up at take time, as a report shows them.
    match &one[0] {
        BoardEvent::FloatingCapture {
            port,
            pin,
            device,
            net,
            ..
        } => {
            assert_eq!(port, "P");
            assert_eq!(device, "U3");
            assert!(pin.starts_with("U3."), "{pin}");
            assert_eq!(*net, None);
        }
        other => panic!("{other:?}"),
    }
    let rounds = EVENTS_KEPT / per_capture + 3;
    for _ in 0..rounds {
        capture(&mut b);
    }
    let counts = b.event_counts();
    let raised = (rounds * per_capture) as u64;
    assert_eq!(counts.total(), raised + per_capture as u64);
    assert_eq!(counts.dropped, raised - EVENTS_KEPT as u64);
    // Each floating place was counted once per capture.
    assert_eq!(counts.tallies.len(), per_capture);
    for t in &counts.tallies {
        assert_eq!(t.kind, "floating capture");
        assert!(t.place.starts_with("U3 cell "), "{}", t.place);
        assert_eq!(t.count, rounds as u64 + 1);
    }
    // The first ones are kept, in order.
    let kept = b.take_events();
    assert_eq!(kept.len(), EVENTS_KEPT);
    let cycles: Vec<u64> = kept
        .iter()
        .map(|e| match e {
            BoardEvent::FloatingCapture { cycle, .. } => *cycle,
            _ => 0,
        })
        .collect();
    assert!(cycles.windows(2).all(|w| w[0] <= w[1]));
    // After a take there is room again; the counts go on.
    capture(&mut b);
    assert_eq!(b.take_events().len(), per_capture);
    assert_eq!(b.event_counts().total(), raised + 2 * per_capture as u64);
    // A refresh forgets everything, counts included.
    b.refresh();
    assert_eq!(b.event_counts().total(), 0);
    assert!(b.take_events().is_empty());
}

// The trait reads the same counts as the board.
#[test]
fn the_trait_gives_the_counts() {
    let mut b = board();
    capture(&mut b);
    let via_trait = TapTarget::event_counts(&b);
    assert_eq!(via_trait, b.event_counts());
    assert!(via_trait.total() > 0);
}
