//! Interconnect test methods: the published code sets that give every net its sequence of test values.
//!
//! A method gives each of N nets a *code*, the values the net is driven to
//! over the test; vector k of the test is bit k of every code (the
//! sequential and parallel test vectors of the interconnect-test papers).
//! [`codes`] returns them as vectors × nets.
//!
//! | method | codes | vectors | source |
//! |---|---|---|---|
//! | counting | 0 … N−1 | ⌈log2 N⌉ | W. H. Kautz, IEEE Trans. Computers, 1974 |
//! | modified counting | 1 … N (no all-0, no all-1 code) | ⌈log2(N+2)⌉ | P. Goel and M. T. McMahon, ITC 1982 |
//! | true/complement | modified counting, then its complement | 2·⌈log2(N+2)⌉ | P. T. Wagner, ITC 1987 |
//! | walking ones | net i is 1 only in vector i | N | common practice |
//! | walking zeros | net i is 0 only in vector i | N | common practice |

use std::fmt;
use std::str::FromStr;

/// An interconnect test method.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Method {
    /// Counting sequence: net i gets the binary code i, i = 0 … N−1, in
    /// ⌈log2 N⌉ bits (W. H. Kautz, "Testing for faults in wiring networks",
    /// IEEE Trans. Computers C-23, 1974). Every code is distinct, so shorts
    /// show; the nets with the all-0 and the all-1 code never see both levels.
    Counting,
    /// Modified counting sequence: codes 1 … N in ⌈log2(N+2)⌉ bits, with
    /// neither the all-0 nor the all-1 code, so every net sees a 0 and a 1
    /// (P. Goel and M. T. McMahon, "Electronic chip-in-place test", ITC 1982).
    ModifiedCounting,
    /// True/complement counting sequence: the modified counting vectors,
    /// then their bitwise complement, 2·⌈log2(N+2)⌉ vectors (P. T. Wagner,
    /// "Interconnect testing with boundary scan", ITC 1987).
    TrueComplement,
    /// Walking ones: N vectors; net i is 1 in vector i and 0 in the others.
    WalkingOnes,
    /// Walking zeros: the complement of walking ones.
    WalkingZeros,
}

impl Method {
    /// Every method, in the order of the table above.
    pub const ALL: [Method; 5] = [
        Method::Counting,
        Method::ModifiedCounting,
        Method::TrueComplement,
        Method::WalkingOnes,
        Method::WalkingZeros,
    ];

    /// The name the command line takes (`modified-counting` …).
    pub fn name(self) -> &'static str {
        match self {
            Method::Counting => "counting",
            Method::ModifiedCounting => "modified-counting",
            Method::TrueComplement => "true-complement",
            Method::WalkingOnes => "walking-ones",
            Method::WalkingZeros => "walking-zeros",
        }
    }

    /// The method in words, with its source, for the comments of a program.
    pub fn describe(self) -> &'static str {
        match self {
            Method::Counting => {
                "counting sequence (W. H. Kautz, IEEE Trans. Computers, 1974): codes 0 to N-1 \
                 over ceil(log2 N) vectors; the nets coded all-0 and all-1 never change level, \
                 so a stuck-at or open on them can go unseen"
            }
            Method::ModifiedCounting => {
                "modified counting sequence (P. Goel and M. T. McMahon, ITC 1982): codes 1 to N \
                 over ceil(log2(N + 2)) vectors, so no net is all-0 or all-1 and every net sees \
                 both levels"
            }
            Method::TrueComplement => {
                "true/complement counting sequence (P. T. Wagner, ITC 1987): the modified \
                 counting vectors, then their complements, 2 ceil(log2(N + 2)) vectors"
            }
            Method::WalkingOnes => {
                "walking ones: N vectors, each net is 1 in its own vector and 0 in the others"
            }
            Method::WalkingZeros => {
                "walking zeros: N vectors, each net is 0 in its own vector and 1 in the others"
            }
        }
    }

    /// Number of vectors for `n` nets (0 for no nets).
    pub fn vector_count(self, n: usize) -> usize {
        match self {
            Method::Counting => ceil_log2(n),
            Method::ModifiedCounting => ceil_log2(n + 2),
            Method::TrueComplement => 2 * ceil_log2(n + 2),
            Method::WalkingOnes | Method::WalkingZeros => n,
        }
    }

    /// True for the methods whose codes are binary numbers (the counting family).
    pub fn is_counting(self) -> bool {
        matches!(
            self,
            Method::Counting | Method::ModifiedCounting | Method::TrueComplement
        )
    }

    /// The name of vector `k` (from 0) for the net names `nets`, as a
    /// program shows it.
    pub fn vector_name(self, k: usize, nets: &[String]) -> String {
        let bits = |n: usize| ceil_log2(n + 2);
        let net = |k: usize| nets.get(k).map(String::as_str).unwrap_or("?");
        match self {
            Method::Counting | Method::ModifiedCounting => format!("code bit {k}"),
            Method::TrueComplement if k < bits(nets.len()) => format!("code bit {k}"),
            Method::TrueComplement => format!("complement of code bit {}", k - bits(nets.len())),
            Method::WalkingOnes => format!("walking 1 on {}", net(k)),
            Method::WalkingZeros => format!("walking 0 on {}", net(k)),
        }
    }
}

