//! `Reply`: every message a server sends, one closed enum, with its
//! encoding and its checked decoding; `ErrorCode`, the errors it reports.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{Bits, BoardEvent, DefectSpec, PathSegment, TckLimit};

use super::frame::{encode, Frame};
use super::hello::BoardDescription;
use super::wire::{put_json, put_packed, put_string, put_u16, put_u32, put_u64, BodyError, Reader};

/// What went wrong, as the error reply says it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ErrorCode {
    /// A well-framed request whose body does not match its kind.
    Malformed,
    /// A kind byte no request has.
    UnknownKind,
    /// A frame whose length prefix is 0.
    EmptyFrame,
    /// A frame over the server's size limit (the connection closes).
    TooLarge,
    /// A request before the hello, or a second hello (the connection closes).
    HelloFirst,
    /// A protocol version the server does not speak (the connection closes).
    Version,
    /// The board refused (an unknown port, an instruction not modelled).
    Target,
    /// An administrative request without the right token, or on a server
    /// started without one.
    Refused,
    /// Defects that do not fit the board.
    BadDefect,
    /// No frame started within the idle timeout (the connection closes).
    IdleTimeout,
    /// A frame started and did not end within the read timeout (the
    /// connection closes).
    ReadTimeout,
    /// The server is shutting down (the connection closes).
    ShuttingDown,
    /// A code this build does not know (from a newer peer).
    Other(u16),
}

impl ErrorCode {
    /// The number on the wire.
    pub fn number(self) -> u16 {
        match self {
            ErrorCode::Malformed => 1,
            ErrorCode::UnknownKind => 2,
            ErrorCode::EmptyFrame => 3,
            ErrorCode::TooLarge => 4,
            ErrorCode::HelloFirst => 5,
            ErrorCode::Version => 6,
            ErrorCode::Target => 7,
            ErrorCode::Refused => 8,
            ErrorCode::BadDefect => 9,
            ErrorCode::IdleTimeout => 10,
            ErrorCode::ReadTimeout => 11,
            ErrorCode::ShuttingDown => 12,
            ErrorCode::Other(n) => n,
        }
    }

    /// The code of a number.
    pub fn from_number(n: u16) -> ErrorCode {
        match n {
            1 => ErrorCode::Malformed,
            2 => ErrorCode::UnknownKind,
            3 => ErrorCode::EmptyFrame,
            4 => ErrorCode::TooLarge,
            5 => ErrorCode::HelloFirst,
            6 => ErrorCode::Version,
            7 => ErrorCode::Target,
            8 => ErrorCode::Refused,
            9 => ErrorCode::BadDefect,
            10 => ErrorCode::IdleTimeout,
            11 => ErrorCode::ReadTimeout,
            12 => ErrorCode::ShuttingDown,
            n => ErrorCode::Other(n),
        }
    }
}

/// A server's reply.
#[derive(Clone, Debug, PartialEq)]
pub enum Reply {
    /// The answer to a hello: the version spoken and the board.
    Hello {
        /// Protocol version.
        version: u16,
        /// The board as designed.
        board: BoardDescription,
    },
    /// The answer to a burst: TDO per period, and whether TDO was driven
    /// (a period with TDO high-impedance has `driven` 0 and `tdo` 1).
    Burst {
        /// TDO per period.
        tdo: Bits,
        /// 1 where TDO was driven.
        driven: Bits,
    },
    /// The answer to a shift: TDO per bit (high-impedance reads 1).
    Shift {
        /// Bits out.
        tdo: Bits,
    },
    /// Done (idle, TRST*, reset, inject, clear).
    Done,
    /// The hazards since the last `Events`.
    Events {
        /// Hazards, oldest first.
        events: Vec<BoardEvent>,
        /// Hazards dropped because the server's buffer was full.
        dropped: u64,
    },
    /// The answer to a layout request (`None`: the board cannot say).
    Layout(Option<Vec<PathSegment>>),
    /// The answer to a TCK-limits request.
    TckLimits(Vec<TckLimit>),
    /// The answer to a list request.
    Defects(Vec<DefectSpec>),
    /// The answer to a bye; the server closes after it.
    Bye,
    /// The grade of a submitted diagnosis (`exercise serve`), as JSON.
    Grade(serde_json::Value),
    /// The request failed.
    Error {
        /// What kind of failure.
        code: ErrorCode,
        /// True when the server closes the connection after this reply.
        closing: bool,
        /// In words.
        message: String,
    },
}

impl Reply {
    /// What the reply is, in a few words, for a message that did not
    /// expect it (`a shift answer`), never the reply's data.
    pub fn what(&self) -> &'static str {
        match self {
            Reply::Hello { .. } => "a hello",
            Reply::Burst { .. } => "a burst answer",
            Reply::Shift { .. } => "a shift answer",
            Reply::Done => "done",
            Reply::Events { .. } => "an events answer",
            Reply::Layout(_) => "a layout answer",
            Reply::TckLimits(_) => "a TCK-limits answer",
            Reply::Defects(_) => "a defect list",
            Reply::Bye => "bye",
            Reply::Grade(_) => "a grade",
            Reply::Error { .. } => "an error",
        }
    }
}

