//! `TrainingError`: what can go wrong making, opening or serving an exercise.

/// Why an exercise could not be made, opened or graded.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum TrainingError {
    /// No key, or a key that is not 32 bytes in hex.
    #[error("{0}")]
    Key(String),
    /// The file is not a sealed exercise, or the key does not open it.
    #[error("{path}: {why}")]
    Sealed {
        /// The file.
        path: String,
        /// Why.
        why: String,
    },
    /// A draw specification that names no known level.
    #[error("--draw {spec}: {why}")]
    Draw {
        /// What was given.
        spec: String,
        /// Why it is refused.
        why: String,
    },
    /// The board, its defects or a file.
    #[error("{0}")]
    Board(String),
    /// A diagnosis the class refused to grade, in the class's words.
    #[error("{0}")]
    Refused(String),
}

/// Why [`open`](super::open) gave no exercise.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum SealError {
    /// The bytes do not start as a sealed exercise does.
    #[error("not a sealed exercise (made by `boardtwin exercise new`)")]
    NotSealed,
    /// Too few bytes for the nonce and the tag.
    #[error("a sealed exercise cut short")]
    CutShort,
    /// The key does not open it, or the bytes were changed.
    #[error("this key does not open the exercise (another key, or the file was changed)")]
    WrongKey,
}

/// A key that is not 64 hex digits ([`ExerciseKey::from_hex`](super::ExerciseKey::from_hex)).
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("a key is 64 hex digits (32 bytes); this one has {characters} characters")]
pub struct KeyError {
    /// Characters given (white space around them aside).
    pub characters: usize,
}
