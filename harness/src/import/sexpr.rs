//! The s-expressions EDIF is written in: a tokenizer and a tree reader that
//! keep every list's and atom's line and column.
//!
//! Lexical rules taken (EIA-548 / EDIF 2 0 0, from memory): `(` and `)`
//! delimit lists; whitespace separates atoms; a string is in double quotes
//! and holds no raw `"`; inside a string `%` opens a run of decimal ASCII
//! codes separated by spaces, closed by another `%` (`%34%` is a quote);
//! everything else up to a delimiter is one word (a keyword, an identifier
//! such as `&17` or `U1`, or an integer). The reader is iterative, so
//! nesting depth costs no stack; it stops at [`MAX_DEPTH`].

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::Path;

use super::netlist::{ImportError, ImportErrorKind};

/// Deepest nesting read (an EDIF netlist needs about ten levels).
pub const MAX_DEPTH: usize = 200;

/// One atom or list, with the 1-based line and column where it starts.
#[derive(Clone, Debug, PartialEq)]
pub struct Node {
    /// What it is.
    pub item: Item,
    /// Line (1-based).
    pub line: u32,
    /// Column (1-based, in characters).
    pub column: u32,
}

/// The content of a [`Node`].
#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    /// `( … )`.
    List(Vec<Node>),
    /// A bare word: keyword, identifier or number.
    Word(String),
    /// A quoted string, `%…%` escapes decoded.
    Str(String),
}

impl Node {
    /// The list's items, or nothing for an atom.
    pub fn items(&self) -> &[Node] {
        match &self.item {
            Item::List(v) => v,
            _ => &[],
        }
    }

    /// The bare word, if this is one.
    pub fn word(&self) -> Option<&str> {
        match &self.item {
            Item::Word(w) => Some(w),
            _ => None,
        }
    }

    /// The string, if this is one.
    pub fn string(&self) -> Option<&str> {
        match &self.item {
            Item::Str(s) => Some(s),
            _ => None,
        }
    }

    /// A list's first item when it is a word (the form's keyword).
    pub fn head(&self) -> Option<&str> {
        self.items().first().and_then(Node::word)
    }

    /// True when this is a list whose keyword is `kw` (any case).
    pub fn is(&self, kw: &str) -> bool {
        self.head().is_some_and(|h| h.eq_ignore_ascii_case(kw))
    }

    /// The sub-lists after the keyword whose keyword is `kw`.
    pub fn forms<'a>(&'a self, kw: &'a str) -> impl Iterator<Item = &'a Node> + 'a {
        self.items().iter().skip(1).filter(move |n| n.is(kw))
    }

    /// The first sub-list whose keyword is `kw`.
    pub fn form(&self, kw: &str) -> Option<&Node> {
        self.items().iter().skip(1).find(|n| n.is(kw))
    }
}

