//! `Bits`: a packed bit vector, the storage of every shift register and scan.

use std::fmt;

/// The sixteen hexadecimal digits of `word`, most significant first: each
/// half's nibbles spread one to a byte, then turned to ASCII eight at a
/// time (`0`–`9` are 0x30 on; `A`–`F` are seven further).
fn word_hex(word: u64) -> [u8; 16] {
    fn eight(half: u32) -> [u8; 8] {
        let mut x = u64::from(half);
        x = (x | x << 16) & 0x0000_FFFF_0000_FFFF;
        x = (x | x << 8) & 0x00FF_00FF_00FF_00FF;
        x = (x | x << 4) & 0x0F0F_0F0F_0F0F_0F0F;
        // 1 in each byte whose nibble is ten or more.
        let letters = ((x + 0x0606_0606_0606_0606) >> 4) & 0x0101_0101_0101_0101;
        (x + 0x3030_3030_3030_3030 + letters * 7).to_be_bytes()
    }
    let mut out = [0u8; 16];
    out[..8].copy_from_slice(&eight((word >> 32) as u32));
    out[8..].copy_from_slice(&eight(word as u32));
    out
}

/// A packed vector of bits; bit 0 is the one nearest TDO (first out).
#[derive(Clone, Default, PartialEq, Eq, Hash)]
pub struct Bits {
    len: usize,
    words: Vec<u64>,
}

impl Bits {
    /// `len` zero bits.
    pub fn zeros(len: usize) -> Bits {
        Bits {
            len,
            words: vec![0; len.div_ceil(64)],
        }
    }

    /// `len` one bits.
    pub fn ones(len: usize) -> Bits {
        let mut b = Bits {
            len,
            words: vec![u64::MAX; len.div_ceil(64)],
        };
        b.trim();
        b
    }

    /// Bits from booleans, `bits[0]` first.
    pub fn from_bools(bits: &[bool]) -> Bits {
        let mut b = Bits::zeros(bits.len());
        for (i, &v) in bits.iter().enumerate() {
            if v {
                b.words[i / 64] |= 1 << (i % 64);
            }
        }
        b
    }

    /// The low `len` bits of `value`.
    pub fn from_u64(value: u64, len: usize) -> Bits {
        let mut b = Bits::zeros(len);
        if len > 0 {
            b.words[0] = value;
            b.trim();
        }
        b
    }

    /// Bits from whole words (bit i of the vector = bit i%64 of word i/64).
    pub fn from_words(words: Vec<u64>, len: usize) -> Bits {
        let mut words = words;
        words.resize(len.div_ceil(64), 0);
        let mut b = Bits { len, words };
        b.trim();
        b
    }

    /// Parses hexadecimal text (as SVF writes it, most significant digit
    /// first) into `len` bits; `None` on a non-hex character or a one bit
    /// past `len`. A digit at a time: its four bits sit in one word.
    pub fn from_hex(hex: &str, len: usize) -> Option<Bits> {
        let mut b = Bits::zeros(len);
        for (i, ch) in hex.chars().rev().filter(|c| !c.is_whitespace()).enumerate() {
            let v = u64::from(ch.to_digit(16)?);
            let pos = i * 4;
            // The digit's bits from `len` on must be zero.
            let room = len.saturating_sub(pos);
            if room < 4 && v >> room != 0 {
                return None;
            }
            if v != 0 {
                b.words[pos / 64] |= v << (pos % 64);
            }
        }
        Some(b)
    }

    /// Hexadecimal, most significant digit first, `ceil(len/4)` digits
    /// (`0` for no bits). A digit at a time: its four bits sit in one word,
    /// and the bits past `len` are zero.
    pub fn to_hex(&self) -> String {
        let digits = self.len.div_ceil(4).max(1);
        let mut out = Vec::with_capacity(digits);
        // The top word gives only the digits the length needs (its bits
        // past `len` are zero); every word below it sixteen.
        let top = digits - 16 * (digits.saturating_sub(1) / 16);
        let words = digits.div_ceil(16);
        for w in (0..words).rev() {
            let hex = word_hex(self.words.get(w).copied().unwrap_or(0));
            let n = if w + 1 == words { top } else { 16 };
            out.extend_from_slice(&hex[16 - n..]);
        }
        // Every byte is an ASCII digit.
        String::from_utf8(out).unwrap_or_default()
    }

    /// Number of bits.
    #[inline]
    pub fn len(&self) -> usize {
        self.len
    }

    /// True with no bits.
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The packed words.
    #[inline]
    pub fn words(&self) -> &[u64] {
        &self.words
    }

    /// Bit `i`.
    #[inline]
    pub fn get(&self, i: usize) -> bool {
        debug_assert!(i < self.len);
        (self.words[i / 64] >> (i % 64)) & 1 == 1
    }

