//! The byte stream of one MPSSE channel in JTAG use: TMS periods, data
//! shifts, waits, GPIO levels. Pure: it writes commands into a buffer and
//! decodes the bytes the chip sends back; the transport moves them.
//!
//! Edges (FTDI AN_108, from memory): TCK rests low; data goes out on the
//! falling edge and TDO is read on the rising edge, the JTAG way (TDI and
//! TMS are sampled by the devices on the rising edge, IEEE 1149.1 clause 6).
//! A read of `n` bits fewer than eight comes back in the top `n` bits of
//! its byte, the first bit lowest of them (bits shift in from the top, LSB
//! first; AN_108, from memory).

use virtual_board::Bits;

use super::clock::TckSetting;
use super::command as c;
use super::pins::{GpioPin, PinMap};

/// The most bytes a channel is asked to send back in one round trip: the
/// FT2232H's 4 KiB buffer towards the host (FTDI datasheet, from memory),
/// so the chip never stalls while the host is still writing.
pub const MAX_READ: usize = 4096;

/// The most TMS bits one TMS command carries (AN_108: 7).
const TMS_BITS: usize = 7;

/// The GPIO and TMS levels of one channel, and the commands that change them.
#[derive(Clone, Debug)]
pub struct Encoder {
    low_value: u8,
    low_dir: u8,
    high_value: u8,
    high_dir: u8,
    /// TMS as the last command left it.
    tms: bool,
    /// TRST* low now.
    trst_low: bool,
    pins: PinMap,
}

impl Encoder {
    /// TCK low, TDI and TMS high, TRST* released (high), the power sense
    /// an input.
    pub fn new(pins: PinMap) -> Encoder {
        let mut e = Encoder {
            low_value: c::TDI | c::TMS,
            low_dir: c::TCK | c::TDI | c::TMS,
            high_value: 0,
            high_dir: 0,
            tms: true,
            trst_low: false,
            pins,
        };
        if let Some(t) = pins.trst {
            e.drive(t, true);
        }
        e
    }

    /// The pin map.
    pub fn pins(&self) -> PinMap {
        self.pins
    }

    /// Start-up: loopback, three-phase clocking and adaptive clocking off,
    /// the clock, then every pin's level and direction.
    pub fn init(&self, clock: TckSetting, out: &mut Vec<u8>) {
        out.extend([c::LOOPBACK_OFF, c::THREE_PHASE_OFF, c::ADAPTIVE_OFF]);
        self.clock(clock, out);
        self.levels(out);
    }

    /// The base clock and divisor.
    pub fn clock(&self, clock: TckSetting, out: &mut Vec<u8>) {
        out.push(if clock.divide_by_5 {
            c::DIVIDE_BY_5_ON
        } else {
            c::DIVIDE_BY_5_OFF
        });
        let [lo, hi] = clock.divisor.to_le_bytes();
        out.extend([c::SET_DIVISOR, lo, hi]);
    }

    /// Every pin's level and direction: the low byte, and the high byte
    /// when a mapped pin is on it.
    pub fn levels(&self, out: &mut Vec<u8>) {
        out.extend([c::SET_LOW, self.low_value, self.low_dir]);
        if self.uses_high() {
            out.extend([c::SET_HIGH, self.high_value, self.high_dir]);
        }
    }

    fn uses_high(&self) -> bool {
        [self.pins.trst, self.pins.power]
            .into_iter()
            .flatten()
            .any(|p| p.high)
    }

    /// Sets `pin` as an output at `level` (no command written).
    fn drive(&mut self, pin: GpioPin, level: bool) {
        let (value, dir) = if pin.high {
            (&mut self.high_value, &mut self.high_dir)
        } else {
            (&mut self.low_value, &mut self.low_dir)
        };
        *dir |= pin.mask();
        if level {
            *value |= pin.mask();
        } else {
            *value &= !pin.mask();
        }
    }

    /// True while TRST* is driven low.
    pub fn trst_asserted(&self) -> bool {
        self.trst_low
    }