impl fmt::Display for Method {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A name that is not a method.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("`{0}` is not a method: use counting, modified-counting, true-complement, walking-ones or walking-zeros")]
pub struct UnknownMethod(pub String);

impl FromStr for Method {
    type Err = UnknownMethod;
    fn from_str(s: &str) -> Result<Method, UnknownMethod> {
        Method::ALL
            .into_iter()
            .find(|m| m.name().eq_ignore_ascii_case(s.trim()))
            .ok_or_else(|| UnknownMethod(s.to_string()))
    }
}

/// ⌈log2 n⌉, with ⌈log2 0⌉ = ⌈log2 1⌉ = 0.
fn ceil_log2(n: usize) -> usize {
    if n <= 1 {
        0
    } else {
        (usize::BITS - (n - 1).leading_zeros()) as usize
    }
}

/// The test vectors of `method` for `n` nets: `out[k][i]` is the value net
/// `i` is driven to in vector `k`. Code bits go least significant first:
/// vector 0 holds bit 0 of every code.
pub fn codes(method: Method, n: usize) -> Vec<Vec<bool>> {
    let count = method.vector_count(n);
    let binary = |first: usize, width: usize| -> Vec<Vec<bool>> {
        (0..width)
            .map(|k| (0..n).map(|i| ((first + i) >> k) & 1 == 1).collect())
            .collect()
    };
    match method {
        Method::Counting => binary(0, count),
        Method::ModifiedCounting => binary(1, count),
        Method::TrueComplement => {
            let mut out = binary(1, count / 2);
            let complement: Vec<Vec<bool>> =
                out.iter().map(|v| v.iter().map(|b| !b).collect()).collect();
            out.extend(complement);
            out
        }
        Method::WalkingOnes => (0..n).map(|k| (0..n).map(|i| i == k).collect()).collect(),
        Method::WalkingZeros => (0..n).map(|k| (0..n).map(|i| i != k).collect()).collect(),
    }
}

