//! Net-level faults 64 to a machine word: each bit of a word is one faulty
//! board.
//!
//! The commonest faults — a net stuck at 0 or 1, an open net, a short of two
//! nets with a strong driver in every compared scan — change only the level
//! of the nets they touch, and that level is a few logic operations on the
//! good run's net snapshots (one snapshot before each compared scan). They
//! are evaluated in batches of up to 64 lanes, one faulty board each:
//!
//! - the good run is kept net-major: for every net one bit per snapshot for
//!   its value, for "strongly driven" and for "in a fight", and for its
//!   compared bits (one row per bit the net has in a scan) the snapshots that
//!   have one and their good values;
//! - shorts are grouped by their first net A: a batch fixes A and takes up to
//!   64 partners B. For each block of 64 snapshots the partners' rows are
//!   transposed net-major → vector-major (a 64 × 64 bit-matrix transpose),
//!   so one word holds every partner's value (or strength) in one snapshot,
//!   and the faulty level of all 64 boards is one run of word operations
//!   per snapshot (wired-AND, wired-OR, a dominant net), A's bit broadcast;
//! - stuck-at and open nets are lanes of constant level, in batches of
//!   their own;
//! - the level words are transposed back to one row per board, and a
//!   board's flips are its nets' compared bits where that row differs from
//!   the good value: an XOR and an AND per 64 snapshots, then the set bits.
//!
//! A fault this module does not take (an open pin, a net that other parts
//! follow, a short resolved from its members' pads, three or more nets,
//! malformed entries) goes to the scalar [`FastModel::flips`]. For a fault
//! it takes, the answer equals `FastModel::flips` bit for bit:
//! `harness/tests/bit_parallel_campaign.rs` checks that, and checks both
//! against the cycle-level reference, on random boards and programs.

use virtual_board::{FloatPolicy, Strength};

use super::FastModel;
use crate::campaign::universe::Fault;
use rayon::prelude::*;

use crate::campaign::workers::on_threads;

/// Lanes in a batch: the bits of a word.
const LANES: usize = 64;

/// How a lane's nets read under its fault.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Kind {
    /// At one level in every snapshot: stuck-at, or an open net at its
    /// pull or float level.
    Level(bool),
    /// Shorted to the batch's shared net without a dominant net: strong
    /// drivers that agree give their level, disagreeing ones the rule's
    /// (`true`: wired-OR).
    Wired(bool),
    /// Shorted to the shared net, whose strong drivers win.
    SharedWins,
    /// Shorted to the shared net; the lane's own net's strong drivers win.
    OwnWins,
}

/// One fault as a lane of a batch.
#[derive(Clone, Copy, Debug)]
struct Lane {
    /// The net every lane of the batch touches (a short's first net).
    shared: Option<u32>,
    /// The lane's own net.
    net: u32,
    /// How its nets read.
    kind: Kind,
}

/// The good run kept net-major for the word evaluation.
struct Words<'m> {
    model: &'m FastModel,
    /// Blocks of 64 snapshots.
    blocks: usize,
    /// Per block: the snapshots it holds (bit `s` is snapshot `64 × block + s`).
    valid: Vec<u64>,
    /// Per net and block (`net × blocks + block`): the net's value in each
    /// snapshot.
    value: Vec<u64>,
    /// Per net and block: a strong driver holds the net.
    strong: Vec<u64>,
    /// Per net and block: strong drivers disagree on the net.
    fight: Vec<u64>,
    /// Per net and block: the net has a compared bit in the snapshot.
    compared: Vec<u64>,
    /// Net `n`'s rows are `rows[n]..rows[n + 1]`; row `r` of a net holds
    /// the r-th compared bit the net has in each snapshot.
    rows: Vec<u32>,
    /// Per row and block: the snapshots where the row has a bit.
    has: Vec<u64>,
    /// Per row and block: the good value of that bit.
    good: Vec<u64>,
    /// Row `r`'s bits are `positions[row_bits[r]..row_bits[r + 1]]`, their
    /// positions in the response in snapshot order.
    row_bits: Vec<u32>,
    /// The positions of every row's bits.
    positions: Vec<u32>,
}

/// A word with every bit equal to `bit` (0 or 1).
fn spread(bit: u64) -> u64 {
    0u64.wrapping_sub(bit & 1)
}

/// Transposes a 64 × 64 bit matrix in place: bit `c` of row `r` goes to
/// bit `r` of row `c` (bit 0 is the least significant). Six rounds of
/// block swaps, halving the block each round (common practice; the 32 × 32
/// form is in H. S. Warren, Hacker's Delight, section 7-3, from memory).
fn transpose64(a: &mut [u64; 64]) {
    let mut j = 32;
    let mut m: u64 = 0x0000_0000_FFFF_FFFF;
    while j != 0 {
        let mut k = 0;
        while k < 64 {
            let t = ((a[k] >> j) ^ a[k + j]) & m;
            a[k] ^= t << j;
            a[k + j] ^= t;
            k = (k + j + 1) & !j;
        }
        j >>= 1;
        m ^= m << j;
    }
}

