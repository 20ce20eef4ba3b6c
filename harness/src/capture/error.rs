//! `CaptureError`: what is wrong with a capture log, a VCD file or the JTAG traffic in it, and where.

use std::{fmt, path::PathBuf};

use virtual_board::Span;

/// Longest piece of the input an error message quotes, in characters.
const MAX_QUOTED: usize = 40;

/// What is wrong.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum CaptureErrorKind {
    /// The file could not be read.
    #[error("cannot read the file: {0}")]
    Io(String),
    /// A capture-log line that is not a scan record (serde_json's message).
    #[error("not a scan record: {0}")]
    Json(String),
    /// A scan-record field whose value is wrong.
    #[error("`{field}`: {message}")]
    BadField {
        /// The field.
        field: &'static str,
        /// What is wrong with it.
        message: String,
    },
    /// The text ends too early.
    #[error("the file ends where {expected} should be")]
    UnexpectedEnd {
        /// What the grammar wanted.
        expected: String,
    },
    /// The grammar expected something else here.
    #[error("expected {expected}, found `{found}`")]
    Unexpected {
        /// What the grammar wanted.
        expected: String,
        /// What the text has (cut to a few dozen characters).
        found: String,
    },
    /// A `$timescale` other than 1, 10 or 100 of s, ms, us, ns, ps or fs.
    #[error("timescale `{0}`: give 1, 10 or 100 and one of s, ms, us, ns, ps, fs")]
    BadTimescale(String),
    /// A value change for a code no `$var` declares.
    #[error("no `$var` declares identifier code `{0}`")]
    UnknownCode(String),
    /// A `#time` earlier than the one before it.
    #[error("time {time} is earlier than the time before it ({previous})")]
    TimeBackwards {
        /// The time written.
        time: u64,
        /// The time before it.
        previous: u64,
    },
    /// A vector value with more bits than its variable.
    #[error("value of {bits} bits for `{code}`, declared {width} bits wide")]
    VectorTooWide {
        /// Bits in the value.
        bits: usize,
        /// Declared width.
        width: u32,
        /// Identifier code.
        code: String,
    },
    /// `$upscope` with no scope open.
    #[error("`$upscope` with no `$scope` open")]
    UnmatchedUpscope,
    /// A signal the decoder was told to use is not in the file.
    #[error("the recording has no signal `{name}` (signals present: {present})")]
    MissingSignal {
        /// The name asked for.
        name: String,
        /// The signals of the file, scope-qualified.
        present: String,
    },
    /// A name that fits several different signals.
    #[error("`{name}` names several signals ({matches}); give it as scope.name")]
    AmbiguousSignal {
        /// The name asked for.
        name: String,
        /// The signals it fits.
        matches: String,
    },
    /// A JTAG wire declared wider than one bit.
    #[error("`{name}` is {width} bits wide; a TAP wire is one bit")]
    NotOneBit {
        /// The signal.
        name: String,
        /// Its declared width.
        width: u32,
    },
    /// TCK has no rising edge in the whole recording.
    #[error("TCK `{name}` never rises from 0 to 1: the recording holds no TCK edges")]
    TckNeverRises {
        /// The TCK signal.
        name: String,
    },
    /// No Test-Logic-Reset to start from, and no start state given.
    #[error(
        "the TAP state is never known: the recording has neither five rising TCK edges with \
         TMS high nor TRST* low; give the state the recording starts in"
    )]
    NoReset,
}

/// A capture error with its place: `path:line:column: message`, or
/// `path: message` when the problem is the file as a whole.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct CaptureError {
    /// The file read.
    pub path: PathBuf,
    /// Where in it; `None` when no one place is at fault (a missing signal).
    pub span: Option<Span>,
    /// What is wrong.
    pub kind: CaptureErrorKind,
}

impl fmt::Display for CaptureError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.span {
            Some(s) => write!(
                f,
                "{}:{}:{}: {}",
                self.path.display(),
                s.line,
                s.column,
                self.kind
            ),
            None => write!(f, "{}: {}", self.path.display(), self.kind),
        }
    }
}

/// `text` cut to [`MAX_QUOTED`] characters, with `…` when it was cut.
pub(super) fn quoted(text: &str) -> String {
    let mut out: String = text.chars().take(MAX_QUOTED).collect();
    if text.chars().nth(MAX_QUOTED).is_some() {
        out.push('…');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_is_path_line_column_message() {
        let span = Span {
            offset: 4,
            len: 1,
            line: 2,
            column: 3,
        };
        let e = CaptureError {
            path: "run.vcd".into(),
            span: Some(span),
            kind: CaptureErrorKind::UnknownCode("%".into()),
        };
        assert_eq!(
            e.to_string(),
            "run.vcd:2:3: no `$var` declares identifier code `%`"
        );
        let e = CaptureError {
            span: None,
            kind: CaptureErrorKind::NoReset,
            ..e
        };
        assert!(e
            .to_string()
            .starts_with("run.vcd: the TAP state is never known"));
    }

    #[test]
    fn long_input_is_cut_when_quoted() {
        assert_eq!(quoted("abc"), "abc");
        let long = "x".repeat(100);
        assert_eq!(quoted(&long), format!("{}…", "x".repeat(MAX_QUOTED)));
    }
}
