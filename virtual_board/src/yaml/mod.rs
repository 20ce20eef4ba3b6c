//! The one way every YAML file of the workspace is read (board files,
//! native programs, scenarios, defect lists).
//!
//! [`read_yaml`] first reads the text into a [`YamlNode`] tree that keeps the
//! place of every key and value, refusing what serde would let through or
//! place badly: a key written twice in a mapping (both lines named), a
//! second document (at its `---`), nesting deeper than [`MAX_DEPTH`], and
//! aliases that repeat more than [`MAX_ALIAS_NODES`] nodes (at the alias).
//! Only then does serde build the typed value; its errors keep serde_yaml's
//! own location. Callers place their later checks with the tree
//! ([`YamlNode::at`]), never by searching the text.
//!
//! Every message quotes at most [`QUOTE_CHARS`] characters of the input.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

mod read;
mod tree;

use serde::de::DeserializeOwned;

pub use read::read_tree;
pub use tree::{NodeKind, PathStep, YamlNode};

use crate::span::{LineIndex, Span};

/// Deepest nesting of mappings and sequences a YAML file may have.
pub const MAX_DEPTH: usize = 64;

/// Most nodes that aliases may repeat in one file, all aliases together.
pub const MAX_ALIAS_NODES: u64 = 100_000;

/// Most characters of the input that one quoted piece of a message keeps.
pub const QUOTE_CHARS: usize = 48;

/// What is wrong with a YAML file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum YamlErrorKind {
    /// Not YAML.
    #[error("{0}")]
    Syntax(String),
    /// A key written twice in one mapping.
    #[error("key `{key}` is written twice in one mapping: on line {first} and on line {second}")]
    DuplicateKey {
        /// The key (clipped).
        key: String,
        /// Line of the first.
        first: u32,
        /// Line of the second.
        second: u32,
    },
    /// A `---` starting a second document.
    #[error("a second YAML document starts here; a file holds one document")]
    SecondDocument,
    /// Nesting deeper than [`MAX_DEPTH`].
    #[error("nesting deeper than {MAX_DEPTH} levels of mappings and sequences")]
    TooDeep,
    /// Aliases repeating too much.
    #[error("aliases repeat more than {MAX_ALIAS_NODES} nodes in all")]
    AliasBudget,
    /// A value of the wrong shape (serde's words).
    #[error("{0}")]
    Shape(String),
}

/// A YAML error and its place.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{}:{}: {kind}", .span.line, .span.column)]
pub struct YamlError {
    /// Where.
    pub span: Span,
    /// What.
    pub kind: YamlErrorKind,
}

/// Reads `text` as one YAML document into `T`, with the tree of places.
///
/// # Errors
/// See [`read_tree`]; then any shape error serde finds, at serde_yaml's
/// location.
pub fn read_yaml<T: DeserializeOwned>(text: &str) -> Result<(T, YamlNode), YamlError> {
    let tree = read_tree(text)?;
    let value = serde_yaml::from_str(text).map_err(|e| {
        let span = match e.location() {
            Some(l) => LineIndex::new(text).span(text, l.index(), 1),
            None => tree.span,
        };
        YamlError {
            span,
            kind: YamlErrorKind::Shape(clip_quotes(without_place(&e.to_string()))),
        }
    })?;
    Ok((value, tree))
}

/// `text` cut to [`QUOTE_CHARS`] characters, with `…` where it was cut.
pub fn clip(text: &str) -> String {
    match text.char_indices().nth(QUOTE_CHARS) {
        Some((cut, _)) => format!("{}…", &text[..cut]),
        None => text.to_string(),
    }
}

/// `message` with every piece between quotes (`` ` `` or `"`) clipped by
/// [`clip`], and the whole kept under a few hundred characters.
pub fn clip_quotes(message: &str) -> String {
    let mut out = String::new();
    let mut rest = message;
    while let Some(open) = rest.find(['`', '"']) {
        let q = rest.as_bytes()[open] as char;
        out.push_str(&rest[..=open]);
        let inner = &rest[open + 1..];
        let close = inner.find(q).unwrap_or(inner.len());
        out.push_str(&clip(&inner[..close]));
        rest = &inner[close..];
        if let Some(stripped) = rest.strip_prefix(q) {
            out.push(q);
            rest = stripped;
        }
    }
    out.push_str(rest);
    let limit = 8 * QUOTE_CHARS;
    if out.chars().count() > limit {
        out = clip_to(&out, limit);
    }
    out
}

