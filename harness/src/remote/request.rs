//! `Request`: every message a client sends, one closed enum, with its
//! encoding and its checked decoding.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{Bits, DefectSpec};

use super::frame::{encode, Frame};
use super::wire::{put_json, put_packed, put_string, put_u16, put_u32, put_u64, BodyError, Reader};

/// The most TCK periods one burst may carry: 4,194,304 (a burst of the
/// limit takes a fraction of a second on the board, so one client cannot
/// hold a shared board long).
pub const MAX_BURST: u32 = 1 << 22;

/// Which board an administrative request acts on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scope {
    /// The asking connection's board (with `--shared`, the one board).
    Session,
    /// The board every later connection starts with (with `--shared`, the
    /// one board).
    Server,
}

/// A client's request. Replies come back in the order of the requests.
#[derive(Clone, Debug, PartialEq)]
pub enum Request {
    /// The first message of a connection: the protocol version the client
    /// speaks and a name for the logs.
    Hello {
        /// Protocol version.
        version: u16,
        /// The client's name, for the server's log.
        client: String,
    },
    /// TCK periods on one TAP port: period `i` drives `tms[i]`, `tdi[i]`
    /// and `trst_n[i]` (the three the same length).
    Burst {
        /// TAP port index (as the hello lists them).
        port: u16,
        /// TMS per period.
        tms: Bits,
        /// TDI per period.
        tdi: Bits,
        /// TRST* per period (1 = released).
        trst_n: Bits,
    },
    /// A whole scan from Shift-IR or Shift-DR: `tdi` in, TMS high on the
    /// last bit (`TapTarget::shift`).
    Shift {
        /// TAP port index.
        port: u16,
        /// Bits in, bit 0 first.
        tdi: Bits,
    },
    /// `count` periods with TMS at `tms` and TDI high in a stable state
    /// (`TapTarget::idle`).
    Idle {
        /// TAP port index.
        port: u16,
        /// TMS level.
        tms: bool,
        /// Periods.
        count: u64,
    },
    /// Asserts or releases TRST* with no TCK edge (`TapTarget::set_trst`).
    Trst {
        /// TAP port index.
        port: u16,
        /// True: TRST* low.
        asserted: bool,
    },
    /// The board back to power-up, with its defects.
    Reset,
    /// The hazards seen since the last `Events`.
    Events,
    /// The registers between TDI and TDO of a port (`TapTarget::scan_layout`).
    Layout {
        /// TAP port index.
        port: u16,
        /// True: for an IR scan.
        ir: bool,
    },
    /// The devices' TCK limits on a port (`TapTarget::tck_limits`).
    TckLimits {
        /// TAP port index.
        port: u16,
    },
    /// Adds defects (administrative: needs the server's token).
    Inject {
        /// The token.
        token: String,
        /// Which board.
        scope: Scope,
        /// The defects, as the defect-list format writes them.
        defects: Vec<DefectSpec>,
    },
    /// Removes every defect (administrative).
    Clear {
        /// The token.
        token: String,
        /// Which board.
        scope: Scope,
    },
    /// Lists the defects (administrative).
    List {
        /// The token.
        token: String,
        /// Which board.
        scope: Scope,
    },
    /// The client is done; the server answers `Bye` and closes.
    Bye,
    /// A trainee's diagnosis of an exercise (`exercise serve` only): the
    /// defects, as the defect-list format writes them; answered by a grade.
    Submit {
        /// The defects the trainee names.
        defects: Vec<DefectSpec>,
    },
}

