//! The virtual board on the network: a protocol of our own over TCP, the
//! server behind `boardtwin serve`, and `RemoteBoard`, the client that
//! stands where an in-process board stands (`--target tcp://HOST:PORT`).
//!
//! The protocol is documented in `harness/docs/remote-protocol.md`.
//!
//! # Layout
//! - `wire`: integers, strings, packed bits and JSON inside a message body.
//! - `frame`: length-prefixed frames; incomplete told from invalid.
//! - `request`, `reply`: every message, one closed enum each.
//! - `hello`: the board as the hello describes it; differences from a board file.
//! - `burst`: a burst on the server's board; Shift stretches on the word path.
//! - `session`: the boards a server serves and one connection's requests.
//! - `connection`: one connection's loop, timeouts and shutdown.
//! - `server`: `run(listener, service, config, shutdown)`.
//! - `client`: `RemoteBoard`.
//! - `open`: a checked `RemoteBoard` for a command (hello against the board file, defects).

mod burst;
mod client;
mod connection;
mod frame;
mod hello;
mod open;
mod open_error;
mod reply;
mod request;
mod server;
mod session;
mod wire;

pub(crate) use self::session::burst_reply;

pub use self::{
    burst::{clock_burst, BurstOut},
    client::{
        parse_target, split_client_name, Burst, BurstTdo, RemoteBoard, RemoteError, MAX_REPLY_FRAME,
    },
    connection::Limits,
    frame::{
        encode as encode_frame, parse as parse_frame, Frame, FrameError, DEFAULT_MAX_FRAME,
        HEADER_LEN,
    },
    hello::{BoardDescription, DeviceDescription, PortDescription, PROTOCOL_VERSION},
    open::{admin_token, open_target, RemoteTargets, TOKEN_VARIABLE},
    open_error::{OpenError, TokenError},
    reply::{ErrorCode, Reply, ReplyError},
    request::{encode_burst, Request, RequestError, Scope, MAX_BURST},
    server::{run, ServerConfig},
    session::{BoardService, Classroom, Session, MAX_PENDING_EVENTS},
    wire::BodyError,
};
