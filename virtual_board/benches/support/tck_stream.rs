//! TCK streams for the engine benches: reset, IR and DR scans written out
//! as one `(port, pins)` entry per TCK period, and the generated boards
//! they run on (a small two-port board with floating nets and fights).

use std::path::Path;

use virtual_board::{load_board_text, Board, TapPins, TapTarget};

/// One TCK period per entry: the port and its TMS, TDI, TRST*.
#[derive(Clone, Debug, Default)]
pub struct Stream(pub Vec<(usize, TapPins)>);

impl Stream {
    fn tms(&mut self, port: usize, tms: &[bool]) {
        self.0
            .extend(tms.iter().map(|&t| (port, TapPins::new(t, true))));
    }

    /// Five TMS high (Test-Logic-Reset from anywhere), then Run-Test/Idle.
    pub fn reset(&mut self, port: usize) -> &mut Stream {
        self.tms(port, &[true, true, true, true, true, false]);
        self
    }

    /// From Run-Test/Idle: an IR (`ir`) or DR scan of `bits` (bit 0 first),
    /// through Capture and Update, back to Run-Test/Idle.
    pub fn scan(&mut self, port: usize, ir: bool, bits: &[bool]) -> &mut Stream {
        if ir {
            self.tms(port, &[true, true, false, false]);
        } else {
            self.tms(port, &[true, false, false]);
        }
        let n = bits.len();
        self.0.extend(
            bits.iter()
                .enumerate()
                .map(|(i, &b)| (port, TapPins::new(i + 1 == n, b))),
        );
        self.tms(port, &[true, false]);
        self
    }

    /// TCK periods in the stream.
    pub fn len(&self) -> u64 {
        self.0.len() as u64
    }

    /// Every period through [`TapTarget::clock`], one at a time; returns
    /// how many TDO bits read 1 (so nothing is optimised away).
    pub fn play<T: TapTarget>(&self, target: &mut T) -> u64 {
        let mut ones = 0;
        for &(port, pins) in &self.0 {
            ones += u64::from(target.clock(port, pins).ok().flatten() == Some(true));
        }
        ones
    }
}

/// `n` bits of an opcode, least significant first.
pub fn opcode(value: u64, n: usize) -> Vec<bool> {
    (0..n).map(|i| value >> i & 1 == 1).collect()
}

/// A small two-port board: U0 on port A; U1 and U2 on port B; 20-cell
/// generated devices (60 cells). U0's outputs drive nets read by U1 and U2;
/// on two of them U2's system logic drives high against U0 (a fight when U0
/// drives 0 in EXTEST); net F0 has only inputs (it floats), and some pins
/// are on no net.
pub fn small_two_port_board() -> Board {
    let text = super::generated_board::bsdl(20);
    let mut yaml = String::from(
        "name: small two-port\nfloat: high\ndevices:\n  U0: { bsdl: gen.bsd, outputs: low }\n  U1: { bsdl: gen.bsd, outputs: off }\n  U2: { bsdl: gen.bsd, outputs: off, pins: { \"Q(6)\": high, \"Q(7)\": high } }\ntap_ports:\n  - { name: A, chain: [U0] }\n  - { name: B, chain: [U1, U2] }\nnets:\n",
    );
    for k in 0..6 {
        yaml += &format!("  N{k}: [U0.Q({k}), U1.I({k}), U2.I({k})]\n");
    }
    for k in 6..8 {
        yaml += &format!("  N{k}: [U0.Q({k}), U2.Q({k}), U1.I({k})]\n");
    }
    yaml += "  F0: [U1.I(8), U2.I(8)]\n";
    load_board_text(&yaml, Path::new("small.yaml"), &mut |_: &Path| {
        Ok((text.clone(), "gen.bsd".into()))
    })
    .map(|l| l.board)
    .unwrap_or_else(|e| panic!("small board: {e}"))
}
