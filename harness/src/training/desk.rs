//! One trainee's desk: the faulted board they drive, its twin as designed
//! (which answers everything but TDO, so nothing but the captured bits can
//! tell of the defect), the requests they sent (the record grading replays)
//! and what they cost.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::BTreeMap;
use std::time::Instant;

use serde::{Deserialize, Serialize};
use virtual_board::{Board, BoardEvent, PortId, TapState, TapTarget, TargetError};

use crate::remote::{burst_reply, ErrorCode, Reply, Request};

/// Requests a desk records for grading; past this it stops recording and
/// says so in the grade (a class exercise sends far fewer).
pub const MAX_RECORDED: usize = 200_000;

/// Hazards kept for the debrief, per desk.
const HAZARDS_KEPT: usize = 200;

/// What a trainee's work cost.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Costs {
    /// Scans: every entry into Shift-IR or Shift-DR the trainee's TMS made.
    pub scans: u64,
    /// TCK periods.
    pub tck: u64,
    /// Seconds from the trainee's first request to the submission.
    pub seconds: f64,
    /// Hazards the trainee's requests raised, by kind (what the program
    /// does on any board: driver fights it causes, EXTEST without PRELOAD …).
    pub hazards: BTreeMap<String, u64>,
}

/// One request the desk recorded, with the TAP state it found on its port
/// (a whole scan's kind, IR or DR, for placing failing bits).
#[derive(Clone, Debug)]
pub struct Recorded {
    /// The request.
    pub request: Request,
    /// The port's TAP state before it, as the trainee's TMS put it.
    pub state: Option<TapState>,
}

/// One trainee's boards and record.
#[derive(Debug)]
pub struct Desk {
    /// The faulted board at power-up.
    faulted_powered: Board,
    faulted: Board,
    /// The board as designed at power-up, and in use.
    twin_powered: Board,
    twin: Board,
    /// Each port's TAP state as the trainee's TMS put it.
    states: Vec<TapState>,
    /// Hazards raised by the trainee's requests, not yet asked for.
    pending: Vec<BoardEvent>,
    /// Hazards kept for the debrief (first [`HAZARDS_KEPT`]).
    pub hazards: Vec<BoardEvent>,
    /// The requests that touched the board, in order.
    pub record: Vec<Recorded>,
    /// True when the record stopped at [`MAX_RECORDED`].
    pub record_full: bool,
    /// The costs so far.
    pub costs: Costs,
    started: Option<Instant>,
}

impl Desk {
    /// A desk with `faulted` and `twin` (as designed) at power-up.
    pub fn new(faulted: Board, twin: Board) -> Desk {
        let ports = twin.port_count();
        Desk {
            faulted: faulted.clone(),
            faulted_powered: faulted,
            twin: twin.clone(),
            twin_powered: twin,
            states: vec![TapState::TestLogicReset; ports],
            pending: Vec::new(),
            hazards: Vec::new(),
            record: Vec::new(),
            record_full: false,
            costs: Costs::default(),
            started: None,
        }
    }

    /// The twin as designed, as it stands.
    pub fn twin(&self) -> &Board {
        &self.twin
    }

    /// Seconds since the first request.
    pub fn seconds(&self) -> f64 {
        self.started.map_or(0.0, |s| s.elapsed().as_secs_f64())
    }