    /// TRST* low (`asserted`) or high, as one GPIO command. `false` when
    /// no TRST* pin is mapped (nothing written).
    pub fn trst(&mut self, asserted: bool, out: &mut Vec<u8>) -> bool {
        let Some(pin) = self.pins.trst else {
            return false;
        };
        self.drive(pin, !asserted);
        self.trst_low = asserted;
        let (cmd, value, dir) = if pin.high {
            (c::SET_HIGH, self.high_value, self.high_dir)
        } else {
            (c::SET_LOW, self.low_value, self.low_dir)
        };
        out.extend([cmd, value, dir]);
        true
    }

    /// Reads the low byte's pins, TDO among them (one byte comes back).
    pub fn read_low(&self, out: &mut Vec<u8>) {
        out.push(c::GET_LOW);
    }

    /// Reads the power-sense pin's byte (one byte comes back, decoded by
    /// [`Encoder::decode_power`]). `false` when no sense pin is mapped.
    pub fn power(&self, out: &mut Vec<u8>) -> bool {
        let Some(pin) = self.pins.power else {
            return false;
        };
        out.extend([
            if pin.high { c::GET_HIGH } else { c::GET_LOW },
            c::SEND_IMMEDIATE,
        ]);
        true
    }

    /// Whether the power-sense pin reads high in the byte read back.
    pub fn decode_power(&self, byte: u8) -> bool {
        self.pins.power.is_some_and(|p| byte & p.mask() != 0)
    }

    /// TMS levels for consecutive TCK periods with TDI held at `tdi`, up to
    /// seven per command; with `read`, TDO of each period comes back (one
    /// byte per command, decoded by [`decode_top_bits`]).
    pub fn tms(&mut self, tms: &[bool], tdi: bool, read: bool, out: &mut Vec<u8>) {
        for chunk in tms.chunks(TMS_BITS) {
            let mut byte = u8::from(tdi) << 7;
            for (i, &t) in chunk.iter().enumerate() {
                byte |= u8::from(t) << i;
            }
            out.extend([
                if read { c::TMS_OUT_IN } else { c::TMS_OUT },
                (chunk.len() - 1) as u8,
                byte,
            ]);
            self.tms = chunk[chunk.len() - 1];
        }
        if !tms.is_empty() {
            self.low_value = with(self.low_value, c::TMS, self.tms);
            self.low_value = with(self.low_value, c::TDI, tdi);
        }
    }

    /// TMS low before a data shift, when the last command left it high
    /// (a GPIO write, no TCK edge).
    pub fn tms_low(&mut self, out: &mut Vec<u8>) {
        if self.tms {
            self.tms = false;
            self.low_value &= !c::TMS;
            out.extend([c::SET_LOW, self.low_value, self.low_dir]);
        }
    }

    /// `count` whole bytes of `tdi` from bit `from`, out and in (`count` ≥ 1,
    /// at most 65,536; `count` bytes come back).
    pub fn bytes(&mut self, tdi: &Bits, from: usize, count: usize, out: &mut Vec<u8>) {
        let [lo, hi] = ((count - 1) as u16).to_le_bytes();
        out.extend([c::BYTES_OUT_IN, lo, hi]);
        for k in 0..count {
            out.push(byte_at(tdi, from + 8 * k, 8));
        }
        self.low_value = with(self.low_value, c::TDI, tdi.get(from + 8 * count - 1));
    }

    /// `count` bits of `tdi` from bit `from`, out and in (1 ≤ `count` ≤ 8;
    /// one byte comes back, decoded by [`decode_top_bits`]).
    pub fn bits(&mut self, tdi: &Bits, from: usize, count: usize, out: &mut Vec<u8>) {
        out.extend([c::BITS_OUT_IN, (count - 1) as u8, byte_at(tdi, from, count)]);
        self.low_value = with(self.low_value, c::TDI, tdi.get(from + count - 1));
    }

