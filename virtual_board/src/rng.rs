//! `Rng`: a small seeded generator for the model's deliberately arbitrary values.
//!
//! SplitMix64 (S. Vigna's public-domain finaliser): tiny, fast, and the same
//! sequence on every platform, so a seeded run repeats exactly.

/// A seeded SplitMix64 generator.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Rng {
        Rng(seed)
    }

    /// The next 64 random bits.
    #[inline]
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// One random bit.
    #[inline]
    pub fn bit(&mut self) -> bool {
        self.next_u64() & 1 == 1
    }
}

/// Mixes a name into a seed, so each device of a board gets its own stream.
pub fn seed_for(seed: u64, name: &str) -> u64 {
    name.bytes().fold(seed ^ 0xA076_1D64_78BD_642F, |h, b| {
        (h ^ b as u64).wrapping_mul(0x0000_0100_0000_01B3)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_sequence() {
        let a: Vec<u64> = (0..4)
            .scan(Rng::new(7), |r, _| Some(r.next_u64()))
            .collect();
        let b: Vec<u64> = (0..4)
            .scan(Rng::new(7), |r, _| Some(r.next_u64()))
            .collect();
        assert_eq!(a, b);
        assert_ne!(a[0], a[1]);
        assert_ne!(seed_for(1, "U1"), seed_for(1, "U2"));
    }

    // S. Vigna's reference SplitMix64 (splitmix64.c, public domain) seeded
    // with 0 gives these first three outputs (from memory of its published
    // test values). Equal here means the same sequence on every platform
    // and release, since the generator is ours and not a crate's.
    #[test]
    fn seed_zero_gives_the_reference_splitmix64_sequence() {
        let mut r = Rng::new(0);
        assert_eq!(r.next_u64(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(r.next_u64(), 0x6E78_9E6A_A1B9_65F4);
        assert_eq!(r.next_u64(), 0x06C4_5D18_8009_454F);
    }
}
