//! `YamlNode`: a YAML document as nodes that keep where they were written.
//!
//! Built from the reader's event stream in one pass (`read.rs`); used to
//! place errors that serde cannot place (an unknown net, a step that does not
//! fit the board) by path, never by searching the text.

use crate::span::Span;

/// One node of a YAML document and its place.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct YamlNode {
    /// Where the node starts.
    pub span: Span,
    /// What it holds.
    pub kind: NodeKind,
}

/// What a node holds.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum NodeKind {
    /// A scalar, as written (quotes removed).
    Scalar(String),
    /// A sequence.
    Seq(Vec<YamlNode>),
    /// A mapping, in the order written.
    Map(Vec<(YamlNode, YamlNode)>),
    /// An alias of an anchored node.
    Alias,
}

/// One step of a path into a document.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PathStep<'a> {
    /// The value of this key of a mapping.
    Key(&'a str),
    /// The item at this index (from 0) of a sequence.
    Index(usize),
}

impl YamlNode {
    /// The scalar text, if this is a scalar.
    pub fn scalar(&self) -> Option<&str> {
        match &self.kind {
            NodeKind::Scalar(s) => Some(s),
            _ => None,
        }
    }

    /// The value under `key` of a mapping.
    pub fn get(&self, key: &str) -> Option<&YamlNode> {
        self.entry(key).map(|(_, v)| v)
    }

    /// The key node and value node of `key` in a mapping.
    pub fn entry(&self, key: &str) -> Option<(&YamlNode, &YamlNode)> {
        match &self.kind {
            NodeKind::Map(entries) => entries
                .iter()
                .find(|(k, _)| k.scalar() == Some(key))
                .map(|(k, v)| (k, v)),
            _ => None,
        }
    }

    /// The item `index` (from 0) of a sequence.
    pub fn item(&self, index: usize) -> Option<&YamlNode> {
        match &self.kind {
            NodeKind::Seq(items) => items.get(index),
            _ => None,
        }
    }

    /// The node at `path`, if every step exists.
    pub fn at(&self, path: &[PathStep<'_>]) -> Option<&YamlNode> {
        path.iter().try_fold(self, |node, step| match step {
            PathStep::Key(k) => node.get(k),
            PathStep::Index(i) => node.item(*i),
        })
    }

    /// The place of the deepest node along `path` that exists (the document
    /// itself when not even the first step does).
    pub fn span_at(&self, path: &[PathStep<'_>]) -> Span {
        let mut node = self;
        for step in path {
            let next = match step {
                PathStep::Key(k) => node.get(k),
                PathStep::Index(i) => node.item(*i),
            };
            match next {
                Some(n) => node = n,
                None => break,
            }
        }
        node.span
    }

    /// The first scalar (key or value, depth first in the order written)
    /// whose text is `text`.
    pub fn find_scalar(&self, text: &str) -> Option<&YamlNode> {
        let mut stack = vec![self];
        while let Some(node) = stack.pop() {
            match &node.kind {
                NodeKind::Scalar(s) if s == text => return Some(node),
                NodeKind::Seq(items) => stack.extend(items.iter().rev()),
                NodeKind::Map(entries) => {
                    stack.extend(entries.iter().rev().flat_map(|(k, v)| [v, k]));
                }
                _ => {}
            }
        }
        None
    }

    /// The first item of a sequence (or value of a mapping) holding a
    /// scalar `text` anywhere inside it: the entry a name belongs to.
    pub fn child_holding(&self, text: &str) -> Option<&YamlNode> {
        match &self.kind {
            NodeKind::Seq(items) => items.iter().find(|i| i.find_scalar(text).is_some()),
            NodeKind::Map(entries) => entries
                .iter()
                .find(|(k, v)| k.scalar() == Some(text) || v.find_scalar(text).is_some())
                .map(|(_, v)| v),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::read_tree;
    use super::*;

    #[test]
    fn paths_reach_the_place_written() {
        let text = "a:\n  - x\n  - { b: 2, c: [3, 4] }\nd: 5\n";
        let tree = read_tree(text).unwrap();
        let c1 = tree.at(&[PathStep::Key("a"), PathStep::Index(1), PathStep::Key("c")]);
        assert_eq!(c1.map(|n| (n.span.line, n.span.column)), Some((3, 16)));
        assert_eq!(tree.get("d").map(|n| n.span.line), Some(4));
        // A path that stops early gives the deepest node that exists.
        let s = tree.span_at(&[PathStep::Key("a"), PathStep::Index(7)]);
        assert_eq!((s.line, s.column), (2, 3));
        assert_eq!(tree.find_scalar("4").map(|n| n.span.column), Some(20));
        let holder = tree.get("a").and_then(|a| a.child_holding("3"));
        assert_eq!(holder.map(|n| n.span.line), Some(3));
    }
}
