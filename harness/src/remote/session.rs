//! The boards a server serves: `BoardService` (the board as designed, the
//! board later connections start with, the shared board of `--shared`, the
//! admin token) and `Session` (one connection's board and hazards), which
//! answers every request after the hello.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::sync::{Arc, Mutex};

use virtual_board::{
    Bits, Board, BoardEvent, DefectSpec, LoadedBoard, PortId, TapTarget, TargetError,
};

use super::burst::clock_burst;
use super::hello::BoardDescription;
use super::reply::{ErrorCode, Reply};
use super::request::{Request, Scope};

/// Hazards a session keeps for its client before it drops the oldest
/// (event memory stays bounded when a client never asks).
pub const MAX_PENDING_EVENTS: usize = 65_536;

/// A board at power-up with the defects it was built with.
#[derive(Clone, Debug)]
struct Powered {
    defects: Vec<DefectSpec>,
    board: Board,
}

/// A board in use: how it was at power-up, and now.
#[derive(Clone, Debug)]
struct Live {
    powered: Powered,
    board: Board,
}

impl Live {
    fn new(powered: Powered) -> Live {
        Live {
            board: powered.board.clone(),
            powered,
        }
    }
}

/// A class behind the server (`boardtwin exercise serve`): it answers
/// every request after the hello for the trainee the hello named, with a
/// board of that trainee's own, and grades a `submit`.
pub trait Classroom: Send + Sync + std::fmt::Debug {
    /// Answers `request` (not the hello, nor bye) for `trainee`.
    fn handle(&self, trainee: &str, request: &Request) -> Reply;
}

/// What a server serves: one board file, and the boards built from it.
#[derive(Debug)]
pub struct BoardService {
    /// The board as designed (the hello describes it; defects are rebuilt on it).
    design: LoadedBoard,
    hello: BoardDescription,
    /// The board each later connection starts with.
    template: Mutex<Powered>,
    /// With `--shared`: the one board every connection uses in turn. The
    /// tokio mutex is fair, so requests are applied in arrival order, and a
    /// request holds it from its first TCK to its last (bursts are atomic).
    shared: Option<Arc<tokio::sync::Mutex<Live>>>,
    /// The admin token; `None`: administrative requests are refused.
    token: Option<String>,
    /// An exercise: every request after the hello goes to it.
    classroom: Option<Arc<dyn Classroom>>,
}

impl BoardService {
    /// Serves `design` (as designed) with `faulty` (the same board with
    /// `defects`) as the board connections start with; one board for all
    /// when `shared`; admin requests allowed with `token`.
    pub fn new(
        design: LoadedBoard,
        faulty: Board,
        defects: Vec<DefectSpec>,
        shared: bool,
        token: Option<String>,
    ) -> BoardService {
        let powered = Powered {
            defects,
            board: faulty,
        };
        BoardService {
            hello: BoardDescription::of(&design.board),
            design,
            shared: shared.then(|| Arc::new(tokio::sync::Mutex::new(Live::new(powered.clone())))),
            template: Mutex::new(powered),
            token: token.filter(|t| !t.is_empty()),
            classroom: None,
        }
    }

    /// Serves `design`'s description in the hello and hands every later
    /// request to `classroom` (no admin token: inject, clear and list are
    /// refused).
    pub fn with_classroom(design: LoadedBoard, classroom: Arc<dyn Classroom>) -> BoardService {
        let mut service = BoardService::new(design.clone(), design.board, Vec::new(), false, None);
        service.classroom = Some(classroom);
        service
    }

    /// The board as the hello describes it.
    pub fn description(&self) -> &BoardDescription {
        &self.hello
    }

    /// A new connection's session.
    pub fn session(self: &Arc<BoardService>) -> Session {
        let board = match &self.shared {
            Some(_) => None,
            None => Some(Live::new(self.template())),
        };
        Session {
            service: Arc::clone(self),
            board,
            events: Vec::new(),
            dropped: 0,
            client: String::new(),
        }
    }

    fn template(&self) -> Powered {
        match self.template.lock() {
            Ok(t) => t.clone(),
            Err(poisoned) => poisoned.into_inner().clone(),
        }
    }

