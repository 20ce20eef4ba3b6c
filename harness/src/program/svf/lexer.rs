//! Tokens of SVF: words, numbers, `( … )` data, `;`, and the `! part N` comments.
//!
//! The lexer is pulled one token at a time by the parser, so the first error
//! reported is the first one in the text.

use super::error::SvfErrorKind;

/// What a token is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(super) enum Tok {
    /// A keyword, state name or unit, upper-cased (SVF is case-insensitive).
    Word(String),
    /// A number, as written (`8`, `1.0E-3`, `10E6`).
    Number(String),
    /// Parenthesised data: the byte range between `(` and `)`, which may
    /// span lines and hold white space and comments.
    Group {
        /// First byte after `(`.
        start: usize,
        /// The byte of `)`.
        end: usize,
    },
    /// `;`, the end of a statement.
    Semi,
    /// The end of the text.
    Eof,
}

/// A token, the bytes it covers and the part it falls in.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(super) struct Token {
    /// What the token is.
    pub tok: Tok,
    /// Byte offset in the text.
    pub offset: usize,
    /// Length in bytes.
    pub len: usize,
    /// The number of the last `! part N` comment before the token (0 if none).
    pub part: u32,
    /// 1-based line of the token's first byte.
    pub line: u32,
}

impl Token {
    /// A short description for "expected …, found …" messages.
    pub fn describe(&self, text: &str) -> String {
        match &self.tok {
            Tok::Eof => "end of file".to_string(),
            Tok::Semi => "`;`".to_string(),
            Tok::Group { .. } => "`(…)`".to_string(),
            Tok::Word(_) | Tok::Number(_) => {
                let s = text.get(self.offset..self.offset + self.len).unwrap_or("?");
                let short: String = s.chars().take(40).collect();
                format!("`{short}`")
            }
        }
    }

    /// True for the word `word` (given upper-case).
    pub fn is_word(&self, word: &str) -> bool {
        matches!(&self.tok, Tok::Word(w) if w == word)
    }
}

/// A lexical error: byte offset, length, what.
pub(super) type LexError = (usize, usize, SvfErrorKind);

/// Splits SVF text into tokens on demand.
pub(super) struct Lexer<'a> {
    text: &'a str,
    bytes: &'a [u8],
    pos: usize,
    part: u32,
    /// Newlines are counted up to `counted`, which only moves forward.
    counted: usize,
    line: u32,
}

fn is_space(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\r' | b'\n' | 0x0b | 0x0c)
}

impl<'a> Lexer<'a> {
    /// A lexer at the start of `text`.
    pub fn new(text: &'a str) -> Lexer<'a> {
        Lexer {
            text,
            bytes: text.as_bytes(),
            pos: 0,
            part: 0,
            counted: 0,
            line: 1,
        }
    }

    /// The line of byte `offset`; offsets must not go backwards between
    /// calls, so counting is linear over the whole text.
    fn line_at(&mut self, offset: usize) -> u32 {
        if offset > self.counted {
            let newlines = self.bytes[self.counted..offset.min(self.bytes.len())]
                .iter()
                .filter(|&&b| b == b'\n')
                .count();
            self.line += newlines as u32;
            self.counted = offset;
        }
        self.line
    }

    /// The byte at `i`, if any.
    fn at(&self, i: usize) -> Option<u8> {
        self.bytes.get(i).copied()
    }

    /// The offset of the end of the line that `from` is on (the `\n` or the end).
    fn line_end(&self, from: usize) -> usize {
        self.bytes
            .get(from..)
            .and_then(|rest| rest.iter().position(|&b| b == b'\n'))
            .map_or(self.bytes.len(), |k| from + k)
    }

    /// Skips a `!` comment at `self.pos`, noting a `! part N` line.
    ///
    /// A part comment is exactly `! part N` (N decimal digits), alone on its
    /// line apart from white space. This is our own convention, not SVF's.
    fn comment(&mut self) -> Result<(), LexError> {
        let start = self.pos;
        let end = self.line_end(start);
        let line_start = self.bytes[..start]
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |k| k + 1);
        let alone = self.bytes[line_start..start]
            .iter()
            .all(|&b| b == b' ' || b == b'\t');
        let body = self.text.get(start..end).unwrap_or("").trim_end();
        if let Some(number) = body.strip_prefix("! part ") {
            if alone && !number.is_empty() && number.bytes().all(|b| b.is_ascii_digit()) {
                self.part = number.parse().map_err(|_| {
                    (
                        start + 7,
                        number.len(),
                        SvfErrorKind::PartTooLarge(number.to_string()),
                    )
                })?;
            }
        }
        self.pos = end;
        Ok(())
    }

