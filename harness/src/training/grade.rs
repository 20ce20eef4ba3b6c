//! Grading a diagnosis: exact; within the ambiguity group of what the
//! trainee actually ran (the diagnosis, simulated on the cycle-level board
//! through the trainee's own recorded requests, gives every TDO bit the
//! faulted board gave); partly right (the right nets or parts, another
//! kind); wrong.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::BTreeSet;

use serde::{Deserialize, Serialize};
use virtual_board::{Bits, Board, DefectSpec, LoadedBoard, TapTarget};

use super::desk::Recorded;
use super::draw::names_in;
use crate::campaign::{universe, UniverseOptions};
use crate::remote::{burst_reply, Request};

/// The grade's verdict.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// The defects, exactly.
    Exact,
    /// Not the defects, but what the trainee ran cannot tell the diagnosis
    /// from them: credit, with the group shown.
    WithinGroup,
    /// The right nets or parts, the wrong kind of defect.
    PartlyRight,
    /// None of the above.
    Wrong,
}

impl Verdict {
    /// In words, for reports.
    pub fn words(self) -> &'static str {
        match self {
            Verdict::Exact => "exact",
            Verdict::WithinGroup => "within the ambiguity group of what you ran",
            Verdict::PartlyRight => "partly right: the right places, another kind of defect",
            Verdict::Wrong => "wrong",
        }
    }

    /// Points out of 100.
    pub fn points(self) -> u32 {
        match self {
            Verdict::Exact => 100,
            Verdict::WithinGroup => 80,
            Verdict::PartlyRight => 40,
            Verdict::Wrong => 0,
        }
    }
}

/// What grading found.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Grade {
    /// The verdict.
    pub verdict: Verdict,
    /// The single faults of the fault universe that give the same TDO as
    /// the answer on every request the trainee sent (for a one-defect
    /// exercise whose defect those requests saw; repair words), at most
    /// [`GROUP_SHOWN`].
    pub group: Vec<String>,
    /// How many faults the group holds in all.
    pub group_size: usize,
    /// TDO bits of the trainee's scans that differ from the board as designed.
    pub differing_bits: u64,
    /// Those bits placed on nets: net → count (boundary cells only).
    pub differing_nets: Vec<(String, u64)>,
}

/// Group members a grade lists.
pub const GROUP_SHOWN: usize = 40;

/// Grades `submitted` against `answer` on `design` through `record`.
pub fn grade(
    design: &LoadedBoard,
    answer: &[DefectSpec],
    submitted: &[DefectSpec],
    record: &[Recorded],
) -> Grade {
    let build = |defects: &[DefectSpec]| -> Option<Board> {
        if defects.is_empty() {
            return Some(design.board.clone());
        }
        let mut source = virtual_board::bsdl_files_beside(&design.path);
        design
            .with_defects(defects, &mut source)
            .ok()
            .map(|b| b.board)
    };
    let reference = build(answer).map(|b| replay(b, record));
    let good = replay(design.board.clone(), record);
    let same = |defects: &[DefectSpec]| -> bool {
        match (&reference, build(defects)) {
            (Some(r), Some(b)) => replay(b, record) == *r,
            _ => false,
        }
    };
    let canon = |d: &[DefectSpec]| -> BTreeSet<String> { d.iter().map(canonical).collect() };
    // What the trainee ran saw the defect at all (otherwise every fault it
    // misses would be "within the group": no credit for that).
    let detected = reference.as_ref().is_some_and(|r| *r != good);
    let verdict = if canon(submitted) == canon(answer) {
        Verdict::Exact
    } else if detected && !submitted.is_empty() && same(submitted) {
        Verdict::WithinGroup
    } else if !submitted.is_empty() && places(design, submitted) == places(design, answer) {
        Verdict::PartlyRight
    } else {
        Verdict::Wrong
    };
    let (mut group, mut group_size) = (Vec::new(), 0);
    if answer.len() == 1 && detected {
        let mut faults: Vec<(DefectSpec, String)> = universe(design, &UniverseOptions::default())
            .into_iter()
            .filter(|f| f.untestable.is_none())
            .map(|f| (f.defect, f.label))
            .collect();
        if !faults
            .iter()
            .any(|(d, _)| canonical(d) == canonical(&answer[0]))
        {
            faults.push((answer[0].clone(), answer[0].describe()));
        }
        for (d, label) in faults {
            if same(std::slice::from_ref(&d)) {
                group_size += 1;
                if group.len() < GROUP_SHOWN {
                    group.push(label);
                }
            }
        }
    }
    let (differing_bits, differing_nets) = match &reference {
        Some(r) => evidence(design, record, &good, r),
        None => (0, Vec::new()),
    };
    Grade {
        verdict,
        group,
        group_size,
        differing_bits,
        differing_nets,
    }
}

