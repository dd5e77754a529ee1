//! Delimited text into a dataset: the delimiter (`,` `;` tab `|`, or runs of
//! whitespace), the decimal mark and the header row are guessed (see
//! `sniff`) unless given; rows above the header (titles) are skipped and
//! noted; cells are trimmed; empty cells are missing (NaN); columns with
//! cells that are not numbers are also kept as text. Records come from
//! `records` (the `csv` crate), so quoted cells may hold line breaks.

use super::records::{normalise_line_ends, records, Record, Separator};
use super::sniff::{class_of, detect_decimal, detect_separator, find_header, parse_number};
use super::sniff::{Class, DecimalMark, SNIFF_ROWS};
use super::text::{TextBuilder, TextColumn};
use super::{DataError, Dataset, ReadNotes, ReadOptions, MAX_CELLS};

/// Parses delimited text with a header into a dataset (default options,
/// cell limit [`MAX_CELLS`]).
pub fn parse_delimited(text: &str, source: &str) -> Result<Dataset, DataError> {
    parse_delimited_limited(text, source, MAX_CELLS)
}

/// Parses delimited text with default options, refusing more than `max_cells` cells.
pub(crate) fn parse_delimited_limited(
    text: &str,
    source: &str,
    max_cells: usize,
) -> Result<Dataset, DataError> {
    let opts = ReadOptions {
        max_cells,
        ..ReadOptions::default()
    };
    parse_delimited_with(text, source, &opts).map(|(d, _)| d)
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

/// The header: how many records come before it, its line and its cells.
type Header = (usize, usize, Vec<String>);

/// The header given by `--header-row N` (a line number of the file).
fn header_at_line(text: &str, sep: Separator, source: &str, n: usize) -> Result<Header, DataError> {
    for (before, r) in records(text, sep, source).enumerate() {
        let (line, cells) = r?;
        if line == n {
            return Ok((before, line, cells));
        }
        if line > n {
            break;
        }
    }
    let lines = text.lines().count();
    if n > lines || n == 0 {
        return Err(DataError::HeaderRowBeyondEnd {
            path: source.to_string(),
            row: n,
            last: lines,
        });
    }
    Err(DataError::HeaderRowNotARow {
        path: source.to_string(),
        row: n,
    })
}

/// The header found among the first records ([`find_header`]), else the first record.
fn header_found(
    text: &str,
    sep: Separator,
    source: &str,
    mark: DecimalMark,
) -> Result<Header, DataError> {
    let head: Vec<Record> = records(text, sep, source)
        .take(SNIFF_ROWS)
        .collect::<Result<_, _>>()?;
    if head.is_empty() {
        return Err(DataError::Empty {
            path: source.to_string(),
        });
    }
    let classes: Vec<Vec<Class>> = head
        .iter()
        .map(|(_, cells)| cells.iter().map(|c| class_of(c, mark)).collect())
        .collect();
    let k = find_header(&classes, true).unwrap_or(0);
    let (line, cells) = head.into_iter().nth(k).unwrap_or_default();
    Ok((k, line, cells))
}

/// Parses delimited text with the layout options of `opts` (delimiter,
/// decimal mark, header row; guessed when not given), refusing more than
/// `opts.max_cells` cells. A column with a cell that is not a number is
/// also kept as text (a second pass, only for such columns).
pub fn parse_delimited_with(
    text: &str,
    source: &str,
    opts: &ReadOptions,
) -> Result<(Dataset, ReadNotes), DataError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let text = normalise_line_ends(text);
    let text = text.as_ref();
    let path = || source.to_string();
    let sep = opts.delimiter.unwrap_or_else(|| detect_separator(text));
    let mark = match opts.decimal {
        Some(m) => m,
        None => detect_decimal(sep, records(text, sep, source), source)?,
    };
    if mark == DecimalMark::Comma && sep == Separator::Byte(b',') {
        return Err(DataError::DecimalIsDelimiter { path: path() });
    }
    let (skip, header_line, columns) = match opts.header_row {
        Some(n) => header_at_line(text, sep, source, n)?,
        None => header_found(text, sep, source, mark)?,
    };
    check_header(&columns, source, header_line, mark)?;
    let n_cols = columns.len();
    let mut values: Vec<Vec<f64>> = vec![Vec::new(); n_cols];
    // Per column, the first cell that is not a finite number and where it is.
    let mut first_bad: Vec<Option<(DataError, usize)>> = vec![None; n_cols];
    let mut cells = n_cols;
    let mut title_rows = Vec::with_capacity(skip);
    for (k, r) in records(text, sep, source).enumerate() {
        let (line, row) = r?;
        if k < skip {
            title_rows.push(line);
            continue;
        }
        if k == skip {
            continue;
        }
        if row.len() != n_cols {
            return Err(DataError::Ragged {
                path: path(),
                line,
                expected: n_cols,
                found: row.len(),
            });
        }
        cells = cells.saturating_add(n_cols);
        if cells > opts.max_cells {
            return Err(DataError::TooManyCells {
                path: path(),
                limit: opts.max_cells,
            });
        }
        for (j, ((cell, name), col)) in row.iter().zip(&columns).zip(values.iter_mut()).enumerate()
        {
            match parse_number(cell, mark) {
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
    let text_cols = text_columns(text, sep, source, skip, &columns, first_bad, n_rows);
    let notes = ReadNotes {
        title_rows,
        header_row: header_line,
        separator: Some(sep.describe()),
        decimal: mark,
    };
    let data = Dataset {
        columns,
        values,
        text: text_cols,
        source: source.to_string(),
        skipped_rows: 0,
    };
    Ok((data, notes))
}

/// Reads the cells of the columns that have a bad cell again, as text.
fn text_columns(
    text: &str,
    sep: Separator,
    source: &str,
    skip: usize,
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
    // The first pass accepted every record, so each has the header's width.
    for r in records(text, sep, source).skip(skip + 1) {
        let Ok((_, row)) = r else {
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

/// Names must be non-empty and distinct, and the line must not be a data row.
fn check_header(
    columns: &[String],
    source: &str,
    line: usize,
    mark: DecimalMark,
) -> Result<(), DataError> {
    if columns.iter().all(|c| class_of(c, mark) == Class::Number) {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::{DecimalMark, Separator};

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
        assert_eq!(detect_separator("a,b"), Separator::Byte(b','));
        assert_eq!(detect_separator("a\tb"), Separator::Byte(b'\t'));
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
    fn semicolons_and_decimal_commas() {
        let d = parse("x;y\n1;2\n").unwrap();
        assert_eq!(d.values, vec![vec![1.0], vec![2.0]]);
        // A `;` file with decimal commas, as a European-locale export writes it.
        let d = parse("dose;signal\n0,5;1,25\n1;-2,5e1\n").unwrap();
        assert_eq!(d.values, vec![vec![0.5, 1.0], vec![1.25, -25.0]]);
        // Tab-separated with decimal commas: kept as text, and the message names the cause.
        let d = parse("x\ty\n0,0\t1\n").unwrap();
        let e = d.select(&["x", "y"]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.csv, line 2, column 'x': '0,0' is not a number (decimal comma? try --decimal ,)"
        );
        let opts = ReadOptions {
            decimal: Some(DecimalMark::Comma),
            ..ReadOptions::default()
        };
        let (d, notes) = parse_delimited_with("x\ty\n0,0\t1,5\n", "t.tsv", &opts).unwrap();
        assert_eq!(d.values, vec![vec![0.0], vec![1.5]]);
        assert_eq!(notes.separator.as_deref(), Some("tab"));
        // A semicolon file read with the comma forced: the hint names the delimiter.
        let opts = ReadOptions {
            delimiter: Some(Separator::Byte(b',')),
            ..ReadOptions::default()
        };
        let (d, _) = parse_delimited_with("x;y\n1;2\n", "t.csv", &opts).unwrap();
        let e = d.select(&["x;y"]).unwrap_err();
        assert!(e.to_string().ends_with("(cells separated by semicolons? try --delimiter ';')"), "{e}");
        let opts = ReadOptions {
            decimal: Some(DecimalMark::Comma),
            ..ReadOptions::default()
        };
        let e = parse_delimited_with("x,y\n1,2\n", "t.csv", &opts).unwrap_err();
        assert!(matches!(e, DataError::DecimalIsDelimiter { .. }));
    }

    #[test]
    fn quoted_line_breaks_in_a_notes_column() {
        let d = parse("t,y,note\n1,2,\"first line\nsecond line\"\n2,4,ok\n3,x,\n").unwrap();
        assert_eq!(d.values[0], vec![1.0, 2.0, 3.0]);
        assert_eq!(
            d.text_column("note").unwrap().cell(0),
            Some("first line\nsecond line")
        );
        // Line numbers count the line break inside the quoted cell.
        assert!(matches!(
            d.select(&["y"]).unwrap_err(),
            DataError::NotANumber { line: 5, .. }
        ));
    }

    #[test]
    fn title_rows_above_the_header() {
        let text = "Plate run 3, reader B\n\nExported,2026-11-02\ndose,y\n0.1,2\n0.2,3\n";
        let (d, notes) = parse_delimited_with(text, "t.csv", &ReadOptions::default()).unwrap();
        assert_eq!(d.columns, vec!["dose", "y"]);
        assert_eq!(d.values, vec![vec![0.1, 0.2], vec![2.0, 3.0]]);
        assert_eq!(notes.title_rows, vec![1, 3]);
        assert_eq!(notes.header_row, 4);
        let opts = |n| ReadOptions {
            header_row: Some(n),
            ..ReadOptions::default()
        };
        let (d, _) = parse_delimited_with(text, "t.csv", &opts(4)).unwrap();
        assert_eq!(d.columns, vec!["dose", "y"]);
        assert_eq!(
            parse_delimited_with(text, "t.csv", &opts(9)).unwrap_err(),
            DataError::HeaderRowBeyondEnd {
                path: "t.csv".into(),
                row: 9,
                last: 6
            }
        );
        assert!(matches!(
            parse_delimited_with(text, "t.csv", &opts(2)).unwrap_err(),
            DataError::HeaderRowNotARow { row: 2, .. }
        ));
        // The title row as the header: the table under it is ragged.
        assert!(matches!(
            parse_delimited_with("Title\nx,y\n1,2\n", "t.csv", &opts(1)).unwrap_err(),
            DataError::Ragged { line: 2, .. }
        ));
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