    /// The next token.
    ///
    /// # Errors
    /// A character SVF does not use, or a `(` never closed.
    pub fn next_token(&mut self) -> Result<Token, LexError> {
        loop {
            let Some(b) = self.at(self.pos) else {
                return Ok(self.token(Tok::Eof, self.pos, 0));
            };
            let start = self.pos;
            match b {
                _ if is_space(b) => self.pos += 1,
                b'!' => self.comment()?,
                b'/' if self.at(start + 1) == Some(b'/') => self.pos = self.line_end(start),
                b';' => {
                    self.pos += 1;
                    return Ok(self.token(Tok::Semi, start, 1));
                }
                b'(' => return self.group(start),
                b'A'..=b'Z' | b'a'..=b'z' | b'_' => {
                    while self
                        .at(self.pos)
                        .is_some_and(|c| c.is_ascii_alphanumeric() || c == b'_')
                    {
                        self.pos += 1;
                    }
                    let word = self.text[start..self.pos].to_ascii_uppercase();
                    return Ok(self.token(Tok::Word(word), start, self.pos - start));
                }
                b'0'..=b'9' => return Ok(self.number(start)),
                b'.' if self.at(start + 1).is_some_and(|c| c.is_ascii_digit()) => {
                    return Ok(self.number(start))
                }
                _ => {
                    let ch = self.text.get(start..).and_then(|s| s.chars().next());
                    let ch = ch.unwrap_or('\u{FFFD}');
                    return Err((start, ch.len_utf8(), SvfErrorKind::BadCharacter(ch)));
                }
            }
        }
    }

    fn token(&mut self, tok: Tok, offset: usize, len: usize) -> Token {
        Token {
            tok,
            offset,
            len,
            part: self.part,
            line: self.line_at(offset),
        }
    }

    /// Digits, an optional fraction and an optional exponent (`1.0E-3`, `10E6`).
    fn number(&mut self, start: usize) -> Token {
        let digits = |lx: &mut Lexer<'_>| {
            while lx.at(lx.pos).is_some_and(|c| c.is_ascii_digit()) {
                lx.pos += 1;
            }
        };
        digits(self);
        if self.at(self.pos) == Some(b'.') {
            self.pos += 1;
            digits(self);
        }
        if matches!(self.at(self.pos), Some(b'e' | b'E')) {
            let sign = usize::from(matches!(self.at(self.pos + 1), Some(b'+' | b'-')));
            if self
                .at(self.pos + 1 + sign)
                .is_some_and(|c| c.is_ascii_digit())
            {
                self.pos += 1 + sign;
                digits(self);
            }
        }
        let text = self.text[start..self.pos].to_string();
        self.token(Tok::Number(text), start, self.pos - start)
    }

    /// `( … )`: everything up to the matching `)`, skipping comments inside.
    fn group(&mut self, open: usize) -> Result<Token, LexError> {
        let mut i = open + 1;
        loop {
            match self.at(i) {
                None => return Err((open, 1, SvfErrorKind::UnclosedParen)),
                Some(b')') => break,
                Some(b'!') => i = self.line_end(i),
                Some(b'/') if self.at(i + 1) == Some(b'/') => i = self.line_end(i),
                Some(_) => i += 1,
            }
        }
        self.pos = i + 1;
        Ok(self.token(
            Tok::Group {
                start: open + 1,
                end: i,
            },
            open,
            i + 1 - open,
        ))
    }
}

