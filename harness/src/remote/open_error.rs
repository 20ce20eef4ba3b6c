//! `OpenError` and `TokenError`: why a command could not have its remote
//! board, or its admin token.

use std::path::PathBuf;

use super::client::RemoteError;

/// Why [`open_target`](super::open_target) gave no board.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum OpenError {
    /// A bad address, no connection, or the server refused a request.
    #[error(transparent)]
    Remote(#[from] RemoteError),
    /// The server's board is not the board file's.
    #[error("the board at {target} is not the one in {}:\n  {}", .file.display(), .differences.join("\n  "))]
    OtherBoard {
        /// The address as given.
        target: String,
        /// The board file.
        file: PathBuf,
        /// Each difference, in words.
        differences: Vec<String>,
    },
    /// Defects to set without an admin token.
    #[error(
        "the defects of the board at {target} can be set only with its admin token \
             (--admin-token-file FILE or the {} environment variable)",
        super::TOKEN_VARIABLE
    )]
    NoToken {
        /// The address as given.
        target: String,
    },
}

/// Why [`admin_token`](super::admin_token) gave no token.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum TokenError {
    /// The token file cannot be read.
    #[error("{}: cannot read the admin token file: {why}", .path.display())]
    Read {
        /// The file.
        path: PathBuf,
        /// The system's reason.
        why: String,
    },
    /// The token file's first line is empty.
    #[error("{}: the admin token file holds no token on its first line", .path.display())]
    Empty {
        /// The file.
        path: PathBuf,
    },
}
