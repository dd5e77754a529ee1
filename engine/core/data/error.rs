//! What can be wrong with an input table, and where: every message names the
//! file and, where there is one, the line (or sheet and row) and the column.

use std::borrow::Cow;
use thiserror::Error;

/// What is wrong with an input table, and where.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum DataError {
    /// The operating system refused the read.
    #[error("cannot read {path}: {}", one_line(reason))]
    Io { path: String, reason: String },
    /// No file at that path.
    #[error("{path}: no such file")]
    NotFound { path: String },
    /// The path is a directory.
    #[error("{path} is a directory, not a data file")]
    IsDirectory { path: String },
    /// Nothing but blank lines and comments.
    #[error("{path} is empty: expected a header line of column names, then rows of numbers")]
    Empty { path: String },
    /// A header and no data rows.
    #[error("{path} has a header but no data rows")]
    HeaderOnly { path: String },
    /// NUL bytes or invalid UTF-8: not a text table.
    #[error("{path} does not look like a text table ({detail}); give a CSV, tab- or space-separated file, or a workbook (.xlsx, .xls)")]
    Binary { path: String, detail: String },
    /// More bytes than the input limit.
    #[error("{path} is larger than the input limit of {limit} bytes ({} MiB); split or reduce the data", limit / (1024 * 1024))]
    TooLarge { path: String, limit: u64 },
    /// More cells than the cell limit.
    #[error(
        "{path} has more than {limit} cells (rows × columns), the input limit; reduce the data"
    )]
    TooManyCells { path: String, limit: usize },
    /// The first line holds numbers, not names.
    #[error("{path}, line {line}: the first line holds numbers, not column names; start the file with a header line such as 'x,y'")]
    NoHeader { path: String, line: usize },
    /// A header cell with no name.
    #[error("{path}, line {line}: column {column} of the header has no name")]
    EmptyHeaderName {
        path: String,
        line: usize,
        column: usize,
    },
    /// The same name twice in the header.
    #[error(
        "{path}, line {line}: column name '{}' appears twice (columns {first} and {second})",
        one_line(name)
    )]
    DuplicateColumn {
        path: String,
        line: usize,
        name: String,
        first: usize,
        second: usize,
    },
    /// A row with the wrong number of cells.
    #[error(
        "{path}, line {line}: expected {expected} cells (one per header column), found {found}"
    )]
    Ragged {
        path: String,
        line: usize,
        expected: usize,
        found: usize,
    },
    /// A cell that is not a number.
    #[error(
        "{path}, line {line}, column '{}': '{}' is not a number{}",
        one_line(column),
        one_line(text),
        number_hint(text)
    )]
    NotANumber {
        path: String,
        line: usize,
        column: String,
        text: String,
    },
    /// A NaN or infinite cell (literal, or a number too large for f64).
    #[error("{path}, line {line}, column '{}': '{}' is not a finite number; leave the cell empty to mark a missing value", one_line(column), one_line(text))]
    NonFinite {
        path: String,
        line: usize,
        column: String,
        text: String,
    },
    /// A quoted cell with no closing quote.
    #[error("{path}, line {line}: a quoted cell has no closing quote")]
    UnterminatedQuote { path: String, line: usize },
    /// A column name asked for that the table does not have.
    #[error(
        "column '{}' is not in {path} (columns: {})",
        one_line(name),
        one_line(available)
    )]
    UnknownColumn {
        path: String,
        name: String,
        available: String,
    },
    /// Every row has a missing cell in the columns the model needs.
    #[error(
        "{path}: no row has values in all of {}; every row has an empty cell there",
        one_line(columns)
    )]
    NoCompleteRows { path: String, columns: String },
    /// OpenDocument spreadsheets are refused: the library that reads them
    /// expands a cell's repeat count before any limit can be checked, so a
    /// file of a few hundred bytes can exhaust memory.
    #[error("{path}: OpenDocument spreadsheets (.ods) are not read (a small file can ask for billions of cells); save the sheet as .xlsx or CSV")]
    OdsRefused { path: String },
    /// The workbook could not be opened or read.
    #[error("cannot read workbook {path}: {}", one_line(reason))]
    Workbook { path: String, reason: String },
    /// `--sheet` names no sheet of the workbook.
    #[error(
        "{path} has no sheet '{}' (sheets: {}); give a name or a 1-based number",
        one_line(sheet),
        one_line(available)
    )]
    NoSuchSheet {
        path: String,
        sheet: String,
        available: String,
    },
    /// A sheet with no cells.
    #[error(
        "{path}, sheet '{}' is empty: expected a header row of column names, then rows of numbers",
        one_line(sheet)
    )]
    EmptySheet { path: String, sheet: String },
    /// A sheet with a header row and no data.
    #[error(
        "{path}, sheet '{}' has a header row but no data rows",
        one_line(sheet)
    )]
    HeaderOnlySheet { path: String, sheet: String },
    /// A header cell of a sheet with no name.
    #[error(
        "{path}, sheet '{}', row {row}: column {column} of the header has no name",
        one_line(sheet)
    )]
    EmptySheetHeaderName {
        path: String,
        sheet: String,
        row: usize,
        column: usize,
    },
    /// The same name twice in a sheet's header row.
    #[error("{path}, sheet '{}', row {row}: column name '{}' appears twice (columns {first} and {second})", one_line(sheet), one_line(name))]
    DuplicateSheetColumn {
        path: String,
        sheet: String,
        row: usize,
        name: String,
        first: usize,
        second: usize,
    },
    /// A non-numeric cell in a sheet's data rows (boxed: it is the largest variant).
    #[error("{0}")]
    TextCell(Box<SheetCellError>),
    /// A `;`-separated file with both `1,5` and `1.5` cells: the mark cannot be guessed.
    #[error("{path}: decimal marks are ambiguous: line {comma_line}, column {comma_column} has a decimal comma and line {point_line}, column {point_column} a decimal point; say which with --decimal , or --decimal .")]
    AmbiguousDecimal {
        path: String,
        comma_line: usize,
        comma_column: usize,
        point_line: usize,
        point_column: usize,
    },
    /// `--decimal ,` in a comma-separated file.
    #[error("{path}: the comma cannot be both the delimiter and the decimal mark; give --delimiter ';' (or tab) or --decimal .")]
    DecimalIsDelimiter { path: String },
    /// `--header-row N` past the last row.
    #[error("{path}: --header-row {row} is past the end of the table (its last row is {last})")]
    HeaderRowBeyondEnd {
        path: String,
        row: usize,
        last: usize,
    },
    /// `--header-row N` names a blank line, a comment or a line inside a quoted cell.
    #[error("{path}: --header-row {row} is a blank or comment row, or inside a quoted cell; give the row of the column names")]
    HeaderRowNotARow { path: String, row: usize },
    /// A column list, range or pattern (`--y`, `--wide-groups`) that names no column.
    #[error(
        "{option} '{}' matches no column of {path} (columns: {})",
        one_line(pattern),
        one_line(available)
    )]
    NoColumnMatches {
        path: String,
        option: String,
        pattern: String,
        available: String,
    },
    /// The column of wide-column names used where a number is needed.
    #[error(
        "{path}: column '{}' holds the names of the wide columns, not numbers",
        one_line(column)
    )]
    LabelColumn { path: String, column: String },
    /// A column made by reshaping a wide table whose name the table already uses.
    #[error("{path}: reshaping the wide columns makes a column '{}', but the table already has one; rename that column", one_line(name))]
    ReshapeNameTaken { path: String, name: String },
    /// `--sheet` given for a text file.
    #[error("--sheet applies to workbooks (.xlsx, .xls); {path} is read as delimited text")]
    SheetOnText { path: String },
}

