//! Is it text? The first byte of a BSDL file that no text file holds.
//!
//! A BSDL file is VHDL source: printable characters, spaces, tabs and line
//! ends (IEEE 1149.1-2001 Annex B builds on the VHDL character set, from
//! memory). A file that is not UTF-8, or that holds control characters, is
//! a binary file given by mistake; it is refused at its first bad byte, with
//! the line and column, rather than as a bare read error or a puzzling
//! syntax error further on.

use super::error::BsdlErrorKind;

/// The text of a file's bytes.
///
/// # Errors
/// The byte offset of the first byte that is not UTF-8 or is a control
/// character, with what it is.
pub fn text_of(bytes: &[u8]) -> Result<&str, (usize, BsdlErrorKind)> {
    match std::str::from_utf8(bytes) {
        Ok(text) => match first_control(text) {
            Some(bad) => Err(bad),
            None => Ok(text),
        },
        Err(e) => {
            let at = e.valid_up_to();
            // A control character before the bad UTF-8 comes first.
            let prefix = std::str::from_utf8(&bytes[..at]).unwrap_or_default();
            if let Some(bad) = first_control(prefix) {
                return Err(bad);
            }
            Err((
                at,
                BsdlErrorKind::NotUtf8(bytes.get(at).copied().unwrap_or(0)),
            ))
        }
    }
}

/// The first control character other than tab, line feed, vertical tab,
/// form feed and carriage return (the format effectors VHDL allows).
pub fn first_control(text: &str) -> Option<(usize, BsdlErrorKind)> {
    text.char_indices()
        .find(|(_, c)| c.is_control() && !matches!(c, '\t' | '\n' | '\x0b' | '\x0c' | '\r'))
        .map(|(i, c)| (i, BsdlErrorKind::ControlCharacter(u32::from(c))))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_passes_and_the_first_bad_byte_is_found() {
        assert_eq!(text_of(b"ab\tc\r\nd"), Ok("ab\tc\r\nd"));
        assert_eq!(text_of("é ok".as_bytes()), Ok("é ok"));
        assert_eq!(text_of(b"ab\xffcd"), Err((2, BsdlErrorKind::NotUtf8(0xff))));
        assert_eq!(
            text_of(b"ab\0c\xff"),
            Err((2, BsdlErrorKind::ControlCharacter(0)))
        );
        assert_eq!(text_of(b"a\xffb\0"), Err((1, BsdlErrorKind::NotUtf8(0xff))));
        // A truncated multi-byte sequence at the end.
        assert_eq!(text_of(b"ab\xc3"), Err((2, BsdlErrorKind::NotUtf8(0xc3))));
    }
}
