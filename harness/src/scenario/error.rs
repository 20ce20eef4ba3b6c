//! `ScenarioError` and `TargetError`: why a scenario could not be replayed
//! (bad input or no target, never a mismatch: those are in the outcome).

use std::fmt;
use std::path::PathBuf;

use virtual_board::{BoardError, DefectError};

use crate::capture::CaptureError;
use crate::program::native::ProgramError;
use crate::remote::OpenError;

/// A place in a scenario file: `FILE:line:column`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Place {
    /// The scenario file.
    pub path: PathBuf,
    /// 1-based line.
    pub line: u32,
    /// 1-based column.
    pub column: u32,
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}:{}", self.path.display(), self.line, self.column)
    }
}

/// Why [`replay`](super::replay) or [`replay_on`](super::replay_on) could
/// not replay a scenario.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum ScenarioError {
    /// The scenario file cannot be read.
    #[error("{}: cannot read the file: {why}", .path.display())]
    Read {
        /// The scenario file.
        path: PathBuf,
        /// The system's reason.
        why: String,
    },
    /// The scenario is not valid YAML of the scenario format.
    #[error("{at}: {message}")]
    Syntax {
        /// Where.
        at: Place,
        /// What is wrong.
        message: String,
    },
    /// The board file the scenario names cannot be read.
    #[error("{at}: the board file {} cannot be read: {why}", .board.display())]
    BoardUnreadable {
        /// The scenario's `board:` key.
        at: Place,
        /// The board file.
        board: PathBuf,
        /// The system's reason.
        why: String,
    },
    /// The board file (or one of its BSDL files) is bad.
    #[error(transparent)]
    Board(BoardError),
    /// A defect's BSDL file path cannot be made absolute.
    #[error("{}: {why}", .path.display())]
    DefectPath {
        /// The path as joined to the scenario's folder.
        path: PathBuf,
        /// The system's reason.
        why: String,
    },
    /// A defect does not fit the board.
    #[error("{at}: {error}")]
    Defect {
        /// The defect's item in `defects:`.
        at: Place,
        /// What is wrong.
        error: DefectError,
    },
    /// A program the scenario names cannot be read.
    #[error("{at}: the program {} cannot be read: {why}", .program.display())]
    ProgramUnreadable {
        /// The program's item in `programs:`.
        at: Place,
        /// The program file.
        program: PathBuf,
        /// The system's reason.
        why: String,
    },
    /// A program is bad.
    #[error(transparent)]
    Program(ProgramError),
    /// A capture the scenario compares with is bad.
    #[error(transparent)]
    Capture(CaptureError),
    /// The target to run on cannot be had.
    #[error(transparent)]
    Target(TargetError),
}

/// Why a [`TargetSource`](super::TargetSource) gave no target.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum TargetError {
    /// A remote board (`tcp://`).
    #[error(transparent)]
    Remote(#[from] OpenError),
    /// A target of the caller's own (a real board through an adapter)
    /// refused, in words.
    #[error("{0}")]
    Refused(String),
}
