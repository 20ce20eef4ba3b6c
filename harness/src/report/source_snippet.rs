//! `SourceSnippet`: the line of a text file an error points at, with a caret under the place.

use std::fmt;

use virtual_board::Span;

/// Longest part of a line shown, in characters; longer lines are cut around the place.
const MAX_SHOWN: usize = 100;

/// One source line and the caret run under the place an error points at:
///
/// ```text
///    |
/// 12 |       "3 (BC_1, *, CONTROLX, 1), " &
///    |                    ^^^^^^^^
/// ```
///
/// Tabs before the place are repeated in the caret line so the caret stays
/// under the right character however wide the terminal draws a tab.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SourceSnippet {
    line: u32,
    shown: String,
    caret_prefix: String,
    caret_width: usize,
}

impl SourceSnippet {
    /// The snippet for `span` in `text`, the whole text the span was taken from.
    ///
    /// `None` when the span has no line (`line == 0`, such as an I/O error) or
    /// its line is not in `text`. A column past the end of the line puts the
    /// caret just after the line's last character.
    pub fn new(text: &str, span: Span) -> Option<SourceSnippet> {
        if span.line == 0 {
            return None;
        }
        let line_text = text.split('\n').nth(span.line as usize - 1)?;
        let line_text = line_text.strip_suffix('\r').unwrap_or(line_text);
        let chars: Vec<char> = line_text.chars().collect();
        let column = (span.column.max(1) as usize - 1).min(chars.len());
        let width = caret_width(text, span).min(chars.len().saturating_sub(column).max(1));

        // Cut long lines to a window that holds the place.
        let (start, cut_start) = if column + width > MAX_SHOWN {
            (column.saturating_sub(MAX_SHOWN / 2), true)
        } else {
            (0, false)
        };
        let end = (start + MAX_SHOWN).min(chars.len());
        let mut shown = String::new();
        let mut caret_prefix = String::new();
        if cut_start {
            shown.push('…');
            caret_prefix.push(' ');
        }
        shown.extend(&chars[start..end]);
        if end < chars.len() {
            shown.push('…');
        }
        caret_prefix.extend(
            chars[start..column]
                .iter()
                .map(|&c| if c == '\t' { '\t' } else { ' ' }),
        );
        Some(SourceSnippet {
            line: span.line,
            shown,
            caret_prefix,
            caret_width: width.min(end.saturating_sub(column).max(1)),
        })
    }
}

/// Characters covered by the span (at least 1), counted from its byte offset.
fn caret_width(text: &str, span: Span) -> usize {
    let start = span.offset as usize;
    let end = start.saturating_add(span.len as usize);
    text.get(start..end.min(text.len()))
        .map(|s| s.chars().take_while(|&c| c != '\n').count())
        .unwrap_or(1)
        .max(1)
}

impl fmt::Display for SourceSnippet {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let number = self.line.to_string();
        let gutter = " ".repeat(number.len());
        writeln!(f, "{gutter} |")?;
        writeln!(f, "{number} | {}", self.shown.trim_end())?;
        writeln!(
            f,
            "{gutter} | {}{}",
            self.caret_prefix,
            "^".repeat(self.caret_width)
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use virtual_board::LineIndex;

    /// The snippet for `len` bytes at the first `needle` in `text`.
    fn snippet_at(text: &str, needle: &str, len: usize) -> String {
        let offset = text.find(needle).expect("needle in text");
        let span = LineIndex::new(text).span(text, offset, len);
        SourceSnippet::new(text, span)
            .expect("a snippet")
            .to_string()
    }

    #[test]
    fn caret_runs_under_the_span() {
        let text = "entity X is\n  \"3 (BC_1, *, CONTROLX, 1)\";\nend X;\n";
        assert_eq!(
            snippet_at(text, "CONTROLX", 8),
            "  |\n2 |   \"3 (BC_1, *, CONTROLX, 1)\";\n  |                ^^^^^^^^\n"
        );
    }

    #[test]
    fn tabs_before_the_place_are_kept() {
        let text = "a\n\tx\tBAD\n";
        assert_eq!(
            snippet_at(text, "BAD", 3),
            "  |\n2 | \tx\tBAD\n  | \t \t^^^\n"
        );
    }

    #[test]
    fn gutter_widens_with_the_line_number() {
        let text = format!("{}oops\n", "\n".repeat(11));
        assert_eq!(snippet_at(&text, "oops", 0), "   |\n12 | oops\n   | ^\n");
    }

    #[test]
    fn a_span_at_the_end_of_the_text_points_past_the_last_character() {
        let text = "end X";
        let span = Span {
            offset: 5,
            len: 0,
            line: 1,
            column: 6,
        };
        assert_eq!(
            SourceSnippet::new(text, span).unwrap().to_string(),
            "  |\n1 | end X\n  |      ^\n"
        );
    }

    #[test]
    fn long_lines_are_cut_around_the_place() {
        let text = format!("{}BAD{}", "a".repeat(300), "b".repeat(300));
        let shown = snippet_at(&text, "BAD", 3);
        let lines: Vec<&str> = shown.lines().collect();
        assert_eq!(
            lines[1],
            format!("1 | …{}BAD{}…", "a".repeat(50), "b".repeat(47))
        );
        assert_eq!(lines[2], format!("  | {}^^^", " ".repeat(51)));
    }

    #[test]
    fn no_snippet_without_a_line() {
        assert_eq!(SourceSnippet::new("abc", Span::default()), None);
        let far = Span {
            offset: 0,
            len: 1,
            line: 9,
            column: 1,
        };
        assert_eq!(SourceSnippet::new("abc\n", far), None);
    }
}
