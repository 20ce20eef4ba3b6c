//! `HtmlTable`: a table the page script sorts (click a heading) and filters (type words).

use std::fmt::Write;

use super::escape::esc;

/// A sortable, filterable table. Cells are plain text (escaped here) or prepared HTML.
#[derive(Clone, Debug)]
pub struct HtmlTable {
    id: String,
    heads: Vec<String>,
    rows: Vec<(Option<String>, Vec<String>)>,
}

impl HtmlTable {
    /// A table with element id `id` and these column headings.
    pub fn new(id: &str, heads: &[&str]) -> HtmlTable {
        HtmlTable {
            id: id.to_string(),
            heads: heads.iter().map(|h| esc(h)).collect(),
            rows: Vec::new(),
        }
    }

    /// Adds a row of plain-text cells.
    pub fn row<I, S>(&mut self, cells: I)
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        self.html_row(None, cells.into_iter().map(|c| esc(c.as_ref())).collect());
    }

    /// Adds a row of cells already in HTML (each escaped by the caller), with an optional
    /// row id (a link target).
    pub fn html_row(&mut self, id: Option<String>, cells: Vec<String>) {
        self.rows.push((id, cells));
    }

    /// Rows so far.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// True without rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The filter box and the table.
    pub fn render(&self) -> String {
        let mut h = String::with_capacity(64 * self.rows.len() * self.heads.len().max(1) + 256);
        let _ = write!(
            h,
            "<input class=\"filter\" type=\"search\" placeholder=\"filter rows\" data-table=\"{}\" aria-label=\"filter\">\n<table class=\"sortable\" id=\"{}\"><thead><tr>",
            self.id, self.id
        );
        for head in &self.heads {
            let _ = write!(h, "<th>{head}</th>");
        }
        h.push_str("</tr></thead><tbody>\n");
        for (id, cells) in &self.rows {
            match id {
                Some(id) => {
                    let _ = write!(h, "<tr id=\"{id}\">");
                }
                None => h.push_str("<tr>"),
            }
            for c in cells {
                let numeric = !c.is_empty() && c.bytes().all(|b| b.is_ascii_digit() || b == b'.');
                if numeric {
                    let _ = write!(h, "<td class=\"num\">{c}</td>");
                } else {
                    let _ = write!(h, "<td>{c}</td>");
                }
            }
            h.push_str("</tr>\n");
        }
        h.push_str("</tbody></table>\n");
        h
    }
}

/// A link to element `id` showing `text` (escaped).
pub fn link(id: &str, text: &str) -> String {
    format!("<a href=\"#{id}\">{}</a>", esc(text))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_escaped_and_numbers_right_aligned() {
        let mut t = HtmlTable::new("t", &["net", "bits"]);
        t.row(["<b>", "12"]);
        let h = t.render();
        assert!(h.contains("<th>net</th><th>bits</th>"));
        assert!(h.contains("<tr><td>&lt;b&gt;</td><td class=\"num\">12</td></tr>"));
        assert!(h.contains("data-table=\"t\""));
    }
}