/// Reads one top-level list from `text` (`path` only names the file).
///
/// # Errors
/// A list never closed (placed at its `(`), a `)` with no list open, a
/// string never closed, a bad `%` escape, nesting deeper than
/// [`MAX_DEPTH`], no list at all, or text after the top-level list.
pub fn read_sexpr(text: &str, path: &Path) -> Result<Node, ImportError> {
    let err = |line, column, kind| ImportError::at(path, line, column, kind);
    let other = |line, column, s: &str| err(line, column, ImportErrorKind::Other(s.to_string()));
    let mut chars = text.chars().peekable();
    let (mut line, mut column) = (1u32, 1u32);
    // Open lists: (line, column, items so far).
    let mut stack: Vec<(u32, u32, Vec<Node>)> = Vec::new();
    let mut top: Option<Node> = None;
    while let Some(c) = chars.next() {
        let (l, col) = (line, column);
        let step = |ch: char, line: &mut u32, column: &mut u32| {
            if ch == '\n' {
                *line += 1;
                *column = 1;
            } else {
                *column += 1;
            }
        };
        step(c, &mut line, &mut column);
        let node = match c {
            c if c.is_whitespace() => continue,
            '(' => {
                if stack.len() >= MAX_DEPTH {
                    return Err(other(
                        l,
                        col,
                        &format!("lists nested deeper than {MAX_DEPTH} levels"),
                    ));
                }
                if top.is_some() {
                    return Err(other(l, col, "text after the end of the top-level list"));
                }
                stack.push((l, col, Vec::new()));
                continue;
            }
            ')' => match stack.pop() {
                Some((ol, oc, items)) => Node {
                    item: Item::List(items),
                    line: ol,
                    column: oc,
                },
                None => return Err(err(l, col, ImportErrorKind::StrayClose)),
            },
            '"' => {
                let mut s = String::new();
                loop {
                    let Some(c) = chars.next() else {
                        return Err(other(l, col, "this string is never closed"));
                    };
                    let (el, ec) = (line, column);
                    step(c, &mut line, &mut column);
                    match c {
                        '"' => break,
                        '%' => {
                            // Decimal codes up to the closing `%`.
                            let mut code = String::new();
                            loop {
                                let Some(d) = chars.next() else {
                                    return Err(other(el, ec, "a `%` escape is never closed"));
                                };
                                step(d, &mut line, &mut column);
                                if d == '%' || d.is_whitespace() {
                                    if !code.is_empty() {
                                        let ch = code
                                            .parse::<u32>()
                                            .ok()
                                            .and_then(char::from_u32)
                                            .ok_or_else(|| {
                                                other(el, ec, "a `%` escape holds a bad code")
                                            })?;
                                        s.push(ch);
                                        code.clear();
                                    }
                                    if d == '%' {
                                        break;
                                    }
                                } else if d.is_ascii_digit() && code.len() < 10 {
                                    code.push(d);
                                } else {
                                    return Err(other(
                                        line,
                                        column.saturating_sub(1).max(1),
                                        "a `%` escape holds something other than decimal codes",
                                    ));
                                }
                            }
                        }
                        c => s.push(c),
                    }
                }
                Node {
                    item: Item::Str(s),
                    line: l,
                    column: col,
                }
            }
            c => {
                let mut w = String::from(c);
                while let Some(&d) = chars.peek() {
                    if d.is_whitespace() || matches!(d, '(' | ')' | '"') {
                        break;
                    }
                    chars.next();
                    step(d, &mut line, &mut column);
                    w.push(d);
                }
                Node {
                    item: Item::Word(w),
                    line: l,
                    column: col,
                }
            }
        };
        match stack.last_mut() {
            Some((_, _, items)) => items.push(node),
            None if top.is_none() && matches!(node.item, Item::List(_)) => top = Some(node),
            None => return Err(other(l, col, "text outside the top-level list")),
        }
    }
    if let Some((l, c, _)) = stack.last() {
        return Err(err(*l, *c, ImportErrorKind::OpenList));
    }
    top.ok_or_else(|| ImportError::at(path, 0, 0, ImportErrorKind::NoRecords))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(t: &str) -> Result<Node, ImportError> {
        read_sexpr(t, Path::new("n.edf"))
    }

    #[test]
    fn lists_atoms_strings_and_places() {
        let n = read("(edif  x\n (rename &1 \"A%34%B\")  (n 12))").unwrap();
        assert!(n.is("EDIF"));
        assert_eq!((n.line, n.column), (1, 1));
        let r = &n.items()[2];
        assert_eq!((r.line, r.column), (2, 2));
        assert_eq!(r.items()[1].word(), Some("&1"));
        assert_eq!(r.items()[2].string(), Some("A\"B"));
        assert_eq!((r.items()[2].line, r.items()[2].column), (2, 13));
        assert_eq!(n.form("n").unwrap().items()[1].word(), Some("12"));
        let s = read("(s \"%72 105%!\")").unwrap();
        assert_eq!(s.items()[1].string(), Some("Hi!"));
    }

    #[test]
    fn errors_are_placed() {
        let e = |t: &str| read(t).unwrap_err().to_string();
        assert_eq!(
            e("(a\n  (b c)\n  (d"),
            "n.edf:3:3: this list is never closed"
        );
        assert_eq!(e("(a (b))\n)"), "n.edf:2:1: `)` with no list open");
        assert_eq!(e("(a \"bc)"), "n.edf:1:4: this string is never closed");
        assert_eq!(
            e("(a) (b)"),
            "n.edf:1:5: text after the end of the top-level list"
        );
        assert_eq!(e("x (a)"), "n.edf:1:1: text outside the top-level list");
        assert_eq!(
            e("(a \"%x%\")"),
            "n.edf:1:6: a `%` escape holds something other than decimal codes"
        );
        assert_eq!(e("   "), "n.edf:0:0: the netlist holds no pin records");
        let deep = "(".repeat(MAX_DEPTH + 1);
        assert_eq!(
            e(&deep),
            format!(
                "n.edf:1:{}: lists nested deeper than {MAX_DEPTH} levels",
                MAX_DEPTH + 1
            )
        );
    }
}
