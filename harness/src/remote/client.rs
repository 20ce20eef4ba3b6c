//! `RemoteBoard`: a `TapTarget` on the far side of a TCP connection, with
//! whole scans, idle waits and TRST* as one round trip each, and pipelined
//! bursts of TCK periods.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::cell::RefCell;
use std::io::{Read, Write};
use std::net::{TcpStream, ToSocketAddrs};
use std::time::Duration;

use virtual_board::{
    Bits, BoardEvent, DefectSpec, PathSegment, PortId, TapPins, TapTarget, TargetError, TckLimit,
};

use super::frame;
use super::hello::{BoardDescription, PROTOCOL_VERSION};
use super::reply::{ErrorCode, Reply};
use super::request::{encode_burst, Request, Scope};

/// The largest reply frame a client accepts: a scan of the longest length
/// out, or a layout of a very large board.
pub const MAX_REPLY_FRAME: u32 = 64 << 20;

/// Why talking to a remote board failed.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum RemoteError {
    /// `--target` is not `tcp://HOST:PORT`.
    #[error("`{0}` is not a target address: write tcp://HOST:PORT")]
    Address(String),
    /// The connection failed or broke.
    #[error("{address}: {why}")]
    Io {
        /// Where.
        address: String,
        /// What happened.
        why: String,
    },
    /// The server answered something this client cannot read, or not the
    /// answer to the request.
    #[error("{address}: the server does not speak this protocol: {why}")]
    Protocol {
        /// Where.
        address: String,
        /// What was wrong.
        why: String,
    },
    /// The server refused the request.
    #[error("{address}: the server refused: {message}")]
    Refused {
        /// Where.
        address: String,
        /// Its code.
        code: ErrorCode,
        /// Its words.
        message: String,
    },
}

/// The TDO of a burst: per period, the level and whether TDO was driven.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BurstTdo {
    /// TDO per period (1 where high-impedance).
    pub tdo: Bits,
    /// 1 where TDO was driven.
    pub driven: Bits,
}

/// The pins of a burst: per period, TMS, TDI and TRST* (1 = released).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Burst {
    /// TMS per period.
    pub tms: Bits,
    /// TDI per period.
    pub tdi: Bits,
    /// TRST* per period.
    pub trst_n: Bits,
}

/// A board served by `boardtwin serve`, reached over TCP.
///
/// The connection sits in a `RefCell` because the trait's layout and TCK
/// limit queries take `&self`; calls never overlap, so it is never
/// borrowed twice.
#[derive(Debug)]
pub struct RemoteBoard {
    address: String,
    description: BoardDescription,
    link: RefCell<Link>,
    /// The devices' TCK limits per port, asked once (they never change).
    limits: RefCell<Vec<Option<Vec<TckLimit>>>>,
}

/// The socket and its buffers.
#[derive(Debug)]
struct Link {
    stream: TcpStream,
    /// Received bytes not yet taken as frames.
    inbox: Vec<u8>,
    /// Bytes of the requests being written.
    outbox: Vec<u8>,
}

/// `HOST:PORT` of a `tcp://HOST:PORT` target.
///
/// # Errors
/// Another scheme, or no port.
pub fn parse_target(target: &str) -> Result<String, RemoteError> {
    let rest = target
        .strip_prefix("tcp://")
        .ok_or_else(|| RemoteError::Address(target.to_string()))?;
    let rest = rest.strip_suffix('/').unwrap_or(rest);
    let port = rest.rsplit_once(':').map(|(_, p)| p);
    match port {
        Some(p) if !p.is_empty() && p.parse::<u16>().is_ok() && !rest.contains('/') => {
            Ok(rest.to_string())
        }
        _ => Err(RemoteError::Address(target.to_string())),
    }
}

/// A target's name part: `tcp://NAME@HOST:PORT` gives `(Some(NAME),
/// "tcp://HOST:PORT")` (in an exercise, the trainee's name, sent in the
/// hello); a target without one comes back as it is.
pub fn split_client_name(target: &str) -> (Option<String>, String) {
    if let Some(rest) = target.strip_prefix("tcp://") {
        if let Some((name, host)) = rest.split_once('@') {
            if !name.is_empty() {
                return (Some(name.to_string()), format!("tcp://{host}"));
            }
        }
    }
    (None, target.to_string())
}

