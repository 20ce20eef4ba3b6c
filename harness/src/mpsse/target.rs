//! `MpsseTarget`: a `TapTarget` whose TAP ports are MPSSE channels of USB
//! JTAG adapters, one channel per port, each behind a [`Transport`].
//!
//! Round trips: what reads nothing (moves between states, waits, TRST*,
//! a new TCK setting) is held and goes out with the next command that
//! reads, so a scan with its moves into Shift-xR and out of Exit1-xR is one
//! write and one read (scans longer than about 32,000 bits go in pieces of
//! [`MAX_READ`] bytes read back, one round trip each), and moves cost no
//! round trip of their own. A lone TCK period ([`TapTarget::clock`]) is one
//! round trip, since it returns TDO.
//!
//! Order across channels: each channel's engine runs its bytes on its own,
//! so before one channel acts, every other channel with held bytes, or
//! bytes written and not yet answered, sends them with a one-byte read and
//! waits for the answer (the chip answers a read only after every command
//! before it, FTDI AN_108, from memory). One port's Update-DR thus always
//! comes before another port's next Capture-DR, as the program orders them.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{Bits, PortId, TapPins, TapTarget, TargetError, TckLimit};

use super::clock::TckSetting;
use super::command::{GET_LOW, SEND_IMMEDIATE, TDO};
use super::encoder::{decode_top_bits, Encoder, MAX_READ};
use super::link_error::LinkError;
use super::pins::PinMap;

/// Held bytes past this many go out at once (no read): a long run of
/// moves without a scan does not grow without bound.
const HOLD_LIMIT: usize = 1 << 16;

/// Moves bytes to and from one MPSSE channel.
pub trait Transport {
    /// Writes every byte, in order.
    ///
    /// # Errors
    /// [`LinkError`]: the link failed.
    fn write(&mut self, bytes: &[u8]) -> Result<(), LinkError>;

    /// Reads exactly `buf.len()` bytes.
    ///
    /// # Errors
    /// [`LinkError`]: the link failed or the bytes did not come.
    fn read(&mut self, buf: &mut [u8]) -> Result<(), LinkError>;
}

/// One TAP port: its channel's encoder and transport.
struct Channel {
    name: String,
    encoder: Encoder,
    link: Box<dyn Transport>,
    limits: Vec<TckLimit>,
    /// Commands held until the next read (or [`TapTarget::flush`]).
    held: Vec<u8>,
    /// Commands that clock TCK or drive pins were held or written and no
    /// read has answered since: the engine may still be running them.
    unsettled: bool,
    /// Bytes written, for the statistics.
    written: u64,
    /// Writes.
    writes: u64,
    /// Round trips (a write followed by a read).
    round_trips: u64,
}

/// A TAP port's channel as given to [`MpsseTarget::new`].
pub struct ChannelSpec {
    /// The port's name on the board.
    pub name: String,
    /// The channel's GPIO map.
    pub pins: PinMap,
    /// The link to the channel.
    pub link: Box<dyn Transport>,
    /// The TCK limits of the port's devices (from the board file: the
    /// adapter cannot tell).
    pub limits: Vec<TckLimit>,
}

/// TAP ports on MPSSE channels.
pub struct MpsseTarget {
    channels: Vec<Channel>,
    clock: TckSetting,
}

impl std::fmt::Debug for MpsseTarget {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("MpsseTarget")
            .field("ports", &self.port_names())
            .field("clock", &self.clock)
            .finish()
    }
}

/// Bytes moved, writes and round trips made, all channels.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct LinkStatistics {
    /// Bytes written.
    pub written: u64,
    /// Writes (with or without a read after them).
    pub writes: u64,
    /// Round trips: a write followed by a read.
    pub round_trips: u64,
}

impl MpsseTarget {
    /// Sets up every channel (loopback and adaptive clocking off, `clock`,
    /// pins) and leaves each TAP where it was: TMS and TDI high, TCK low,
    /// TRST* released.
    ///
    /// # Errors
    /// A link failed.
    pub fn new(specs: Vec<ChannelSpec>, clock: TckSetting) -> Result<MpsseTarget, TargetError> {
        let mut channels = Vec::with_capacity(specs.len());
        for s in specs {
            let encoder = Encoder::new(s.pins);
            let mut out = Vec::new();
            encoder.init(clock, &mut out);
            let mut ch = Channel {
                name: s.name,
                encoder,
                link: s.link,
                limits: s.limits,
                held: Vec::new(),
                unsettled: false,
                written: 0,
                writes: 0,
                round_trips: 0,
            };
            ch.send(&out)?;
            channels.push(ch);
        }
        Ok(MpsseTarget { channels, clock })
    }

    /// The TCK setting in force.
    pub fn clock_setting(&self) -> TckSetting {
        self.clock
    }