/// TDO of every recorded request, in order (`None` where the board refused).
fn replay(mut board: Board, record: &[Recorded]) -> Vec<Option<Bits>> {
    let powered = board.clone();
    record
        .iter()
        .map(|r| match &r.request {
            Request::Burst {
                port,
                tms,
                tdi,
                trst_n,
            } => match burst_reply(&mut board, usize::from(*port), tms, tdi, trst_n) {
                Ok(crate::remote::Reply::Burst { tdo, driven }) => Some(masked(&tdo, &driven)),
                _ => None,
            },
            Request::Shift { port, tdi } => board.shift(usize::from(*port), tdi).ok(),
            Request::Idle { port, tms, count } => board
                .idle(usize::from(*port), *tms, *count)
                .ok()
                .map(|()| Bits::zeros(0)),
            Request::Trst { port, asserted } => board
                .set_trst(usize::from(*port), *asserted)
                .ok()
                .map(|()| Bits::zeros(0)),
            Request::Reset => {
                board = powered.clone();
                Some(Bits::zeros(0))
            }
            _ => Some(Bits::zeros(0)),
        })
        .collect()
}

/// TDO where it was driven (high-impedance periods read 1 either way).
fn masked(tdo: &Bits, driven: &Bits) -> Bits {
    let mut out = tdo.clone();
    for i in 0..tdo.len() {
        if !driven.get(i) {
            out.set(i, true);
        }
    }
    out
}

/// How many TDO bits differ from the board as designed, and the nets of
/// those from whole DR scans of boundary registers (placed with the
/// design's layout at the time of the scan).
fn evidence(
    design: &LoadedBoard,
    record: &[Recorded],
    good: &[Option<Bits>],
    seen: &[Option<Bits>],
) -> (u64, Vec<(String, u64)>) {
    let mut board = design.board.clone();
    let mut nets: std::collections::BTreeMap<String, u64> = Default::default();
    let mut bits = 0u64;
    for (k, r) in record.iter().enumerate() {
        let (g, s) = (
            good.get(k).cloned().flatten(),
            seen.get(k).cloned().flatten(),
        );
        let layout = match (&r.request, r.state) {
            (Request::Shift { port, .. }, Some(virtual_board::TapState::ShiftDr)) => {
                board.scan_layout(usize::from(*port), false)
            }
            _ => None,
        };
        if let (Some(g), Some(s)) = (&g, &s) {
            let differing: Vec<usize> = (0..g.len().min(s.len()))
                .filter(|&i| g.get(i) != s.get(i))
                .collect();
            bits += differing.len() as u64;
            if let Some(segments) = layout {
                for i in differing {
                    if let Some(net) = net_at(&segments, i) {
                        *nets.entry(net).or_default() += 1;
                    }
                }
            }
        }
        // Move the design board along so later layouts follow the instructions.
        match &r.request {
            Request::Burst {
                port,
                tms,
                tdi,
                trst_n,
            } => {
                let _ = burst_reply(&mut board, usize::from(*port), tms, tdi, trst_n);
            }
            Request::Shift { port, tdi } => {
                let _ = board.shift(usize::from(*port), tdi);
            }
            Request::Idle { port, tms, count } => {
                let _ = board.idle(usize::from(*port), *tms, *count);
            }
            Request::Trst { port, asserted } => {
                let _ = board.set_trst(usize::from(*port), *asserted);
            }
            Request::Reset => board = design.board.clone(),
            _ => {}
        }
    }
    (bits, nets.into_iter().collect())
}

/// The net of bit `i` of a DR scan (bit 0 nearest TDO, first out).
fn net_at(segments: &[virtual_board::PathSegment], i: usize) -> Option<String> {
    let mut offset = 0;
    for s in segments {
        if i < offset + s.length {
            return s.cells.get(i - offset).and_then(|c| c.net.clone());
        }
        offset += s.length;
    }
    None
}

/// A defect in a form where two ways of writing the same defect agree (a
/// short's nets sorted, its resolution left out; a wrong part by place).
pub fn canonical(d: &DefectSpec) -> String {
    if let Some(nets) = &d.short {
        let mut n = nets.clone();
        n.sort();
        return format!("short {}", n.join(" "));
    }
    if let Some(w) = &d.wrong_device {
        return format!("wrong-device {w}");
    }
    let v = d.value.unwrap_or(0);
    let named = [
        ("open", &d.open, false),
        ("stuck", &d.stuck, true),
        ("broken-link", &d.broken_link, false),
        ("tdo-stuck", &d.tdo_stuck, true),
        ("tms-open", &d.tms_open, false),
        ("tck-open", &d.tck_open, false),
        ("trst-stuck", &d.trst_stuck, false),
        ("dead", &d.dead, false),
    ];
    named
        .iter()
        .find_map(|(kind, x, valued)| {
            x.as_ref().map(|x| match valued {
                true => format!("{kind} {x} {v}"),
                false => format!("{kind} {x}"),
            })
        })
        .unwrap_or_default()
}

/// The nets and parts a diagnosis names, a pin `U1.17` as the net it is on.
fn places(design: &LoadedBoard, defects: &[DefectSpec]) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    for d in defects {
        for name in names_in(d) {
            out.insert(net_of_pin(design, &name).unwrap_or(name));
        }
    }
    out
}

/// The net a pin written `DEVICE.PIN` sits on.
fn net_of_pin(design: &LoadedBoard, name: &str) -> Option<String> {
    let (device, pin) = name.split_once('.')?;
    design
        .board
        .nets()
        .iter()
        .find(|n| n.pins.iter().any(|p| p.device == device && p.pin == pin))
        .map(|n| n.members.first().cloned().unwrap_or_else(|| n.name.clone()))
}