fn clip_to(text: &str, chars: usize) -> String {
    match text.char_indices().nth(chars) {
        Some((cut, _)) => format!("{}…", &text[..cut]),
        None => text.to_string(),
    }
}

/// serde_yaml's message without its trailing ` at line L column C`.
fn without_place(message: &str) -> &str {
    match message.rsplit_once(" at line ") {
        Some((head, tail))
            if tail.split_once(" column ").is_some_and(|(l, c)| {
                !l.is_empty()
                    && !c.is_empty()
                    && l.bytes().chain(c.bytes()).all(|b| b.is_ascii_digit())
            }) =>
        {
            head
        }
        _ => message,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    fn error(text: &str) -> YamlError {
        read_tree(text).unwrap_err()
    }

    #[test]
    fn a_duplicate_key_names_both_lines() {
        let e = error("nets:\n  A: [U1.1]\n  B: [U1.2]\n  A: [U1.3]\n");
        assert_eq!((e.span.line, e.span.column), (4, 3));
        assert_eq!(
            e.kind,
            YamlErrorKind::DuplicateKey {
                key: "A".into(),
                first: 2,
                second: 4
            }
        );
        // The same key in two different mappings is no duplicate.
        assert!(read_tree("a: {x: 1}\nb: {x: 2}\n").is_ok());
        // Flow mappings too.
        let e = error("{ a: 1, a: 2 }");
        assert_eq!((e.span.line, e.span.column), (1, 9));
    }

    #[test]
    fn a_second_document_is_placed_at_its_marker() {
        let e = error("a: 1\n---\nb: 2\n");
        assert_eq!(e.kind, YamlErrorKind::SecondDocument);
        assert_eq!(e.span.line, 2);
    }

    #[test]
    fn nesting_is_bounded() {
        let deep = format!("{}{}", "[".repeat(MAX_DEPTH + 1), "]".repeat(MAX_DEPTH + 1));
        let e = error(&deep);
        assert_eq!(e.kind, YamlErrorKind::TooDeep);
        assert_eq!((e.span.line, e.span.column), (1, MAX_DEPTH as u32 + 1));
        let ok = format!("{}{}", "[".repeat(MAX_DEPTH), "]".repeat(MAX_DEPTH));
        assert!(read_tree(&ok).is_ok());
    }

    #[test]
    fn an_alias_bomb_is_refused_at_the_alias() {
        // Each level repeats the one before it nine times (the classic
        // "billion laughs" shape): 9^9 nodes from a few hundred bytes.
        let mut text = String::from("a0: &a0 [x]\n");
        for level in 1..10 {
            let prev = format!("*a{}", level - 1);
            let items = [prev.as_str(); 9].join(", ");
            text.push_str(&format!("a{level}: &a{level} [{items}]\n"));
        }
        let e = error(&text);
        assert_eq!(e.kind, YamlErrorKind::AliasBudget);
        assert!(e.span.line > 2, "placed at an alias, not the start: {e}");
        // A few aliases are fine.
        assert!(read_tree("a: &x [1, 2]\nb: *x\n").is_ok());
    }

    #[test]
    fn serde_errors_keep_their_place_and_clip_quotes() {
        let long = "z".repeat(10_000);
        let text = format!("a: 1\nb: {long}\n");
        let e = read_yaml::<BTreeMap<String, u32>>(&text).unwrap_err();
        assert_eq!(e.span.line, 2);
        assert!(e.to_string().len() < 300, "{e}");
        assert!(e.to_string().contains('…'), "{e}");
    }

    #[test]
    fn places_count_characters_not_bytes() {
        let e = error("é: 1\nü: [1, 2]\nü: 3\n");
        assert_eq!((e.span.line, e.span.column, e.span.offset), (3, 1, 17));
    }
}