    /// A new TCK setting on every channel, held until each channel's next
    /// read (it changes no pin, so it needs no order across channels).
    ///
    /// # Errors
    /// A link failed.
    pub fn set_clock(&mut self, clock: TckSetting) -> Result<(), TargetError> {
        for ch in &mut self.channels {
            let mut out = Vec::new();
            ch.encoder.clock(clock, &mut out);
            ch.hold(&out, false)?;
        }
        self.clock = clock;
        Ok(())
    }

    /// Whether `port`'s power sense reads high; `None` when no sense pin is
    /// mapped.
    ///
    /// # Errors
    /// An unknown port, or a link failure.
    pub fn power_sensed(&mut self, port: PortId) -> Result<Option<bool>, TargetError> {
        let ch = self.acting(port)?;
        let mut out = Vec::new();
        if !ch.encoder.power(&mut out) {
            return Ok(None);
        }
        let mut got = [0u8];
        ch.transfer(&out, &mut got)?;
        Ok(Some(ch.encoder.decode_power(got[0])))
    }

    /// Bytes written, writes and round trips, all channels so far.
    pub fn statistics(&self) -> LinkStatistics {
        LinkStatistics {
            written: self.channels.iter().map(|c| c.written).sum(),
            writes: self.channels.iter().map(|c| c.writes).sum(),
            round_trips: self.channels.iter().map(|c| c.round_trips).sum(),
        }
    }

    /// `port`'s channel, about to act on the board: every other channel
    /// has done what it was given first.
    fn acting(&mut self, port: PortId) -> Result<&mut Channel, TargetError> {
        if port >= self.channels.len() {
            return Err(TargetError::NoSuchPort(port));
        }
        for (p, ch) in self.channels.iter_mut().enumerate() {
            if p != port {
                ch.settle()?;
            }
        }
        Ok(&mut self.channels[port])
    }
}

impl Channel {
    /// One write: the held bytes, then `bytes`.
    fn send(&mut self, bytes: &[u8]) -> Result<(), TargetError> {
        let mut out = std::mem::take(&mut self.held);
        out.extend_from_slice(bytes);
        if out.is_empty() {
            return Ok(());
        }
        self.written += out.len() as u64;
        self.writes += 1;
        self.link.write(&out).map_err(|e| self.link_error(&e))
    }

    /// Holds `bytes` (commands that read nothing) for the next write;
    /// `acts` when they clock TCK or drive a pin. Past [`HOLD_LIMIT`] they
    /// go out at once.
    fn hold(&mut self, bytes: &[u8], acts: bool) -> Result<(), TargetError> {
        self.held.extend_from_slice(bytes);
        self.unsettled |= acts;
        if self.held.len() > HOLD_LIMIT {
            self.send(&[])?;
        }
        Ok(())
    }

    /// One write (the held bytes, then `bytes`), then one read of
    /// `got.len()` bytes: everything before is done when it answers.
    fn transfer(&mut self, bytes: &[u8], got: &mut [u8]) -> Result<(), TargetError> {
        self.send(bytes)?;
        self.round_trips += 1;
        self.link.read(got).map_err(|e| self.link_error(&e))?;
        self.unsettled = false;
        Ok(())
    }

    /// Sends what is held, and waits until the engine has run everything
    /// it was given that clocks TCK or drives a pin (a one-byte read).
    fn settle(&mut self) -> Result<(), TargetError> {
        if self.unsettled {
            self.transfer(&[GET_LOW, SEND_IMMEDIATE], &mut [0u8])
        } else {
            self.send(&[])
        }
    }

    fn link_error(&self, why: &LinkError) -> TargetError {
        TargetError::Link(format!("adapter channel of TAP port {}: {why}", self.name))
    }
}

impl TapTarget for MpsseTarget {
    fn port_count(&self) -> usize {
        self.channels.len()
    }

    fn port_names(&self) -> Vec<String> {
        self.channels.iter().map(|c| c.name.clone()).collect()
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.channels
            .get(port)
            .map(|c| c.limits.clone())
            .unwrap_or_default()
    }

