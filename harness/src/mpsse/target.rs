//! `MpsseTarget`: a `TapTarget` whose TAP ports are MPSSE channels of USB
//! JTAG adapters, one channel per port, each behind a [`Transport`].
//!
//! Round trips: a whole scan is one write and one read (scans longer than
//! about 32,000 bits go in pieces of [`MAX_READ`] bytes read back, one
//! round trip each); a wait and TRST* are one write with nothing read; a
//! lone TCK period ([`TapTarget::clock`]) is one round trip, since it
//! returns TDO.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{Bits, PortId, TapPins, TapTarget, TargetError, TckLimit};

use super::clock::TckSetting;
use super::command::{SEND_IMMEDIATE, TDO};
use super::encoder::{decode_top_bits, Encoder, MAX_READ};
use super::link_error::LinkError;
use super::pins::PinMap;

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
    /// Bytes written, for the statistics.
    written: u64,
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

/// Bytes moved and round trips made, all channels.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct LinkStatistics {
    /// Bytes written.
    pub written: u64,
    /// Round trips.
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
                written: 0,
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

    /// A new TCK setting on every channel.
    ///
    /// # Errors
    /// A link failed.
    pub fn set_clock(&mut self, clock: TckSetting) -> Result<(), TargetError> {
        for ch in &mut self.channels {
            let mut out = Vec::new();
            ch.encoder.clock(clock, &mut out);
            ch.send(&out)?;
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
        let ch = self.channel(port)?;
        let mut out = Vec::new();
        if !ch.encoder.power(&mut out) {
            return Ok(None);
        }
        let mut got = [0u8];
        ch.transfer(&out, &mut got)?;
        Ok(Some(ch.encoder.decode_power(got[0])))
    }

    /// Bytes written and round trips, all channels so far.
    pub fn statistics(&self) -> LinkStatistics {
        LinkStatistics {
            written: self.channels.iter().map(|c| c.written).sum(),
            round_trips: self.channels.iter().map(|c| c.round_trips).sum(),
        }
    }

    fn channel(&mut self, port: PortId) -> Result<&mut Channel, TargetError> {
        self.channels
            .get_mut(port)
            .ok_or(TargetError::NoSuchPort(port))
    }
}

impl Channel {
    fn send(&mut self, bytes: &[u8]) -> Result<(), TargetError> {
        self.written += bytes.len() as u64;
        self.link.write(bytes).map_err(|e| self.link_error(&e))
    }

    /// One write, then one read of `got.len()` bytes.
    fn transfer(&mut self, bytes: &[u8], got: &mut [u8]) -> Result<(), TargetError> {
        self.send(bytes)?;
        self.round_trips += 1;
        self.link.read(got).map_err(|e| self.link_error(&e))
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
        let ch = self.channel(port)?;
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
        let ch = self.channel(port)?;
        let mut out = Vec::new();
        if !ch.encoder.trst(asserted, &mut out) {
            return Err(TargetError::Unsupported(
                "drive TRST*: no TRST* pin is mapped on the adapter",
            ));
        }
        ch.send(&out)
    }

    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        let ch = self.channel(port)?;
        let mut out = Vec::new();
        ch.encoder.idle(tms, count, &mut out);
        if out.is_empty() {
            return Ok(());
        }
        ch.send(&out)
    }

    /// Whole bytes out and in, the bits left over, and the last bit with
    /// TMS high; then send-immediate and one read.
    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        let ch = self.channel(port)?;
        let n = tdi.len();
        let mut tdo = Bits::zeros(n);
        if n == 0 {
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
}

/// Bytes read back by a byte command into `tdo` from bit `at`, LSB first.
fn put_bytes(tdo: &mut Bits, at: usize, bytes: &[u8]) {
    for (k, &byte) in bytes.iter().enumerate() {
        for i in 0..8 {
            tdo.set(at + 8 * k + i, byte >> i & 1 == 1);
        }
    }
}
