//! A quick hasher for the campaign's tables of flips lists (the ambiguity
//! groups of a million faults): a multiply-and-rotate mix, a word at a time
//! (the scheme of the Firefox and rustc "Fx" hash, common practice). Not for
//! keys an adversary picks: the lists come from the campaign itself.

use std::hash::{BuildHasherDefault, Hasher};

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
pub(super) type BuildFlipsHasher = BuildHasherDefault<FlipsHasher>;

#[cfg(test)]
mod tests {
    use super::*;
    use std::hash::{BuildHasher, Hash};

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
}