/// Message kinds of replies (the frame's kind byte).
pub mod kind {
    /// [`super::Reply::Done`].
    pub const DONE: u8 = 0x80;
    /// [`super::Reply::Hello`].
    pub const HELLO: u8 = 0x81;
    /// [`super::Reply::Burst`].
    pub const BURST: u8 = 0x82;
    /// [`super::Reply::Shift`].
    pub const SHIFT: u8 = 0x83;
    /// [`super::Reply::Events`].
    pub const EVENTS: u8 = 0x87;
    /// [`super::Reply::Layout`].
    pub const LAYOUT: u8 = 0x88;
    /// [`super::Reply::TckLimits`].
    pub const TCK_LIMITS: u8 = 0x89;
    /// [`super::Reply::Bye`].
    pub const BYE: u8 = 0x8F;
    /// [`super::Reply::Defects`].
    pub const DEFECTS: u8 = 0x92;
    /// [`super::Reply::Grade`].
    pub const GRADE: u8 = 0xA0;
    /// [`super::Reply::Error`].
    pub const ERROR: u8 = 0xFF;
}

/// Why a reply could not be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ReplyError {
    /// A kind byte no reply has.
    #[error("no reply has kind 0x{0:02x}")]
    UnknownKind(u8),
    /// The body does not match the kind.
    #[error("reply 0x{kind:02x}: {error}")]
    Body {
        /// The kind.
        kind: u8,
        /// Where and why.
        error: BodyError,
    },
}

impl Reply {
    /// An error reply.
    pub fn error(code: ErrorCode, closing: bool, message: impl Into<String>) -> Reply {
        Reply::Error {
            code,
            closing,
            message: message.into(),
        }
    }

    /// Appends this reply as one frame.
    pub fn encode(&self, out: &mut Vec<u8>) {
        match self {
            Reply::Hello { version, board } => encode(out, kind::HELLO, |b| {
                put_u16(b, *version);
                put_json(b, board);
            }),
            Reply::Burst { tdo, driven } => encode(out, kind::BURST, |b| {
                put_u32(b, tdo.len() as u32);
                put_packed(b, tdo);
                put_packed(b, driven);
            }),
            Reply::Shift { tdo } => encode(out, kind::SHIFT, |b| {
                put_u32(b, tdo.len() as u32);
                put_packed(b, tdo);
            }),
            Reply::Done => encode(out, kind::DONE, |_| {}),
            Reply::Events { events, dropped } => encode(out, kind::EVENTS, |b| {
                put_u64(b, *dropped);
                put_json(b, events);
            }),
            Reply::Layout(layout) => encode(out, kind::LAYOUT, |b| put_json(b, layout)),
            Reply::TckLimits(limits) => encode(out, kind::TCK_LIMITS, |b| put_json(b, limits)),
            Reply::Defects(defects) => encode(out, kind::DEFECTS, |b| put_json(b, defects)),
            Reply::Bye => encode(out, kind::BYE, |_| {}),
            Reply::Grade(grade) => encode(out, kind::GRADE, |b| put_json(b, grade)),
            Reply::Error {
                code,
                closing,
                message,
            } => encode(out, kind::ERROR, |b| {
                put_u16(b, code.number());
                b.push(u8::from(*closing));
                put_string(b, message);
            }),
        }
    }

    /// Reads a reply from a frame.
    ///
    /// # Errors
    /// An unknown kind, or a body that does not match its kind.
    pub fn decode(frame: Frame<'_>) -> Result<Reply, ReplyError> {
        let k = frame.kind;
        let mut r = Reader::new(frame.body);
        let reply = (|| -> Result<Reply, BodyError> {
            Ok(match k {
                kind::HELLO => Reply::Hello {
                    version: r.u16("version")?,
                    board: r.json("board")?,
                },
                kind::BURST => {
                    let n = r.u32("period count")? as usize;
                    Reply::Burst {
                        tdo: r.packed(n, "tdo")?,
                        driven: r.packed(n, "driven")?,
                    }
                }
                kind::SHIFT => {
                    let n = r.u32("bit count")? as usize;
                    Reply::Shift {
                        tdo: r.packed(n, "tdo")?,
                    }
                }
                kind::DONE => Reply::Done,
                kind::EVENTS => {
                    let dropped = r.u64("dropped")?;
                    Reply::Events {
                        dropped,
                        events: r.json("events")?,
                    }
                }
                kind::LAYOUT => Reply::Layout(r.json("layout")?),
                kind::TCK_LIMITS => Reply::TckLimits(r.json("limits")?),
                kind::DEFECTS => Reply::Defects(r.json("defects")?),
                kind::BYE => Reply::Bye,
                kind::GRADE => Reply::Grade(r.json("grade")?),
                kind::ERROR => Reply::Error {
                    code: ErrorCode::from_number(r.u16("code")?),
                    closing: r.flag("closing")?,
                    message: r.string("message")?,
                },
                _ => return Err(r.error("unknown kind")),
            })
        })();
        match reply {
            Ok(reply) => r
                .end()
                .map(|()| reply)
                .map_err(|error| ReplyError::Body { kind: k, error }),
            Err(_) if !is_reply_kind(k) => Err(ReplyError::UnknownKind(k)),
            Err(error) => Err(ReplyError::Body { kind: k, error }),
        }
    }
}

fn is_reply_kind(k: u8) -> bool {
    matches!(
        k,
        kind::DONE
            | kind::HELLO
            | kind::BURST
            | kind::SHIFT
            | kind::EVENTS
            | kind::LAYOUT
            | kind::TCK_LIMITS
            | kind::BYE
            | kind::DEFECTS
            | kind::GRADE
            | kind::ERROR
    )
}
