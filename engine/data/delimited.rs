//! Delimited text with a header line: the separator (comma, tab, or runs of
//! whitespace) is detected from the header; cells are trimmed; double quotes
//! may wrap a cell (`""` inside is a literal quote); blank lines and lines
//! starting with `#` are skipped; empty cells are missing (NaN); columns
//! with cells that are not numbers are also kept as text.

use super::text::{TextBuilder, TextColumn};
use super::{DataError, Dataset, MAX_CELLS};

/// How cells are separated on a line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Separator {
    Comma,
    Tab,
    /// One or more spaces or tabs.
    Whitespace,
}

/// Parses delimited text with a header into a dataset (cell limit [`MAX_CELLS`]).
pub fn parse_delimited(text: &str, source: &str) -> Result<Dataset, DataError> {
    parse_delimited_limited(text, source, MAX_CELLS)
}

/// The lines after the header that hold data: (1-based line number, text).
fn data_lines(text: &str) -> impl Iterator<Item = (usize, &str)> {
    // Files from old spreadsheet exports end lines with a carriage return alone.
    let cr_only = text.contains('\r') && !text.contains('\n');
    let lines: Box<dyn Iterator<Item = &str>> = if cr_only {
        Box::new(text.split('\r'))
    } else {
        Box::new(text.lines())
    };
    lines.enumerate().map(|(i, l)| (i + 1, l)).filter(|(_, l)| {
        let t = l.trim();
        !t.is_empty() && !t.starts_with('#')
    })
}

/// The error for a cell that is not a finite number.
fn cell_error(source: &str, line: usize, column: &str, cell: &str, finite: bool) -> DataError {
    let (path, column, text) = (source.to_string(), column.to_string(), cell.to_string());
    if finite {
        DataError::NotANumber {
            path,
            line,
            column,
            text,
        }
    } else {
        DataError::NonFinite {
            path,
            line,
            column,
            text,
        }
    }
}

/// Parses delimited text, refusing more than `max_cells` cells. A column
/// with a cell that is not a number is also kept as text (a second pass
/// over the lines, only for such columns).
pub(crate) fn parse_delimited_limited(
    text: &str,
    source: &str,
    max_cells: usize,
) -> Result<Dataset, DataError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let path = || source.to_string();
    let mut lines = data_lines(text);
    let (header_line, header) = lines
        .next()
        .ok_or_else(|| DataError::Empty { path: path() })?;
    let sep = detect_separator(header);
    let columns = split_cells(header, sep).ok_or_else(|| DataError::UnterminatedQuote {
        path: path(),
        line: header_line,
    })?;
    check_header(&columns, source, header_line)?;
    let n_cols = columns.len();
    let mut values: Vec<Vec<f64>> = vec![Vec::new(); n_cols];
    // Per column, the first cell that is not a finite number and where it is.
    let mut first_bad: Vec<Option<(DataError, usize)>> = vec![None; n_cols];
    let mut cells = n_cols;
    for (line, text) in lines {
        let row = split_cells(text, sep)
            .ok_or_else(|| DataError::UnterminatedQuote { path: path(), line })?;
        if row.len() != n_cols {
            return Err(DataError::Ragged {
                path: path(),
                line,
                expected: n_cols,
                found: row.len(),
            });
        }
        cells = cells.saturating_add(n_cols);
        if cells > max_cells {
            return Err(DataError::TooManyCells {
                path: path(),
                limit: max_cells,
            });
        }
        for (j, ((cell, name), col)) in row.iter().zip(&columns).zip(values.iter_mut()).enumerate()
        {
            match parse_cell(cell) {
                Ok(v) => col.push(v),
                Err(finite) => {
                    col.push(f64::NAN);
                    if first_bad[j].is_none() {
                        first_bad[j] = Some((cell_error(source, line, name, cell, finite), line));
                    }
                }
            }
        }
    }
    let n_rows = values.first().map_or(0, Vec::len);
    if n_rows == 0 {
        return Err(DataError::HeaderOnly { path: path() });
    }
    // A header name and a cell both holding ';' mean a semicolon-separated
    // file, not a column of labels: refuse it now, with the hint.
    let semicolons = columns
        .iter()
        .zip(&first_bad)
        .find_map(|(name, bad)| match bad {
            Some((e @ DataError::NotANumber { text, .. }, _))
                if name.contains(';') && text.contains(';') =>
            {
                Some(e.clone())
            }
            _ => None,
        });
    if let Some(e) = semicolons {
        return Err(e);
    }
    let text_cols = text_columns(text, sep, &columns, first_bad, n_rows);
    Ok(Dataset {
        columns,
        values,
        text: text_cols,
        source: source.to_string(),
        skipped_rows: 0,
    })
}

