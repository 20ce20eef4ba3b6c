//! The sealed exercise file: a magic line, a 24-byte nonce, then the
//! exercise as JSON under XChaCha20-Poly1305 (an AEAD: without the key the
//! bytes say nothing, and any change to them is refused). The magic line is
//! the associated data, so it cannot be swapped either.
//!
//! The nonce is made from the seed and a hash of the plaintext, so the same
//! draw with the same key gives the same file, and two different exercises
//! sealed with one key never share a nonce unless their 128-bit hash and
//! seed collide (XChaCha's 192-bit nonce is meant to be safe even when
//! drawn at random).

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use chacha20poly1305::aead::{Aead, KeyInit, Payload};
use chacha20poly1305::{Key, XChaCha20Poly1305, XNonce};

use super::error::SealError;
use super::key::ExerciseKey;

/// The first bytes of every sealed exercise (the format's name and version).
pub const MAGIC: &[u8] = b"boardtwin sealed exercise v1\n";
const NONCE_LEN: usize = 24;

/// Seals `plain` under `key`; `seed` goes into the nonce.
pub fn seal(key: &ExerciseKey, seed: u64, plain: &[u8]) -> Vec<u8> {
    let mut nonce = [0u8; NONCE_LEN];
    nonce[..8].copy_from_slice(&seed.to_le_bytes());
    nonce[8..16].copy_from_slice(&fnv(plain, 0xcbf2_9ce4_8422_2325).to_le_bytes());
    nonce[16..].copy_from_slice(&fnv(plain, 0x6c62_272e_07bb_0142).to_le_bytes());
    let cipher = XChaCha20Poly1305::new(&Key::from(key.0));
    let nonce_arr = XNonce::from(nonce);
    // Encryption into a Vec fails only on a message beyond the cipher's limit
    // (256 GiB); an exercise is a few kilobytes.
    let body = cipher
        .encrypt(
            &nonce_arr,
            Payload {
                msg: plain,
                aad: MAGIC,
            },
        )
        .unwrap_or_default();
    let mut out = Vec::with_capacity(MAGIC.len() + NONCE_LEN + body.len());
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&nonce);
    out.extend_from_slice(&body);
    out
}

/// Opens a sealed file's bytes.
///
/// # Errors
/// [`SealError`]: not a sealed exercise, or a key that does not open it (or
/// bytes changed).
pub fn open(key: &ExerciseKey, sealed: &[u8]) -> Result<Vec<u8>, SealError> {
    let rest = sealed.strip_prefix(MAGIC).ok_or(SealError::NotSealed)?;
    if rest.len() < NONCE_LEN + 16 {
        return Err(SealError::CutShort);
    }
    let (nonce, body) = rest.split_at(NONCE_LEN);
    let mut n = [0u8; NONCE_LEN];
    n.copy_from_slice(nonce);
    let cipher = XChaCha20Poly1305::new(&Key::from(key.0));
    cipher
        .decrypt(
            &XNonce::from(n),
            Payload {
                msg: body,
                aad: MAGIC,
            },
        )
        .map_err(|_| SealError::WrongKey)
}

/// FNV-1a, 64 bits, from `basis` (a hash for the nonce, not for secrecy).
fn fnv(bytes: &[u8], basis: u64) -> u64 {
    bytes.iter().fold(basis, |h, &b| {
        (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01B3)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_and_refusals() {
        let key = ExerciseKey([7; 32]);
        let sealed = seal(&key, 5, b"short between nets A and B");
        assert_eq!(open(&key, &sealed).unwrap(), b"short between nets A and B");
        assert_eq!(seal(&key, 5, b"short between nets A and B"), sealed);
        assert!(open(&ExerciseKey([8; 32]), &sealed).is_err());
        let mut changed = sealed.clone();
        let last = changed.len() - 1;
        changed[last] ^= 1;
        assert_eq!(open(&key, &changed), Err(SealError::WrongKey));
        assert_eq!(open(&key, b"hello"), Err(SealError::NotSealed));
    }
}