impl RemoteBoard {
    /// Connects to `address` (`HOST:PORT`), says hello, and reads the board's
    /// description. `timeout` bounds the connection and every later read.
    ///
    /// # Errors
    /// No connection, or a server that refuses this protocol version.
    pub fn connect(address: &str, timeout: Duration) -> Result<RemoteBoard, RemoteError> {
        RemoteBoard::connect_as(
            address,
            timeout,
            &format!("boardtwin {}", env!("CARGO_PKG_VERSION")),
        )
    }

    /// [`RemoteBoard::connect`], with `client` as the hello's name (an
    /// exercise server takes it for the trainee's name).
    ///
    /// # Errors
    /// No connection, or a server that refuses this protocol version.
    pub fn connect_as(
        address: &str,
        timeout: Duration,
        client: &str,
    ) -> Result<RemoteBoard, RemoteError> {
        let io = |e: std::io::Error| RemoteError::Io {
            address: address.to_string(),
            why: e.to_string(),
        };
        let addrs: Vec<_> = address.to_socket_addrs().map_err(io)?.collect();
        let mut last = None;
        let mut stream = None;
        for a in &addrs {
            match TcpStream::connect_timeout(a, timeout) {
                Ok(s) => {
                    stream = Some(s);
                    break;
                }
                Err(e) => last = Some(e),
            }
        }
        let stream = stream.ok_or_else(|| {
            io(last.unwrap_or_else(|| std::io::Error::other("the name resolves to no address")))
        })?;
        stream.set_nodelay(true).map_err(io)?;
        stream.set_read_timeout(Some(timeout)).map_err(io)?;
        let mut board = RemoteBoard {
            address: address.to_string(),
            description: BoardDescription {
                board: String::new(),
                ports: Vec::new(),
            },
            link: RefCell::new(Link {
                stream,
                inbox: Vec::new(),
                outbox: Vec::new(),
            }),
            limits: RefCell::new(Vec::new()),
        };
        let hello = Request::Hello {
            version: PROTOCOL_VERSION,
            client: client.to_string(),
        };
        match board.call(&hello)? {
            Reply::Hello { board: d, .. } => {
                board.limits = RefCell::new(vec![None; d.ports.len()]);
                board.description = d;
                Ok(board)
            }
            other => Err(board.unexpected(&other)),
        }
    }

    /// The board as the server's hello describes it.
    pub fn description(&self) -> &BoardDescription {
        &self.description
    }

    /// Where it is.
    pub fn address(&self) -> &str {
        &self.address
    }

    /// One request, one reply.
    ///
    /// # Errors
    /// The connection broke, or the reply cannot be read. An error reply
    /// is returned as [`RemoteError::Refused`].
    pub fn call(&mut self, request: &Request) -> Result<Reply, RemoteError> {
        self.query(request)
    }

    /// [`RemoteBoard::call`] through `&self`.
    fn query(&self, request: &Request) -> Result<Reply, RemoteError> {
        let mut link = self.link.borrow_mut();
        link.outbox.clear();
        request.encode(&mut link.outbox);
        self.send(&mut link)?;
        self.receive(&mut link)
    }

    /// TCK periods on `port`, one burst.
    ///
    /// # Errors
    /// As [`RemoteBoard::call`]; pins of different lengths.
    pub fn burst(&mut self, port: PortId, burst: &Burst) -> Result<BurstTdo, RemoteError> {
        let mut out = self.bursts(port, std::slice::from_ref(burst), 1)?;
        out.pop()
            .ok_or_else(|| self.protocol("no reply to a burst"))
    }

