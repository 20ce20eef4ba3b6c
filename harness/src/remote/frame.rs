//! Frames: the length-prefixed envelope of every message, and the codec
//! that tells an incomplete frame from an invalid one.
//!
//! A frame is `length: u32 LE`, then `kind: u8` and `length - 1` bytes of
//! body. `length` counts the kind byte and the body, never itself.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

/// Bytes of the length prefix.
pub const HEADER_LEN: usize = 4;

/// The default largest frame (kind + body): room for a whole scan of
/// `harness::program::MAX_SCAN_BITS` bits in or out, with its header.
pub const DEFAULT_MAX_FRAME: u32 = (crate::program::MAX_SCAN_BITS / 8 + 64) as u32;

/// One frame, borrowed from the buffer it was found in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Frame<'a> {
    /// The message kind.
    pub kind: u8,
    /// The message body.
    pub body: &'a [u8],
}

/// Why no frame could be taken from a buffer.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum FrameError {
    /// The buffer holds the start of a frame only: read more and try again.
    #[error("incomplete frame: {needed} more bytes needed")]
    Incomplete {
        /// Bytes still missing (at least; the header may not be whole yet).
        needed: usize,
    },
    /// The length prefix says 0: a frame has at least its kind byte. The
    /// next frame starts right after the prefix, so the stream stays usable.
    #[error("a frame of length 0 (a frame holds at least its kind byte)")]
    Empty,
    /// The length prefix is over the limit. The stream cannot be trusted
    /// after it (the peer may be speaking something else): close it.
    #[error("a frame of {length} bytes is over the limit of {max}")]
    TooLarge {
        /// The length the prefix gave.
        length: u32,
        /// The limit.
        max: u32,
    },
}

/// Takes the first frame from `buf`; returns it and the bytes it used.
///
/// # Errors
/// [`FrameError::Incomplete`] when `buf` ends inside the frame;
/// [`FrameError::Empty`] (skip [`HEADER_LEN`] bytes) or
/// [`FrameError::TooLarge`] (close) when the prefix is invalid.
pub fn parse(buf: &[u8], max: u32) -> Result<(Frame<'_>, usize), FrameError> {
    let Some(prefix) = buf.get(..HEADER_LEN) else {
        return Err(FrameError::Incomplete {
            needed: HEADER_LEN - buf.len(),
        });
    };
    let length = u32::from_le_bytes([prefix[0], prefix[1], prefix[2], prefix[3]]);
    if length == 0 {
        return Err(FrameError::Empty);
    }
    if length > max {
        return Err(FrameError::TooLarge { length, max });
    }
    let total = HEADER_LEN + length as usize;
    let Some(frame) = buf.get(HEADER_LEN..total) else {
        return Err(FrameError::Incomplete {
            needed: total - buf.len(),
        });
    };
    Ok((
        Frame {
            kind: frame[0],
            body: &frame[1..],
        },
        total,
    ))
}

/// Appends a frame of `kind` whose body `write_body` appends, filling in
/// the length afterwards.
pub fn encode(out: &mut Vec<u8>, kind: u8, write_body: impl FnOnce(&mut Vec<u8>)) {
    let start = out.len();
    out.extend_from_slice(&[0; HEADER_LEN]);
    out.push(kind);
    write_body(out);
    let length = (out.len() - start - HEADER_LEN).min(u32::MAX as usize) as u32;
    out[start..start + HEADER_LEN].copy_from_slice(&length.to_le_bytes());
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn incomplete_header_and_body_are_told_apart_from_invalid() {
        assert_eq!(
            parse(&[5, 0], 100),
            Err(FrameError::Incomplete { needed: 2 })
        );
        assert_eq!(
            parse(&[3, 0, 0, 0, 7], 100),
            Err(FrameError::Incomplete { needed: 2 })
        );
        assert_eq!(parse(&[0, 0, 0, 0, 9], 100), Err(FrameError::Empty));
        assert_eq!(
            parse(&[101, 0, 0, 0], 100),
            Err(FrameError::TooLarge {
                length: 101,
                max: 100
            })
        );
    }

    #[test]
    fn a_frame_and_what_follows() {
        let mut out = Vec::new();
        encode(&mut out, 0x42, |b| b.extend_from_slice(&[1, 2, 3]));
        assert_eq!(out, vec![4, 0, 0, 0, 0x42, 1, 2, 3]);
        out.push(9);
        let (f, used) = parse(&out, 100).unwrap();
        assert_eq!((f.kind, f.body, used), (0x42, &[1u8, 2, 3][..], 8));
    }
}
