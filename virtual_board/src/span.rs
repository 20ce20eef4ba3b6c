//! `Span`: where a piece of text sits in the file it was read from.

use serde::Serialize;

/// Byte offset and 1-based line/column of a piece of text.
///
/// Every reader in the workspace (BSDL, board files, programs) reports its
/// errors with one of these, so the command line can print `path:line:col`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize)]
pub struct Span {
    /// Byte offset of the first character.
    pub offset: u32,
    /// Length in bytes (0 for a point, such as the end of the file).
    pub len: u32,
    /// 1-based line number.
    pub line: u32,
    /// 1-based column, counted in characters.
    pub column: u32,
}

impl Span {
    /// The span of `len` bytes starting at byte `offset` of `text`.
    ///
    /// Line and column are computed by counting; `offset` past the end of
    /// the text is clamped to the end.
    pub fn at(text: &str, offset: usize, len: usize) -> Span {
        let offset = offset.min(text.len());
        let mut line = 1u32;
        let mut column = 1u32;
        for (i, ch) in text.char_indices() {
            if i >= offset {
                break;
            }
            if ch == '\n' {
                line += 1;
                column = 1;
            } else {
                column += 1;
            }
        }
        Span {
            offset: offset as u32,
            len: len as u32,
            line,
            column,
        }
    }
}

/// Turns byte offsets into line/column positions quickly for one text.
///
/// Readers that produce many spans build one of these instead of counting
/// from the start of the file each time.
#[derive(Clone, Debug)]
pub struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    /// Indexes the line starts of `text`.
    pub fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        starts.extend(
            text.bytes()
                .enumerate()
                .filter(|(_, b)| *b == b'\n')
                .map(|(i, _)| i + 1),
        );
        LineIndex { starts }
    }

    /// The span of `len` bytes at byte `offset` of `text` (the text indexed).
    pub fn span(&self, text: &str, offset: usize, len: usize) -> Span {
        let offset = offset.min(text.len());
        let line = self.starts.partition_point(|&s| s <= offset);
        let start = self.starts[line - 1];
        let column = text
            .get(start..offset)
            .map(|s| s.chars().count())
            .unwrap_or(offset - start);
        Span {
            offset: offset as u32,
            len: len as u32,
            line: line as u32,
            column: column as u32 + 1,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_index_agrees_with_counting() {
        let text = "ab\ncd\n\nxyz";
        let index = LineIndex::new(text);
        for offset in 0..=text.len() {
            assert_eq!(
                index.span(text, offset, 1),
                Span::at(text, offset, 1),
                "offset {offset}"
            );
        }
        assert_eq!(Span::at(text, 4, 1).line, 2);
        assert_eq!(Span::at(text, 4, 1).column, 2);
    }
}