    /// One TMS command with read. With `pins.trst_n` low (and TRST* not
    /// already asserted), TRST* is held low for the period: TDO is read
    /// first, as a GPIO read between periods (the level the tester samples
    /// on this period's rising edge, before the reset takes the TAP), then
    /// TRST* low, the TMS period without read, TRST* high. TDO always reads
    /// as driven: an adapter cannot see high impedance.
    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        let ch = self.acting(port)?;
        let mut out = Vec::new();
        // The line is low while either TRST* (set_trst) or this period says so.
        let pulse = !pins.trst_n && !ch.encoder.trst_asserted();
        if pulse {
            ch.encoder.read_low(&mut out);
            if !ch.encoder.trst(true, &mut out) {
                return Err(TargetError::Unsupported(
                    "drive TRST* low: no TRST* pin is mapped on the adapter",
                ));
            }
            ch.encoder.tms(&[pins.tms], pins.tdi, false, &mut out);
            ch.encoder.trst(false, &mut out);
        } else {
            ch.encoder.tms(&[pins.tms], pins.tdi, true, &mut out);
        }
        out.push(SEND_IMMEDIATE);
        let mut got = [0u8];
        ch.transfer(&out, &mut got)?;
        if pulse {
            return Ok(Some(got[0] & TDO != 0));
        }
        Ok(decode_top_bits(got[0], 1).next())
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        let ch = self.acting(port)?;
        let mut out = Vec::new();
        if !ch.encoder.trst(asserted, &mut out) {
            return Err(TargetError::Unsupported(
                "drive TRST*: no TRST* pin is mapped on the adapter",
            ));
        }
        ch.hold(&out, true)
    }

    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        let ch = self.acting(port)?;
        let mut out = Vec::new();
        ch.encoder.idle(tms, count, &mut out);
        ch.hold(&out, !out.is_empty())
    }

    fn tck_for(&self, hz: f64) -> Result<f64, TargetError> {
        TckSetting::for_hz(hz)
            .map(|s| s.hz)
            .map_err(|e| TargetError::Frequency(e.to_string()))
    }

    fn set_tck(&mut self, hz: f64) -> Result<(), TargetError> {
        let setting = TckSetting::for_hz(hz).map_err(|e| TargetError::Frequency(e.to_string()))?;
        if setting != self.clock {
            self.set_clock(setting)?;
        }
        Ok(())
    }

    /// TMS commands without read, held for the next read. With TRST* to
    /// be pulsed (low here and not already asserted), one
    /// [`TapTarget::clock`] per period instead.
    fn moves(&mut self, port: PortId, tms: &[bool], trst_n: bool) -> Result<(), TargetError> {
        let ch = self.acting(port)?;
        if !trst_n && !ch.encoder.trst_asserted() {
            return virtual_board::clock_moves(self, port, tms, trst_n);
        }
        let mut out = Vec::new();
        ch.encoder.tms(tms, true, false, &mut out);
        ch.hold(&out, !out.is_empty())
    }

    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        self.shift_then_move(port, tdi, &[])
    }

    /// The held bytes, whole bytes out and in, the bits left over, the
    /// last bit with TMS high, the moves `after` without read; then
    /// send-immediate and one read.
    fn shift_then_move(
        &mut self,
        port: PortId,
        tdi: &Bits,
        after: &[bool],
    ) -> Result<Bits, TargetError> {
        let ch = self.acting(port)?;
        let n = tdi.len();
        let mut tdo = Bits::zeros(n);
        if n == 0 {
            let mut out = Vec::new();
            ch.encoder.tms(after, true, false, &mut out);
            ch.hold(&out, !out.is_empty())?;
            return Ok(tdo);
        }
        let mut out = Vec::new();
        ch.encoder.tms_low(&mut out);
        let body = n - 1;
        let mut at = 0;
        let mut got = Vec::new();
        // Pieces of whole bytes while more remain than the last round trip holds.
        while (body - at) / 8 > MAX_READ - 2 {
            let count = MAX_READ;
            ch.encoder.bytes(tdi, at, count, &mut out);
            out.push(SEND_IMMEDIATE);
            got.resize(count, 0);
            ch.transfer(&out, &mut got)?;
            out.clear();
            put_bytes(&mut tdo, at, &got);
            at += 8 * count;
        }
        let whole = (body - at) / 8;
        let rest = body - at - 8 * whole;
        if whole > 0 {
            ch.encoder.bytes(tdi, at, whole, &mut out);
        }
        if rest > 0 {
            ch.encoder.bits(tdi, at + 8 * whole, rest, &mut out);
        }
        ch.encoder.tms(&[true], tdi.get(n - 1), true, &mut out);
        ch.encoder.tms(after, true, false, &mut out);
        out.push(SEND_IMMEDIATE);
        got.resize(whole + usize::from(rest > 0) + 1, 0);
        ch.transfer(&out, &mut got)?;
        put_bytes(&mut tdo, at, &got[..whole]);
        at += 8 * whole;
        if rest > 0 {
            for (i, b) in decode_top_bits(got[whole], rest).enumerate() {
                tdo.set(at + i, b);
            }
            at += rest;
        }
        if let Some(b) = decode_top_bits(got[got.len() - 1], 1).next() {
            tdo.set(at, b);
        }
        Ok(tdo)
    }

    /// Every channel sends what it holds and answers a one-byte read where
    /// it was given anything that clocks or drives a pin since its last.
    fn flush(&mut self) -> Result<(), TargetError> {
        for ch in &mut self.channels {
            ch.settle()?;
        }
        Ok(())
    }
}

/// Bytes read back by a byte command into `tdo` from bit `at`, LSB first.
fn put_bytes(tdo: &mut Bits, at: usize, bytes: &[u8]) {
    for (k, &byte) in bytes.iter().enumerate() {
        for i in 0..8 {
            tdo.set(at + 8 * k + i, byte >> i & 1 == 1);
        }
    }
}
