//! Escaping text for HTML and making element ids out of names.

/// `s` with `&`, `<`, `>`, `"` and `'` escaped, safe in element text and quoted attributes.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// An element id for `name` under `kind` (`net`, `dev` …): letters, digits, `-` and `_`
/// kept, every other byte written as `.XX` in hex, so distinct names give distinct ids.
pub fn id_of(kind: &str, name: &str) -> String {
    let mut out = format!("{kind}-");
    for b in name.bytes() {
        if b.is_ascii_alphanumeric() || b == b'-' || b == b'_' {
            out.push(b as char);
        } else {
            out.push_str(&format!(".{b:02X}"));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_in_names_is_escaped() {
        assert_eq!(
            esc(r#"<script>alert("x")</script> & 'y'"#),
            "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#39;y&#39;"
        );
    }

    #[test]
    fn ids_keep_names_apart() {
        assert_eq!(id_of("net", "DATA_3"), "net-DATA_3");
        assert_eq!(id_of("net", "A B"), "net-A.20B");
        assert_ne!(id_of("net", "A.B"), id_of("net", "A_B"));
        assert_eq!(id_of("net", "\"><x"), "net-.22.3E.3Cx");
    }
}
