//! Nets that only non-scan parts drive, checked through them: in each vector
//! the level a cluster (buffer, inverter, gate, three-state buffer,
//! transceiver, series resistor) gives its output from the levels the test
//! puts on its inputs is expected at the output net's scan receivers.
//!
//! A net qualifies when no scan cell can drive it, it is no rail, a scan
//! cell reads it, and every cluster output on it is worked out from nets
//! whose level is known in every vector: coded nets (their code), static
//! nets (their pull or rail) and, in turn, other nets of this kind. Where
//! no cluster drives it in a vector (a three-state buffer disabled by its
//! coded enable), the net's pull gives the level; with no pull it floats
//! and that vector does not compare it. Where a cluster input floats, or
//! two cluster outputs disagree, the vector does not compare it either.
//!
//! This is how a cluster test is written by hand, common practice: drive
//! the inputs from scan cells, read the far side, with the part's truth
//! table as the expectation.

use std::collections::BTreeMap;

use serde::Serialize;
use virtual_board::{Board, ClusterKind, PinName};

use super::interconnect::receivers_of;

/// A net checked through the non-scan parts that drive it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct ClusterNet {
    /// Net name.
    pub net: String,
    /// The clusters whose outputs drive it.
    pub through: Vec<String>,
    /// The level expected in each vector, vector 1 first; `None`: not
    /// compared (the net floats, or two outputs disagree).
    pub expect: Vec<Option<bool>>,
    /// The pins that read it, with their TAP ports.
    pub receivers: Vec<(PinName, String)>,
}

/// The nets checked through clusters, given the level every coded or
/// static net holds in each of `vectors` vectors (`known`, by net index).
/// Nets no vector can compare are left out.
pub(super) fn cluster_nets(
    board: &Board,
    known: &BTreeMap<usize, Vec<bool>>,
    vectors: usize,
    port_of: &dyn Fn(usize) -> String,
) -> Vec<ClusterNet> {
    let nets = board.nets();
    let candidates: Vec<usize> = (0..nets.len())
        .filter(|&i| {
            let n = &nets[i];
            n.rail.is_none()
                && n.drivers.is_empty()
                && !n.cluster_drivers.is_empty()
                && !n.receivers.is_empty()
                && !known.contains_key(&i)
        })
        .collect();
    // Levels per vector of the nets worked out so far (`None`: floats).
    let mut derived: BTreeMap<usize, Vec<Option<bool>>> = BTreeMap::new();
    // A cluster chain is worked out front to back: repeat while a net of
    // the list becomes known (at most once per net).
    loop {
        let before = derived.len();
        for &i in &candidates {
            if derived.contains_key(&i) {
                continue;
            }
            if let Some(levels) = levels_of(board, i, known, &derived, vectors) {
                derived.insert(i, levels);
            }
        }
        if derived.len() == before {
            break;
        }
    }
    candidates
        .into_iter()
        .filter_map(|i| {
            let expect = derived.remove(&i)?;
            if expect.iter().all(Option::is_none) {
                return None;
            }
            let n = &nets[i];
            let mut through: Vec<String> = n
                .cluster_drivers
                .iter()
                .map(|&(c, _)| board.clusters()[c].name.clone())
                .collect();
            through.dedup();
            Some(ClusterNet {
                net: n.name.clone(),
                through,
                expect,
                receivers: receivers_of(n, port_of),
            })
        })
        .collect()
}

/// Net `i`'s level in each vector, when every cluster input it depends on
/// is known; `None` when one is not (yet).
fn levels_of(
    board: &Board,
    i: usize,
    known: &BTreeMap<usize, Vec<bool>>,
    derived: &BTreeMap<usize, Vec<Option<bool>>>,
    vectors: usize,
) -> Option<Vec<Option<bool>>> {
    let net = &board.nets()[i];
    let mut out = Vec::with_capacity(vectors);
    for k in 0..vectors {
        let mut driven: Option<bool> = None;
        // A floating input, or two outputs that disagree: not compared.
        let mut unsure = false;
        for &(c, o) in &net.cluster_drivers {
            let cluster = &board.clusters()[c];
            let mut inputs = Vec::with_capacity(cluster.inputs.len());
            for (x, pin) in cluster.inputs.iter().enumerate() {
                if own_side(cluster.kind, o, x) {
                    // A transceiver's side reads the net it drives; that
                    // level does not decide what the side drives.
                    inputs.push(None);
                    continue;
                }
                let n = pin.net? as usize;
                let level = match (known.get(&n), derived.get(&n)) {
                    (Some(code), _) => Some(code[k]),
                    (None, Some(levels)) => levels[k],
                    (None, None) => return None,
                };
                unsure |= level.is_none();
                inputs.push(level);
            }
            if let Some(v) = cluster.output(o, &inputs) {
                unsure |= driven.is_some_and(|d| d != v);
                driven = Some(v);
            }
        }
        out.push(if unsure { None } else { driven.or(net.pull) });
    }
    Some(out)
}

/// True for a transceiver's input `x` that is the same side as output `o`
/// (inputs a, b, dir, enable; outputs a, b).
fn own_side(kind: ClusterKind, o: usize, x: usize) -> bool {
    kind == ClusterKind::Transceiver && x == o
}
