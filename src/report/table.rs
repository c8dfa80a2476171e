//! Plain-text tables with aligned columns.

/// A table of text cells; the first row is the header.
pub(crate) struct TextTable {
    rows: Vec<Vec<String>>,
    right: Vec<bool>,
}

impl TextTable {
    /// A table with these headers; `right[i]` right-aligns column i.
    pub(crate) fn new(headers: &[&str], right: &[bool]) -> Self {
        TextTable {
            rows: vec![headers.iter().map(|h| h.to_string()).collect()],
            right: right.to_vec(),
        }
    }

    /// Append a row.
    pub(crate) fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    /// Render with two spaces between columns and a rule under the header.
    pub(crate) fn render(&self) -> String {
        let cols = self.rows.iter().map(Vec::len).max().unwrap_or(0);
        let mut widths = vec![0; cols];
        for r in &self.rows {
            for (i, c) in r.iter().enumerate() {
                widths[i] = widths[i].max(c.chars().count());
            }
        }
        let mut out = String::new();
        for (ri, r) in self.rows.iter().enumerate() {
            let mut line = String::new();
            for (i, c) in r.iter().enumerate() {
                let pad = widths[i] - c.chars().count();
                if i > 0 {
                    line.push_str("  ");
                }
                if self.right.get(i).copied().unwrap_or(false) {
                    line.push_str(&" ".repeat(pad));
                    line.push_str(c);
                } else {
                    line.push_str(c);
                    line.push_str(&" ".repeat(pad));
                }
            }
            out.push_str(line.trim_end());
            out.push('\n');
            if ri == 0 {
                let total: usize = widths.iter().sum::<usize>() + 2 * cols.saturating_sub(1);
                out.push_str(&"-".repeat(total));
                out.push('\n');
            }
        }
        out
    }
}