/// Message kinds of requests (the frame's kind byte).
pub mod kind {
    /// [`super::Request::Hello`].
    pub const HELLO: u8 = 0x01;
    /// [`super::Request::Burst`].
    pub const BURST: u8 = 0x02;
    /// [`super::Request::Shift`].
    pub const SHIFT: u8 = 0x03;
    /// [`super::Request::Idle`].
    pub const IDLE: u8 = 0x04;
    /// [`super::Request::Trst`].
    pub const TRST: u8 = 0x05;
    /// [`super::Request::Reset`].
    pub const RESET: u8 = 0x06;
    /// [`super::Request::Events`].
    pub const EVENTS: u8 = 0x07;
    /// [`super::Request::Layout`].
    pub const LAYOUT: u8 = 0x08;
    /// [`super::Request::TckLimits`].
    pub const TCK_LIMITS: u8 = 0x09;
    /// [`super::Request::Bye`].
    pub const BYE: u8 = 0x0F;
    /// [`super::Request::Inject`].
    pub const INJECT: u8 = 0x10;
    /// [`super::Request::Clear`].
    pub const CLEAR: u8 = 0x11;
    /// [`super::Request::List`].
    pub const LIST: u8 = 0x12;
    /// [`super::Request::Submit`].
    pub const SUBMIT: u8 = 0x20;
}

/// Why a well-framed request could not be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum RequestError {
    /// A kind byte no request has.
    #[error("no request has kind 0x{0:02x}")]
    UnknownKind(u8),
    /// The body does not match the kind.
    #[error("request 0x{kind:02x}: {error}")]
    Body {
        /// The kind.
        kind: u8,
        /// Where and why.
        error: BodyError,
    },
}

impl Request {
    /// A short name for logs and spans.
    pub fn name(&self) -> &'static str {
        match self {
            Request::Hello { .. } => "hello",
            Request::Burst { .. } => "burst",
            Request::Shift { .. } => "shift",
            Request::Idle { .. } => "idle",
            Request::Trst { .. } => "trst",
            Request::Reset => "reset",
            Request::Events => "events",
            Request::Layout { .. } => "layout",
            Request::TckLimits { .. } => "tck_limits",
            Request::Inject { .. } => "inject",
            Request::Clear { .. } => "clear",
            Request::List { .. } => "list",
            Request::Bye => "bye",
            Request::Submit { .. } => "submit",
        }
    }

    /// Appends this request as one frame.
    pub fn encode(&self, out: &mut Vec<u8>) {
        match self {
            Request::Hello { version, client } => encode(out, kind::HELLO, |b| {
                put_u16(b, *version);
                put_string(b, client);
            }),
            Request::Burst {
                port,
                tms,
                tdi,
                trst_n,
            } => encode_burst(out, *port, tms, tdi, trst_n),
            Request::Shift { port, tdi } => encode(out, kind::SHIFT, |b| {
                put_u16(b, *port);
                put_u32(b, tdi.len() as u32);
                put_packed(b, tdi);
            }),
            Request::Idle { port, tms, count } => encode(out, kind::IDLE, |b| {
                put_u16(b, *port);
                b.push(u8::from(*tms));
                put_u64(b, *count);
            }),
            Request::Trst { port, asserted } => encode(out, kind::TRST, |b| {
                put_u16(b, *port);
                b.push(u8::from(*asserted));
            }),
            Request::Reset => encode(out, kind::RESET, |_| {}),
            Request::Events => encode(out, kind::EVENTS, |_| {}),
            Request::Layout { port, ir } => encode(out, kind::LAYOUT, |b| {
                put_u16(b, *port);
                b.push(u8::from(*ir));
            }),
            Request::TckLimits { port } => encode(out, kind::TCK_LIMITS, |b| put_u16(b, *port)),
            Request::Inject {
                token,
                scope,
                defects,
            } => encode(out, kind::INJECT, |b| {
                put_admin(b, token, *scope);
                put_json(b, defects);
            }),
            Request::Clear { token, scope } => {
                encode(out, kind::CLEAR, |b| put_admin(b, token, *scope))
            }
            Request::List { token, scope } => {
                encode(out, kind::LIST, |b| put_admin(b, token, *scope))
            }
            Request::Bye => encode(out, kind::BYE, |_| {}),
            Request::Submit { defects } => encode(out, kind::SUBMIT, |b| put_json(b, defects)),
        }
    }

    /// Reads a request from a frame.
    ///
    /// # Errors
    /// An unknown kind, or a body that does not match its kind (short,
    /// long, a flag other than 0 or 1, bad UTF-8 or JSON, a burst over
    /// [`MAX_BURST`]).
    pub fn decode(frame: Frame<'_>) -> Result<Request, RequestError> {
        let k = frame.kind;
        let mut r = Reader::new(frame.body);
        let req = match k {
            kind::HELLO => (|| {
                Ok(Request::Hello {
                    version: r.u16("version")?,
                    client: r.string("client")?,
                })
            })(),
            kind::BURST => decode_burst(&mut r),
            kind::SHIFT => (|| {
                let port = r.u16("port")?;
                let n = r.u32("bit count")? as usize;
                if n > crate::program::MAX_SCAN_BITS {
                    return Err(r.error(format!(
                        "a scan of {n} bits is over the limit of {}",
                        crate::program::MAX_SCAN_BITS
                    )));
                }
                Ok(Request::Shift {
                    port,
                    tdi: r.packed(n, "tdi")?,
                })
            })(),
            kind::IDLE => (|| {
                let port = r.u16("port")?;
                let tms = r.flag("tms")?;
                let count = r.u64("count")?;
                if count > crate::program::MAX_IDLE_CYCLES {
                    return Err(r.error(crate::program::idle_too_long(count)));
                }
                Ok(Request::Idle { port, tms, count })
            })(),
            kind::TRST => (|| {
                Ok(Request::Trst {
                    port: r.u16("port")?,
                    asserted: r.flag("asserted")?,
                })
            })(),
            kind::RESET => Ok(Request::Reset),
            kind::EVENTS => Ok(Request::Events),
            kind::LAYOUT => (|| {
                Ok(Request::Layout {
                    port: r.u16("port")?,
                    ir: r.flag("ir")?,
                })
            })(),
            kind::TCK_LIMITS => (|| {
                Ok(Request::TckLimits {
                    port: r.u16("port")?,
                })
            })(),
            kind::SUBMIT => (|| {
                Ok(Request::Submit {
                    defects: r.json("defects")?,
                })
            })(),
            kind::INJECT => (|| {
                let (token, scope) = read_admin(&mut r)?;
                Ok(Request::Inject {
                    token,
                    scope,
                    defects: r.json("defects")?,
                })
            })(),
            kind::CLEAR => read_admin(&mut r).map(|(token, scope)| Request::Clear { token, scope }),
            kind::LIST => read_admin(&mut r).map(|(token, scope)| Request::List { token, scope }),
            kind::BYE => Ok(Request::Bye),
            other => return Err(RequestError::UnknownKind(other)),
        };
        let req = req.and_then(|q| r.end().map(|()| q));
        req.map_err(|error| RequestError::Body { kind: k, error })
    }
}

