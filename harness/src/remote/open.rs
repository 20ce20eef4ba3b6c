//! A `RemoteBoard` for a command: connected, its hello checked against the
//! local board file, its defects set when the command names some; the
//! admin token from a file or the environment.

use std::path::Path;
use std::time::Duration;

use virtual_board::{DefectSpec, LoadedBoard, TapTarget};

use super::client::{parse_target, split_client_name, RemoteBoard};
use super::hello::BoardDescription;
use super::open_error::{OpenError, TokenError};
use super::request::Scope;
use crate::scenario::{TargetError, TargetSource};

/// The environment variable that may hold the admin token (never the
/// command line: on a shared machine every user can read it there).
pub const TOKEN_VARIABLE: &str = "BOARDTWIN_ADMIN_TOKEN";

/// How long a client waits to connect, and for any one reply (an idle
/// request of 2^32 periods on a board whose defects act on TCK takes long).
const TIMEOUT: Duration = Duration::from_secs(300);

/// The admin token: the first line of `file` when given, else the
/// environment variable [`TOKEN_VARIABLE`]; `None` when neither is set.
///
/// # Errors
/// [`TokenError`]: the file cannot be read, or holds no token.
pub fn admin_token(file: Option<&Path>) -> Result<Option<String>, TokenError> {
    if let Some(path) = file {
        let text = std::fs::read_to_string(path).map_err(|e| TokenError::Read {
            path: path.to_path_buf(),
            why: e.to_string(),
        })?;
        let token = text.lines().next().unwrap_or("").trim().to_string();
        if token.is_empty() {
            return Err(TokenError::Empty {
                path: path.to_path_buf(),
            });
        }
        return Ok(Some(token));
    }
    Ok(std::env::var(TOKEN_VARIABLE)
        .ok()
        .map(|t| t.trim().to_string())
        .filter(|t| !t.is_empty()))
}

/// Connects to `target` (`tcp://HOST:PORT`, or `tcp://NAME@HOST:PORT` to
/// give the server a name: an exercise's trainee) and checks that the board it
/// serves is `design`'s (TAP ports, TRST*, devices in chain order). With
/// `defects` `Some`, the connection's board gets exactly those defects,
/// which needs `token`.
///
/// # Errors
/// [`OpenError`]: a bad address, no connection, a board that differs from
/// the board file (each difference named), defects without a token or refused.
pub fn open_target(
    target: &str,
    design: &LoadedBoard,
    defects: Option<&[DefectSpec]>,
    token: Option<&str>,
) -> Result<RemoteBoard, OpenError> {
    let (name, bare) = split_client_name(target);
    let address = parse_target(&bare)?;
    let mut remote = match name {
        Some(name) => RemoteBoard::connect_as(&address, TIMEOUT, &name),
        None => RemoteBoard::connect(&address, TIMEOUT),
    }?;
    let local = BoardDescription::of(&design.board);
    let differences = local.differences(remote.description());
    if !differences.is_empty() {
        return Err(OpenError::OtherBoard {
            target: target.to_string(),
            file: design.path.clone(),
            differences,
        });
    }
    if remote.description().board != local.board {
        tracing::warn!(
            "the board at {target} is named `{}`, the board file's `{}`; their TAP ports and devices match",
            remote.description().board,
            local.board
        );
    }
    if let Some(defects) = defects {
        let Some(token) = token else {
            if defects.is_empty() {
                return Ok(remote);
            }
            return Err(OpenError::NoToken {
                target: target.to_string(),
            });
        };
        remote.clear(token, Scope::Session)?;
        if !defects.is_empty() {
            remote.inject(token, Scope::Session, defects)?;
        }
    }
    Ok(remote)
}

/// Scenario replay on a remote board: one connection per scenario, its
/// defects set through the admin token (a scenario without defects runs
/// on the board as served when there is no token).
#[derive(Clone, Debug)]
pub struct RemoteTargets {
    /// `tcp://HOST:PORT`.
    pub target: String,
    /// The admin token, if the user gave one.
    pub token: Option<String>,
}

impl TargetSource for RemoteTargets {
    fn open(
        &self,
        design: &LoadedBoard,
        _built: &LoadedBoard,
        defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, TargetError> {
        let board = open_target(&self.target, design, Some(defects), self.token.as_deref())?;
        Ok(Box::new(board))
    }
}