/// Where a workbook cell that is not a number sits, and what it holds.
#[derive(Debug, Clone, PartialEq, Error)]
#[error("{path}, sheet '{}', row {row}, column '{}': {} '{}' is not a number{}", one_line(sheet), one_line(column), kind.what(), one_line(text), kind.hint())]
pub struct SheetCellError {
    pub path: String,
    pub sheet: String,
    /// 1-based row of the sheet.
    pub row: usize,
    pub column: String,
    /// The cell as the workbook shows it.
    pub text: String,
    pub kind: CellKind,
}

/// The kinds of workbook cell that are not numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CellKind {
    Text,
    Bool,
    DateTime,
    Duration,
    ErrorValue,
    NonFinite,
}

impl CellKind {
    /// How the message names the cell.
    pub fn what(self) -> &'static str {
        match self {
            CellKind::Text => "the text",
            CellKind::Bool => "the true/false value",
            CellKind::DateTime => "the date/time",
            CellKind::Duration => "the duration",
            CellKind::ErrorValue => "the error cell",
            CellKind::NonFinite => "the value",
        }
    }
    /// What to do about it.
    pub fn hint(self) -> &'static str {
        match self {
            CellKind::Text => "; if it is a number stored as text, convert the column to numbers",
            CellKind::DateTime => {
                "; convert dates to elapsed time (e.g. hours since the start) in a numeric column"
            }
            CellKind::Duration => "; use a numeric column",
            CellKind::ErrorValue => "; fix the formula in the workbook",
            CellKind::Bool | CellKind::NonFinite => "",
        }
    }
}

/// Text from the input as it appears in a message: control characters (a lone
/// carriage return, vertical tab, NEL, ...) and the Unicode line and paragraph
/// separators are escaped (`\r`, `\u{b}`), so a message stays one line and
/// cannot move the terminal's cursor.
fn one_line(text: &str) -> Cow<'_, str> {
    let unsafe_char = |c: char| c.is_control() || matches!(c, '\u{2028}' | '\u{2029}');
    if !text.contains(unsafe_char) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if unsafe_char(c) {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// The likely cause of a cell that is not a number, when one can be named.
fn number_hint(text: &str) -> &'static str {
    if super::sniff::comma_number(text) {
        " (decimal comma? try --decimal ,)"
    } else if text.contains(';') {
        " (cells separated by semicolons? try --delimiter ';')"
    } else {
        ""
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn input_text_in_messages_stays_on_one_line() {
        // Found by the read_table fuzzer: a lone carriage return inside a cell
        // went into the message as is.
        // The text cell is kept at reading and refused when a model uses the column.
        let d = crate::data::parse_delimited("x,y\n1,\"2\r3\"\n", "t.csv").unwrap();
        let e = d.check_numeric(&["y"]).unwrap_err();
        let shown = e.to_string();
        println!("{shown}");
        assert_eq!(shown, "t.csv, line 2, column 'y': '2\\r3' is not a number");
        // The field keeps the cell as it was.
        assert!(matches!(&e, DataError::NotANumber { text, .. } if text == "2\r3"));

        let e = DataError::DuplicateSheetColumn {
            path: "b.xlsx".into(),
            sheet: "Run\n2".into(),
            row: 1,
            name: "a\u{2028}b\u{85}\u{b}".into(),
            first: 1,
            second: 2,
        };
        let shown = e.to_string();
        println!("{shown}");
        assert_eq!(
            shown,
            "b.xlsx, sheet 'Run\\n2', row 1: column name 'a\\u{2028}b\\u{85}\\u{b}' appears twice (columns 1 and 2)"
        );
        // Ordinary text, non-ASCII letters included, is shown unchanged.
        assert_eq!(one_line("größe µm"), "größe µm");
    }
}
