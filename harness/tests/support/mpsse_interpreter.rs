//! An MPSSE interpreter for the tests: it executes the bytes a host sends
//! to one channel of an FT2232H-class chip in JTAG use against a virtual
//! board, and answers as the chip would.
//!
//! Written from the chip maker's published command description, FTDI
//! application note AN_108, "Command Processor for MPSSE and MCU Host Bus
//! Emulation Modes", from memory, and independently of the encoder in
//! `harness::mpsse` (it shares no constant or function with it). What it
//! takes from AN_108:
//!
//! - the pins: ADBUS0 clock out, ADBUS1 data out, ADBUS2 data in, ADBUS3
//!   TMS (chip select); the clock rests low;
//! - data commands: bit 0 of the opcode set = data out on the falling
//!   edge, bit 1 = bit mode (else bytes), bit 2 = read on the falling edge
//!   (clear: rising), bit 3 = LSB first, bit 4 = write data, bit 5 = read
//!   data, bit 6 = TMS command; byte lengths are 16-bit, less one; bit
//!   lengths 3-bit, less one; a read of fewer than 8 bits enters its byte
//!   from the top;
//! - a TMS command's byte: TMS bits from bit 0, bit 7 held on data out;
//! - 0x80/0x82 set the low/high byte (value, direction), 0x81/0x83 read
//!   them, 0x84/0x85 loopback on/off, 0x86 divisor, 0x87 send immediate,
//!   0x8A/0x8B divide-by-5 off/on, 0x8C/0x8D three-phase on/off, 0x8E and
//!   0x8F clock with no data (n + 1 bits, (n + 1) × 8 bits), 0x96/0x97
//!   adaptive clocking on/off;
//! - anything else is a bad command (the chip answers 0xFA and the byte):
//!   here a fault, so a test fails instead of panicking.
//!
//! Only the JTAG use is accepted: LSB first, out on the falling edge, in on
//! the rising edge; loopback, three-phase and adaptive clocking on are
//! faults, as are data commands while the JTAG pins are not outputs.

#![allow(dead_code)]

use std::cell::RefCell;
use std::collections::VecDeque;
use std::rc::Rc;

use harness::mpsse::{LinkError, Transport};
use virtual_board::{Board, PortId, TapPins, TapTarget};

/// How a board's own refusal (an instruction the model does not run)
/// begins: not a fault of the byte stream, so not kept in `fault`; the rest
/// of that write is dropped, as the board stopped there.
pub const REFUSED: &str = "the board refused: ";

/// One channel of the chip wired to one TAP port of a board.
pub struct Chip {
    board: Rc<RefCell<Board>>,
    port: PortId,
    /// Low byte (ADBUS) and high byte (ACBUS): levels and directions.
    low: (u8, u8),
    high: (u8, u8),
    /// The GPIO pin wired to the port's TRST* (byte 1 = high, bit).
    trst: Option<(bool, u8)>,
    /// The GPIO pin wired to the power sense, and what it reads.
    power: Option<(bool, u8, bool)>,
    /// Bytes not yet parsed (a command cut between two writes).
    pending: Vec<u8>,
    /// Bytes for the host; `flushed` of them follow a send-immediate.
    answers: VecDeque<u8>,
    flushed: usize,
    /// The first fault: a bad command, a bad state, a board refusal.
    pub fault: Option<String>,
    /// TCK periods clocked.
    pub periods: u64,
    /// Writes and reads the host made.
    pub writes: u64,
    pub reads: u64,
    /// Divisor and divide-by-5 as last set.
    pub divisor: Option<u16>,
    pub divide_by_5: Option<bool>,
    /// Every TCK setting in force from some period on: (periods clocked
    /// before it, divide-by-5, divisor), one entry per 0x86 command.
    pub clock_log: Vec<(u64, bool, u16)>,
    /// Runs the bytes written only when the host reads (a real engine runs
    /// them when it gets to them: this is the latest it may, so a host that
    /// relies on a write being done before it touches another channel is
    /// caught).
    pub lazy: bool,
    /// Periods clocked with TRST* low (the pin, not the board's own state).
    trst_low: bool,
}

impl Chip {
    /// A chip on `port` of `board`, TRST* and power sense where given
    /// (`(high byte, bit)`); the power sense reads `powered`.
    pub fn new(
        board: Rc<RefCell<Board>>,
        port: PortId,
        trst: Option<(bool, u8)>,
        power: Option<(bool, u8)>,
        powered: bool,
    ) -> Chip {
        Chip {
            board,
            port,
            low: (0, 0),
            high: (0, 0),
            trst,
            power: power.map(|(h, b)| (h, b, powered)),
            pending: Vec::new(),
            answers: VecDeque::new(),
            flushed: 0,
            fault: None,
            periods: 0,
            writes: 0,
            reads: 0,
            divisor: None,
            divide_by_5: None,
            clock_log: Vec::new(),
            lazy: false,
            trst_low: false,
        }
    }