impl<'m> Words<'m> {
    /// The model's snapshots and compared bits, net-major.
    fn new(model: &'m FastModel) -> Words<'m> {
        let nets = model.pull.len();
        let snaps = model.snaps.len();
        let blocks = snaps.div_ceil(64);
        let valid = (0..blocks)
            .map(|w| match snaps - w * 64 {
                n if n >= 64 => u64::MAX,
                n => (1u64 << n) - 1,
            })
            .collect();
        let mut value = vec![0u64; nets * blocks];
        let mut strong = vec![0u64; nets * blocks];
        let mut fight = vec![0u64; nets * blocks];
        for (s, snap) in model.snaps.iter().enumerate() {
            let (w, bit) = (s / 64, 1u64 << (s % 64));
            for (n, x) in snap.iter().enumerate().take(nets) {
                let at = n * blocks + w;
                if x.value {
                    value[at] |= bit;
                }
                if x.strength == Strength::Strong {
                    strong[at] |= bit;
                }
                if x.fight {
                    fight[at] |= bit;
                }
            }
        }
        let mut compared = vec![0u64; nets * blocks];
        let mut rows = Vec::with_capacity(nets + 1);
        let (mut has, mut good) = (Vec::new(), Vec::new());
        let (mut row_bits, mut positions) = (vec![0u32], Vec::new());
        let mut rank = Vec::new();
        for n in 0..nets {
            rows.push((row_bits.len() - 1) as u32);
            let list = model.bits_of_net.get(&n).map_or(&[][..], Vec::as_slice);
            // The rank of each bit among the net's bits in its snapshot
            // (bits come in scan order, so snapshots never go back).
            rank.clear();
            let mut prev = usize::MAX;
            let mut r = 0usize;
            for &k in list {
                let s = model.bits[k as usize].0;
                r = if s == prev { r + 1 } else { 0 };
                prev = s;
                rank.push(r);
            }
            let count = rank.iter().max().map_or(0, |m| m + 1);
            for r in 0..count {
                let base = has.len();
                has.resize(base + blocks, 0u64);
                good.resize(base + blocks, 0u64);
                for (&k, _) in list.iter().zip(&rank).filter(|(_, &q)| q == r) {
                    let s = model.bits[k as usize].0;
                    has[base + s / 64] |= 1u64 << (s % 64);
                    compared[n * blocks + s / 64] |= 1u64 << (s % 64);
                    if model.good.get(k as usize) {
                        good[base + s / 64] |= 1u64 << (s % 64);
                    }
                    positions.push(k);
                }
                row_bits.push(positions.len() as u32);
            }
        }
        rows.push((row_bits.len() - 1) as u32);
        Words {
            model,
            blocks,
            valid,
            value,
            strong,
            fight,
            compared,
            rows,
            has,
            good,
            row_bits,
            positions,
        }
    }

    /// Every snapshot where `a` or `b` has a compared bit has a strong
    /// driver on one of them, and no fight on either: the short's level is
    /// the strong drivers' (else the scalar path resolves it from the
    /// members' pads).
    fn strongly_held(&self, a: usize, b: usize) -> bool {
        (0..self.blocks).all(|w| {
            let (x, y) = (a * self.blocks + w, b * self.blocks + w);
            let seen = self.compared[x] | self.compared[y];
            (self.strong[x] | self.strong[y]) & seen == seen
                && (self.fight[x] | self.fight[y]) & seen == 0
        })
    }

    /// The fault as a lane, or `None` where the scalar path answers. The
    /// branches follow [`FastModel::flips`] in its order, so a fault takes
    /// the kind of answer there that it would take here.
    fn lane(&self, fault: &Fault) -> Option<Lane> {
        let m = self.model;
        let d = &fault.defect;
        let net = |n: &str| m.names.get(n).copied();
        if let (Some(n), Some(v)) = (d.stuck.as_deref().and_then(net), d.value) {
            if m.feeds.contains(&n) {
                return None;
            }
            return Some(Lane {
                shared: None,
                net: n as u32,
                kind: Kind::Level(v == 1),
            });
        }
        if let Some(n) = d.open.as_deref().and_then(net) {
            if m.feeds.contains(&n) || m.cluster_driven.contains(&n) {
                return None;
            }
            // As `open_net_flips`: the cut net reads its pull, else its
            // float level (a `previous` float: the power-up 0).
            let rest = match (m.pull[n], m.float[n]) {
                (Some(p), _) => p,
                (None, FloatPolicy::High) => true,
                (None, FloatPolicy::Low | FloatPolicy::Previous) => false,
                (None, FloatPolicy::Random) => return None,
            };
            return Some(Lane {
                shared: None,
                net: n as u32,
                kind: Kind::Level(rest),
            });
        }
        if d.open.as_deref().is_some_and(|p| m.pins.contains_key(p)) {
            return None;
        }
        let [a, b] = d.short.as_deref()? else {
            return None;
        };
        let (a, b) = (net(a)?, net(b)?);
        if a == b || m.feeds.contains(&a) || m.feeds.contains(&b) || !self.strongly_held(a, b) {
            return None;
        }
        let kind = match d.dominant.as_deref().and_then(net) {
            None => Kind::Wired(d.behaviour.unwrap_or(m.short_rule).resolve()),
            Some(x) if x == a => Kind::SharedWins,
            Some(x) if x == b => Kind::OwnWins,
            Some(_) => return None,
        };
        Some(Lane {
            shared: Some(a as u32),
            net: b as u32,
            kind,
        })
    }

    /// The faulty level of every lane's nets, one row of `blocks` words per
    /// lane (bit `s`: snapshot `s` of the block). All lanes share one
    /// `shared` net.
    fn levels(&self, lanes: &[Lane]) -> Vec<u64> {
        let blocks = self.blocks;
        let mut rows = vec![0u64; lanes.len() * blocks];
        // Which lanes are of which kind, and their levels: one bit a lane.
        let (mut level, mut high, mut wired, mut wired_high, mut shared_wins, mut own_wins) =
            (0u64, 0u64, 0u64, 0u64, 0u64, 0u64);
        for (j, l) in lanes.iter().enumerate() {
            let bit = 1u64 << j;
            match l.kind {
                Kind::Level(v) => {
                    level |= bit;
                    high |= spread(u64::from(v)) & bit;
                }
                Kind::Wired(v) => {
                    wired |= bit;
                    wired_high |= spread(u64::from(v)) & bit;
                }
                Kind::SharedWins => shared_wins |= bit,
                Kind::OwnWins => own_wins |= bit,
            }
        }
        let shared = lanes.first().and_then(|l| l.shared).map(|a| a as usize);
        debug_assert!(lanes.iter().all(|l| l.shared.map(|a| a as usize) == shared));
        if wired | shared_wins | own_wins == 0 {
            // Constant levels only: no snapshot to look at.
            for (j, row) in rows.chunks_mut(blocks.max(1)).enumerate().take(lanes.len()) {
                for (w, word) in row.iter_mut().enumerate() {
                    *word = self.valid[w] & spread(high >> j);
                }
            }
            return rows;
        }
        for w in 0..blocks {
            // Net-major → vector-major: word `s` holds every lane's net in
            // snapshot `s`.
            let mut value = [0u64; LANES];
            let mut strong = [0u64; LANES];
            for (j, l) in lanes.iter().enumerate() {
                value[j] = self.value[l.net as usize * blocks + w];
                strong[j] = self.strong[l.net as usize * blocks + w];
            }
            transpose64(&mut value);
            transpose64(&mut strong);
            let (a_value, a_strong) = shared.map_or((0, 0), |a| {
                (self.value[a * blocks + w], self.strong[a * blocks + w])
            });
            let mut out = [0u64; LANES];
            for (s, word) in out
                .iter_mut()
                .enumerate()
                .take(self.valid[w].count_ones() as usize)
            {
                let (va, sa) = (spread(a_value >> s), spread(a_strong >> s));
                let (vb, sb) = (value[s], strong[s]);
                let agree = !(va ^ vb);
                // The strong drivers' level; both strong and disagreeing:
                // the rule's; none strong: 0 (never, on a lane: see
                // `strongly_held`).
                let wired_level = (sa & sb & ((agree & va) | (!agree & wired_high)))
                    | (sa & !sb & va)
                    | (!sa & sb & vb);
                let shared_level = (sa & va) | (!sa & sb & vb);
                let own_level = (sb & vb) | (!sb & sa & va);
                *word = (level & high)
                    | (wired & wired_level)
                    | (shared_wins & shared_level)
                    | (own_wins & own_level);
            }
            // Vector-major → one row per lane.
            transpose64(&mut out);
            for (j, &word) in out.iter().enumerate().take(lanes.len()) {
                rows[j * blocks + w] = word & self.valid[w];
            }
        }
        rows
    }

    /// A lane's flips: the compared bits of its nets where `level` (its row
    /// from [`Words::levels`]) differs from the good value, in order.
    fn flips(&self, lane: &Lane, level: &[u64]) -> Vec<u32> {
        let blocks = self.blocks;
        let mut out = Vec::new();
        let mut rows_read = 0;
        for n in lane.shared.into_iter().chain(std::iter::once(lane.net)) {
            let n = n as usize;
            for row in self.rows[n] as usize..self.rows[n + 1] as usize {
                rows_read += 1;
                let mut before = self.row_bits[row] as usize;
                for (w, &l) in level.iter().enumerate().take(blocks) {
                    let has = self.has[row * blocks + w];
                    let mut differ = (l ^ self.good[row * blocks + w]) & has;
                    while differ != 0 {
                        let s = differ.trailing_zeros();
                        let below = has & ((1u64 << s) - 1);
                        out.push(self.positions[before + below.count_ones() as usize]);
                        differ &= differ - 1;
                    }
                    before += has.count_ones() as usize;
                }
            }
        }
        // One row is in order already; several interleave.
        if rows_read > 1 {
            out.sort_unstable();
        }
        out
    }
}

/// Batches a worker takes at a time.
const BATCHES: usize = 32;

/// The flips of every fault of `faults` that the word evaluation takes, in
/// the faults' order (`None`: left to [`FastModel::flips`] or the
/// reference; untestable faults are never taken), on the current thread
/// pool.
pub(in crate::campaign) fn word_flips(
    model: &FastModel,
    faults: &[Fault],
) -> Vec<Option<Vec<u32>>> {
    let words = Words::new(model);
    let mut lanes: Vec<Option<Lane>> = Vec::with_capacity(faults.len());
    faults
        .par_iter()
        .map(|f| f.untestable.is_none().then(|| words.lane(f)).flatten())
        .collect_into_vec(&mut lanes);
    // Batches: the constant-level lanes in the faults' order, then the
    // shorts by their shared net (a counting sort), 64 at most to a batch.
    let key = |l: &Lane| l.shared.map_or(0, |a| a as usize + 1);
    let mut start = vec![0usize; model.pull.len() + 2];
    for l in lanes.iter().flatten() {
        start[key(l) + 1] += 1;
    }
    for k in 1..start.len() {
        start[k] += start[k - 1];
    }
    let taken = start[start.len() - 1];
    let mut order: Vec<(u32, Lane)> = vec![
        (
            0,
            Lane {
                shared: None,
                net: 0,
                kind: Kind::Level(false),
            }
        );
        taken
    ];
    let mut next = start.clone();
    for (i, l) in lanes.iter().enumerate() {
        if let Some(l) = l {
            order[next[key(l)]] = (i as u32, *l);
            next[key(l)] += 1;
        }
    }
    let mut batches: Vec<(usize, usize)> = Vec::new();
    for k in 0..start.len() - 1 {
        let mut b = start[k];
        while b < start[k + 1] {
            let e = (b + LANES).min(start[k + 1]);
            batches.push((b, e));
            b = e;
        }
    }
    let done: Vec<Vec<(u32, Vec<u32>)>> = batches
        .par_chunks(BATCHES)
        .map(|some| {
            let mut got = Vec::new();
            let mut lanes = Vec::with_capacity(LANES);
            for &(b, e) in some {
                lanes.clear();
                lanes.extend(order[b..e].iter().map(|x| x.1));
                let levels = words.levels(&lanes);
                for (j, lane) in lanes.iter().enumerate() {
                    let row = &levels[j * words.blocks..(j + 1) * words.blocks];
                    got.push((order[b + j].0, words.flips(lane, row)));
                }
            }
            got
        })
        .collect();
    let mut out: Vec<Option<Vec<u32>>> = vec![None; faults.len()];
    for (i, flips) in done.into_iter().flatten() {
        out[i as usize] = Some(flips);
    }
    out
}

impl FastModel {
    /// The flips of every fault of `faults` that the bit-parallel
    /// evaluation takes, 64 faulty boards to a machine word (`None`: a
    /// fault it leaves to [`FastModel::flips`] or to the reference). Where
    /// it answers, the answer equals [`FastModel::flips`].
    /// Runs on `jobs` threads.
    pub fn flips_in_words(&self, faults: &[Fault], jobs: usize) -> Vec<Option<Vec<u32>>> {
        on_threads(jobs, || word_flips(self, faults))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn transpose_moves_every_bit_across_the_diagonal() {
        let mut rng = virtual_board::Rng::new(7);
        let before: [u64; 64] = std::array::from_fn(|_| rng.next_u64());
        let mut after = before;
        transpose64(&mut after);
        for (r, row) in before.iter().enumerate() {
            for (c, column) in after.iter().enumerate() {
                assert_eq!((column >> r) & 1, (row >> c) & 1, "row {r} column {c}");
            }
        }
        transpose64(&mut after);
        assert_eq!(after, before);
    }

    #[test]
    fn spread_fills_a_word_with_one_bit() {
        assert_eq!(spread(0), 0);
        assert_eq!(spread(1), u64::MAX);
        assert_eq!(spread(0b10), 0);
        assert_eq!(spread(0b11), u64::MAX);
    }
}
