//! Bit strings as people write them in our YAML files: `0x…` hex with a
//! length, or `0`/`1`/`X` digits most significant first.

use virtual_board::{clip, Bits};

use super::{scan_too_long, MAX_SCAN_BITS};

/// Bits and a mask (1 = the bit is given; 0 = `X`, don't care).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MaskedBits {
    /// The bits (X bits as 0).
    pub bits: Bits,
    /// 1 where the text gives a bit, 0 where it says X.
    pub mask: Bits,
}

/// Parses `text` into `len` bits (or the text's own length when `len` is
/// `None` and the text is binary).
///
/// - `0x` hex, most significant digit first; `len` is required, and the value
///   must fit in it. Every bit is given (mask all ones).
/// - binary `0`, `1`, `X` (either case), most significant first, `_` allowed
///   as a separator; an X bit is masked out. With `len`, the text must have
///   exactly `len` digits.
///
/// # Errors
/// A message saying what is wrong.
pub fn parse_bits(text: &str, len: Option<usize>) -> Result<MaskedBits, String> {
    if let Some(n) = len.filter(|n| *n > MAX_SCAN_BITS) {
        return Err(scan_too_long(n));
    }
    let t = text.trim();
    let quoted = clip(t);
    let t_quoted = quoted.as_str();
    if let Some(hex) = t.strip_prefix("0x").or_else(|| t.strip_prefix("0X")) {
        let len = len.ok_or_else(|| format!("`{t_quoted}`: a hex value needs a length"))?;
        let hex: String = hex.chars().filter(|c| *c != '_').collect();
        let bits = Bits::from_hex(&hex, len)
            .ok_or_else(|| format!("`{t_quoted}` is not hex that fits in {len} bits"))?;
        return Ok(MaskedBits {
            bits,
            mask: Bits::ones(len),
        });
    }
    let digits: Vec<char> = t.chars().filter(|c| *c != '_').collect();
    if digits.len() > MAX_SCAN_BITS {
        return Err(scan_too_long(digits.len()));
    }
    if let Some(n) = len {
        if digits.len() != n {
            return Err(format!(
                "`{t_quoted}` has {} digits but the scan is {n} bits",
                digits.len()
            ));
        }
    }
    let n = digits.len();
    let mut bits = Bits::zeros(n);
    let mut mask = Bits::ones(n);
    for (i, ch) in digits.iter().rev().enumerate() {
        match ch {
            '0' => {}
            '1' => bits.set(i, true),
            'x' | 'X' => mask.set(i, false),
            _ => {
                return Err(format!(
                    "`{t_quoted}`: `{ch}` is not 0, 1 or X (write hex as 0x…)"
                ))
            }
        }
    }
    Ok(MaskedBits { bits, mask })
}

/// Bits as binary text, most significant first (the inverse of [`parse_bits`]).
pub fn to_binary(bits: &Bits) -> String {
    (0..bits.len())
        .rev()
        .map(|i| if bits.get(i) { '1' } else { '0' })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hex_and_binary_forms() {
        let h = parse_bits("0x1F", Some(6)).unwrap();
        assert_eq!(h.bits.to_u64(), 0x1F);
        assert_eq!(h.mask, Bits::ones(6));
        let b = parse_bits("10X1", None).unwrap();
        assert_eq!(b.bits.to_u64(), 0b1001);
        assert_eq!(b.mask.to_u64(), 0b1101);
        assert_eq!(to_binary(&b.bits), "1001");
        assert!(parse_bits("0x1F", Some(4)).is_err());
        assert!(parse_bits("0x1F", None).is_err());
        assert!(parse_bits("1021", None).is_err());
        assert!(parse_bits("101", Some(4)).is_err());
    }
}