/// Reads the cells of the columns that have a bad cell again, as text.
fn text_columns(
    text: &str,
    sep: Separator,
    columns: &[String],
    first_bad: Vec<Option<(DataError, usize)>>,
    n_rows: usize,
) -> Vec<TextColumn> {
    let wanted: Vec<usize> = (0..columns.len())
        .filter(|&j| first_bad[j].is_some())
        .collect();
    if wanted.is_empty() {
        return Vec::new();
    }
    let mut builders: Vec<TextBuilder> = wanted
        .iter()
        .map(|_| TextBuilder::with_rows(n_rows))
        .collect();
    // The first pass accepted every line, so each splits into the header's width.
    for (_, line) in data_lines(text).skip(1) {
        let Some(row) = split_cells(line, sep) else {
            continue;
        };
        for (b, &j) in builders.iter_mut().zip(&wanted) {
            b.push(row.get(j).map(String::as_str).unwrap_or(""));
        }
    }
    let mut first_bad = first_bad;
    builders
        .into_iter()
        .zip(&wanted)
        .filter_map(|(b, &j)| {
            let (err, line) = first_bad[j].take()?;
            Some(b.finish(&columns[j], err, (line, j)))
        })
        .collect()
}

/// A cell's value: NaN for an empty cell (missing); `Err(true)` for text that
/// is not a number, `Err(false)` for NaN, infinities and overflowing numbers.
fn parse_cell(cell: &str) -> Result<f64, bool> {
    if cell.is_empty() {
        return Ok(f64::NAN);
    }
    match cell.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(false),
        Err(_) => Err(true),
    }
}

/// Names must be non-empty and distinct, and the line must not be a data row.
fn check_header(columns: &[String], source: &str, line: usize) -> Result<(), DataError> {
    if columns.iter().all(|c| c.parse::<f64>().is_ok()) {
        return Err(DataError::NoHeader {
            path: source.to_string(),
            line,
        });
    }
    for (j, name) in columns.iter().enumerate() {
        if name.is_empty() {
            return Err(DataError::EmptyHeaderName {
                path: source.to_string(),
                line,
                column: j + 1,
            });
        }
        if let Some(k) = columns[..j].iter().position(|c| c == name) {
            return Err(DataError::DuplicateColumn {
                path: source.to_string(),
                line,
                name: name.clone(),
                first: k + 1,
                second: j + 1,
            });
        }
    }
    Ok(())
}

/// Tab if the header has a tab, else comma if it has a comma, else whitespace runs.
pub(crate) fn detect_separator(header: &str) -> Separator {
    let mut in_quotes = false;
    let (mut tab, mut comma) = (false, false);
    for c in header.chars() {
        match c {
            '"' => in_quotes = !in_quotes,
            '\t' if !in_quotes => tab = true,
            ',' if !in_quotes => comma = true,
            _ => {}
        }
    }
    if tab {
        Separator::Tab
    } else if comma {
        Separator::Comma
    } else {
        Separator::Whitespace
    }
}

