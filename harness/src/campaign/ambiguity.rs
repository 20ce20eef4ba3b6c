//! Ambiguity groups: the detected faults with identical responses (flips
//! lists), counted in a hash table — split by hash over the machine's
//! threads for large campaigns — with a quick hasher: a multiply-and-rotate
//! mix, a word at a time (the scheme of the Firefox and rustc "Fx" hash,
//! common practice). Not for keys an adversary picks: the lists come from
//! the campaign itself.

use std::collections::{BTreeMap, HashMap};
use std::hash::{BuildHasher, BuildHasherDefault, Hasher};

use super::simulate::{AmbiguityGroups, FaultResult};

/// Below this many results, one thread counts the groups.
const ONE_THREAD: usize = 1 << 16;

/// The multiplier of the mix (an odd constant with well-spread bits, from
/// the golden ratio: common practice).
const K: u64 = 0x9e37_79b9_7f4a_7c15;

/// A word-at-a-time multiply-and-rotate hasher.
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct FlipsHasher(u64);

impl FlipsHasher {
    fn mix(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(5) ^ word).wrapping_mul(K);
    }
}

impl Hasher for FlipsHasher {
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for c in &mut chunks {
            let mut w = [0u8; 8];
            w.copy_from_slice(c);
            self.mix(u64::from_le_bytes(w));
        }
        let rest = chunks.remainder();
        if !rest.is_empty() {
            let mut w = [0u8; 8];
            w[..rest.len()].copy_from_slice(rest);
            self.mix(u64::from_le_bytes(w) ^ ((rest.len() as u64) << 59));
        }
    }

    fn write_usize(&mut self, n: usize) {
        self.mix(n as u64);
    }

    fn finish(&self) -> u64 {
        self.0
    }
}

/// Builds [`FlipsHasher`]s for a `HashMap`.
type BuildFlipsHasher = BuildHasherDefault<FlipsHasher>;

/// The ambiguity groups of the detected faults of `results`: how many
/// distinct responses, how many groups of each size, the largest.
pub(super) fn groups(results: &[FaultResult]) -> AmbiguityGroups {
    let parts = if results.len() < ONE_THREAD {
        1
    } else {
        std::thread::available_parallelism().map_or(1, |n| n.get().min(8))
    };
    let build = BuildFlipsHasher::default();
    // Group sizes → how many groups, over the responses whose hash falls in
    // part `p` (equal responses hash alike, so no group spans two parts).
    let sizes_of = |p: usize| -> BTreeMap<usize, usize> {
        let mut table: HashMap<&[u32], usize, BuildFlipsHasher> = HashMap::with_capacity_and_hasher(
            results.len() / parts + 1,
            BuildFlipsHasher::default(),
        );
        for r in results.iter().filter(|r| r.verdict == "detected") {
            let flips = r.flips.as_deref().unwrap_or(&[]);
            if parts == 1 || (build.hash_one(flips) >> 32) as usize % parts == p {
                *table.entry(flips).or_default() += 1;
            }
        }
        let mut sizes = BTreeMap::new();
        for &size in table.values() {
            *sizes.entry(size).or_default() += 1;
        }
        sizes
    };
    let each: Vec<BTreeMap<usize, usize>> = if parts == 1 {
        vec![sizes_of(0)]
    } else {
        std::thread::scope(|s| {
            let sizes_of = &sizes_of;
            let handles: Vec<_> = (0..parts).map(|p| s.spawn(move || sizes_of(p))).collect();
            handles
                .into_iter()
                .map(|h| h.join().unwrap_or_else(|e| std::panic::resume_unwind(e)))
                .collect()
        })
    };
    let mut out = AmbiguityGroups::default();
    for sizes in each {
        for (size, n) in sizes {
            *out.sizes.entry(size).or_default() += n;
            out.count += n;
            out.largest = out.largest.max(size);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::hash::Hash;

    fn hash(list: &[u32]) -> u64 {
        BuildFlipsHasher::default().hash_one(list)
    }

    #[test]
    fn lists_that_differ_hash_apart() {
        let lists: [&[u32]; 6] = [&[], &[0], &[1], &[0, 1], &[1, 0], &[0, 1, 2]];
        for (i, a) in lists.iter().enumerate() {
            for b in &lists[i + 1..] {
                assert_ne!(hash(a), hash(b), "{a:?} {b:?}");
            }
        }
        assert_eq!(hash(&[3, 4]), hash(&[3, 4]));
        let mut h = FlipsHasher::default();
        [7u32, 8].hash(&mut h);
        assert_eq!(h.finish(), hash(&[7, 8]));
    }

    fn result(verdict: &str, flips: &[u32]) -> FaultResult {
        FaultResult {
            fault: crate::campaign::Fault {
                class: crate::campaign::FaultClass::Stuck,
                defect: Default::default(),
                label: String::new(),
                untestable: None,
            },
            verdict: verdict.into(),
            reason: None,
            flips: Some(flips.to_vec()),
        }
    }

    #[test]
    fn groups_count_identical_responses_of_detected_faults() {
        // Worked by hand: {1} twice, {1, 2} three times, {3} once; the
        // undetected fault's empty list is no group.
        let results = [
            result("detected", &[1]),
            result("detected", &[1, 2]),
            result("undetected", &[]),
            result("detected", &[1]),
            result("detected", &[3]),
            result("detected", &[1, 2]),
            result("detected", &[1, 2]),
        ];
        let g = groups(&results);
        assert_eq!(g.count, 3);
        assert_eq!(g.sizes, BTreeMap::from([(1, 1), (2, 1), (3, 1)]));
        assert_eq!(g.largest, 3);
    }

    #[test]
    fn large_campaigns_split_by_hash_and_count_the_same() {
        // 70,000 detected faults over 1,000 responses, 70 each, and 5,000
        // undetected: over the one-thread limit.
        let mut results: Vec<FaultResult> = (0..70_000u32)
            .map(|i| result("detected", &[i % 1000, 5000]))
            .collect();
        results.extend((0..5000).map(|_| result("undetected", &[])));
        assert!(results.len() > ONE_THREAD);
        let g = groups(&results);
        assert_eq!(g.count, 1000);
        assert_eq!(g.sizes, BTreeMap::from([(70, 1000)]));
        assert_eq!(g.largest, 70);
    }
}
