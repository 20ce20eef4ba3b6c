//! `DeskTarget`: a trainee's desk as a `TapTarget`, so the page's runs go
//! through the same requests (recorded, counted, TDO from the faulted
//! board, the rest from the twin) as a run over the network.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::{
    Bits, BoardEvent, PathSegment, PortId, TapPins, TapTarget, TargetError, TckLimit,
};

use super::desk::Desk;
use crate::remote::{Reply, Request};

/// A desk driven as a target.
#[derive(Debug)]
pub struct DeskTarget<'a>(pub &'a mut Desk);

fn port16(port: PortId) -> Result<u16, TargetError> {
    u16::try_from(port).map_err(|_| TargetError::NoSuchPort(port))
}

fn refused(reply: Reply) -> TargetError {
    match reply {
        Reply::Error { message, .. } => TargetError::Remote(message),
        other => TargetError::Link(format!("unexpected answer: {}", other.what())),
    }
}

impl TapTarget for DeskTarget<'_> {
    fn port_count(&self) -> usize {
        self.0.twin().port_count()
    }

    fn port_names(&self) -> Vec<String> {
        self.0.twin().port_names()
    }

    fn take_events(&mut self) -> Vec<BoardEvent> {
        match self.0.answer(&Request::Events) {
            Reply::Events { events, .. } => events,
            _ => Vec::new(),
        }
    }

    fn scan_layout(&self, port: PortId, ir: bool) -> Option<Vec<PathSegment>> {
        self.0.twin().scan_layout(port, ir)
    }

    fn tck_limits(&self, port: PortId) -> Vec<TckLimit> {
        self.0.twin().tck_limits(port)
    }

    fn clock(&mut self, port: PortId, pins: TapPins) -> Result<Option<bool>, TargetError> {
        let one = |b: bool| Bits::from_bools(&[b]);
        let reply = self.0.answer(&Request::Burst {
            port: port16(port)?,
            tms: one(pins.tms),
            tdi: one(pins.tdi),
            trst_n: one(pins.trst_n),
        });
        match reply {
            Reply::Burst { tdo, driven } => Ok(driven.get(0).then(|| tdo.get(0))),
            other => Err(refused(other)),
        }
    }

    fn set_trst(&mut self, port: PortId, asserted: bool) -> Result<(), TargetError> {
        match self.0.answer(&Request::Trst {
            port: port16(port)?,
            asserted,
        }) {
            Reply::Done => Ok(()),
            other => Err(refused(other)),
        }
    }

    fn idle(&mut self, port: PortId, tms: bool, count: u64) -> Result<(), TargetError> {
        match self.0.answer(&Request::Idle {
            port: port16(port)?,
            tms,
            count,
        }) {
            Reply::Done => Ok(()),
            other => Err(refused(other)),
        }
    }

    fn shift(&mut self, port: PortId, tdi: &Bits) -> Result<Bits, TargetError> {
        match self.0.answer(&Request::Shift {
            port: port16(port)?,
            tdi: tdi.clone(),
        }) {
            Reply::Shift { tdo } => Ok(tdo),
            other => Err(refused(other)),
        }
    }
}