    /// Answers a board request: TDO from the faulted board, everything
    /// else (layouts, TCK limits, hazards, refusals) from the twin.
    pub fn answer(&mut self, request: &Request) -> Reply {
        self.started.get_or_insert_with(Instant::now);
        let port = |p: u16, board: &Board| -> Result<PortId, TargetError> {
            let p = usize::from(p);
            if p < board.port_count() {
                Ok(p)
            } else {
                Err(TargetError::NoSuchPort(p))
            }
        };
        let touches = matches!(
            request,
            Request::Burst { .. }
                | Request::Shift { .. }
                | Request::Idle { .. }
                | Request::Trst { .. }
                | Request::Reset
        );
        let before = match request {
            Request::Burst { port: p, .. }
            | Request::Shift { port: p, .. }
            | Request::Idle { port: p, .. }
            | Request::Trst { port: p, .. } => self.states.get(usize::from(*p)).copied(),
            _ => None,
        };
        let result: Result<Reply, TargetError> = match request {
            Request::Burst {
                port: p,
                tms,
                tdi,
                trst_n,
            } => port(*p, &self.twin).and_then(|p| {
                burst_reply(&mut self.twin, p, tms, tdi, trst_n)?;
                let reply = burst_reply(&mut self.faulted, p, tms, tdi, trst_n)?;
                self.costs.tck += tms.len() as u64;
                let mut s = self.states[p];
                for i in 0..tms.len() {
                    let next = if trst_n.get(i) {
                        s.next(tms.get(i))
                    } else {
                        TapState::TestLogicReset
                    };
                    if matches!(next, TapState::ShiftDr | TapState::ShiftIr) && next != s {
                        self.costs.scans += 1;
                    }
                    s = next;
                }
                self.states[p] = s;
                Ok(reply)
            }),
            Request::Shift { port: p, tdi } => port(*p, &self.twin).and_then(|p| {
                self.twin.shift(p, tdi)?;
                let tdo = self.faulted.shift(p, tdi)?;
                // The scan was counted when the trainee's TMS entered Shift.
                self.costs.tck += tdi.len() as u64;
                self.states[p] = match self.states[p] {
                    TapState::ShiftIr => TapState::Exit1Ir,
                    _ => TapState::Exit1Dr,
                };
                Ok(Reply::Shift { tdo })
            }),
            Request::Idle {
                port: p,
                tms,
                count,
            } => port(*p, &self.twin).and_then(|p| {
                self.twin.idle(p, *tms, *count)?;
                self.faulted.idle(p, *tms, *count)?;
                self.costs.tck += count;
                let mut s = self.states[p];
                for _ in 0..(*count).min(5) {
                    s = s.next(*tms);
                }
                self.states[p] = s;
                Ok(Reply::Done)
            }),
            Request::Trst { port: p, asserted } => port(*p, &self.twin).and_then(|p| {
                self.twin.set_trst(p, *asserted)?;
                self.faulted.set_trst(p, *asserted)?;
                if *asserted {
                    self.states[p] = TapState::TestLogicReset;
                }
                Ok(Reply::Done)
            }),
            Request::Reset => {
                self.twin = self.twin_powered.clone();
                self.faulted = self.faulted_powered.clone();
                self.states.fill(TapState::TestLogicReset);
                self.pending.clear();
                Ok(Reply::Done)
            }
            Request::Events => {
                self.gather();
                return Reply::Events {
                    events: std::mem::take(&mut self.pending),
                    dropped: 0,
                };
            }
            Request::Layout { port: p, ir } => {
                port(*p, &self.twin).map(|p| Reply::Layout(self.twin.scan_layout(p, *ir)))
            }
            Request::TckLimits { port: p } => {
                port(*p, &self.twin).map(|p| Reply::TckLimits(self.twin.tck_limits(p)))
            }
            Request::Inject { .. } | Request::Clear { .. } | Request::List { .. } => {
                return Reply::error(
                    ErrorCode::Refused,
                    false,
                    "an exercise's defects cannot be changed or listed",
                )
            }
            Request::Hello { .. } | Request::Bye | Request::Submit { .. } => {
                return Reply::error(ErrorCode::Malformed, false, "not a board request")
            }
        };
        self.gather();
        if touches {
            if self.record.len() < MAX_RECORDED {
                self.record.push(Recorded {
                    request: request.clone(),
                    state: before,
                });
            } else {
                self.record_full = true;
            }
        }
        result.unwrap_or_else(|e| Reply::error(ErrorCode::Target, false, e.to_string()))
    }

    /// Moves the twin's new hazards to the pending list and the counts;
    /// the faulted board's are dropped (they could name the defect).
    fn gather(&mut self) {
        let _ = self.faulted.take_events();
        for e in self.twin.take_events() {
            *self.costs.hazards.entry(e.kind().to_string()).or_default() += 1;
            if self.hazards.len() < HAZARDS_KEPT {
                self.hazards.push(e.clone());
            }
            if self.pending.len() < crate::remote::MAX_PENDING_EVENTS {
                self.pending.push(e);
            }
        }
    }
}
