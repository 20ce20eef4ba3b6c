//! Pieces of the plain-text reports the command line prints, and safe file output.
//!
//! - `table`: `TextTable`, columns aligned with spaces.
//! - `source_snippet`: `SourceSnippet`, the line an error points at with a caret under the place.
//! - `atomic`: `write_atomic`, a whole file or nothing.
//! - `count`: `count`, a number and its noun in the singular or the plural.

pub mod atomic;
pub mod count;
pub mod source_snippet;
pub mod table;
