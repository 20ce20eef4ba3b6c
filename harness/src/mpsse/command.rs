//! MPSSE command values.
//!
//! Every value is from the chip maker's published command description,
//! FTDI application note AN_108, "Command Processor for MPSSE and MCU Host
//! Bus Emulation Modes", quoted from memory (section numbers from memory
//! too). The test suite's interpreter is written from the same document
//! independently and shares nothing with this file.

/// Clock data bytes out on the falling TCK edge and in on the rising edge,
/// LSB first (AN_108 §3.3, "Clock Data Bytes In and Out": 0x39). Followed
/// by LengthL, LengthH (bytes − 1) and the bytes.
pub const BYTES_OUT_IN: u8 = 0x39;

/// Clock data bits out on the falling edge and in on the rising edge, LSB
/// first (AN_108 §3.3, "Clock Data Bits In and Out": 0x3B). Followed by
/// Length (bits − 1, 0..=7) and one byte.
pub const BITS_OUT_IN: u8 = 0x3B;

/// Clock data to TMS, out on the falling edge, TDO read on the rising edge
/// (AN_108 §3.5, "Clock Data to TMS pin with read": 0x6B). Followed by
/// Length (bits − 1, 0..=6) and one byte: TMS bits LSB first in bits 0–6,
/// bit 7 the level held on TDI for the whole command.
pub const TMS_OUT_IN: u8 = 0x6B;

/// Clock data to TMS without reading TDO (AN_108 §3.5: 0x4B); same
/// arguments as [`TMS_OUT_IN`].
pub const TMS_OUT: u8 = 0x4B;

/// Set the low byte (ADBUS0–7): value, then direction (1 = output)
/// (AN_108 §3.6, "Set Data bits LowByte": 0x80).
pub const SET_LOW: u8 = 0x80;

/// Read the low byte's pins (AN_108 §3.6, "Read Data bits LowByte": 0x81).
pub const GET_LOW: u8 = 0x81;

/// Set the high byte (ACBUS0–7): value, direction (AN_108 §3.6: 0x82).
pub const SET_HIGH: u8 = 0x82;

/// Read the high byte's pins (AN_108 §3.6: 0x83).
pub const GET_HIGH: u8 = 0x83;

/// Connect TDI to TDO inside the chip: loopback off (AN_108 §3.7: 0x85).
pub const LOOPBACK_OFF: u8 = 0x85;

/// Set the TCK divisor: ValueL, ValueH; TCK = base / ((1 + divisor) × 2)
/// (AN_108 §3.8, "Set TCK/SK Divisor": 0x86).
pub const SET_DIVISOR: u8 = 0x86;

/// Send the bytes read so far to the host now, not when the latency timer
/// runs out (AN_108 §3.9, "Send Immediate": 0x87).
pub const SEND_IMMEDIATE: u8 = 0x87;

/// Base clock 60 MHz: divide-by-5 off, FT232H/FT2232H/FT4232H only
/// (AN_108 §3.10 / §6, "Disable Clk Divide by 5": 0x8A).
pub const DIVIDE_BY_5_OFF: u8 = 0x8A;

/// Base clock 12 MHz: divide-by-5 on, as on the older chips (AN_108:
/// "Enable Clk Divide by 5": 0x8B).
pub const DIVIDE_BY_5_ON: u8 = 0x8B;

/// Three-phase data clocking off (AN_108: 0x8D); JTAG uses two phases.
pub const THREE_PHASE_OFF: u8 = 0x8D;

/// Clock for `Length + 1` bits (1..=8) with no data transfer
/// (AN_108: "Clock For n bits with no data transfer": 0x8E).
pub const CLOCK_BITS: u8 = 0x8E;

/// Clock for `(Length + 1) × 8` bits with no data transfer: LengthL,
/// LengthH (AN_108: "Clock For n x 8 bits with no data transfer": 0x8F).
pub const CLOCK_BYTES: u8 = 0x8F;

/// Adaptive clocking (return-clock wait) off (AN_108: 0x97).
pub const ADAPTIVE_OFF: u8 = 0x97;

/// What the chip sends back for a command it does not know: this byte,
/// then the command (AN_108 §3.1, "Bad Command": 0xFA).
pub const BAD_COMMAND: u8 = 0xFA;

/// Pin numbers of the low byte in JTAG use: ADBUS0 TCK, ADBUS1 TDI (data
/// out), ADBUS2 TDO (data in), ADBUS3 TMS (AN_108 §2.1, the MPSSE's fixed
/// pins, from memory; the JTAG names are common practice).
pub const TCK: u8 = 1 << 0;
/// TDI: the MPSSE's data out (ADBUS1).
pub const TDI: u8 = 1 << 1;
/// TDO: the MPSSE's data in (ADBUS2).
pub const TDO: u8 = 1 << 2;
/// TMS: the MPSSE's chip select / TMS (ADBUS3).
pub const TMS: u8 = 1 << 3;
