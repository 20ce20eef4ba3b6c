//! One client connection: bytes in, frames, the hello, each request to the
//! session, replies out; the read and idle timeouts; leaving at shutdown.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::time::Duration;

use tokio::io::{AsyncReadExt, AsyncWriteExt};
use tokio::net::TcpStream;
use tokio::sync::watch;
use tokio::time::Instant;
use tracing::{debug, debug_span, Instrument};

use super::frame::{self, FrameError, HEADER_LEN};
use super::hello::PROTOCOL_VERSION;
use super::reply::{ErrorCode, Reply};
use super::request::{Request, RequestError};
use super::session::Session;

/// Limits of one connection.
#[derive(Clone, Copy, Debug)]
pub struct Limits {
    /// Largest frame (kind + body), bytes.
    pub max_frame: u32,
    /// How long the rest of a frame may take once its first byte came.
    pub read_timeout: Duration,
    /// How long a connection may stay silent between frames.
    pub idle_timeout: Duration,
}

/// Bytes read from the socket at a time.
const CHUNK: usize = 64 * 1024;

/// Serves one connection until the client says bye or goes, a timeout or
/// an invalid frame closes it, or shutdown is signalled. Every request
/// whose frame is whole in the buffer is answered before shutdown closes
/// the connection.
///
/// # Cancel safety
/// Not cancel safe (a request may be half applied); the server never
/// cancels it, it signals `shutdown` instead.
pub async fn serve(
    mut stream: TcpStream,
    mut session: Session,
    limits: Limits,
    mut shutdown: watch::Receiver<bool>,
) {
    let mut buf: Vec<u8> = Vec::with_capacity(CHUNK);
    let mut out: Vec<u8> = Vec::with_capacity(CHUNK);
    let mut chunk = vec![0u8; CHUNK];
    let mut greeted = false;
    let mut partial_since: Option<Instant> = None;
    loop {
        let mut used = 0;
        let mut close = false;
        while !close {
            match frame::parse(&buf[used..], limits.max_frame) {
                Ok((f, n)) => {
                    used += n;
                    let reply = match Request::decode(f) {
                        Ok(request) => {
                            let span = debug_span!("request", kind = request.name());
                            answer(&mut session, &mut greeted, &request)
                                .instrument(span)
                                .await
                        }
                        Err(RequestError::UnknownKind(k)) if greeted => Reply::error(
                            ErrorCode::UnknownKind,
                            false,
                            format!("no request has kind 0x{k:02x}"),
                        ),
                        Err(e) if greeted => {
                            Reply::error(ErrorCode::Malformed, false, e.to_string())
                        }
                        Err(e) => Reply::error(
                            ErrorCode::HelloFirst,
                            true,
                            format!("the first message must be a hello ({e})"),
                        ),
                    };
                    close = matches!(reply, Reply::Bye | Reply::Error { closing: true, .. });
                    reply.encode(&mut out);
                }
                Err(FrameError::Incomplete { .. }) => break,
                Err(FrameError::Empty) => {
                    used += HEADER_LEN;
                    Reply::error(ErrorCode::EmptyFrame, false, FrameError::Empty.to_string())
                        .encode(&mut out);
                }
                Err(e @ FrameError::TooLarge { .. }) => {
                    Reply::error(ErrorCode::TooLarge, true, e.to_string()).encode(&mut out);
                    close = true;
                }
            }
        }
        buf.drain(..used);
        if !out.is_empty() {
            if let Err(e) = stream.write_all(&out).await {
                debug!("write failed: {e}");
                return;
            }
            out.clear();
        }
        if close {
            break;
        }
        if *shutdown.borrow() {
            send_closing(
                &mut stream,
                ErrorCode::ShuttingDown,
                "the server is shutting down",
            )
            .await;
            break;
        }
        let now = Instant::now();
        let (deadline, timeout_code) = if buf.is_empty() {
            partial_since = None;
            (now + limits.idle_timeout, ErrorCode::IdleTimeout)
        } else {
            let since = *partial_since.get_or_insert(now);
            (since + limits.read_timeout, ErrorCode::ReadTimeout)
        };
        tokio::select! {
            biased;
            _ = shutdown.changed() => {
                send_closing(&mut stream, ErrorCode::ShuttingDown, "the server is shutting down").await;
                break;
            }
            read = tokio::time::timeout_at(deadline, stream.read(&mut chunk)) => match read {
                Err(_) => {
                    let why = match timeout_code {
                        ErrorCode::IdleTimeout => "no request within the idle timeout",
                        _ => "a frame did not arrive whole within the read timeout",
                    };
                    send_closing(&mut stream, timeout_code, why).await;
                    break;
                }
                Ok(Ok(0)) => {
                    if !buf.is_empty() {
                        debug!(bytes = buf.len(), "the client left in the middle of a frame");
                    }
                    break;
                }
                Ok(Ok(n)) => buf.extend_from_slice(&chunk[..n]),
                Ok(Err(e)) => {
                    debug!("read failed: {e}");
                    break;
                }
            },
        }
    }
    let _ = stream.shutdown().await;
}

/// The reply to one decoded request: the hello first, then the session's.
async fn answer(session: &mut Session, greeted: &mut bool, request: &Request) -> Reply {
    match (request, *greeted) {
        (Request::Hello { version, client }, false) => {
            if *version != PROTOCOL_VERSION {
                return Reply::error(
                    ErrorCode::Version,
                    true,
                    format!(
                        "this server speaks protocol version {PROTOCOL_VERSION}; the client asked for {version}"
                    ),
                );
            }
            *greeted = true;
            tracing::info!(client = %client, "hello");
            session.greet(client);
            Reply::Hello {
                version: PROTOCOL_VERSION,
                board: session.description().clone(),
            }
        }
        (Request::Hello { .. }, true) => Reply::error(
            ErrorCode::HelloFirst,
            true,
            "a connection says hello once, first",
        ),
        (_, false) => Reply::error(
            ErrorCode::HelloFirst,
            true,
            format!("the first message must be a hello, not {}", request.name()),
        ),
        (Request::Bye, true) => Reply::Bye,
        (_, true) => session.handle(request).await,
    }
}

/// Sends a closing error reply, ignoring a client already gone.
async fn send_closing(stream: &mut TcpStream, code: ErrorCode, message: &str) {
    let mut out = Vec::new();
    Reply::error(code, true, message).encode(&mut out);
    let _ = stream.write_all(&out).await;
}
