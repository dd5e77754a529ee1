//! Reading tables into named numeric columns: delimited text (comma, tab or
//! runs of whitespace) with a header, and spreadsheet workbooks (.xlsx, .xls,
//! .xlsm, .xlsb; .ods is refused). Empty cells are *missing* (NaN in [`Dataset::values`]);
//! the model decides which columns matter and [`Dataset::select`] drops the
//! incomplete rows. A column with cells that are not numbers is kept as text
//! (group labels for `--by`); the error naming its first such cell is raised
//! only when a model uses the column.

mod delimited;
mod error;
#[cfg(test)]
mod file_tests;
mod limits;
mod select;
mod text;
mod workbook;

pub use delimited::parse_delimited;
pub use error::{CellKind, DataError, SheetCellError};
pub use limits::{MAX_CELLS, MAX_INPUT_BYTES};
pub use text::TextColumn;
pub use workbook::WORKBOOK_EXTENSIONS;

/// A table of columns, column-major: numbers for every column, and the
/// text of the columns that hold cells that are not numbers.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Dataset {
    /// Column names from the header, in file order.
    pub columns: Vec<String>,
    /// `values[j][i]`: row i of column j. All columns have the same length.
    /// NaN = missing cell (and, in a text column, a cell that is not a number).
    pub values: Vec<Vec<f64>>,
    /// The columns with cells that are not numbers, as text (file order).
    pub text: Vec<TextColumn>,
    /// Where the data came from (a path, or a label).
    pub source: String,
    /// Rows skipped because a needed cell was empty (reported as a warning).
    pub skipped_rows: usize,
}

impl Dataset {
    /// The column with this name, as numbers (see [`Dataset::select`] for a
    /// check that it holds only numbers).
    pub fn column(&self, name: &str) -> Option<&[f64]> {
        self.columns
            .iter()
            .position(|c| c == name)
            .and_then(|j| self.values.get(j))
            .map(|c| c.as_slice())
    }
    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.values.first().map(|c| c.len()).unwrap_or(0)
    }
    /// True when the table has a column of this name.
    pub fn has_column(&self, name: &str) -> bool {
        self.columns.iter().any(|c| c == name)
    }
    /// The column with this name as text, when it holds cells that are not numbers.
    pub fn text_column(&self, name: &str) -> Option<&TextColumn> {
        self.text.iter().find(|t| t.name == name)
    }
    /// Refuses the named columns when any holds a cell that is not a number:
    /// the error names the earliest such cell (by line, then column).
    pub fn check_numeric<S: AsRef<str>>(&self, names: &[S]) -> Result<(), DataError> {
        let first = self
            .text
            .iter()
            .filter(|t| names.iter().any(|n| n.as_ref() == t.name))
            .min_by_key(|t| t.at);
        match first {
            Some(t) => Err(t.first_bad.clone()),
            None => Ok(()),
        }
    }
}

/// How to read an input: which sheet of a workbook, and the size limits.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Workbook sheet by name or 1-based index; `None` = the first sheet. Ignored for text files.
    pub sheet: Option<String>,
    /// Largest input accepted, in bytes.
    pub max_bytes: u64,
    /// Largest number of cells (rows × columns) accepted.
    pub max_cells: usize,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            sheet: None,
            max_bytes: MAX_INPUT_BYTES,
            max_cells: MAX_CELLS,
        }
    }
}

/// Reads a table from `path`: `-` is standard input (delimited text); a
/// workbook extension (see [`WORKBOOK_EXTENSIONS`]) is read as a workbook;
/// anything else as delimited text.
pub fn read_table(path: &str, opts: &ReadOptions) -> Result<Dataset, DataError> {
    if path == "-" {
        let stdin = std::io::stdin();
        let text = limits::read_stream(stdin.lock(), "standard input", opts.max_bytes)?;
        return delimited::parse_delimited_limited(&text, "standard input", opts.max_cells);
    }
    limits::check_file(path, opts.max_bytes)?;
    if workbook::is_ods_path(path) {
        return Err(DataError::OdsRefused {
            path: path.to_string(),
        });
    }
    if workbook::is_workbook_path(path) {
        return workbook::read_workbook(path, opts);
    }
    if opts.sheet.is_some() {
        return Err(DataError::SheetOnText {
            path: path.to_string(),
        });
    }
    let text = limits::read_file_text(path, opts.max_bytes)?;
    delimited::parse_delimited_limited(&text, path, opts.max_cells)
}
