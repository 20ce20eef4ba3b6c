//! The instructor's key: 32 bytes written as 64 hex digits, read from a
//! file or from the environment variable [`KEY_VARIABLE`] — never from the
//! command line, which every user of a shared machine can read.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::Path;

use super::error::{KeyError, TrainingError};

/// The environment variable that may hold the key.
pub const KEY_VARIABLE: &str = "BOARDTWIN_EXERCISE_KEY";

/// A 256-bit key.
#[derive(Clone, PartialEq, Eq)]
pub struct ExerciseKey(pub [u8; 32]);

impl std::fmt::Debug for ExerciseKey {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("ExerciseKey(…)")
    }
}

impl ExerciseKey {
    /// Reads 64 hex digits (white space around them ignored).
    ///
    /// # Errors
    /// [`KeyError`]: not 64 hex digits.
    pub fn from_hex(text: &str) -> Result<ExerciseKey, KeyError> {
        let t = text.trim();
        let bad = KeyError {
            characters: t.chars().count(),
        };
        if t.len() != 64 || !t.bytes().all(|b| b.is_ascii_hexdigit()) {
            return Err(bad);
        }
        let mut out = [0u8; 32];
        for (i, o) in out.iter_mut().enumerate() {
            *o = u8::from_str_radix(&t[2 * i..2 * i + 2], 16).map_err(|_| bad)?;
        }
        Ok(ExerciseKey(out))
    }
}

/// The key: the first line of `file` when given, else [`KEY_VARIABLE`].
///
/// # Errors
/// Neither is set, the file cannot be read, or the key is not 64 hex digits.
pub fn read_key(file: Option<&Path>) -> Result<ExerciseKey, TrainingError> {
    let (text, from) = match file {
        Some(path) => (
            std::fs::read_to_string(path)
                .map_err(|e| TrainingError::Key(format!("{}: cannot read the key file: {e}", path.display())))?,
            path.display().to_string(),
        ),
        None => match std::env::var(KEY_VARIABLE) {
            Ok(v) if !v.trim().is_empty() => (v, format!("the {KEY_VARIABLE} environment variable")),
            _ => {
                return Err(TrainingError::Key(format!(
                    "no exercise key: give --key-file FILE or set the {KEY_VARIABLE} environment variable (make one with `boardtwin exercise key`)"
                )))
            }
        },
    };
    let line = text.lines().next().unwrap_or("");
    ExerciseKey::from_hex(line).map_err(|e| TrainingError::Key(format!("{from}: {e}")))
}

/// A fresh key from the operating system's random source, as 64 hex digits.
///
/// # Errors
/// The operating system gave no randomness.
pub fn new_key_hex() -> Result<String, TrainingError> {
    let mut bytes = [0u8; 32];
    getrandom::fill(&mut bytes)
        .map_err(|e| TrainingError::Key(format!("no randomness from the operating system: {e}")))?;
    Ok(bytes.iter().map(|b| format!("{b:02x}")).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hex_keys() {
        let k = ExerciseKey::from_hex(&"0f".repeat(32)).unwrap();
        assert_eq!(k.0, [0x0f; 32]);
        assert_eq!(
            ExerciseKey::from_hex(" abc ").unwrap_err(),
            KeyError { characters: 3 }
        );
        assert!(ExerciseKey::from_hex(&"zz".repeat(32)).is_err());
        assert_eq!(new_key_hex().unwrap().len(), 64);
        assert_ne!(new_key_hex().unwrap(), new_key_hex().unwrap());
    }
}