    /// Sets bit `i`.
    #[inline]
    pub fn set(&mut self, i: usize, v: bool) {
        debug_assert!(i < self.len);
        let w = &mut self.words[i / 64];
        if v {
            *w |= 1 << (i % 64);
        } else {
            *w &= !(1 << (i % 64));
        }
    }

    /// Appends a bit at the high end.
    pub fn push(&mut self, v: bool) {
        if self.len.is_multiple_of(64) {
            self.words.push(0);
        }
        self.len += 1;
        self.set(self.len - 1, v);
    }

    /// The low 64 bits as a number.
    pub fn to_u64(&self) -> u64 {
        self.words.first().copied().unwrap_or(0)
    }

    /// The bits as booleans, bit 0 first.
    pub fn to_bools(&self) -> Vec<bool> {
        (0..self.len).map(|i| self.get(i)).collect()
    }

    /// Number of one bits.
    pub fn count_ones(&self) -> usize {
        self.words.iter().map(|w| w.count_ones() as usize).sum()
    }

    /// One shift toward TDO: returns bit 0, moves every bit down by one and
    /// puts `tdi` in the top bit. The single TCK edge of a shift register.
    #[inline]
    pub fn shift_in(&mut self, tdi: bool) -> bool {
        let n = self.words.len();
        if n == 0 {
            return tdi;
        }
        let out = self.words[0] & 1 == 1;
        if n == 1 {
            self.words[0] = (self.words[0] >> 1) | ((tdi as u64) << (self.len - 1));
            return out;
        }
        for i in 0..n - 1 {
            self.words[i] = (self.words[i] >> 1) | (self.words[i + 1] << 63);
        }
        let top = (self.len - 1) % 64;
        self.words[n - 1] = (self.words[n - 1] >> 1) | ((tdi as u64) << top);
        out
    }

    /// `count` bits starting at bit `start`, as a word (bits past the end are 0).
    #[inline]
    pub fn word_at(&self, start: usize) -> u64 {
        let w = start / 64;
        let s = start % 64;
        let lo = self.words.get(w).copied().unwrap_or(0) >> s;
        let hi = if s == 0 {
            0
        } else {
            self.words.get(w + 1).copied().unwrap_or(0) << (64 - s)
        };
        lo | hi
    }

    /// The bits `start .. start + len` as a new vector.
    pub fn slice(&self, start: usize, len: usize) -> Bits {
        let words = (0..len.div_ceil(64))
            .map(|k| self.word_at(start + k * 64))
            .collect();
        Bits::from_words(words, len)
    }

    /// This vector followed by `other` (other's bit 0 becomes bit `self.len()`).
    pub fn concat(&self, other: &Bits) -> Bits {
        let mut out = self.clone();
        out.extend(other);
        out
    }

    /// Appends `other` at the high end.
    pub fn extend(&mut self, other: &Bits) {
        let total = self.len + other.len;
        self.words.resize(total.div_ceil(64), 0);
        let s = self.len % 64;
        let base = self.len / 64;
        for (k, &w) in other.words.iter().enumerate() {
            if s == 0 {
                self.words[base + k] = w;
            } else {
                self.words[base + k] |= w << s;
                if base + k + 1 < self.words.len() {
                    self.words[base + k + 1] = w >> (64 - s);
                }
            }
        }
        self.len = total;
        self.trim();
    }

    /// Shifts the whole stream `input` through this register, as
    /// `input.len()` single shifts would: returns the bits that leave at bit 0
    /// (`input.len()` of them) and leaves the register holding the last
    /// `self.len()` bits of `self ++ input`.
    pub fn shift_stream(&mut self, input: &Bits) -> Bits {
        let n = input.len();
        if self.len == 0 {
            return input.clone();
        }
        // Bit i of the output is bit i of `self ++ input`; the register keeps
        // bits n .. n + len of it. Both are read a word at a time.
        let out_words = (0..n.div_ceil(64))
            .map(|k| joined_word(self, input, k * 64))
            .collect();
        let out = Bits::from_words(out_words, n);
        let keep: Vec<u64> = (0..self.words.len())
            .map(|k| joined_word(self, input, n + k * 64))
            .collect();
        self.words = keep;
        self.trim();
        out
    }

    /// Shifts the low `n` bits of `input` in (bit 0 of `input` first), as
    /// `n` single shifts would, without allocating; `1 <= n <= 64` and
    /// `n <= self.len()`. The bits that leave are those at `0..n` before.
    pub fn shift_in_word(&mut self, input: u64, n: usize) {
        debug_assert!((1..=64).contains(&n) && n <= self.len);
        let w = self.words.len();
        if n == 64 {
            self.words.copy_within(1.., 0);
            self.words[w - 1] = 0;
        } else {
            for i in 0..w - 1 {
                self.words[i] = (self.words[i] >> n) | (self.words[i + 1] << (64 - n));
            }
            self.words[w - 1] >>= n;
        }
        let input = if n == 64 {
            input
        } else {
            input & ((1u64 << n) - 1)
        };
        let pos = self.len - n;
        let (word, off) = (pos / 64, pos % 64);
        self.words[word] |= input << off;
        if off != 0 && off + n > 64 {
            self.words[word + 1] |= input >> (64 - off);
        }
        self.trim();
    }