    /// Several bursts on `port`, pipelined: up to `window` requests are on
    /// the wire before the first reply is read. Replies come in order.
    ///
    /// # Errors
    /// As [`RemoteBoard::call`]: the first burst refused (its board error
    /// in its words); the bursts after it in the window have been applied
    /// and their replies are dropped.
    pub fn bursts(
        &mut self,
        port: PortId,
        bursts: &[Burst],
        window: usize,
    ) -> Result<Vec<BurstTdo>, RemoteError> {
        let port = self.port_u16(port)?;
        let window = window.max(1);
        if let Some(b) = bursts
            .iter()
            .find(|b| b.tdi.len() != b.tms.len() || b.trst_n.len() != b.tms.len())
        {
            return Err(self.protocol(&format!(
                "a burst's TMS, TDI and TRST* differ in length ({}, {}, {})",
                b.tms.len(),
                b.tdi.len(),
                b.trst_n.len()
            )));
        }
        let mut out = Vec::with_capacity(bursts.len());
        let mut sent = 0;
        let mut link = self.link.borrow_mut();
        while out.len() < bursts.len() {
            link.outbox.clear();
            while sent < bursts.len() && sent - out.len() < window {
                let b = &bursts[sent];
                encode_burst(&mut link.outbox, port, &b.tms, &b.tdi, &b.trst_n);
                sent += 1;
            }
            if !link.outbox.is_empty() {
                self.send(&mut link)?;
            }
            let reply = match self.receive(&mut link) {
                Ok(Reply::Burst { tdo, driven }) => {
                    out.push(BurstTdo { tdo, driven });
                    continue;
                }
                Ok(other) => self.unexpected(&other),
                Err(e) => e,
            };
            // The replies to the bursts still in flight are read and dropped,
            // so the next request's reply is its own.
            if !matches!(reply, RemoteError::Io { .. }) {
                for _ in out.len() + 1..sent {
                    if let Err(e @ RemoteError::Io { .. }) = self.receive(&mut link) {
                        return Err(e);
                    }
                }
            }
            return Err(reply);
        }
        Ok(out)
    }

    /// The board back to power-up, with its defects.
    ///
    /// # Errors
    /// As [`RemoteBoard::call`].
    pub fn reset(&mut self) -> Result<(), RemoteError> {
        self.done(&Request::Reset)
    }

    /// Adds defects (needs the server's admin token).
    ///
    /// # Errors
    /// As [`RemoteBoard::call`]; refused without the right token.
    pub fn inject(
        &mut self,
        token: &str,
        scope: Scope,
        defects: &[DefectSpec],
    ) -> Result<(), RemoteError> {
        self.done(&Request::Inject {
            token: token.to_string(),
            scope,
            defects: defects.to_vec(),
        })
    }

    /// Removes every defect (needs the admin token).
    ///
    /// # Errors
    /// As [`RemoteBoard::inject`].
    pub fn clear(&mut self, token: &str, scope: Scope) -> Result<(), RemoteError> {
        self.done(&Request::Clear {
            token: token.to_string(),
            scope,
        })
    }

    /// The defects (needs the admin token).
    ///
    /// # Errors
    /// As [`RemoteBoard::inject`].
    pub fn list(&mut self, token: &str, scope: Scope) -> Result<Vec<DefectSpec>, RemoteError> {
        match self.call(&Request::List {
            token: token.to_string(),
            scope,
        })? {
            Reply::Defects(d) => Ok(d),
            other => Err(self.unexpected(&other)),
        }
    }

    /// Says bye and waits for the server's.
    ///
    /// # Errors
    /// As [`RemoteBoard::call`].
    pub fn bye(mut self) -> Result<(), RemoteError> {
        match self.call(&Request::Bye)? {
            Reply::Bye => Ok(()),
            other => Err(self.unexpected(&other)),
        }
    }

    fn done(&mut self, request: &Request) -> Result<(), RemoteError> {
        match self.call(request)? {
            Reply::Done => Ok(()),
            other => Err(self.unexpected(&other)),
        }
    }

    fn send(&self, link: &mut Link) -> Result<(), RemoteError> {
        let Link { stream, outbox, .. } = link;
        stream.write_all(outbox).map_err(|e| self.io(e))
    }

    /// Reads one reply frame; an error reply becomes [`RemoteError::Refused`].
    fn receive(&self, link: &mut Link) -> Result<Reply, RemoteError> {
        let mut chunk = [0u8; 64 * 1024];
        loop {
            match frame::parse(&link.inbox, MAX_REPLY_FRAME) {
                Ok((f, used)) => {
                    let reply = Reply::decode(f);
                    link.inbox.drain(..used);
                    return match reply {
                        Ok(Reply::Error { code, message, .. }) => Err(RemoteError::Refused {
                            address: self.address.clone(),
                            code,
                            message,
                        }),
                        Ok(r) => Ok(r),
                        Err(e) => Err(self.protocol(&e.to_string())),
                    };
                }
                Err(frame::FrameError::Incomplete { .. }) => {
                    let n = match link.stream.read(&mut chunk) {
                        Ok(0) => {
                            return Err(self.io(std::io::Error::new(
                                std::io::ErrorKind::UnexpectedEof,
                                "the server closed the connection",
                            )))
                        }
                        Ok(n) => n,
                        Err(e) => return Err(self.io(e)),
                    };
                    link.inbox.extend_from_slice(&chunk[..n]);
                }
                Err(e) => return Err(self.protocol(&e.to_string())),
            }
        }
    }

