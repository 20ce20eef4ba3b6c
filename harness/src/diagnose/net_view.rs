//! The net-level view of a good run: the net states ("vectors") under which
//! the compared bits were captured, each net's code over those vectors, and
//! the net and receiving pin each compared bit reads.
//!
//! An interconnect test gives every net a code, one bit per parallel vector
//! (W. H. Kautz, "Testing for faults in wiring networks", IEEE Trans.
//! Computers, 1974). Here the codes are read back from the board itself: the
//! level each net holds before each capturing scan, and whether a strong
//! driver holds it there. Scans captured under the same net states (the
//! capture scans of one vector on several TAP ports) share one vector.

use std::collections::HashMap;

use virtual_board::{Bits, Board, LoadedBoard, Strength};

use super::good_run::{compares, good_run};
use crate::program::{Action, Program};
use crate::run::{locate, RunReport};

/// What one compared bit reads.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BitRead {
    /// The vector it was captured under.
    pub vector: usize,
    /// The net (board index).
    pub net: usize,
    /// The receiving pin, `designator.pin`.
    pub pin: String,
}

/// Nets' codes and the compared bits' places.
#[derive(Clone, Debug, Default)]
pub struct NetView {
    /// Number of distinct vectors.
    pub vectors: usize,
    /// Per net: its level in each vector.
    pub value: Vec<Bits>,
    /// Per net: 1 where a strong driver holds it in that vector.
    pub strong: Vec<Bits>,
    /// Per compared bit (response order): the net it reads, `None` for a
    /// bit that reads no net (IR, BYPASS, IDCODE, an output cell).
    pub bits: Vec<Option<BitRead>>,
}

/// Cell functions whose capture reads the pin in EXTEST.
const READS_PIN: [&str; 4] = ["INPUT", "CLOCK", "OBSERVE_ONLY", "BIDIR"];

fn snapshot(b: &Board) -> Vec<u8> {
    (0..b.nets().len())
        .map(|i| {
            u8::from(b.net_read(i).value) | (u8::from(b.net_strength(i) == Strength::Strong) << 1)
        })
        .collect()
}

impl NetView {
    /// Runs `program` on the good board, keeping the net states before every
    /// scan that compares. Returns the run and the view.
    pub fn build(loaded: &LoadedBoard, program: &Program) -> (RunReport, NetView) {
        let mut before: HashMap<usize, Vec<u8>> = HashMap::new();
        let good = good_run(loaded, program, &mut |i, b| {
            if compares(program, i) {
                before.insert(i, snapshot(b));
            }
        });
        // The k-th scan of the run is the k-th scan step (as the campaign's
        // fast model maps them).
        let scan_steps: Vec<usize> = program
            .steps
            .iter()
            .enumerate()
            .filter(|(_, s)| matches!(&s.action, Action::Scan(x) if !x.tdi.is_empty()))
            .map(|(i, _)| i)
            .collect();
        let b = &loaded.board;
        let index: HashMap<&str, usize> = b
            .nets()
            .iter()
            .enumerate()
            .flat_map(|(i, n)| {
                std::iter::once((n.name.as_str(), i))
                    .chain(n.members.iter().map(move |m| (m.as_str(), i)))
            })
            .collect();
        let mut ids: HashMap<&[u8], usize> = HashMap::new();
        let mut order: Vec<&[u8]> = Vec::new();
        let mut view = NetView::default();
        for (k, s) in good.scans.iter().enumerate() {
            let r = &s.record;
            let Some(mask) = r.mask.as_deref().and_then(|m| Bits::from_hex(m, r.length)) else {
                continue;
            };
            let snap = scan_steps.get(k).and_then(|st| before.get(st));
            // The scan's vector, numbered when its first bit reads a net.
            let mut scan_vector: Option<usize> = None;
            for i in (0..r.length).filter(|&i| mask.get(i)) {
                let read = snap.and_then(|snap| {
                    let (seg, c) = locate(s.layout.as_deref()?, i)?;
                    let cell = seg.cells.get(c)?;
                    if !READS_PIN
                        .iter()
                        .any(|f| cell.function.split('+').any(|x| x == *f))
                    {
                        return None;
                    }
                    let net = *index.get(cell.net.as_deref()?)?;
                    let vector = *scan_vector.get_or_insert_with(|| {
                        *ids.entry(snap.as_slice()).or_insert_with(|| {
                            order.push(snap.as_slice());
                            order.len() - 1
                        })
                    });
                    Some(BitRead {
                        vector,
                        net,
                        pin: format!("{}.{}", seg.device, cell.pin.as_deref().unwrap_or("?")),
                    })
                });
                view.bits.push(read);
            }
        }
        view.vectors = order.len();
        view.value = vec![Bits::zeros(order.len()); b.nets().len()];
        view.strong = vec![Bits::zeros(order.len()); b.nets().len()];
        for (v, snap) in order.iter().enumerate() {
            for (n, &x) in snap.iter().enumerate() {
                view.value[n].set(v, x & 1 == 1);
                view.strong[n].set(v, x & 2 == 2);
            }
        }
        (good, view)
    }
}
