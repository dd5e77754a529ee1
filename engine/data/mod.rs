//! Reading tables into named numeric columns: delimited text (comma, tab,
//! whitespace) with a header.

use thiserror::Error;

/// A table of numeric columns, column-major.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Dataset {
    /// Column names from the header, in file order.
    pub columns: Vec<String>,
    /// `values[j][i]`: row i of column j. All columns have the same length.
    pub values: Vec<Vec<f64>>,
    /// Where the data came from (a path, or a label).
    pub source: String,
    /// Rows skipped because a needed cell was empty (reported as a warning).
    pub skipped_rows: usize,
}

impl Dataset {
    /// The column with this name.
    pub fn column(&self, name: &str) -> Option<&[f64]> {
        self.columns.iter().position(|c| c == name).map(|j| self.values[j].as_slice())
    }
    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.values.first().map(|c| c.len()).unwrap_or(0)
    }
}

/// What is wrong with an input table, and where.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum DataError {
    #[error("cannot read {path}: {reason}")]
    Io { path: String, reason: String },
    #[error("{path} is empty")]
    Empty { path: String },
}