    /// Shared, for a transport and the test to hold together.
    pub fn shared(self) -> Rc<RefCell<Chip>> {
        Rc::new(RefCell::new(self))
    }

    fn fail(&mut self, why: String) -> Result<(), String> {
        if self.fault.is_none() {
            self.fault = Some(why.clone());
        }
        Err(why)
    }

    fn pin(&self, high: bool, bit: u8) -> (bool, bool) {
        let (value, dir) = if high { self.high } else { self.low };
        ((value >> bit) & 1 == 1, (dir >> bit) & 1 == 1)
    }

    /// Runs every whole command in `pending`.
    fn execute(&mut self) -> Result<(), String> {
        let mut at = 0;
        loop {
            let bytes = self.pending[at..].to_vec();
            let Some(&op) = bytes.first() else { break };
            let need = match op {
                0x39 => {
                    if bytes.len() < 3 {
                        break;
                    }
                    let n = u16::from_le_bytes([bytes[1], bytes[2]]) as usize + 1;
                    3 + n
                }
                0x3B | 0x4B | 0x6B | 0x80 | 0x82 | 0x86 | 0x8F => 3,
                0x8E => 2,
                _ => 1,
            };
            if bytes.len() < need {
                break;
            }
            at += need;
            self.command(&bytes[..need])?;
        }
        self.pending.drain(..at);
        Ok(())
    }

    fn command(&mut self, c: &[u8]) -> Result<(), String> {
        match c[0] {
            // Bytes out on the falling edge, in on the rising edge, LSB first.
            0x39 => {
                for &byte in &c[3..] {
                    let mut got = 0u8;
                    for i in 0..8 {
                        let tdo = self.data_period((byte >> i) & 1 == 1)?;
                        got |= u8::from(tdo) << i;
                    }
                    self.answers.push_back(got);
                }
            }
            // Bits out and in: the read enters from the top.
            0x3B => {
                let n = c[1] as usize + 1;
                if n > 8 {
                    return self.fail(format!("bit command 0x3B with length {}", c[1]));
                }
                let mut got = 0u8;
                for i in 0..n {
                    let tdo = self.data_period((c[2] >> i) & 1 == 1)?;
                    got = (got >> 1) | (u8::from(tdo) << 7);
                }
                self.answers.push_back(got);
            }
            // TMS out on the falling edge; 0x6B reads TDO on the rising edge.
            0x4B | 0x6B => {
                let n = c[1] as usize + 1;
                if n > 7 {
                    return self.fail(format!("TMS command with length {}", c[1]));
                }
                let tdi = c[2] & 0x80 != 0;
                let mut got = 0u8;
                for i in 0..n {
                    let tms = (c[2] >> i) & 1 == 1;
                    let tdo = self.period(tms, tdi)?;
                    got = (got >> 1) | (u8::from(tdo) << 7);
                }
                if c[0] == 0x6B {
                    self.answers.push_back(got);
                }
            }
            0x80 => self.set_gpio(false, c[1], c[2])?,
            0x82 => self.set_gpio(true, c[1], c[2])?,
            0x81 => {
                let b = self.read_gpio(false);
                self.answers.push_back(b);
            }
            0x83 => {
                let b = self.read_gpio(true);
                self.answers.push_back(b);
            }
            0x85 | 0x8D | 0x97 => {}
            0x84 => return self.fail("loopback switched on".into()),
            0x8C => return self.fail("three-phase clocking switched on".into()),
            0x96 => return self.fail("adaptive clocking switched on".into()),
            0x86 => {
                let d = u16::from_le_bytes([c[1], c[2]]);
                self.divisor = Some(d);
                let d5 = self.divide_by_5.unwrap_or(true);
                self.clock_log.push((self.periods, d5, d));
            }
            0x8A => self.divide_by_5 = Some(false),
            0x8B => self.divide_by_5 = Some(true),
            0x87 => self.flushed = self.answers.len(),
            0x8E => self.quiet_periods(u64::from(c[1]) + 1)?,
            0x8F => {
                let n = u64::from(u16::from_le_bytes([c[1], c[2]])) + 1;
                self.quiet_periods(n * 8)?;
            }
            other => {
                return self.fail(format!(
                    "bad command 0x{other:02X} (the chip would answer 0xFA 0x{other:02X})"
                ))
            }
        }
        Ok(())
    }

    fn jtag_pins_ready(&mut self) -> Result<(), String> {
        let dir = self.low.1;
        if dir & 0b1011 != 0b1011 || dir & 0b0100 != 0 {
            return self.fail(format!(
                "clocking with ADBUS directions 0b{dir:08b}: TCK, TDI, TMS must be outputs and TDO an input"
            ));
        }
        if self.low.0 & 1 != 0 {
            return self.fail("clocking with TCK resting high".into());
        }
        Ok(())
    }

