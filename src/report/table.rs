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

    /// Render within `width` characters where it can: the cells of column `wrap` are broken
    /// into several lines (at ", " or a space, else anywhere) so that the table fits, down to a
    /// column of 16 characters; the other columns keep their full width.
    pub(crate) fn render_within(&self, width: usize, wrap: usize) -> String {
        let cols = self.rows.iter().map(Vec::len).max().unwrap_or(0);
        let widest = |i: usize| {
            self.rows
                .iter()
                .filter_map(|r| r.get(i))
                .map(|c| c.chars().count())
                .max()
                .unwrap_or(0)
        };
        let others: usize = (0..cols).filter(|&i| i != wrap).map(widest).sum::<usize>()
            + 2 * cols.saturating_sub(1);
        let room = width.saturating_sub(others).max(16);
        if wrap >= cols || widest(wrap) <= room {
            return self.render();
        }
        let mut lines = TextTable {
            rows: Vec::new(),
            right: self.right.clone(),
        };
        for (ri, r) in self.rows.iter().enumerate() {
            let pieces = r.get(wrap).map_or_else(Vec::new, |c| wrap_words(c, room));
            for (k, piece) in pieces.iter().enumerate().take(pieces.len().max(1)) {
                let row: Vec<String> = (0..r.len())
                    .map(|i| match (i == wrap, k) {
                        (true, _) => piece.clone(),
                        (false, 0) => r[i].clone(),
                        (false, _) => String::new(),
                    })
                    .collect();
                lines.rows.push(row);
                if ri == 0 {
                    break;
                }
            }
        }
        // The header is one line; continuation lines follow their row.
        lines.render()
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

/// Break `text` into lines of at most `room` characters: after ", " where possible, else at a
/// space, else anywhere.
pub(crate) fn wrap_words(text: &str, room: usize) -> Vec<String> {
    let room = room.max(1);
    let mut out = Vec::new();
    let mut rest: Vec<char> = text.chars().collect();
    while rest.len() > room {
        let window = &rest[..=room];
        let comma = (1..window.len())
            .rev()
            .find(|&i| window[i - 1] == ',' && window[i] == ' ');
        let space = (1..window.len()).rev().find(|&i| window[i] == ' ');
        let cut = comma.or(space).unwrap_or(room);
        out.push(
            rest[..cut]
                .iter()
                .collect::<String>()
                .trim_end()
                .to_string(),
        );
        rest = rest[cut..]
            .iter()
            .copied()
            .skip_while(|c| *c == ' ')
            .collect();
    }
    if !rest.is_empty() || out.is_empty() {
        out.push(rest.into_iter().collect());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_wide_column_wraps_so_the_table_fits() {
        let mut t = TextTable::new(&["design", "largest contributors", "floor"], &[false; 3]);
        t.row(vec![
            "D1".into(),
            "stray force from residual gas 64 %, moment of inertia 28 %, free period 4 %".into(),
            "1.14 nN".into(),
        ]);
        t.row(vec![
            "D2".into(),
            "reflectance 90 %".into(),
            "4.09 nN".into(),
        ]);
        let text = t.render_within(50, 1);
        for line in text.lines() {
            assert!(line.chars().count() <= 50, "{line:?}");
        }
        // Every word is still there, in order, and the other cells are on the row's first line.
        let joined: String = text
            .lines()
            .skip(2)
            .map(|l| {
                l.get(8..)
                    .unwrap_or("")
                    .trim()
                    .trim_end_matches("1.14 nN")
                    .trim()
            })
            .collect::<Vec<_>>()
            .join(" ");
        assert!(
            joined.contains("stray force from residual gas 64 %,"),
            "{text}"
        );
        assert!(joined.contains("free period 4 %"), "{text}");
        assert!(text.lines().nth(2).unwrap().ends_with("1.14 nN"), "{text}");
        // A table that fits is rendered as it is.
        assert_eq!(t.render_within(500, 1), t.render());
        assert_eq!(wrap_words("abcdefgh", 3), ["abc", "def", "gh"]);
        assert_eq!(wrap_words("a, b, c", 5), ["a, b,", "c"]);
    }
}