    fn trim(&mut self) {
        let r = self.len % 64;
        if r != 0 {
            if let Some(last) = self.words.last_mut() {
                *last &= (1u64 << r) - 1;
            }
        }
        self.words.truncate(self.len.div_ceil(64));
    }
}

/// The 64 bits of `a ++ b` starting at bit `start` (zeros past the end).
#[inline]
fn joined_word(a: &Bits, b: &Bits, start: usize) -> u64 {
    if start >= a.len {
        b.word_at(start - a.len)
    } else if start + 64 <= a.len {
        a.word_at(start)
    } else {
        let k = a.len - start;
        (a.word_at(start) & ((1u64 << k) - 1)) | (b.word_at(0) << k)
    }
}

impl fmt::Debug for Bits {
    /// Bit 0 first, as the bits leave on TDO.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Bits[{}](", self.len)?;
        for i in 0..self.len {
            f.write_str(if self.get(i) { "1" } else { "0" })?;
        }
        f.write_str(")")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn hex_is_most_significant_digit_first() {
        let b = Bits::from_hex("C5", 8).unwrap();
        // SVF Rev E: the rightmost digit's bit 0 is the first bit out (C5 = 1100_0101).
        assert_eq!(
            b.to_bools(),
            [true, false, true, false, false, false, true, true]
        );
        assert_eq!(b.to_hex(), "C5");
        assert_eq!(Bits::from_hex("1F", 4), None);
        assert_eq!(Bits::from_hex("0F", 4).unwrap().to_hex(), "F");
    }

    /// The digit-by-digit hex of the bits, one bit at a time: the
    /// reference the word-wise `to_hex` and `from_hex` must equal (SVF Rev E
    /// writes the last digit's bit 0 first out).
    fn hex_bit_by_bit(bits: &[bool]) -> String {
        let digits = bits.len().div_ceil(4).max(1);
        (0..digits)
            .rev()
            .map(|d| {
                let v = (0..4)
                    .filter(|k| bits.get(d * 4 + k).copied().unwrap_or(false))
                    .map(|k| 1u32 << k)
                    .sum::<u32>();
                char::from_digit(v, 16).unwrap_or('0').to_ascii_uppercase()
            })
            .collect()
    }

    proptest! {
        #[test]
        fn hex_equals_bit_by_bit(bits in proptest::collection::vec(any::<bool>(), 0..300),
                                 extra in 0..4usize) {
            let b = Bits::from_bools(&bits);
            let hex = b.to_hex();
            prop_assert_eq!(&hex, &hex_bit_by_bit(&bits));
            prop_assert_eq!(Bits::from_hex(&hex, bits.len()), Some(b.clone()));
            // Longer registers read the same text with zeros above.
            let mut longer = bits.clone();
            longer.extend(std::iter::repeat_n(false, extra));
            prop_assert_eq!(Bits::from_hex(&hex, longer.len()), Some(Bits::from_bools(&longer)));
            // A one past the length is refused.
            if !bits.is_empty() {
                let mut one_more = bits.clone();
                one_more.push(true);
                let text = hex_bit_by_bit(&one_more);
                prop_assert_eq!(Bits::from_hex(&text, bits.len()), None);
            }
        }

        #[test]
        fn stream_shift_equals_single_shifts(reg in proptest::collection::vec(any::<bool>(), 0..150),
                                             input in proptest::collection::vec(any::<bool>(), 0..300)) {
            let mut fast = Bits::from_bools(&reg);
            let mut slow = fast.clone();
            let out = fast.shift_stream(&Bits::from_bools(&input));
            let slow_out: Vec<bool> = input.iter().map(|&b| slow.shift_in(b)).collect();
            prop_assert_eq!(out.to_bools(), slow_out);
            prop_assert_eq!(fast, slow);
        }

        #[test]
        fn word_shift_equals_single_shifts(reg in proptest::collection::vec(any::<bool>(), 1..300),
                                           input in any::<u64>(), n in 1..=64usize) {
            let n = n.min(reg.len());
            let mut fast = Bits::from_bools(&reg);
            let mut slow = fast.clone();
            fast.shift_in_word(input, n);
            for i in 0..n {
                slow.shift_in(input >> i & 1 == 1);
            }
            prop_assert_eq!(fast, slow);
        }
    }
}
