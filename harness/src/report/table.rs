//! `TextTable`: rows of text cells printed in aligned columns.

use std::fmt;

/// Rows of cells, printed with every column padded to its widest cell.
///
/// Columns are separated by two spaces, each row is indented by `indent`
/// spaces, and trailing spaces are dropped, so an empty last cell leaves no
/// white space behind. Widths count characters, not bytes.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct TextTable {
    indent: usize,
    rows: Vec<Vec<String>>,
}

impl TextTable {
    /// An empty table whose rows start after `indent` spaces.
    pub fn new(indent: usize) -> TextTable {
        TextTable {
            indent,
            rows: Vec::new(),
        }
    }

    /// Adds a row; rows may have different numbers of cells.
    pub fn row<I, S>(&mut self, cells: I) -> &mut TextTable
    where
        I: IntoIterator<Item = S>,
        S: Into<String>,
    {
        self.rows.push(cells.into_iter().map(Into::into).collect());
        self
    }

    /// True when no row was added.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }
}

impl fmt::Display for TextTable {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let columns = self.rows.iter().map(Vec::len).max().unwrap_or(0);
        let mut widths = vec![0; columns];
        for row in &self.rows {
            for (w, cell) in widths.iter_mut().zip(row) {
                *w = (*w).max(cell.chars().count());
            }
        }
        for row in &self.rows {
            let mut line = " ".repeat(self.indent);
            for (i, cell) in row.iter().enumerate() {
                if i > 0 {
                    line.push_str("  ");
                }
                line.push_str(cell);
                if i + 1 < row.len() {
                    let pad = widths[i] - cell.chars().count();
                    line.push_str(&" ".repeat(pad));
                }
            }
            writeln!(f, "{}", line.trim_end())?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_align_and_rows_have_no_trailing_spaces() {
        let mut t = TextTable::new(2);
        t.row(["name", "opcode", ""]);
        t.row(["EXTEST", "0000", "note"]);
        t.row(["µ", "1"]);
        assert_eq!(
            t.to_string(),
            "  name    opcode\n  EXTEST  0000    note\n  µ       1\n"
        );
    }

    #[test]
    fn an_empty_table_prints_nothing() {
        assert_eq!(TextTable::new(4).to_string(), "");
        assert!(TextTable::new(0).is_empty());
    }
}