/// Net `i`'s code, read off the vectors: its value in each vector, in order.
pub fn code_of(vectors: &[Vec<bool>], i: usize) -> Vec<bool> {
    vectors.iter().map(|v| v[i]).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The codes of every net, as numbers (bit k = vector k).
    fn values(method: Method, n: usize) -> Vec<u64> {
        let v = codes(method, n);
        (0..n)
            .map(|i| {
                code_of(&v, i)
                    .iter()
                    .enumerate()
                    .fold(0, |acc, (k, &b)| acc | (u64::from(b) << k))
            })
            .collect()
    }

    /// The smallest k with 2^k >= x, by doubling (a second way to the same
    /// number, not the implementation's bit trick).
    fn bits_for(x: usize) -> usize {
        let mut k = 0;
        while (1usize << k) < x {
            k += 1;
        }
        k
    }

    #[test]
    fn counting_uses_ceil_log2_n_bits_and_codes_0_to_n_minus_1() {
        // W. H. Kautz, IEEE Trans. Computers C-23, 1974: N distinct codes in
        // ceil(log2 N) bits (the count as usually tabulated, from memory, verify).
        for n in 1..=40 {
            assert_eq!(codes(Method::Counting, n).len(), bits_for(n), "N = {n}");
            assert_eq!(
                values(Method::Counting, n),
                (0..n as u64).collect::<Vec<_>>()
            );
        }
        assert_eq!(values(Method::Counting, 3), vec![0b00, 0b01, 0b10]);
    }

    #[test]
    fn modified_counting_has_no_all_zero_or_all_one_code() {
        // P. Goel and M. T. McMahon, ITC 1982: codes 1..N in ceil(log2(N+2))
        // bits (from memory, verify).
        for n in 1..=40 {
            let k = bits_for(n + 2);
            assert_eq!(codes(Method::ModifiedCounting, n).len(), k, "N = {n}");
            let v = values(Method::ModifiedCounting, n);
            assert_eq!(v, (1..=n as u64).collect::<Vec<_>>());
            assert!(v.iter().all(|&c| c != 0 && c != (1 << k) - 1), "N = {n}");
        }
    }

    #[test]
    fn true_complement_appends_the_complement() {
        // P. T. Wagner, ITC 1987: 2 ceil(log2(N+2)) vectors (from memory, as
        // tabulated in Bushnell and Agrawal, 2000; verify).
        for n in 1..=40 {
            let v = codes(Method::TrueComplement, n);
            let half = bits_for(n + 2);
            assert_eq!(v.len(), 2 * half, "N = {n}");
            assert_eq!(v[..half], codes(Method::ModifiedCounting, n)[..]);
            for k in 0..half {
                assert!(v[k].iter().zip(&v[k + half]).all(|(a, b)| a != b));
            }
        }
    }

    #[test]
    fn walking_ones_and_zeros_give_each_net_its_own_vector() {
        // Common practice: N vectors, one per net.
        for n in 1..=40 {
            let ones = codes(Method::WalkingOnes, n);
            let zeros = codes(Method::WalkingZeros, n);
            assert_eq!((ones.len(), zeros.len()), (n, n));
            for k in 0..n {
                assert_eq!(ones[k].iter().filter(|b| **b).count(), 1);
                assert!(ones[k][k] && !zeros[k][k]);
                assert_eq!(zeros[k].iter().filter(|b| !**b).count(), 1);
            }
        }
    }

    #[test]
    fn one_thousand_nets() {
        // The sizes for N = 1000 by the published formulas (Kautz 1974, Goel and
        // McMahon 1982, Wagner 1987, walking codes; from memory): 10 / 10 / 20 / 1000.
        let counts: Vec<usize> = Method::ALL.iter().map(|m| m.vector_count(1000)).collect();
        assert_eq!(counts, vec![10, 10, 20, 1000, 1000]);
    }

    #[test]
    fn every_method_gives_distinct_codes() {
        for m in Method::ALL {
            for n in 2..=40 {
                let mut v = values(m, n);
                v.sort_unstable();
                v.dedup();
                assert_eq!(v.len(), n, "{m}, N = {n}");
            }
        }
    }

    #[test]
    fn names_read_back() {
        for m in Method::ALL {
            assert_eq!(m.name().parse::<Method>(), Ok(m));
        }
        assert!("gray".parse::<Method>().is_err());
    }
}
