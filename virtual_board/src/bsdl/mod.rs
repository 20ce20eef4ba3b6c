//! The BSDL reader: text → `DeviceModel`.
//!
//! `lexer` splits the VHDL subset into tokens, `parser` finds the entity's
//! statements, `strings` reads the little languages inside attribute strings,
//! and `lower` turns it all into a checked model. The reader is pure over
//! `&str`; `read_file` adds the path to every error.

mod error;
mod lexer;
mod lower;
mod parser;
mod strings;

use std::path::Path;

pub use error::{BsdlError, BsdlErrorKind};

use crate::model::device::DeviceModel;
use crate::span::LineIndex;

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
    let tokens = lexer::tokenize(text).map_err(|(offset, kind)| located((offset, 1, kind)))?;
    let syntax = parser::parse(text, &tokens).map_err(located)?;
    lower::lower(text, &syntax, &lines, package).map_err(located)
}

/// Reads a BSDL file into a device model; the model's `source` is the path.
///
/// # Errors
/// The file cannot be read, or [`parse_bsdl`] fails; the error carries the path.
pub fn read_bsdl(path: &Path) -> Result<DeviceModel, BsdlError> {
    let text = std::fs::read_to_string(path).map_err(|e| BsdlError {
        path: Some(path.to_path_buf()),
        span: Default::default(),
        kind: BsdlErrorKind::Io(e.to_string()),
    })?;
    let mut model = parse_bsdl(&text).map_err(|mut e| {
        e.path = Some(path.to_path_buf());
        e
    })?;
    model.source = Some(path.to_path_buf());
    Ok(model)
}
