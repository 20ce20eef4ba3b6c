//! `SvfError`: what can be wrong with an SVF file, and where.

use std::fmt;
use std::path::PathBuf;

use virtual_board::{Span, TapState};

use super::parser::svf_state_name;

/// What is wrong with an SVF text.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum SvfErrorKind {
    /// A character SVF does not use outside comments and hex data.
    #[error("unexpected character `{0}`")]
    BadCharacter(char),
    /// A `(` without its `)`.
    #[error("`(` is not closed by `)` before the end of the file")]
    UnclosedParen,
    /// A statement without its closing `;`.
    #[error("{0} statement is not closed by `;` before the end of the file")]
    UnclosedStatement(&'static str),
    /// The grammar expected something else here.
    #[error("expected {expected}, found {found}")]
    Unexpected {
        /// What the grammar wanted.
        expected: &'static str,
        /// What the text has.
        found: String,
    },
    /// A keyword that starts no SVF statement.
    #[error("`{0}` is not an SVF statement")]
    UnknownStatement(String),
    /// An SVF statement this reader does not implement.
    #[error("{0} is not supported: boardtwin drives TAP ports only, not parallel I/O")]
    NotSupported(&'static str),
    /// A word that is not one of the sixteen SVF state names.
    #[error("`{0}` is not an SVF state name")]
    UnknownState(String),
    /// A state where SVF needs a stable one (RESET, IDLE, DRPAUSE, IRPAUSE).
    #[error("{what} must be a stable state (RESET, IDLE, DRPAUSE or IRPAUSE), not {}", svf_state_name(*.state))]
    NotStable {
        /// Which argument.
        what: &'static str,
        /// The state given.
        state: TapState,
    },
    /// An explicit STATE path with two neighbours more than one TCK apart.
    #[error("STATE path: {} is not one TCK from {}", svf_state_name(*.to), svf_state_name(*.from))]
    IllegalStep {
        /// The state before.
        from: TapState,
        /// The state listed after it.
        to: TapState,
    },
    /// A character inside a hex value that is not a hex digit.
    #[error("`{0}` is not a hex digit")]
    BadHexDigit(char),
    /// `( )` with no digits, for a length above zero.
    #[error("{0}() has no hex digits")]
    EmptyHex(&'static str),
    /// A hex value with one bits beyond the stated length.
    #[error("{field} value has bits set beyond the length of {length} bits")]
    HexTooWide {
        /// TDI, TDO, MASK or SMASK.
        field: &'static str,
        /// The statement's length.
        length: usize,
    },
    /// TDI, TDO, MASK or SMASK given twice in one statement.
    #[error("{0} is given twice in this statement")]
    DuplicateField(&'static str),
    /// A length different from the last one of this command, without TDI.
    #[error("{command} {length}: TDI must be given when the length changes ({})", match .previous {
        Some(n) => format!("the last {command} had {n} bits"),
        None => format!("there is no earlier {command}"),
    })]
    MissingTdi {
        /// SIR, SDR, HIR, HDR, TIR or TDR.
        command: &'static str,
        /// The new length.
        length: usize,
        /// The previous length of this command, if there was one.
        previous: Option<usize>,
    },
    /// A number where a whole number is needed.
    #[error("{what} must be a whole number, found `{found}`")]
    NotWhole {
        /// What the number is.
        what: &'static str,
        /// As written.
        found: String,
    },
    /// A number that does not fit.
    #[error("{what} `{found}` is too large (at most {max})")]
    TooLarge {
        /// What the number is.
        what: &'static str,
        /// As written.
        found: String,
        /// The limit.
        max: u64,
    },
    /// A time or frequency that is not a positive finite number.
    #[error("{what} must be a positive finite number, found `{found}`")]
    NotPositive {
        /// What the number is.
        what: &'static str,
        /// As written.
        found: String,
    },
    /// A time that is negative or not a finite number.
    #[error("{what} must be a finite number of seconds, zero or more, found `{found}`")]
    Negative {
        /// What the number is.
        what: &'static str,
        /// As written.
        found: String,
    },
    /// RUNTEST's MAXIMUM below its minimum time.
    #[error("RUNTEST MAXIMUM {max} SEC is less than the minimum time {min} SEC")]
    MaximumBelowMinimum {
        /// The minimum time, as written.
        min: String,
        /// The maximum time, as written.
        max: String,
    },
    /// More scan bits in one program than the reader holds in memory.
    #[error("the scans of this program add up to more than {max} bits (boardtwin's limit)")]
    ProgramTooLarge {
        /// The limit.
        max: u64,
    },
    /// A `! part N` comment whose number does not fit.
    #[error("part number `{0}` is too large")]
    PartTooLarge(String),
}

/// An SVF error with its place: `path:line:column: message`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct SvfError {
    /// The file, when the text came from one.
    pub path: Option<PathBuf>,
    /// Where in the text.
    pub span: Span,
    /// What is wrong.
    pub kind: SvfErrorKind,
}

impl fmt::Display for SvfError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let path = self
            .path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_else(|| "<svf>".to_string());
        write!(
            f,
            "{}:{}:{}: {}",
            path, self.span.line, self.span.column, self.kind
        )
    }
}

/// A piece of the text by byte offset; turned into a line and column only
/// when an error is reported, so reading stays linear in the text.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(super) struct Place {
    /// Byte offset.
    pub offset: usize,
    /// Length in bytes.
    pub len: usize,
}

/// An error located in the text, before the path is attached.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) struct Located {
    /// Where.
    pub place: Place,
    /// What.
    pub kind: SvfErrorKind,
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::Path;

    #[test]
    fn display_is_path_line_column_message() {
        let span = Span {
            offset: 10,
            len: 3,
            line: 2,
            column: 5,
        };
        let e = SvfError {
            path: None,
            span,
            kind: SvfErrorKind::NotSupported("PIO"),
        };
        assert_eq!(
            e.to_string(),
            "<svf>:2:5: PIO is not supported: boardtwin drives TAP ports only, not parallel I/O"
        );
        let e = SvfError {
            path: Some(Path::new("dir/a.svf").to_path_buf()),
            span,
            kind: SvfErrorKind::IllegalStep {
                from: TapState::RunTestIdle,
                to: TapState::ShiftDr,
            },
        };
        assert_eq!(
            e.to_string(),
            "dir/a.svf:2:5: STATE path: DRSHIFT is not one TCK from IDLE"
        );
    }
}
