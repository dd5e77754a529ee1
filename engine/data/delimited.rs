//! Delimited text with a header line: the separator (comma, tab, or runs of
//! whitespace) is detected from the header; cells are trimmed; double quotes
//! may wrap a cell (`""` inside is a literal quote); blank lines and lines
//! starting with `#` are skipped; empty cells are missing (NaN).

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

/// Parses delimited text, refusing more than `max_cells` cells.
pub(crate) fn parse_delimited_limited(
    text: &str,
    source: &str,
    max_cells: usize,
) -> Result<Dataset, DataError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let path = || source.to_string();
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l))
        .filter(|(_, l)| {
            let t = l.trim();
            !t.is_empty() && !t.starts_with('#')
        });
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
        for ((cell, name), col) in row.iter().zip(&columns).zip(values.iter_mut()) {
            col.push(parse_cell(cell).map_err(|finite| {
                let (path, column, text) = (path(), name.clone(), cell.clone());
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
            })?);
        }
    }
    if values.first().map_or(true, |c| c.is_empty()) {
        return Err(DataError::HeaderOnly { path: path() });
    }
    Ok(Dataset {
        columns,
        values,
        source: source.to_string(),
        skipped_rows: 0,
    })
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
    fn text_and_non_finite_cells_name_line_and_column() {
        let e = parse("x,y\n1,2\n# c\n3,abc\n").unwrap_err();
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
            let e = parse(&format!("x,y\n1,{bad}\n")).unwrap_err();
            assert_eq!(
                e,
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
