//! Tokens of the VHDL subset BSDL is written in.

use super::error::BsdlErrorKind;

/// What a token is.
#[derive(Clone, Debug, PartialEq)]
pub enum Tok {
    /// An identifier, upper-cased (BSDL is case-insensitive).
    Ident(String),
    /// A numeric literal, as written.
    Number(String),
    /// A string literal's contents (without quotes, `""` unescaped).
    Str(String),
    /// Punctuation: `( ) , ; : := & . * [ ] => -` and `'`.
    Punct(&'static str),
    /// End of the text.
    Eof,
}

/// A token and the bytes it covers.
#[derive(Clone, Debug, PartialEq)]
pub struct Token {
    /// What the token is.
    pub tok: Tok,
    /// Byte offset in the text.
    pub offset: usize,
    /// Length in bytes.
    pub len: usize,
}

impl Token {
    /// A short description for "expected …, found …" messages.
    pub fn describe(&self, text: &str) -> String {
        match &self.tok {
            Tok::Eof => "end of file".to_string(),
            Tok::Str(s) => {
                let short: String = s.chars().take(30).collect();
                format!("string \"{short}\"")
            }
            _ => format!(
                "`{}`",
                text.get(self.offset..self.offset + self.len).unwrap_or("?")
            ),
        }
    }

    /// True for the identifier `word` (given upper-case).
    pub fn is_word(&self, word: &str) -> bool {
        matches!(&self.tok, Tok::Ident(w) if w == word)
    }

    /// True for the punctuation `p`.
    pub fn is_punct(&self, p: &str) -> bool {
        matches!(&self.tok, Tok::Punct(q) if *q == p)
    }
}

/// Splits `text` into tokens; `--` comments and white space are dropped.
///
/// # Errors
/// A character BSDL does not use, or a string not closed on its line, with
/// its byte offset.
pub fn tokenize(text: &str) -> Result<Vec<Token>, (usize, BsdlErrorKind)> {
    let bytes = text.as_bytes();
    let mut tokens = Vec::with_capacity(text.len() / 4);
    let mut i = 0;
    while i < bytes.len() {
        let b = bytes[i];
        let start = i;
        match b {
            b' ' | b'\t' | b'\r' | b'\n' | 0x0c | 0x0b => i += 1,
            b'-' if bytes.get(i + 1) == Some(&b'-') => {
                while i < bytes.len() && bytes[i] != b'\n' {
                    i += 1;
                }
            }
            b'"' => {
                i += 1;
                let mut content = String::new();
                let mut seg = i;
                loop {
                    match bytes.get(i) {
                        None | Some(b'\n') => {
                            return Err((start, BsdlErrorKind::UnterminatedString))
                        }
                        Some(b'"') if bytes.get(i + 1) == Some(&b'"') => {
                            content.push_str(&text[seg..=i]);
                            i += 2;
                            seg = i;
                        }
                        Some(b'"') => {
                            content.push_str(&text[seg..i]);
                            i += 1;
                            break;
                        }
                        Some(_) => i += 1,
                    }
                }
                tokens.push(Token {
                    tok: Tok::Str(content),
                    offset: start,
                    len: i - start,
                });
            }
            b'a'..=b'z' | b'A'..=b'Z' => {
                while i < bytes.len() && (bytes[i].is_ascii_alphanumeric() || bytes[i] == b'_') {
                    i += 1;
                }
                let word = text[start..i].to_ascii_uppercase();
                tokens.push(Token {
                    tok: Tok::Ident(word),
                    offset: start,
                    len: i - start,
                });
            }
            b'0'..=b'9' => {
                while i < bytes.len() && (bytes[i].is_ascii_digit() || bytes[i] == b'_') {
                    i += 1;
                }
                if bytes.get(i) == Some(&b'.') && bytes.get(i + 1).is_some_and(u8::is_ascii_digit) {
                    i += 1;
                    while i < bytes.len() && (bytes[i].is_ascii_digit() || bytes[i] == b'_') {
                        i += 1;
                    }
                }
                if matches!(bytes.get(i), Some(b'e' | b'E')) {
                    let mut j = i + 1;
                    if matches!(bytes.get(j), Some(b'+' | b'-')) {
                        j += 1;
                    }
                    if bytes.get(j).is_some_and(u8::is_ascii_digit) {
                        i = j;
                        while i < bytes.len() && bytes[i].is_ascii_digit() {
                            i += 1;
                        }
                    }
                }
                tokens.push(Token {
                    tok: Tok::Number(text[start..i].to_string()),
                    offset: start,
                    len: i - start,
                });
            }
            _ => {
                let (p, n): (&'static str, usize) = match (b, bytes.get(i + 1)) {
                    (b':', Some(b'=')) => (":=", 2),
                    (b'=', Some(b'>')) => ("=>", 2),
                    (b'(', _) => ("(", 1),
                    (b')', _) => (")", 1),
                    (b',', _) => (",", 1),
                    (b';', _) => (";", 1),
                    (b':', _) => (":", 1),
                    (b'&', _) => ("&", 1),
                    (b'.', _) => (".", 1),
                    (b'*', _) => ("*", 1),
                    (b'[', _) => ("[", 1),
                    (b']', _) => ("]", 1),
                    (b'-', _) => ("-", 1),
                    (b'+', _) => ("+", 1),
                    (b'\'', _) => ("'", 1),
                    (b'/', _) => ("/", 1),
                    _ => {
                        let ch = text[i..].chars().next().unwrap_or('?');
                        return Err((i, BsdlErrorKind::BadCharacter(ch)));
                    }
                };
                i += n;
                tokens.push(Token {
                    tok: Tok::Punct(p),
                    offset: start,
                    len: n,
                });
            }
        }
    }
    tokens.push(Token {
        tok: Tok::Eof,
        offset: text.len(),
        len: 0,
    });
    Ok(tokens)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(text: &str) -> Vec<Tok> {
        tokenize(text).unwrap().into_iter().map(|t| t.tok).collect()
    }

    #[test]
    fn words_are_upper_cased_and_comments_dropped() {
        assert_eq!(
            kinds("Entity x_1 is -- a comment\n\"ab\"\"c\" & 10.0e6 := ;"),
            vec![
                Tok::Ident("ENTITY".into()),
                Tok::Ident("X_1".into()),
                Tok::Ident("IS".into()),
                Tok::Str("ab\"c".into()),
                Tok::Punct("&"),
                Tok::Number("10.0e6".into()),
                Tok::Punct(":="),
                Tok::Punct(";"),
                Tok::Eof,
            ]
        );
    }

    #[test]
    fn unterminated_string_is_an_error() {
        assert_eq!(
            tokenize("is \"abc\n\";"),
            Err((3, BsdlErrorKind::UnterminatedString))
        );
        assert_eq!(
            tokenize("a $ b"),
            Err((2, BsdlErrorKind::BadCharacter('$')))
        );
    }
}
