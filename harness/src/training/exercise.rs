//! What a sealed exercise holds: the board, how it was drawn, and the
//! defects (the answer). Only `seal`'s bytes ever reach a disk.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use virtual_board::DefectSpec;

use super::error::TrainingError;
use super::key::ExerciseKey;
use super::seal;

/// One exercise.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Exercise {
    /// The board file, as the instructor named it (made absolute).
    pub board: PathBuf,
    /// The board's name.
    pub board_name: String,
    /// The `--draw` specification.
    pub draw: String,
    /// The seed.
    pub seed: u64,
    /// The hidden defects.
    pub defects: Vec<DefectSpec>,
}

impl Exercise {
    /// The answer in repair words, one line per defect.
    pub fn answer(&self) -> Vec<String> {
        self.defects.iter().map(DefectSpec::describe).collect()
    }

    /// The sealed bytes.
    pub fn seal(&self, key: &ExerciseKey) -> Vec<u8> {
        // Serialising plain data with string keys does not fail.
        let plain = serde_json::to_vec(self).unwrap_or_default();
        seal::seal(key, self.seed, &plain)
    }

    /// Opens a sealed exercise file.
    ///
    /// # Errors
    /// The file cannot be read, is not a sealed exercise, or the key does
    /// not open it.
    pub fn read(path: &Path, key: &ExerciseKey) -> Result<Exercise, TrainingError> {
        let fail = |why: String| TrainingError::Sealed {
            path: path.display().to_string(),
            why,
        };
        let bytes = std::fs::read(path).map_err(|e| fail(format!("cannot read it: {e}")))?;
        let plain = seal::open(key, &bytes).map_err(|e| fail(e.to_string()))?;
        serde_json::from_slice(&plain)
            .map_err(|e| fail(format!("opened, but not an exercise: {e}")))
    }
}
