//! The whole-scan and idle fast paths equal the bit-by-bit reference, on
//! random boards, random instruction sequences, scan lengths and waits.

use std::path::{Path, PathBuf};

use proptest::prelude::*;
use virtual_board::{
    load_board_text, Bits, Board, PortId, Rng, TapPins, TapState, TapTarget, TargetError,
};

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

const DEVICES: [&str; 4] = [
    "qm7420_bus_bridge.bsd",
    "qm3310_io_expander.bsd",
    "qm5508_port_controller.bsd",
    "qm2040_clock_buffer.bsd",
];

fn devices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices")
}

/// A random board: 1–3 TAP ports, 1–6 demo devices, random nets between
/// random pins of their output and input ports, random system logic.
fn random_board(seed: u64) -> Board {
    let mut rng = Rng::new(seed);
    let mut pick = |n: usize| (rng.next_u64() % n as u64) as usize;
    let ports = 1 + pick(3);
    let count = ports.max(1 + pick(6));
    let dir = devices_dir();
    let models: Vec<_> = DEVICES
        .iter()
        .map(|f| virtual_board::read_bsdl(&dir.join(f)).expect("demo BSDL reads"))
        .collect();
    let mut yaml = format!(
        "name: random-{seed}\nseed: {seed}\nshorts: {}\ndevices:\n",
        if pick(2) == 0 {
            "wired-and"
        } else {
            "wired-or"
        }
    );
    let mut chains = vec![Vec::new(); ports];
    let mut pins = Vec::new();
    for i in 0..count {
        let m = pick(4);
        let outputs = ["low", "high", "off"][pick(3)];
        yaml += &format!("  U{i}: {{ bsdl: {}, outputs: {outputs} }}\n", DEVICES[m]);
        chains[if i < ports { i } else { pick(ports) }].push(format!("U{i}"));
        for cell in &models[m].cells {
            if let Some(p) = &cell.port {
                let pin = models[m]
                    .port(&p.name)
                    .and_then(|x| x.pins_of(p.index))
                    .and_then(|v| v.first().cloned());
                if let Some(pin) = pin {
                    let r = format!("U{i}.{pin}");
                    if !pins.contains(&r) {
                        pins.push(r);
                    }
                }
            }
        }
    }
    yaml += "tap_ports:\n";
    for (k, chain) in chains.iter().enumerate() {
        yaml += &format!(
            "  - {{ name: P{k}, chain: [{}], trst: {} }}\n",
            chain.join(", "),
            pick(2) == 0
        );
    }
    yaml += "nets:\n";
    // Shuffle the pins and group them into nets of 1–3 pins.
    for i in (1..pins.len()).rev() {
        let j = pick(i + 1);
        pins.swap(i, j);
    }
    let mut k = 0;
    let mut net = 0;
    while k < pins.len() {
        let size = (1 + pick(3)).min(pins.len() - k);
        yaml += &format!("  N{net}: [{}]\n", pins[k..k + size].join(", "));
        k += size;
        net += 1;
    }
    yaml += &format!(
        "float: {}\n",
        ["high", "low", "previous", "random"][pick(4)]
    );
    let loaded = load_board_text(&yaml, Path::new("random.yaml"), &mut |p: &Path| {
        let full = dir.join(p);
        Ok((
            std::fs::read_to_string(&full).expect("demo BSDL present"),
            full,
        ))
    });
    match loaded {
        Ok(l) => l.board,
        Err(e) => panic!("random board does not load: {e}\n{yaml}"),
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

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn whole_scan_equals_bit_by_bit(seed in any::<u64>(), ops in proptest::collection::vec(arb_op(), 1..25)) {
        let board = random_board(seed);
        let mut fast = board.clone();
        let mut slow = Reference(board);
        for op in &ops {
            let a = apply(&mut fast, |b| b, op);
            let b = apply(&mut slow, |r| &r.0, op);
            prop_assert_eq!(a, b, "outputs differ after {:?}", op);
            prop_assert!(fast == slow.0, "board state differs after {:?}", op);
        }
        prop_assert_eq!(fast.take_events(), slow.0.take_events());
    }
}
