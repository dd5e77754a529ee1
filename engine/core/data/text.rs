//! Columns that hold text: each distinct cell text is stored once and every
//! row keeps a small code, so a column of group labels (`A1`, `PC-3`) costs
//! four bytes a row; the first cell that is not a number is remembered so a
//! model that uses the column gets the same error as a numeric reader gives.

use super::DataError;
use std::collections::HashMap;

/// Code of an empty (missing) cell.
const MISSING: u32 = u32::MAX;

/// A column with at least one cell that is not a number: its cells as text,
/// and the error naming the first such cell (raised when a model uses it).
#[derive(Debug, Clone, PartialEq)]
pub struct TextColumn {
    /// Column name from the header.
    pub name: String,
    /// Distinct non-empty cell texts, in order of first appearance.
    pub labels: Vec<String>,
    /// Per row, the index into `labels` (`u32::MAX` for an empty cell).
    codes: Vec<u32>,
    /// The error for the first non-numeric cell (file, line or row, column, text).
    pub first_bad: DataError,
    /// Where that cell is, as (line or row, 0-based column position), to pick the earliest.
    pub at: (usize, usize),
}

impl TextColumn {
    /// Number of rows.
    pub fn len(&self) -> usize {
        self.codes.len()
    }
    /// True when the column has no rows.
    pub fn is_empty(&self) -> bool {
        self.codes.is_empty()
    }
    /// The text of row `i`; `None` for an empty cell or a row past the end.
    pub fn cell(&self, i: usize) -> Option<&str> {
        let c = *self.codes.get(i)?;
        (c != MISSING).then(|| self.labels[c as usize].as_str())
    }
    /// Per row, the index of its label in `labels` (`None` for an empty cell).
    pub fn label_index(&self, i: usize) -> Option<usize> {
        self.codes
            .get(i)
            .and_then(|&c| (c != MISSING).then_some(c as usize))
    }
}

/// Builds a [`TextColumn`] row by row, storing each distinct text once.
#[derive(Debug)]
pub(crate) struct TextBuilder {
    labels: Vec<String>,
    index: HashMap<String, u32>,
    codes: Vec<u32>,
}

impl TextBuilder {
    /// An empty builder expecting about `rows` rows.
    pub(crate) fn with_rows(rows: usize) -> Self {
        TextBuilder {
            labels: Vec::new(),
            index: HashMap::new(),
            codes: Vec::with_capacity(rows),
        }
    }

    /// Appends one cell (trimmed; empty = missing).
    pub(crate) fn push(&mut self, text: &str) {
        let t = text.trim();
        if t.is_empty() {
            self.codes.push(MISSING);
            return;
        }
        let code = match self.index.get(t) {
            Some(&c) => c,
            None => {
                // At most MAX_CELLS distinct labels, well below u32::MAX.
                let c = self.labels.len() as u32;
                self.labels.push(t.to_string());
                self.index.insert(t.to_string(), c);
                c
            }
        };
        self.codes.push(code);
    }

    /// The finished column.
    pub(crate) fn finish(self, name: &str, first_bad: DataError, at: (usize, usize)) -> TextColumn {
        TextColumn {
            name: name.to_string(),
            labels: self.labels,
            codes: self.codes,
            first_bad,
            at,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_are_stored_once_in_order_of_first_appearance() {
        let mut b = TextBuilder::with_rows(5);
        for t in ["B12", " A1 ", "", "B12", "spec 2"] {
            b.push(t);
        }
        let err = DataError::Empty { path: "p".into() };
        let c = b.finish("well", err.clone(), (2, 0));
        assert_eq!(c.labels, vec!["B12", "A1", "spec 2"]);
        assert_eq!(c.len(), 5);
        assert_eq!(c.cell(0), Some("B12"));
        assert_eq!(c.cell(1), Some("A1"));
        assert_eq!(c.cell(2), None);
        assert_eq!(c.label_index(3), Some(0));
        assert_eq!(c.cell(4), Some("spec 2"));
        assert_eq!(c.cell(5), None);
        assert_eq!(c.first_bad, err);
    }
}