    /// One period of a data command: TMS stays at its pin level.
    fn data_period(&mut self, tdi: bool) -> Result<bool, String> {
        let tms = self.low.0 & 0b1000 != 0;
        self.period(tms, tdi)
    }

    /// One TCK period: TDI and TMS set on the falling edge before it, TDO
    /// sampled on its rising edge (high-impedance reads 1: a pull-up).
    fn period(&mut self, tms: bool, tdi: bool) -> Result<bool, String> {
        self.jtag_pins_ready()?;
        self.low.0 = (self.low.0 & !0b1010) | (u8::from(tdi) << 1) | (u8::from(tms) << 3);
        self.periods += 1;
        let got = self
            .board
            .borrow_mut()
            .clock(self.port, TapPins::new(tms, tdi));
        got.map(|tdo| tdo.unwrap_or(true))
            .map_err(|e| format!("{REFUSED}{e}"))
    }

    /// Periods with no data: TDI and TMS at their pin levels.
    fn quiet_periods(&mut self, n: u64) -> Result<(), String> {
        self.jtag_pins_ready()?;
        let tdi = self.low.0 & 0b10 != 0;
        let tms = self.low.0 & 0b1000 != 0;
        self.periods += n;
        if tdi {
            // The board's own wait: TDI high, TDO not sampled.
            let r = self.board.borrow_mut().idle(self.port, tms, n);
            r.map_err(|e| format!("{REFUSED}{e}"))?;
        } else {
            for _ in 0..n {
                self.periods -= 1;
                self.period(tms, false)?;
            }
        }
        Ok(())
    }

    fn set_gpio(&mut self, high: bool, value: u8, dir: u8) -> Result<(), String> {
        if high {
            self.high = (value, dir);
        } else {
            self.low = (value, dir);
        }
        if let Some((h, bit)) = self.trst {
            // Asserted while driven low; an input floats high (pull-up).
            let (level, out) = self.pin(h, bit);
            let low = out && !level;
            if low != self.trst_low {
                self.trst_low = low;
                let r = self.board.borrow_mut().set_trst(self.port, low);
                r.map_err(|e| format!("{REFUSED}{e}"))?;
            }
        }
        Ok(())
    }

    fn read_gpio(&self, high: bool) -> u8 {
        let (value, dir) = if high { self.high } else { self.low };
        let mut b = 0u8;
        for bit in 0..8u8 {
            let level = if (dir >> bit) & 1 == 1 {
                (value >> bit) & 1 == 1
            } else {
                match self.power {
                    Some((h, pb, powered)) if h == high && pb == bit => powered,
                    _ if !high && bit == 2 => self
                        .board
                        .borrow()
                        .peek_tdo(self.port)
                        .ok()
                        .flatten()
                        .unwrap_or(true),
                    _ => true,
                }
            };
            b |= u8::from(level) << bit;
        }
        b
    }
}

/// A [`Transport`] into a shared [`Chip`].
pub struct ChipLink(pub Rc<RefCell<Chip>>);

impl Transport for ChipLink {
    fn write(&mut self, bytes: &[u8]) -> Result<(), LinkError> {
        let mut chip = self.0.borrow_mut();
        chip.writes += 1;
        if let Some(f) = &chip.fault {
            return Err(LinkError(f.clone()));
        }
        chip.pending.extend_from_slice(bytes);
        if chip.lazy {
            return Ok(());
        }
        let r = chip.execute();
        if r.as_ref().is_err_and(|e| e.starts_with(REFUSED)) {
            chip.pending.clear();
            chip.answers.clear();
            chip.flushed = 0;
        }
        r.map_err(LinkError)
    }

    fn read(&mut self, buf: &mut [u8]) -> Result<(), LinkError> {
        let mut chip = self.0.borrow_mut();
        chip.reads += 1;
        if let Some(f) = &chip.fault {
            return Err(LinkError(f.clone()));
        }
        if chip.lazy {
            let r = chip.execute();
            if r.as_ref().is_err_and(|e| e.starts_with(REFUSED)) {
                chip.pending.clear();
                chip.answers.clear();
                chip.flushed = 0;
            }
            r.map_err(LinkError)?;
        }
        if chip.answers.len() < buf.len() {
            let why = format!(
                "the host reads {} bytes and the chip has {}",
                buf.len(),
                chip.answers.len()
            );
            return chip.fail(why).map_err(LinkError);
        }
        if chip.flushed < buf.len() {
            // The chip would hold them until its latency timer ran out.
            return chip
                .fail("a read with no send-immediate after its data".into())
                .map_err(LinkError);
        }
        for b in buf.iter_mut() {
            *b = chip.answers.pop_front().unwrap_or(0);
        }
        chip.flushed -= buf.len();
        Ok(())
    }
}
