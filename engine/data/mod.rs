//! Reading tables into named numeric columns: delimited text (comma,
//! semicolon, tab, vertical bar or runs of whitespace; decimal points or
//! commas) and spreadsheet workbooks (.xlsx, .xls, .xlsm, .xlsb; .ods is
//! refused), each with a header row found below any title rows; and wide
//! layouts (one column per replicate or sample) turned into long form. Empty cells are *missing* (NaN in [`Dataset::values`]);
//! the model decides which columns matter and [`Dataset::select`] drops the
//! incomplete rows. A column with cells that are not numbers is kept as text
//! (group labels for `--by`); the error naming its first such cell is raised
//! only when a model uses the column.

mod delimited;
mod error;
#[cfg(test)]
mod file_tests;
mod limits;
mod records;
mod select;
mod sniff;
mod text;
mod wide;
mod workbook;

pub use delimited::{parse_delimited, parse_delimited_with};
pub use error::{CellKind, DataError, SheetCellError};
pub use limits::{MAX_CELLS, MAX_INPUT_BYTES};
pub use records::Separator;
pub use sniff::DecimalMark;
pub use text::TextColumn;
pub use wide::{is_column_spec, match_columns, stack_columns, Stacked};
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

/// How to read an input: which sheet of a workbook, the layout when it is
/// not to be guessed, and the size limits.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Workbook sheet by name or 1-based index; `None` = the first sheet. Ignored for text files.
    pub sheet: Option<String>,
    /// Cell delimiter of text files; `None` = guessed.
    pub delimiter: Option<Separator>,
    /// Decimal mark of text files; `None` = guessed (a comma only in `;`-separated files).
    pub decimal: Option<DecimalMark>,
    /// Line (text) or sheet row (workbook) of the header, 1-based; `None` = found.
    pub header_row: Option<usize>,
    /// Largest input accepted, in bytes.
    pub max_bytes: u64,
    /// Largest number of cells (rows × columns) accepted.
    pub max_cells: usize,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            sheet: None,
            delimiter: None,
            decimal: None,
            header_row: None,
            max_bytes: MAX_INPUT_BYTES,
            max_cells: MAX_CELLS,
        }
    }
}

/// How a table was read: what `--verbose` reports about its layout.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ReadNotes {
    /// Lines (or sheet rows) above the header that were skipped as titles.
    pub title_rows: Vec<usize>,
    /// Line (or sheet row) of the header.
    pub header_row: usize,
    /// The cell separator, in words (text files only).
    pub separator: Option<String>,
    /// The decimal mark of number cells.
    pub decimal: DecimalMark,
}

/// Reads a table from `path`: `-` is standard input (delimited text); a
/// workbook extension (see [`WORKBOOK_EXTENSIONS`]) is read as a workbook;
/// anything else as delimited text.
pub fn read_table(path: &str, opts: &ReadOptions) -> Result<Dataset, DataError> {
    read_table_noted(path, opts).map(|(d, _)| d)
}

/// As [`read_table`], also saying how the table was laid out.
pub fn read_table_noted(path: &str, opts: &ReadOptions) -> Result<(Dataset, ReadNotes), DataError> {
    if path == "-" {
        let stdin = std::io::stdin();
        let text = limits::read_stream(stdin.lock(), "standard input", opts.max_bytes)?;
        return delimited::parse_delimited_with(&text, "standard input", opts);
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
    delimited::parse_delimited_with(&text, path, opts)
}

/// Reads a `--delimiter` value: one character, or `tab`, `space` (runs of
/// whitespace), `comma`, `semicolon`, `bar`.
pub fn parse_separator(s: &str) -> Result<Separator, String> {
    let named = match s {
        "tab" | "\\t" | "\t" => Some(Separator::Byte(b'\t')),
        "space" | "whitespace" | " " => Some(Separator::Whitespace),
        "comma" => Some(Separator::Byte(b',')),
        "semicolon" => Some(Separator::Byte(b';')),
        "bar" | "pipe" => Some(Separator::Byte(b'|')),
        _ => None,
    };
    if let Some(sep) = named {
        return Ok(sep);
    }
    let mut chars = s.chars();
    match (chars.next(), chars.next()) {
        (Some(c), None) if c.is_ascii() && c != '"' && c != '\n' && c != '\r' => {
            Ok(Separator::Byte(c as u8))
        }
        _ => Err(format!(
            "'{s}' is not a delimiter: give one ASCII character such as ';' or '|', or tab, space, comma, semicolon, bar"
        )),
    }
}

/// Reads a `--decimal` value: `.` or `,`.
pub fn parse_decimal(s: &str) -> Result<DecimalMark, String> {
    match s {
        "." | "point" => Ok(DecimalMark::Point),
        "," | "comma" => Ok(DecimalMark::Comma),
        _ => Err(format!("'{s}' is not a decimal mark: give . or ,")),
    }
}