    fn port_u16(&self, port: PortId) -> Result<u16, RemoteError> {
        u16::try_from(port).map_err(|_| self.protocol("a port number over 65535"))
    }

    fn io(&self, e: std::io::Error) -> RemoteError {
        RemoteError::Io {
            address: self.address.clone(),
            why: e.to_string(),
        }
    }

    fn protocol(&self, why: &str) -> RemoteError {
        RemoteError::Protocol {
            address: self.address.clone(),
            why: why.to_string(),
        }
    }

    fn unexpected(&self, reply: &Reply) -> RemoteError {
        self.protocol(&format!("an unexpected reply ({})", reply.what()))
    }
}

/// The target error for a remote failure: the board's own refusal in its
/// words, anything else as a link failure.
fn target_error(e: RemoteError) -> TargetError {
    match e {
        RemoteError::Refused {
            code: ErrorCode::Target,
            message,
            ..
        } => TargetError::Remote(message),
        other => TargetError::Link(other.to_string()),
    }
}

impl TapTarget for RemoteBoard {
    fn port_count(&self) -> usize {
        self.description.ports.len()
    }

    fn port_names(&self) -> Vec<String> {
        self.description
            .ports
            .iter()
            .map(|p| p.name.clone())
            .collect()
    }

    /// The hazards since the last call; a link failure is logged and reads
    /// as none (the next request reports it).
    fn take_events(&mut self) -> Vec<BoardEvent> {
        match self.call(&Request::Events) {
            Ok(Reply::Events { events, dropped }) => {
                if dropped > 0 {
                    tracing::warn!(
                        "{dropped} hazards were dropped by the server (its buffer was full)"
                    );
                }
                events
            }
            Ok(other) => {
                tracing::warn!("{}", self.unexpected(&other));
                Vec::new()
            }
            Err(e) => {
                tracing::warn!("{e}");
                Vec::new()
            }
        }
    }

    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        let port = u16::try_from(port).ok()?;
        match self.query(&Request::Layout { port, ir }) {
            Ok(Reply::Layout(layout)) => layout,
            _ => None,
        }
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        if let Some(Some(l)) = self.limits.borrow().get(port) {
            return l.clone();
        }
        let Ok(p) = u16::try_from(port) else {
            return Vec::new();
        };
        match self.query(&Request::TckLimits { port: p }) {
            Ok(Reply::TckLimits(l)) => {
                if let Some(slot) = self.limits.borrow_mut().get_mut(port) {
                    *slot = Some(l.clone());
                }
                l
            }
            _ => Vec::new(),
        }
    }

    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        let burst = Burst {
            tms: Bits::from_bools(&[pins.tms]),
            tdi: Bits::from_bools(&[pins.tdi]),
            trst_n: Bits::from_bools(&[pins.trst_n]),
        };
        let out = self.burst(port, &burst).map_err(target_error)?;
        if out.tdo.len() != 1 {
            return Err(TargetError::Link(
                "a burst reply of the wrong length".into(),
            ));
        }
        Ok(out.driven.get(0).then(|| out.tdo.get(0)))
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        let port = self.port_u16(port).map_err(target_error)?;
        self.done(&Request::Trst { port, asserted })
            .map_err(target_error)
    }

    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        let port = self.port_u16(port).map_err(target_error)?;
        self.done(&Request::Idle { port, tms, count })
            .map_err(target_error)
    }

    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        let port = self.port_u16(port).map_err(target_error)?;
        match self
            .call(&Request::Shift {
                port,
                tdi: tdi.clone(),
            })
            .map_err(target_error)?
        {
            Reply::Shift { tdo } if tdo.len() == tdi.len() => Ok(tdo),
            other => Err(target_error(self.unexpected(&other))),
        }
    }
}