    fn set_template(&self, p: Powered) {
        match self.template.lock() {
            Ok(mut t) => *t = p,
            Err(poisoned) => *poisoned.into_inner() = p,
        }
    }

    /// True when `token` is the admin token (compared in time independent
    /// of where the first difference is).
    fn admits(&self, token: &str) -> bool {
        let Some(mine) = &self.token else {
            return false;
        };
        let (a, b) = (mine.as_bytes(), token.as_bytes());
        let mut diff = u8::from(a.len() != b.len());
        for (i, x) in a.iter().enumerate() {
            diff |= x ^ b.get(i).copied().unwrap_or(0);
        }
        diff == 0
    }

    /// The board as designed with `defects`, at power-up.
    fn build(&self, defects: Vec<DefectSpec>) -> Result<Powered, String> {
        if let Some(d) = defects.iter().find(|d| d.bsdl.is_some()) {
            return Err(format!(
                "{}: over the network a wrong device is given by `idcode`, not by a BSDL file",
                d.describe()
            ));
        }
        let mut source = virtual_board::bsdl_files_beside(&self.design.path);
        let built = self
            .design
            .with_defects(&defects, &mut source)
            .map_err(|e| e.to_string())?;
        Ok(Powered {
            defects,
            board: built.board,
        })
    }
}

/// One connection's view: its own board (or the shared one), and the
/// hazards its requests raised that it has not yet asked for.
#[derive(Debug)]
pub struct Session {
    service: Arc<BoardService>,
    /// `None` with `--shared`.
    board: Option<Live>,
    events: Vec<BoardEvent>,
    dropped: u64,
    /// The name the client gave in its hello (in an exercise, the trainee's).
    client: String,
}

impl Session {
    /// Keeps the name the client's hello gave.
    pub fn greet(&mut self, client: &str) {
        self.client = client.to_string();
    }

    /// The board as the hello describes it.
    pub fn description(&self) -> &BoardDescription {
        self.service.description()
    }

    /// Answers one request (not the hello, nor bye: the connection takes those).
    ///
    /// # Cancel safety
    /// Not cancel safe on a shared board: dropped while it waits for the
    /// board, the request is not applied; dropped later, it may be applied
    /// in part. The connection never drops it.
    pub async fn handle(&mut self, request: &Request) -> Reply {
        if let Some(classroom) = &self.service.classroom {
            return classroom.handle(&self.client, request);
        }
        if let Request::Submit { .. } = request {
            return Reply::error(ErrorCode::Refused, false, "this server hosts no exercise");
        }
        if let Some(reply) = self.admin(request).await {
            return reply;
        }
        match (&mut self.board, &self.service.shared) {
            (Some(live), _) => apply(live, request, &mut self.events, &mut self.dropped),
            (None, Some(shared)) => {
                let mut live = shared.lock().await;
                apply(&mut live, request, &mut self.events, &mut self.dropped)
            }
            (None, None) => Reply::error(ErrorCode::Target, false, "no board"),
        }
    }

    /// Answers inject, clear and list; `None` for every other request.
    async fn admin(&mut self, request: &Request) -> Option<Reply> {
        let (token, scope) = match request {
            Request::Inject { token, scope, .. }
            | Request::Clear { token, scope }
            | Request::List { token, scope } => (token, *scope),
            _ => return None,
        };
        let service = Arc::clone(&self.service);
        if service.token.is_none() {
            return Some(Reply::error(
                ErrorCode::Refused,
                false,
                "this server was started without an admin token: defects cannot be changed or listed",
            ));
        }
        if !service.admits(token) {
            return Some(Reply::error(
                ErrorCode::Refused,
                false,
                "the admin token is not this server's",
            ));
        }
        let current = match (scope, &self.board, &service.shared) {
            (Scope::Session, Some(live), _) => live.powered.defects.clone(),
            (Scope::Session, None, Some(shared)) => shared.lock().await.powered.defects.clone(),
            _ => service.template().defects,
        };
        let wanted = match request {
            Request::List { .. } => return Some(Reply::Defects(current)),
            Request::Clear { .. } => Vec::new(),
            Request::Inject { defects, .. } => current.into_iter().chain(defects.clone()).collect(),
            _ => return None,
        };
        let powered = match service.build(wanted) {
            Ok(p) => p,
            Err(e) => return Some(Reply::error(ErrorCode::BadDefect, false, e)),
        };
        tracing::info!(defects = powered.defects.len(), ?scope, "defects set");
        match (&mut self.board, &service.shared) {
            (_, Some(shared)) => {
                *shared.lock().await = Live::new(powered.clone());
                service.set_template(powered);
            }
            (Some(live), None) if scope == Scope::Session => *live = Live::new(powered),
            _ => service.set_template(powered),
        }
        if scope == Scope::Session || service.shared.is_some() {
            self.events.clear();
        }
        Some(Reply::Done)
    }
}

