//! The little languages inside BSDL attribute strings.
//!
//! Attribute values such as BOUNDARY_REGISTER are strings joined with `&`
//! across many lines. `Joined` glues the pieces and remembers where each byte
//! came from, so an error inside the string still names the file's line and
//! column; `Words` splits the glued text into words and punctuation.

use super::error::BsdlErrorKind;
use super::lexer::{Tok, Token};
use super::parser::SyntaxError;

/// The pieces of a string value joined into one text.
#[derive(Clone, Debug)]
pub struct Joined {
    text: String,
    /// File offset of each byte of `text`.
    map: Vec<u32>,
    /// File offset just past the value (for errors at its end).
    end: usize,
}

impl Joined {
    /// Joins `"a" & "b" & …`.
    ///
    /// # Errors
    /// A value that is not one or more strings joined with `&`.
    pub fn from_value(
        text: &str,
        tokens: &[Token],
        what: &'static str,
    ) -> Result<Joined, SyntaxError> {
        let mut joined = Joined {
            text: String::new(),
            map: Vec::new(),
            end: 0,
        };
        let mut want_string = true;
        for t in tokens {
            match (&t.tok, want_string) {
                (Tok::Str(s), true) => {
                    joined.text.push_str(s);
                    joined
                        .map
                        .extend((0..s.len()).map(|j| (t.offset + 1 + j) as u32));
                    want_string = false;
                }
                (Tok::Punct("&"), false) => want_string = true,
                _ => {
                    return Err((
                        t.offset,
                        t.len,
                        BsdlErrorKind::Unexpected {
                            expected: if want_string {
                                "a string"
                            } else {
                                "`&` or `;`"
                            },
                            found: format!("{} in {}", t.describe(text), what),
                        },
                    ))
                }
            }
            joined.end = t.offset + t.len;
        }
        if want_string {
            let at = tokens.last().map(|t| t.offset).unwrap_or(0);
            return Err((
                at,
                1,
                BsdlErrorKind::Unexpected {
                    expected: "a string",
                    found: format!("nothing in {what}"),
                },
            ));
        }
        Ok(joined)
    }

    /// The joined text.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// File offset of byte `i` of the joined text.
    pub fn file_offset(&self, i: usize) -> usize {
        self.map
            .get(i)
            .map(|&o| o as usize)
            .unwrap_or(self.end.saturating_sub(1))
    }

    /// The text without white space (for bit patterns split across pieces).
    pub fn compact(&self) -> String {
        self.text.chars().filter(|c| !c.is_whitespace()).collect()
    }

    /// Splits the joined text into words.
    ///
    /// # Errors
    /// A character that none of the string grammars use.
    pub fn words(&self) -> Result<Words<'_>, SyntaxError> {
        let bytes = self.text.as_bytes();
        let mut words = Vec::new();
        let mut i = 0;
        while i < bytes.len() {
            let b = bytes[i];
            let start = i;
            if b.is_ascii_whitespace() {
                i += 1;
            } else if b.is_ascii_alphanumeric() || b == b'_' || b == b'.' || b == b'+' || b == b'-'
            {
                while i < bytes.len()
                    && (bytes[i].is_ascii_alphanumeric()
                        || matches!(bytes[i], b'_' | b'.' | b'+' | b'-'))
                {
                    i += 1;
                }
                words.push(Word {
                    text: &self.text[start..i],
                    at: start,
                    punct: false,
                });
            } else if matches!(
                b,
                b'(' | b')' | b',' | b':' | b'[' | b']' | b'*' | b'=' | b'|'
            ) {
                i += 1;
                words.push(Word {
                    text: &self.text[start..i],
                    at: start,
                    punct: true,
                });
            } else {
                let ch = self.text[i..].chars().next().unwrap_or('?');
                return Err((self.file_offset(i), 1, BsdlErrorKind::BadCharacter(ch)));
            }
        }
        Ok(Words {
            joined: self,
            words,
            pos: 0,
        })
    }
}

/// A word or punctuation mark of a joined string.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Word<'a> {
    /// The text, as written.
    pub text: &'a str,
    /// Byte index in the joined text.
    pub at: usize,
    /// True for a single punctuation character.
    pub punct: bool,
}

/// A cursor over the words of a joined string.
#[derive(Debug)]
pub struct Words<'a> {
    joined: &'a Joined,
    words: Vec<Word<'a>>,
    pos: usize,
}

impl<'a> Words<'a> {
    /// The next word, if any.
    pub fn peek(&self) -> Option<Word<'a>> {
        self.words.get(self.pos).copied()
    }

    /// True at the end.
    pub fn done(&self) -> bool {
        self.pos >= self.words.len()
    }

    /// Takes the next word.
    pub fn bump(&mut self) -> Option<Word<'a>> {
        let w = self.peek();
        self.pos += 1;
        w
    }

    /// True when the next word is the punctuation `p`.
    pub fn at_punct(&self, p: &str) -> bool {
        self.peek().is_some_and(|w| w.punct && w.text == p)
    }

    /// Takes the punctuation `p` if it is next.
    pub fn eat(&mut self, p: &str) -> bool {
        if self.at_punct(p) {
            self.pos += 1;
            true
        } else {
            false
        }
    }

    /// File offset and length of a word.
    pub fn place(&self, w: Word<'_>) -> (usize, usize) {
        (self.joined.file_offset(w.at), w.text.len())
    }

    /// An "expected …" error at the next word (or the end of the string).
    pub fn error<T>(&self, expected: &'static str) -> Result<T, SyntaxError> {
        match self.peek() {
            Some(w) => {
                let (o, l) = self.place(w);
                Err((
                    o,
                    l,
                    BsdlErrorKind::Unexpected {
                        expected,
                        found: format!("`{}`", w.text),
                    },
                ))
            }
            None => Err((
                self.joined.file_offset(self.joined.text.len()),
                1,
                BsdlErrorKind::Unexpected {
                    expected,
                    found: "the end of the string".to_string(),
                },
            )),
        }
    }

    /// Takes the punctuation `p` or fails.
    pub fn expect(&mut self, p: &'static str, expected: &'static str) -> Result<(), SyntaxError> {
        if self.eat(p) {
            Ok(())
        } else {
            self.error(expected)
        }
    }

    /// Takes a word (not punctuation) or fails.
    pub fn word(&mut self, expected: &'static str) -> Result<Word<'a>, SyntaxError> {
        match self.peek() {
            Some(w) if !w.punct => {
                self.pos += 1;
                Ok(w)
            }
            _ => self.error(expected),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::lexer::tokenize;
    use super::*;

    #[test]
    fn joined_pieces_keep_their_file_offsets() {
        let text = "\"A:1,\" &\n  \"B:(2, 3)\";";
        let tokens = tokenize(text).unwrap();
        let j = Joined::from_value(text, &tokens[..3], "test").unwrap();
        assert_eq!(j.text(), "A:1,B:(2, 3)");
        // "B" is byte 4 of the joined text and byte 12 of the file.
        assert_eq!(j.file_offset(4), 12);
        assert_eq!(&text[12..13], "B");
        let words: Vec<&str> = j.words().unwrap().words.iter().map(|w| w.text).collect();
        assert_eq!(
            words,
            ["A", ":", "1", ",", "B", ":", "(", "2", ",", "3", ")"]
        );
    }
}