/// The hex digits of a group's content, white space and comments removed.
///
/// # Errors
/// The first character that is not a hex digit, with its offset.
pub(super) fn hex_digits(text: &str, start: usize, end: usize) -> Result<String, LexError> {
    let content = text.get(start..end).unwrap_or("");
    let mut digits = String::with_capacity(content.len());
    let mut skip_to_eol = false;
    let mut prev_slash = false;
    for (i, ch) in content.char_indices() {
        if skip_to_eol {
            skip_to_eol = ch != '\n';
            continue;
        }
        if ch == '/' {
            if prev_slash {
                skip_to_eol = true;
                prev_slash = false;
            } else {
                prev_slash = true;
            }
            continue;
        }
        if prev_slash {
            return Err((start + i - 1, 1, SvfErrorKind::BadHexDigit('/')));
        }
        match ch {
            '!' => skip_to_eol = true,
            c if c.is_ascii_hexdigit() => digits.push(c),
            c if c.is_ascii() && is_space(c as u8) => {}
            c => return Err((start + i, c.len_utf8(), SvfErrorKind::BadHexDigit(c))),
        }
    }
    if prev_slash {
        return Err((end - 1, 1, SvfErrorKind::BadHexDigit('/')));
    }
    Ok(digits)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn toks(text: &str) -> Vec<Tok> {
        let mut lx = Lexer::new(text);
        let mut out = Vec::new();
        loop {
            let t = lx.next_token().unwrap();
            if t.tok == Tok::Eof {
                return out;
            }
            out.push(t.tok);
        }
    }

    fn word(w: &str) -> Tok {
        Tok::Word(w.to_string())
    }

    fn num(n: &str) -> Tok {
        Tok::Number(n.to_string())
    }

    #[test]
    fn words_numbers_groups_and_comments() {
        // SVF Specification Rev E (from memory): keywords are case-insensitive;
        // `!` and `//` start comments that run to the end of the line.
        assert_eq!(
            toks("sdr 8 TDI (c5); ! note\n// other\nRUNTEST 1.0E-3 SEC;"),
            vec![
                word("SDR"),
                num("8"),
                word("TDI"),
                Tok::Group { start: 11, end: 13 },
                Tok::Semi,
                word("RUNTEST"),
                num("1.0E-3"),
                word("SEC"),
                Tok::Semi,
            ]
        );
        assert_eq!(toks("10E6 HZ"), vec![num("10E6"), word("HZ")]);
        assert_eq!(toks("1e+3"), vec![num("1e+3")]);
        assert_eq!(toks(".5 3."), vec![num(".5"), num("3.")]);
        // An `E` not followed by digits belongs to the next word.
        assert_eq!(toks("8E"), vec![num("8"), word("E")]);
    }

    #[test]
    fn a_group_spans_lines_and_skips_comments() {
        let text = "(AB ! c)\n CD // x)\n EF)";
        let t = toks(text);
        let [Tok::Group { start, end }] = t[..] else {
            panic!("{t:?}")
        };
        assert_eq!(hex_digits(text, start, end).unwrap(), "ABCDEF");
        assert_eq!(
            hex_digits("(1G)", 1, 3),
            Err((2, 1, SvfErrorKind::BadHexDigit('G')))
        );
        assert_eq!(
            hex_digits("(1/2)", 1, 4),
            Err((2, 1, SvfErrorKind::BadHexDigit('/')))
        );
    }

    #[test]
    fn errors_carry_their_offset() {
        let mut lx = Lexer::new("SIR 4 @");
        lx.next_token().unwrap();
        lx.next_token().unwrap();
        assert_eq!(
            lx.next_token(),
            Err((6, 1, SvfErrorKind::BadCharacter('@')))
        );
        let mut lx = Lexer::new("SDR 8 TDI(00");
        for _ in 0..3 {
            lx.next_token().unwrap();
        }
        assert_eq!(lx.next_token(), Err((9, 1, SvfErrorKind::UnclosedParen)));
        let mut lx = Lexer::new("é");
        assert_eq!(
            lx.next_token(),
            Err((0, 2, SvfErrorKind::BadCharacter('é')))
        );
    }

    #[test]
    fn part_comments_set_the_part_of_later_tokens() {
        let text = "A;\n! part 3\nB;\n  ! part 12  \nC; ! part 4\nD;\n! part 5x\nE;\n!part 6\nF;";
        let mut lx = Lexer::new(text);
        let mut parts = Vec::new();
        loop {
            let t = lx.next_token().unwrap();
            if let Tok::Word(w) = &t.tok {
                parts.push((w.clone(), t.part));
            }
            if t.tok == Tok::Eof {
                break;
            }
        }
        let want: Vec<(String, u32)> = [
            ("A", 0),
            ("B", 3),
            ("C", 12),
            ("D", 12),
            ("E", 12),
            ("F", 12),
        ]
        .iter()
        .map(|(w, p)| (w.to_string(), *p))
        .collect();
        assert_eq!(parts, want);
        let mut lx = Lexer::new("! part 99999999999\nA");
        assert!(matches!(
            lx.next_token(),
            Err((7, 11, SvfErrorKind::PartTooLarge(_)))
        ));
    }
}
