//! Chain faults on a board of chains only: the devices and TAP ports of the
//! board without its nets, where a fault cuts the chain and nothing the
//! tester reads can depend on a net.
//!
//! A broken link, a stuck TDO, TMS or TCK open, a dead device and TRST*
//! stuck active each give the chain a *cut*: a device whose TDO stream is
//! one level whatever its TDI and pins carry (the broken link's pull-up
//! level, the stuck level, the high-impedance TDO of a device held in or
//! frozen at Test-Logic-Reset, read as 1 through the next TDI's pull-up:
//! IEEE 1149.1 clause 4, from memory). Whatever the devices before the cut
//! capture is lost at the cut. The devices after it, and those on other
//! ports, reach the tester; when none of them ever holds an instruction
//! whose data register captures pins (only BYPASS, IDCODE and USERCODE:
//! the fixed captures of IEEE 1149.1 clauses 10 and 12, from memory), what
//! they shift out depends on TMS, TCK and the cut's level alone, never on a
//! net. Then the program's run on the board without nets gives the
//! reference's TDO bit for bit, at the cost of the chain's shifts alone,
//! with no net resolved; the devices whose stream ends at the cut are
//! made dead there (they see no edge), since nothing they do arrives. The check is made on the run itself, at every
//! step (a step changes the instructions at most once: an explicit state
//! path through Update-IR twice is left to the reference), so a fault
//! that loads a capturing instruction after the cut (a TDO stuck at 0
//! feeding an all-zeros EXTEST opcode) falls back to the full board.
//! `harness/tests/fast_campaign.rs` checks this path against the reference
//! on random boards, programs and chain faults.

use virtual_board::{
    Board, BoardParts, DefectSpec, FloatPolicy, LoadedBoard, Selected, ShortRule, SystemDrive,
    TapState,
};

use crate::program::{Action, Program};
use crate::run::{RunOptions, RunReport, Runner};

/// The board as chains only, built once per campaign.
pub(super) struct ChainOnly {
    /// The devices and ports at power-up, no net, no cluster.
    loaded: LoadedBoard,
}

impl ChainOnly {
    /// The board without its nets, or `None` when a device's system logic
    /// copies a net (a pass-through: nets are needed to drive its pins) or
    /// a step of the program can change the instructions twice.
    pub(super) fn build(loaded: &LoadedBoard, program: &Program) -> Option<ChainOnly> {
        let b = &loaded.board;
        let follows = b.devices().iter().any(|d| {
            d.system()
                .iter()
                .any(|s| matches!(s, SystemDrive::Follow(_)))
        });
        let twice = program.steps.iter().any(|s| match &s.action {
            Action::Goto { path, .. } => {
                path.iter().filter(|&&t| t == TapState::UpdateIr).count() > 1
            }
            _ => false,
        });
        if follows || twice {
            return None;
        }
        let devices = b.devices().to_vec();
        let pad_net = devices.iter().map(|d| vec![None; d.pads().len()]).collect();
        let pad_nets = devices
            .iter()
            .map(|d| vec![Vec::new(); d.pads().len()])
            .collect();
        let parts = BoardParts {
            name: b.name().to_string(),
            devices,
            ports: b.ports().to_vec(),
            nets: Vec::new(),
            pad_net,
            pad_nets,
            short_rule: ShortRule::WiredAnd,
            unconnected: FloatPolicy::High,
            seed: 0,
            clusters: Vec::new(),
        };
        Some(ChainOnly {
            loaded: LoadedBoard {
                board: Board::new(parts),
                file: loaded.file.clone(),
                path: loaded.path.clone(),
                source: loaded.source.clone(),
            },
        })
    }

    /// The run of `program` on the chains with chain fault `d`, or `None`
    /// when the fault is not a chain fault with a cut or a device that
    /// reaches the tester captures pins in it (the full board then).
    pub(super) fn run(&self, program: &Program, d: &DefectSpec) -> Option<RunReport> {
        let mut board = self
            .loaded
            .with_board_defects(std::slice::from_ref(d))?
            .ok()?;
        let (reach, upstream) = self.reaching(&board, d)?;
        // What the devices before the cut do is lost at the cut: they may
        // as well see no edge (their floating pins would only raise
        // events on every capture).
        for &i in &upstream {
            board.update_faults(i, |f| f.dead = true);
        }
        board.refresh();
        let fixed = |b: &Board| {
            reach.iter().all(|&i| {
                matches!(
                    b.devices()[i].instruction().register,
                    Selected::Bypass | Selected::Idcode | Selected::Usercode
                )
            })
        };
        let mut pins_read = !fixed(&board);
        let options = RunOptions {
            layouts: false,
            ..RunOptions::default()
        };
        let report = Runner::new(&mut board, options)
            .run_observed(program, &mut |_, b| pins_read |= !fixed(b));
        (!pins_read && fixed(&board)).then_some(report)
    }

    /// The devices whose TDO reaches the tester past fault `d` (all but the
    /// cut and those before it on its port), and the devices whose TDO
    /// stream ends at the cut: those before it, and the cut itself after a
    /// broken link (its TDO leads nowhere). `None` when `d` is no chain
    /// fault.
    fn reaching(&self, b: &Board, d: &DefectSpec) -> Option<(Vec<usize>, Vec<usize>)> {
        let (port, cut) = match (d.chain_device(), &d.trst_stuck) {
            (Some(name), None) => {
                let (p, k) = b.chain_position(b.device_index(name)?)?;
                (p, Some(k))
            }
            (None, Some(port)) => {
                let p = b.port_index(port)?;
                // The first device TRST* holds; none: nothing is cut.
                let k = b.ports()[p]
                    .chain
                    .iter()
                    .position(|&i| b.devices()[i].model().tap.trst.is_some());
                (p, k)
            }
            _ => return None,
        };
        let chain = &b.ports()[port].chain;
        let upstream = &chain[..cut.map_or(0, |k| k + 1)];
        let reach = (0..b.devices().len())
            .filter(|i| !upstream.contains(i))
            .collect();
        let lost = match cut {
            Some(k) if d.broken_link.is_some() => &chain[..=k],
            Some(k) => &chain[..k],
            None => &[],
        };
        Some((reach, lost.to_vec()))
    }
}
