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
}
