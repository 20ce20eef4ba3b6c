//! The BSDL reader: text → `DeviceModel`.
//!
//! `lexer` splits the VHDL subset into tokens, `parser` finds the entity's
//! statements, `strings` reads the little languages inside attribute strings,
//! and `lower` turns it all into a checked model. The reader is pure over
//! `&str`; `read_bsdl` adds the path to every error, and `read_bsdl_text`
//! refuses a file that is not text at its first bad byte.

mod error;
mod lexer;
mod lower;
mod parser;
mod strings;
mod text;

use std::path::Path;

pub use error::{BsdlError, BsdlErrorKind};

use crate::model::device::DeviceModel;
use crate::span::{LineIndex, Span};

/// Reads BSDL text into a device model.
///
/// # Errors
/// The first syntax or rule error, located by line and column. Never panics,
/// whatever the input.
pub fn parse_bsdl(text: &str) -> Result<DeviceModel, BsdlError> {
    parse_bsdl_package(text, None)
}

/// [`parse_bsdl`] with the pin map of `package` instead of the one the
/// PHYSICAL_PIN_MAP generic selects (a board may fit another package).
///
/// # Errors
/// As [`parse_bsdl`]; an unknown package is an error at the entity name.
pub fn parse_bsdl_package(text: &str, package: Option<&str>) -> Result<DeviceModel, BsdlError> {
    let lines = LineIndex::new(text);
    let located = |(offset, len, kind): (usize, usize, BsdlErrorKind)| BsdlError {
        path: None,
        span: lines.span(text, offset, len),
        kind,
    };
    if let Some(bad) = text::first_control(text) {
        return Err(located((bad.0, 1, bad.1)));
    }
    let tokens = lexer::tokenize(text).map_err(|(offset, kind)| located((offset, 1, kind)))?;
    let syntax = parser::parse(text, &tokens).map_err(located)?;
    lower::lower(text, &syntax, &lines, package).map_err(located)
}

/// Reads a BSDL file into a device model; the model's `source` is the path.
///
/// # Errors
/// The file cannot be read, or [`parse_bsdl`] fails; the error carries the path.
pub fn read_bsdl(path: &Path) -> Result<DeviceModel, BsdlError> {
    let text = read_bsdl_text(path)?;
    let mut model = parse_bsdl(&text).map_err(|mut e| {
        e.path = Some(path.to_path_buf());
        e
    })?;
    model.source = Some(path.to_path_buf());
    Ok(model)
}

/// The text of a BSDL file.
///
/// # Errors
/// The file cannot be read (no place), or is not text: then the error
/// holds the line and column of the first byte that is not UTF-8 or is a
/// control character.
pub fn read_bsdl_text(path: &Path) -> Result<String, BsdlError> {
    let error = |span: Span, kind: BsdlErrorKind| BsdlError {
        path: Some(path.to_path_buf()),
        span,
        kind,
    };
    let bytes = std::fs::read(path)
        .map_err(|e| error(Span::default(), BsdlErrorKind::Io(e.to_string())))?;
    match text::text_of(&bytes) {
        Ok(text) => Ok(text.to_string()),
        Err((at, kind)) => {
            // Everything before the bad byte is text: place it there.
            let before = String::from_utf8_lossy(&bytes[..at]);
            Err(error(Span::at(&before, before.len(), 1), kind))
        }
    }
}
