//! Pieces of the plain-text reports the command line prints.
//!
//! - `table`: `TextTable`, columns aligned with spaces.
//! - `source_snippet`: `SourceSnippet`, the line an error points at with a caret under the place.

pub mod source_snippet;
pub mod table;