/// Applies a board request to `live`, keeping the hazards it raised.
fn apply(
    live: &mut Live,
    request: &Request,
    events: &mut Vec<BoardEvent>,
    dropped: &mut u64,
) -> Reply {
    let board = &mut live.board;
    let port_ok = |p: u16| -> Result<PortId, TargetError> {
        let p = usize::from(p);
        if p < board.port_count() {
            Ok(p)
        } else {
            Err(TargetError::NoSuchPort(p))
        }
    };
    let result = match request {
        Request::Burst {
            port,
            tms,
            tdi,
            trst_n,
        } => port_ok(*port).and_then(|p| burst_reply(board, p, tms, tdi, trst_n)),
        Request::Shift { port, tdi } => port_ok(*port)
            .and_then(|p| board.shift(p, tdi))
            .map(|tdo| Reply::Shift { tdo }),
        Request::Idle { port, tms, count } => port_ok(*port)
            .and_then(|p| board.idle(p, *tms, *count))
            .map(|()| Reply::Done),
        Request::Trst { port, asserted } => port_ok(*port)
            .and_then(|p| board.set_trst(p, *asserted))
            .map(|()| Reply::Done),
        Request::Reset => {
            *board = live.powered.board.clone();
            events.clear();
            *dropped = 0;
            Ok(Reply::Done)
        }
        Request::Events => {
            keep(events, dropped, board.take_events());
            return Reply::Events {
                events: std::mem::take(events),
                dropped: std::mem::take(dropped),
            };
        }
        Request::Layout { port, ir } => {
            port_ok(*port).map(|p| Reply::Layout(board.scan_layout(p, *ir)))
        }
        Request::TckLimits { port } => {
            port_ok(*port).map(|p| Reply::TckLimits(board.tck_limits(p)))
        }
        Request::Hello { .. }
        | Request::Bye
        | Request::Inject { .. }
        | Request::Clear { .. }
        | Request::List { .. }
        | Request::Submit { .. } => {
            return Reply::error(ErrorCode::Malformed, false, "not a board request")
        }
    };
    // Each client hears of the hazards its own requests raised.
    keep(events, dropped, board.take_events());
    result.unwrap_or_else(|e| Reply::error(ErrorCode::Target, false, e.to_string()))
}

/// Appends new hazards, dropping the oldest beyond [`MAX_PENDING_EVENTS`].
fn keep(events: &mut Vec<BoardEvent>, dropped: &mut u64, new: Vec<BoardEvent>) {
    if new.is_empty() {
        return;
    }
    events.extend(new);
    if events.len() > MAX_PENDING_EVENTS {
        let over = events.len() - MAX_PENDING_EVENTS;
        events.drain(..over);
        *dropped += over as u64;
    }
}

/// A burst's reply, [`clock_burst`] packed as [`Reply::Burst`] (the
/// exercise desks clock their boards through it too).
pub(crate) fn burst_reply(
    board: &mut Board,
    port: PortId,
    tms: &Bits,
    tdi: &Bits,
    trst_n: &Bits,
) -> Result<Reply, TargetError> {
    clock_burst(board, port, tms, tdi, trst_n).map(|out| Reply::Burst {
        tdo: out.tdo,
        driven: out.driven,
    })
}
