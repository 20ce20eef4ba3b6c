//! The byte-level pieces of a message body: little-endian integers, strings,
//! packed bits, and a reader that says where a body went wrong.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use virtual_board::Bits;

/// Why a message body could not be read: what was expected, and at which
/// byte of the body.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("byte {offset} of the message body: {reason}")]
pub struct BodyError {
    /// Offset in the body (after the frame's length and kind).
    pub offset: usize,
    /// What is wrong.
    pub reason: String,
}

/// Reads a message body front to back.
pub struct Reader<'a> {
    body: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    /// A reader at the start of `body`.
    pub fn new(body: &'a [u8]) -> Reader<'a> {
        Reader { body, at: 0 }
    }

    /// An error at the present offset.
    pub fn error(&self, reason: impl Into<String>) -> BodyError {
        BodyError {
            offset: self.at,
            reason: reason.into(),
        }
    }

    /// The next `n` bytes.
    ///
    /// # Errors
    /// Fewer than `n` bytes are left.
    pub fn take(&mut self, n: usize, what: &str) -> Result<&'a [u8], BodyError> {
        let end = self
            .at
            .checked_add(n)
            .filter(|&e| e <= self.body.len())
            .ok_or_else(|| {
                self.error(format!(
                    "{what}: needs {n} bytes, {} are left",
                    self.body.len() - self.at
                ))
            })?;
        let s = &self.body[self.at..end];
        self.at = end;
        Ok(s)
    }

    /// One byte.
    ///
    /// # Errors
    /// The body ends.
    pub fn u8(&mut self, what: &str) -> Result<u8, BodyError> {
        Ok(self.take(1, what)?[0])
    }

    /// A byte that must be 0 or 1.
    ///
    /// # Errors
    /// The body ends, or the byte is neither 0 nor 1.
    pub fn flag(&mut self, what: &str) -> Result<bool, BodyError> {
        match self.u8(what)? {
            0 => Ok(false),
            1 => Ok(true),
            v => {
                self.at -= 1;
                Err(self.error(format!("{what}: {v} is not 0 or 1")))
            }
        }
    }

    /// A little-endian u16.
    ///
    /// # Errors
    /// The body ends.
    pub fn u16(&mut self, what: &str) -> Result<u16, BodyError> {
        let b = self.take(2, what)?;
        Ok(u16::from_le_bytes([b[0], b[1]]))
    }

    /// A little-endian u32.
    ///
    /// # Errors
    /// The body ends.
    pub fn u32(&mut self, what: &str) -> Result<u32, BodyError> {
        let b = self.take(4, what)?;
        Ok(u32::from_le_bytes([b[0], b[1], b[2], b[3]]))
    }

    /// A little-endian u64.
    ///
    /// # Errors
    /// The body ends.
    pub fn u64(&mut self, what: &str) -> Result<u64, BodyError> {
        let b = self.take(8, what)?;
        let mut a = [0u8; 8];
        a.copy_from_slice(b);
        Ok(u64::from_le_bytes(a))
    }

    /// A string: u32 byte count, then UTF-8.
    ///
    /// # Errors
    /// The body ends, or the bytes are not UTF-8.
    pub fn string(&mut self, what: &str) -> Result<String, BodyError> {
        let n = self.u32(what)? as usize;
        let start = self.at;
        let b = self.take(n, what)?;
        std::str::from_utf8(b)
            .map(str::to_string)
            .map_err(|e| BodyError {
                offset: start + e.valid_up_to(),
                reason: format!("{what}: not UTF-8"),
            })
    }

    /// `n` bits packed eight to a byte, bit 0 in the least significant bit
    /// of the first byte; the unused high bits of the last byte are ignored.
    ///
    /// # Errors
    /// The body ends.
    pub fn packed(&mut self, n: usize, what: &str) -> Result<Bits, BodyError> {
        let bytes = self.take(n.div_ceil(8), what)?;
        let words = bytes
            .chunks(8)
            .map(|c| {
                let mut a = [0u8; 8];
                a[..c.len()].copy_from_slice(c);
                u64::from_le_bytes(a)
            })
            .collect();
        Ok(Bits::from_words(words, n))
    }

    /// A JSON value in a string.
    ///
    /// # Errors
    /// The body ends, or the text is not JSON of the expected shape.
    pub fn json<T: serde::de::DeserializeOwned>(&mut self, what: &str) -> Result<T, BodyError> {
        let start = self.at;
        let text = self.string(what)?;
        serde_json::from_str(&text).map_err(|e| BodyError {
            offset: start,
            reason: format!("{what}: {e}"),
        })
    }

    /// Checks that the whole body was read.
    ///
    /// # Errors
    /// Bytes are left over.
    pub fn end(&self) -> Result<(), BodyError> {
        if self.at == self.body.len() {
            Ok(())
        } else {
            Err(self.error(format!(
                "{} bytes left over after the message",
                self.body.len() - self.at
            )))
        }
    }
}

/// Appends a u16, little-endian.
pub fn put_u16(out: &mut Vec<u8>, v: u16) {
    out.extend_from_slice(&v.to_le_bytes());
}

/// Appends a u32, little-endian.
pub fn put_u32(out: &mut Vec<u8>, v: u32) {
    out.extend_from_slice(&v.to_le_bytes());
}

/// Appends a u64, little-endian.
pub fn put_u64(out: &mut Vec<u8>, v: u64) {
    out.extend_from_slice(&v.to_le_bytes());
}

/// Appends a string: u32 byte count, then UTF-8 (a string longer than
/// u32::MAX bytes is cut there; no message comes near it).
pub fn put_string(out: &mut Vec<u8>, s: &str) {
    let n = s.len().min(u32::MAX as usize);
    put_u32(out, n as u32);
    out.extend_from_slice(&s.as_bytes()[..n]);
}

/// Appends `bits` packed eight to a byte (see [`Reader::packed`]).
pub fn put_packed(out: &mut Vec<u8>, bits: &Bits) {
    let mut left = bits.len().div_ceil(8);
    for w in bits.words() {
        let b = w.to_le_bytes();
        let n = left.min(8);
        out.extend_from_slice(&b[..n]);
        left -= n;
    }
}

/// Appends a value as JSON text in a string.
pub fn put_json<T: serde::Serialize>(out: &mut Vec<u8>, value: &T) {
    // Serializing our own plain data types to JSON cannot fail; were it to,
    // the peer reads `null` and refuses it as a malformed body.
    let text = serde_json::to_string(value).unwrap_or_else(|_| "null".into());
    put_string(out, &text);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn packed_bits_round_trip_and_ignore_padding() {
        let bits = Bits::from_bools(&[true, false, true, true, false, false, false, false, true]);
        let mut out = Vec::new();
        put_packed(&mut out, &bits);
        assert_eq!(out, vec![0b0000_1101, 0b0000_0001]);
        out[1] |= 0b1111_0000; // padding bits are ignored
        assert_eq!(Reader::new(&out).packed(9, "tdi"), Ok(bits));
    }

    #[test]
    fn short_body_names_the_offset() {
        let mut r = Reader::new(&[1, 2, 3]);
        assert_eq!(r.u16("port"), Ok(0x0201));
        let e = r.u32("count").unwrap_err();
        assert_eq!(e.offset, 2);
        assert_eq!(e.reason, "count: needs 4 bytes, 1 are left");
    }

    #[test]
    fn flag_refuses_other_values() {
        let e = Reader::new(&[2]).flag("ir").unwrap_err();
        assert_eq!((e.offset, e.reason.as_str()), (0, "ir: 2 is not 0 or 1"));
    }
}