/// Appends a burst frame without building a [`Request`] (the client's hot path).
pub fn encode_burst(out: &mut Vec<u8>, port: u16, tms: &Bits, tdi: &Bits, trst_n: &Bits) {
    encode(out, kind::BURST, |b| {
        put_u16(b, port);
        put_u32(b, tms.len() as u32);
        put_packed(b, tms);
        put_packed(b, tdi);
        put_packed(b, trst_n);
    });
}

fn decode_burst(r: &mut Reader<'_>) -> Result<Request, BodyError> {
    let port = r.u16("port")?;
    let n = r.u32("period count")?;
    if n > MAX_BURST {
        return Err(r.error(format!(
            "a burst of {n} TCK periods is over the limit of {MAX_BURST}"
        )));
    }
    let n = n as usize;
    Ok(Request::Burst {
        port,
        tms: r.packed(n, "tms")?,
        tdi: r.packed(n, "tdi")?,
        trst_n: r.packed(n, "trst_n")?,
    })
}

fn put_admin(b: &mut Vec<u8>, token: &str, scope: Scope) {
    put_string(b, token);
    b.push(match scope {
        Scope::Session => 0,
        Scope::Server => 1,
    });
}

fn read_admin(r: &mut Reader<'_>) -> Result<(String, Scope), BodyError> {
    let token = r.string("token")?;
    let scope = match r.u8("scope")? {
        0 => Scope::Session,
        1 => Scope::Server,
        v => return Err(r.error(format!("scope: {v} is not 0 (session) or 1 (server)"))),
    };
    Ok((token, scope))
}