    /// `count` TCK periods with TMS at `tms` and TDI high, no data: the
    /// levels set by GPIO, then clock-only commands of up to 524,288 and
    /// 8 periods.
    pub fn idle(&mut self, tms: bool, count: u64, out: &mut Vec<u8>) {
        if count == 0 {
            return;
        }
        self.tms = tms;
        self.low_value = with(self.low_value, c::TMS, tms);
        self.low_value |= c::TDI;
        out.extend([c::SET_LOW, self.low_value, self.low_dir]);
        let mut blocks = count / 8;
        while blocks > 0 {
            let n = blocks.min(65_536);
            let [lo, hi] = ((n - 1) as u16).to_le_bytes();
            out.extend([c::CLOCK_BYTES, lo, hi]);
            blocks -= n;
        }
        let rest = count % 8;
        if rest > 0 {
            out.extend([c::CLOCK_BITS, (rest - 1) as u8]);
        }
    }
}

/// `v` with the bits of `mask` set to `level`.
fn with(v: u8, mask: u8, level: bool) -> u8 {
    if level {
        v | mask
    } else {
        v & !mask
    }
}

/// Up to eight bits of `bits` from `from`, LSB first.
fn byte_at(bits: &Bits, from: usize, count: usize) -> u8 {
    (0..count).fold(0, |b, i| b | (u8::from(bits.get(from + i)) << i))
}

/// The `n` bits (1–8) of a byte read back by a bit or TMS command: the top
/// `n` bits, first bit lowest.
pub fn decode_top_bits(byte: u8, n: usize) -> impl Iterator<Item = bool> {
    (0..n).map(move |i| byte >> (8 - n + i) & 1 == 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Byte streams worked by hand from FTDI AN_108's command layouts (from
    // memory): these pin down the encoder's output; the interpreter in the
    // harness tests checks what the bytes do.
    #[test]
    fn a_five_period_reset_and_a_twelve_bit_shift_as_bytes() {
        let mut e = Encoder::new(PinMap::default());
        let mut out = Vec::new();
        // Five TMS-high periods, TDI high: one command of five bits.
        e.tms(&[true; 5], true, false, &mut out);
        assert_eq!(out, [0x4B, 4, 0b1001_1111]);
        out.clear();
        e.tms_low(&mut out);
        // TMS low by GPIO: TDI (bit 1) high, TMS (bit 3) low; TCK, TDI, TMS outputs.
        assert_eq!(out, [0x80, 0b0000_0010, 0b0000_1011]);
        out.clear();
        let tdi = Bits::from_bools(&[
            true, false, true, true, false, false, false, true, // byte 0x8D
            false, true, true, false,
        ]);
        e.bytes(&tdi, 0, 1, &mut out);
        e.bits(&tdi, 8, 3, &mut out);
        e.tms(&[true], tdi.get(11), true, &mut out);
        assert_eq!(
            out,
            [0x39, 0, 0, 0x8D, 0x3B, 2, 0b0000_0110, 0x6B, 0, 0b0000_0001]
        );
    }

    #[test]
    fn reads_come_back_in_the_top_bits() {
        let bits: Vec<bool> = decode_top_bits(0b1010_0000, 3).collect();
        assert_eq!(bits, [true, false, true]);
        assert_eq!(decode_top_bits(0x80, 1).collect::<Vec<_>>(), [true]);
    }

    #[test]
    fn long_waits_use_clock_only_commands() {
        let mut e = Encoder::new(PinMap::default());
        let mut out = Vec::new();
        e.idle(false, 524_288 + 16 + 3, &mut out);
        assert_eq!(
            out,
            [
                0x80,
                0b0000_0010,
                0b0000_1011,
                0x8F,
                0xFF,
                0xFF,
                0x8F,
                1,
                0,
                0x8E,
                2
            ]
        );
    }

    #[test]
    fn trst_on_a_high_pin_is_a_high_byte_write() {
        let pins =
            PinMap::new(GpioPin::parse("ACBUS2").ok(), GpioPin::parse("ADBUS5").ok()).unwrap();
        let mut e = Encoder::new(pins);
        let mut out = Vec::new();
        e.levels(&mut out);
        assert_eq!(out, [0x80, 0x0A, 0x0B, 0x82, 0x04, 0x04]);
        out.clear();
        assert!(e.trst(true, &mut out));
        assert_eq!(out, [0x82, 0x00, 0x04]);
        out.clear();
        assert!(e.power(&mut out));
        assert_eq!(out, [0x81, 0x87]);
        assert!(e.decode_power(0x20) && !e.decode_power(0xDF));
    }
}
