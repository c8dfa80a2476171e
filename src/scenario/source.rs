//! The scenario text being read: byte offsets to line and column, and errors that point there.

use crate::error::{InputError, Location};
use std::ops::Range;

/// A scenario file's name and text.
pub struct Source<'a> {
    /// How the file is named in messages.
    pub(crate) file: &'a str,
    /// Its text.
    pub(crate) text: &'a str,
}

impl<'a> Source<'a> {
    /// Line, column and line text of a byte span.
    pub(crate) fn locate(&self, span: &Range<usize>) -> Location {
        let start = span.start.min(self.text.len());
        let start = (0..=start)
            .rev()
            .find(|i| self.text.is_char_boundary(*i))
            .unwrap_or(0);
        let line_start = self.text[..start].rfind('\n').map_or(0, |i| i + 1);
        let line_end = self.text[start..]
            .find('\n')
            .map_or(self.text.len(), |i| start + i);
        let line = self.text[..start].matches('\n').count() + 1;
        let column = self.text[line_start..start].chars().count() + 1;
        let end = span.end.clamp(start, line_end);
        let end = (end..=line_end)
            .find(|i| self.text.is_char_boundary(*i))
            .unwrap_or(line_end);
        let width = self.text[start..end].chars().count().max(1);
        Location {
            line,
            column,
            source_line: self.text[line_start..line_end]
                .trim_end_matches('\r')
                .to_string(),
            width,
        }
    }

    /// An error at a span, about a key, with an example of a valid value.
    pub(crate) fn error(
        &self,
        span: &Range<usize>,
        key: &str,
        message: impl Into<String>,
        example: impl Into<String>,
    ) -> InputError {
        let example = example.into();
        InputError {
            file: self.file.to_string(),
            location: Some(Box::new(self.locate(span))),
            key: (!key.is_empty()).then(|| key.to_string()),
            message: message.into(),
            example: (!example.is_empty()).then_some(example),
        }
    }
}

/// Levenshtein edit distance, for "did you mean" suggestions.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The nearest of `candidates` to `word`, if it is close enough to be a likely misspelling.
pub fn nearest<'c>(word: &str, candidates: impl IntoIterator<Item = &'c str>) -> Option<&'c str> {
    let lower = word.to_lowercase();
    candidates
        .into_iter()
        .map(|c| (edit_distance(&lower, &c.to_lowercase()), c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

/// " (did you mean `x`?)" or "".
pub(crate) fn suggestion<'c>(word: &str, candidates: impl IntoIterator<Item = &'c str>) -> String {
    nearest(word, candidates).map_or(String::new(), |n| format!(" (did you mean `{n}`?)"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn locates_lines_and_columns() {
        let src = Source {
            file: "a.toml",
            text: "x = 1\ny = \"abc\"\n",
        };
        let loc = src.locate(&(10..15));
        assert_eq!((loc.line, loc.column, loc.width), (2, 5, 5));
        assert_eq!(loc.source_line, "y = \"abc\"");
    }

    #[test]
    fn suggests_near_names() {
        assert_eq!(
            nearest("rectangualr", ["normal", "rectangular"]),
            Some("rectangular")
        );
        assert_eq!(nearest("powr", ["power", "force"]), Some("power"));
        assert_eq!(nearest("zzzzzz", ["power", "force"]), None);
    }
}
