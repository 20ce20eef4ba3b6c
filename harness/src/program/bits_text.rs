//! Bit strings as people write them in our YAML files: `0x…` hex with a
//! length, or `0`/`1`/`X` digits most significant first.

use virtual_board::{clip, Bits};

use super::{scan_too_long, MAX_SCAN_BITS};

/// Why a bit string was refused ([`parse_bits`]); `text` is the string as
/// written, clipped for long values.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum BitsError {
    /// More bits than [`MAX_SCAN_BITS`].
    #[error("{}", scan_too_long(.0))]
    TooLong(usize),
    /// `0x…` without a length.
    #[error("`{0}`: a hex value needs a length")]
    HexNeedsLength(String),
    /// Not hex, or a value wider than the length.
    #[error("`{text}` is not hex that fits in {len} bits")]
    HexDoesNotFit {
        /// The value as written.
        text: String,
        /// The length.
        len: usize,
    },
    /// Binary digits of another count than the length.
    #[error("`{text}` has {digits} digits but the scan is {len} bits")]
    DigitCount {
        /// The value as written.
        text: String,
        /// Its digits.
        digits: usize,
        /// The length.
        len: usize,
    },
    /// A character other than 0, 1, X or `_`.
    #[error("`{text}`: `{digit}` is not 0, 1 or X (write hex as 0x…)")]
    BadDigit {
        /// The value as written.
        text: String,
        /// The character.
        digit: char,
    },
}

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
/// [`BitsError`]: what is wrong with the text.
pub fn parse_bits(text: &str, len: Option<usize>) -> Result<MaskedBits, BitsError> {
    if let Some(n) = len.filter(|n| *n > MAX_SCAN_BITS) {
        return Err(BitsError::TooLong(n));
    }
    let t = text.trim();
    let quoted = clip(t);
    let t_quoted = quoted.as_str();
    if let Some(hex) = t.strip_prefix("0x").or_else(|| t.strip_prefix("0X")) {
        let len = len.ok_or_else(|| BitsError::HexNeedsLength(t_quoted.to_string()))?;
        let hex: String = hex.chars().filter(|c| *c != '_').collect();
        let bits = Bits::from_hex(&hex, len).ok_or_else(|| BitsError::HexDoesNotFit {
            text: t_quoted.to_string(),
            len,
        })?;
        return Ok(MaskedBits {
            bits,
            mask: Bits::ones(len),
        });
    }
    let digits: Vec<char> = t.chars().filter(|c| *c != '_').collect();
    if digits.len() > MAX_SCAN_BITS {
        return Err(BitsError::TooLong(digits.len()));
    }
    if let Some(n) = len {
        if digits.len() != n {
            return Err(BitsError::DigitCount {
                text: t_quoted.to_string(),
                digits: digits.len(),
                len: n,
            });
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
            &digit => {
                return Err(BitsError::BadDigit {
                    text: t_quoted.to_string(),
                    digit,
                })
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
        assert_eq!(
            parse_bits("0x1F", Some(4)),
            Err(BitsError::HexDoesNotFit {
                text: "0x1F".into(),
                len: 4
            })
        );
        assert_eq!(
            parse_bits("0x1F", None),
            Err(BitsError::HexNeedsLength("0x1F".into()))
        );
        assert_eq!(
            parse_bits("1021", None),
            Err(BitsError::BadDigit {
                text: "1021".into(),
                digit: '2'
            })
        );
        let short = parse_bits("101", Some(4)).unwrap_err();
        assert_eq!(
            short.to_string(),
            "`101` has 3 digits but the scan is 4 bits"
        );
    }
}