/// Splits one line into trimmed cells; `None` when a quote is left open.
pub(crate) fn split_cells(line: &str, sep: Separator) -> Option<Vec<String>> {
    let mut cells = Vec::new();
    let mut cur = String::new();
    let mut started = false;
    let mut in_quotes = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if in_quotes {
            if c == '"' {
                if chars.peek() == Some(&'"') {
                    cur.push('"');
                    chars.next();
                } else {
                    in_quotes = false;
                }
            } else {
                cur.push(c);
            }
            continue;
        }
        let is_sep = match sep {
            Separator::Comma => c == ',',
            Separator::Tab => c == '\t',
            Separator::Whitespace => c.is_whitespace(),
        };
        if is_sep {
            if sep != Separator::Whitespace || started {
                cells.push(cur.trim().to_string());
                cur.clear();
            }
            started = false;
        } else if c == '"' && cur.trim().is_empty() {
            cur.clear();
            in_quotes = true;
            started = true;
        } else {
            cur.push(c);
            started = true;
        }
    }
    if in_quotes {
        return None;
    }
    if sep != Separator::Whitespace || started {
        cells.push(cur.trim().to_string());
    }
    Some(cells)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_ended_by_a_carriage_return_alone() {
        // Found by the read_table fuzzer: read as one header line before.
        let d = parse_delimited("x,y\r1,2\r3,4\r", "mac.csv").unwrap();
        assert_eq!(d.columns, vec!["x", "y"]);
        assert_eq!(d.values, vec![vec![1.0, 3.0], vec![2.0, 4.0]]);
        let e = parse_delimited("x,y\r1,2\r3,4,5\r", "mac.csv").unwrap_err();
        assert!(e.to_string().contains("line 3"), "{e}");
    }

    fn parse(text: &str) -> Result<Dataset, DataError> {
        parse_delimited(text, "t.csv")
    }

    #[test]
    fn reads_comma_tab_and_whitespace() {
        for text in [
            "x,y\n1,2\n3,4.5\n",
            "x\ty\n1\t2\n3\t4.5\n",
            "x   y\n  1 2\n3\t 4.5  \n",
        ] {
            let d = parse(text).unwrap();
            assert_eq!(d.columns, vec!["x", "y"], "{text:?}");
            assert_eq!(d.values, vec![vec![1.0, 3.0], vec![2.0, 4.5]], "{text:?}");
        }
    }

    #[test]
    fn detects_the_separator_from_the_header() {
        assert_eq!(detect_separator("a,b"), Separator::Comma);
        assert_eq!(detect_separator("a\tb"), Separator::Tab);
        assert_eq!(detect_separator("a b"), Separator::Whitespace);
        assert_eq!(detect_separator("\"a,b\" c"), Separator::Whitespace);
    }

    #[test]
    fn skips_comments_blank_lines_bom_and_crlf() {
        let d = parse("\u{feff}# a comment\n\nx, y\r\n# mid\n 1 , 2 \r\n\n3,4\r\n").unwrap();
        assert_eq!(d.columns, vec!["x", "y"]);
        assert_eq!(d.values, vec![vec![1.0, 3.0], vec![2.0, 4.0]]);
    }

    #[test]
    fn quoted_header_names_and_cells() {
        let d = parse("\"time h\",\"a,b\",\"say \"\"hi\"\"\"\n1,\"2\",3\n").unwrap();
        assert_eq!(d.columns, vec!["time h", "a,b", "say \"hi\""]);
        assert_eq!(d.values, vec![vec![1.0], vec![2.0], vec![3.0]]);
        let d = parse("\"time h\" y\n1 2\n").unwrap();
        assert_eq!(d.columns, vec!["time h", "y"]);
    }

    #[test]
    fn empty_cells_are_missing() {
        let d = parse("x,y,z\n1,,3\n,5,\n").unwrap();
        assert_eq!(d.values[0][0], 1.0);
        assert!(d.values[1][0].is_nan());
        assert!(d.values[0][1].is_nan() && d.values[2][1].is_nan());
        assert_eq!(d.values[1][1], 5.0);
        let d = parse("x\ty\n1\t\n").unwrap();
        assert!(d.values[1][0].is_nan());
    }

    #[test]
    fn text_and_non_finite_cells_name_line_and_column_when_used() {
        let d = parse("x,y\n1,2\n# c\n3,abc\n").unwrap();
        // The reader keeps the text; a model using y gets the error.
        assert_eq!(d.values[0], vec![1.0, 3.0]);
        assert!(d.values[1][1].is_nan());
        assert_eq!(d.text_column("y").unwrap().cell(1), Some("abc"));
        assert!(d.select(&["x"]).is_ok(), "x alone is all numbers");
        let e = d.select(&["x", "y"]).unwrap_err();
        assert_eq!(
            e,
            DataError::NotANumber {
                path: "t.csv".into(),
                line: 4,
                column: "y".into(),
                text: "abc".into()
            }
        );
        assert_eq!(
            e.to_string(),
            "t.csv, line 4, column 'y': 'abc' is not a number"
        );
        for bad in ["NaN", "nan", "inf", "-inf", "Infinity", "1e400"] {
            let d = parse(&format!("x,y\n1,{bad}\n")).unwrap();
            assert_eq!(
                d.select(&["y", "x"]).unwrap_err(),
                DataError::NonFinite {
                    path: "t.csv".into(),
                    line: 2,
                    column: "y".into(),
                    text: bad.into()
                }
            );
        }
    }

    #[test]
    fn the_earliest_bad_cell_of_the_used_columns_is_named() {
        let d = parse("x,y,note\n1,2,ok\n2,b,c\na,3,d\n").unwrap();
        let e = d.select(&["x", "y"]).unwrap_err();
        assert!(
            matches!(&e, DataError::NotANumber { line: 3, column, .. } if column == "y"),
            "{e:?}"
        );
        let e = d.select(&["x"]).unwrap_err();
        assert!(
            matches!(&e, DataError::NotANumber { line: 4, column, .. } if column == "x"),
            "{e:?}"
        );
        assert_eq!(
            d.text.iter().map(|t| t.name.as_str()).collect::<Vec<_>>(),
            vec!["x", "y", "note"]
        );
    }

    #[test]
    fn group_labels_are_kept_as_text() {
        let d = parse(
            "well,dose,signal\nA1,0.1,5\n\"spec 2\",0.2,6\nB12,0.3,7\n,0.4,8\nPC-3,0.5,9\nA1,0.6,10\n7,0.7,11\n",
        )
        .unwrap();
        let w = d.text_column("well").unwrap();
        assert_eq!(w.labels, vec!["A1", "spec 2", "B12", "PC-3", "7"]);
        let cells: Vec<Option<&str>> = (0..w.len()).map(|i| w.cell(i)).collect();
        assert_eq!(
            cells,
            vec![
                Some("A1"),
                Some("spec 2"),
                Some("B12"),
                None,
                Some("PC-3"),
                Some("A1"),
                Some("7")
            ]
        );
        assert!(
            d.text_column("dose").is_none(),
            "numeric columns carry no text"
        );
        let s = d.select(&["dose", "signal"]).unwrap();
        assert_eq!(s.values[1], vec![5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0]);
        assert!(s.text.is_empty());
        assert!(matches!(
            d.select(&["well"]).unwrap_err(),
            DataError::NotANumber { line: 2, .. }
        ));
    }

    #[test]
    fn semicolons_get_a_hint() {
        let e = parse("x;y\n1;2\n").unwrap_err();
        assert!(
            e.to_string().contains("semicolons are not a separator"),
            "{e}"
        );
    }

    #[test]
    fn ragged_rows_are_errors() {
        let e = parse("x,y\n1,2\n3\n").unwrap_err();
        assert_eq!(
            e,
            DataError::Ragged {
                path: "t.csv".into(),
                line: 3,
                expected: 2,
                found: 1
            }
        );
        let e = parse("x y\n1 2 3\n").unwrap_err();
        assert!(matches!(
            e,
            DataError::Ragged {
                line: 2,
                expected: 2,
                found: 3,
                ..
            }
        ));
        assert!(e.to_string().contains("line 2: expected 2 cells"), "{e}");
    }

    #[test]
    fn header_problems() {
        assert_eq!(
            parse("x,x\n1,2\n").unwrap_err(),
            DataError::DuplicateColumn {
                path: "t.csv".into(),
                line: 1,
                name: "x".into(),
                first: 1,
                second: 2
            }
        );
        assert_eq!(
            parse("x,,y\n1,2,3\n").unwrap_err(),
            DataError::EmptyHeaderName {
                path: "t.csv".into(),
                line: 1,
                column: 2
            }
        );
        assert_eq!(
            parse("1,2\n3,4\n").unwrap_err(),
            DataError::NoHeader {
                path: "t.csv".into(),
                line: 1
            }
        );
        assert!(matches!(
            parse("\"x,y\n1,2\n").unwrap_err(),
            DataError::UnterminatedQuote { line: 1, .. }
        ));
    }

    #[test]
    fn empty_and_header_only() {
        assert_eq!(
            parse("").unwrap_err(),
            DataError::Empty {
                path: "t.csv".into()
            }
        );
        assert_eq!(
            parse("# only\n\n  \n").unwrap_err(),
            DataError::Empty {
                path: "t.csv".into()
            }
        );
        assert_eq!(
            parse("x,y\n\n# nothing\n").unwrap_err(),
            DataError::HeaderOnly {
                path: "t.csv".into()
            }
        );
    }

    #[test]
    fn cell_limit() {
        let e = parse_delimited_limited("x,y\n1,2\n3,4\n", "t.csv", 5).unwrap_err();
        assert_eq!(
            e,
            DataError::TooManyCells {
                path: "t.csv".into(),
                limit: 5
            }
        );
        assert!(parse_delimited_limited("x,y\n1,2\n3,4\n", "t.csv", 6).is_ok());
    }
}
