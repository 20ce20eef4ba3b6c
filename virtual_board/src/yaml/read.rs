//! One pass over the YAML reader's events: the node tree, and the checks
//! that serde cannot make (duplicate keys, a second document, nesting depth,
//! alias expansion).
//!
//! The pass keeps its own stack, so no input can make it recurse; it stops
//! at the first problem, before any deeper nesting is read.

use std::collections::HashMap;

use saphyr_parser::{Event, Marker, Parser};

use super::tree::{NodeKind, YamlNode};
use super::{YamlError, YamlErrorKind, MAX_ALIAS_NODES, MAX_DEPTH};
use crate::span::{LineIndex, Span};

/// A container being read, with what it has so far.
struct Frame {
    span: Span,
    anchor: usize,
    /// Nodes inside, counting each alias as the nodes it repeats.
    expanded: u64,
    body: Body,
}

enum Body {
    Seq(Vec<YamlNode>),
    Map {
        entries: Vec<(YamlNode, YamlNode)>,
        key: Option<YamlNode>,
        /// Line of each scalar key seen, to name both places of a duplicate.
        seen: HashMap<String, u32>,
    },
}

/// Turns the reader's character positions into byte offsets, walking
/// forward from the last position asked for (events come in text order).
struct Places<'t> {
    text: &'t str,
    lines: LineIndex,
    chars: usize,
    bytes: usize,
}

impl<'t> Places<'t> {
    fn span(&mut self, m: &Marker) -> Span {
        if m.index() < self.chars {
            self.chars = 0;
            self.bytes = 0;
        }
        let rest = self.text.get(self.bytes..).unwrap_or("");
        let step: usize = rest
            .chars()
            .take(m.index() - self.chars)
            .map(char::len_utf8)
            .sum();
        self.bytes += step;
        self.chars = m.index();
        self.lines.span(self.text, self.bytes, 1)
    }
}

/// Reads `text` into a node tree; the empty document is an empty scalar.
///
/// # Errors
/// A syntax error, a key written twice in one mapping, a second document,
/// nesting deeper than [`MAX_DEPTH`], or aliases repeating more than
/// [`MAX_ALIAS_NODES`] nodes in all; each at the place it is written.
pub fn read_tree(text: &str) -> Result<YamlNode, YamlError> {
    let mut places = Places {
        text,
        lines: LineIndex::new(text),
        chars: 0,
        bytes: 0,
    };
    let fail = |span: Span, kind: YamlErrorKind| YamlError { span, kind };
    let mut stack: Vec<Frame> = Vec::new();
    let mut root: Option<(YamlNode, u64)> = None;
    let mut documents = 0usize;
    let mut anchors: HashMap<usize, u64> = HashMap::new();
    let mut repeated = 0u64;
    for event in Parser::new_from_str(text) {
        let (event, place) = event.map_err(|e| {
            let span = places.span(e.marker());
            // The scanner reads ahead in flow collections and has a depth
            // limit of its own: the same limit to the user.
            let kind = if e.info().contains("recursion limit") {
                YamlErrorKind::TooDeep
            } else {
                YamlErrorKind::Syntax(e.info().to_string())
            };
            fail(span, kind)
        })?;
        let span = places.span(&place.start);
        // (node, nodes it stands for, anchor) of a finished node.
        let done = match event {
            Event::DocumentStart(_) => {
                documents += 1;
                if documents > 1 {
                    return Err(fail(span, YamlErrorKind::SecondDocument));
                }
                continue;
            }
            Event::SequenceStart(anchor, _) | Event::MappingStart(anchor, _) => {
                if stack.len() >= MAX_DEPTH {
                    return Err(fail(span, YamlErrorKind::TooDeep));
                }
                let body = if matches!(event, Event::SequenceStart(..)) {
                    Body::Seq(Vec::new())
                } else {
                    Body::Map {
                        entries: Vec::new(),
                        key: None,
                        seen: HashMap::new(),
                    }
                };
                stack.push(Frame {
                    span,
                    anchor,
                    expanded: 1,
                    body,
                });
                continue;
            }
            Event::SequenceEnd | Event::MappingEnd => {
                let Some(frame) = stack.pop() else {
                    continue;
                };
                let kind = match frame.body {
                    Body::Seq(items) => NodeKind::Seq(items),
                    Body::Map { entries, .. } => NodeKind::Map(entries),
                };
                let node = YamlNode {
                    span: frame.span,
                    kind,
                };
                (node, frame.expanded, frame.anchor)
            }
            Event::Scalar(value, _, anchor, _) => {
                // A scalar's place covers it, so a caret can underline it.
                let end = places.span(&place.end);
                let span = Span {
                    len: end.offset.saturating_sub(span.offset).max(1),
                    ..span
                };
                let node = YamlNode {
                    span,
                    kind: NodeKind::Scalar(value.into_owned()),
                };
                (node, 1, anchor)
            }
            Event::Alias(id) => {
                let size = anchors.get(&id).copied().unwrap_or(1);
                repeated = repeated.saturating_add(size);
                if repeated > MAX_ALIAS_NODES {
                    return Err(fail(span, YamlErrorKind::AliasBudget));
                }
                let node = YamlNode {
                    span,
                    kind: NodeKind::Alias,
                };
                (node, size, 0)
            }
            Event::Nothing | Event::StreamStart | Event::StreamEnd | Event::DocumentEnd => continue,
        };
        let (node, size, anchor) = done;
        if anchor != 0 {
            anchors.insert(anchor, size);
        }
        match stack.last_mut() {
            None => root = Some((node, size)),
            Some(parent) => {
                parent.expanded = parent.expanded.saturating_add(size);
                attach(parent, node)?;
            }
        }
    }
    Ok(root.map(|(n, _)| n).unwrap_or(YamlNode {
        span: places.lines.span(text, 0, 0),
        kind: NodeKind::Scalar(String::new()),
    }))
}

/// Adds a finished node to the container being read.
fn attach(parent: &mut Frame, node: YamlNode) -> Result<(), YamlError> {
    match &mut parent.body {
        Body::Seq(items) => items.push(node),
        Body::Map { entries, key, seen } => match key.take() {
            Some(k) => entries.push((k, node)),
            None => {
                if let Some(name) = node.scalar() {
                    if let Some(first) = seen.insert(name.to_string(), node.span.line) {
                        return Err(YamlError {
                            span: node.span,
                            kind: YamlErrorKind::DuplicateKey {
                                key: super::clip(name),
                                first,
                                second: node.span.line,
                            },
                        });
                    }
                }
                *key = Some(node);
            }
        },
    }
    Ok(())
}
