//! Spreadsheet workbooks (.xlsx, .xlsm, .xlsb, .xls) through the
//! `calamine` crate: the header is the first row of non-empty names followed
//! by a row holding a number (rows above it are titles), or the row given by
//! `--header-row`; empty cells are missing (NaN); a column with cells that are not
//! numbers is also kept as text, and refused only when a model uses it.

use super::error::{CellKind, SheetCellError};
use super::sniff::{find_header, Class, SNIFF_ROWS};
use super::text::TextBuilder;
use super::{DataError, Dataset, ReadNotes, ReadOptions};
use calamine::{open_workbook_auto, Cell, Data, DataRef, Range, Reader, Sheets};

/// File extensions read as workbooks (compared without regard to case).
pub const WORKBOOK_EXTENSIONS: &[&str] = &["xlsx", "xlsm", "xlsb", "xls"];

/// True when the path's extension is one of `extensions` (without regard to case).
fn has_extension(path: &str, extensions: &[&str]) -> bool {
    std::path::Path::new(path)
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| extensions.iter().any(|w| e.eq_ignore_ascii_case(w)))
}

/// True when the path names an OpenDocument spreadsheet (refused: see [`DataError::OdsRefused`]).
pub(crate) fn is_ods_path(path: &str) -> bool {
    has_extension(path, &["ods"])
}

/// True when the path's extension names a workbook format.
pub(crate) fn is_workbook_path(path: &str) -> bool {
    has_extension(path, WORKBOOK_EXTENSIONS)
}

/// Reads one sheet (by name, or 1-based number; default the first) of a workbook.
pub(crate) fn read_workbook(
    path: &str,
    opts: &ReadOptions,
) -> Result<(Dataset, ReadNotes), DataError> {
    let werr = |reason: String| DataError::Workbook {
        path: path.to_string(),
        reason,
    };
    let mut book = open_workbook_auto(path).map_err(|e| werr(e.to_string()))?;
    let names = book.sheet_names();
    let sheet =
        choose_sheet(&names, opts.sheet.as_deref()).ok_or_else(|| DataError::NoSuchSheet {
            path: path.to_string(),
            sheet: opts.sheet.clone().unwrap_or_default(),
            available: if names.is_empty() {
                "none".into()
            } else {
                names.join(", ")
            },
        })?;
    let too_many = || DataError::TooManyCells {
        path: path.to_string(),
        limit: opts.max_cells,
    };
    // calamine sizes a sheet's grid from its outermost cells before we could
    // check it (two cells at A1 and XFD1048576: 17 billion cells), so the
    // formats that can be read cell by cell are bounded while reading.
    let range = match &mut book {
        Sheets::Xlsx(b) => {
            let mut cells = b
                .worksheet_cells_reader(&sheet)
                .map_err(|e| werr(e.to_string()))?;
            bounded_range(
                || cells.next_cell().map_err(|e| e.to_string()),
                opts.max_cells,
            )
        }
        Sheets::Xlsb(b) => {
            let mut cells = b
                .worksheet_cells_reader(&sheet)
                .map_err(|e| werr(e.to_string()))?;
            bounded_range(
                || cells.next_cell().map_err(|e| e.to_string()),
                opts.max_cells,
            )
        }
        other => other
            .worksheet_range(&sheet)
            .map_err(|e| e.to_string())
            .map(Some),
    }
    .map_err(werr)?
    .ok_or_else(too_many)?;
    let (height, width) = range.get_size();
    if height.saturating_mul(width) > opts.max_cells {
        return Err(too_many());
    }
    let first_row = range.start().map(|(r, _)| r as usize).unwrap_or(0);
    let rows: Vec<(usize, &[Data])> = range
        .rows()
        .enumerate()
        .map(|(i, r)| (first_row + i + 1, r))
        .filter(|(_, r)| !r.iter().all(is_blank))
        .collect();
    if rows.is_empty() {
        return Err(DataError::EmptySheet {
            path: path.to_string(),
            sheet,
        });
    }
    let k = match opts.header_row {
        Some(n) => match rows.iter().position(|(r, _)| *r == n) {
            Some(k) => k,
            None => {
                let last = first_row + height;
                return Err(if n == 0 || n > last {
                    DataError::HeaderRowBeyondEnd {
                        path: path.to_string(),
                        row: n,
                        last,
                    }
                } else {
                    DataError::HeaderRowNotARow {
                        path: path.to_string(),
                        row: n,
                    }
                });
            }
        },
        None => {
            let classes: Vec<Vec<Class>> = rows
                .iter()
                .take(SNIFF_ROWS)
                .map(|(_, r)| row_classes(r))
                .collect();
            find_header(&classes, false).unwrap_or(0)
        }
    };
    let data = table_from_rows(path, &sheet, &rows[k..])?;
    let notes = ReadNotes {
        title_rows: rows[..k].iter().map(|(r, _)| *r).collect(),
        header_row: rows[k].0,
        separator: None,
        decimal: Default::default(),
    };
    Ok((data, notes))
}

/// What each cell of a sheet row holds, up to its last non-empty cell.
fn row_classes(row: &[Data]) -> Vec<Class> {
    let end = row.iter().rposition(|c| !is_blank(c)).map_or(0, |j| j + 1);
    row[..end]
        .iter()
        .map(|c| match c {
            c if is_blank(c) => Class::Empty,
            Data::Float(_) | Data::Int(_) => Class::Number,
            _ => Class::Text,
        })
        .collect()
}

/// The sheet's used range from its non-empty cells, read one at a time;
/// `Ok(None)` as soon as the cells, or the rectangle they span, pass `max_cells`.
fn bounded_range<'a>(
    mut next: impl FnMut() -> Result<Option<Cell<DataRef<'a>>>, String>,
    max_cells: usize,
) -> Result<Option<Range<Data>>, String> {
    let mut cells: Vec<Cell<Data>> = Vec::new();
    let (mut lo, mut hi) = ((u32::MAX, u32::MAX), (0u32, 0u32));
    while let Some(cell) = next()? {
        if matches!(cell.get_value(), DataRef::Empty) {
            continue;
        }
        let (r, c) = cell.get_position();
        (lo, hi) = ((lo.0.min(r), lo.1.min(c)), (hi.0.max(r), hi.1.max(c)));
        let height = (hi.0 - lo.0) as usize + 1;
        let width = (hi.1 - lo.1) as usize + 1;
        if cells.len() >= max_cells || height.saturating_mul(width) > max_cells {
            return Ok(None);
        }
        cells.push(Cell::new((r, c), Data::from(cell.get_value().clone())));
    }
    Ok(Some(Range::from_sparse(cells)))
}

/// The sheet's name: an exact name first, else a 1-based number; `None` if neither fits.
fn choose_sheet(names: &[String], wanted: Option<&str>) -> Option<String> {
    let Some(w) = wanted else {
        return names.first().cloned();
    };
    if let Some(n) = names.iter().find(|n| n.as_str() == w) {
        return Some(n.clone());
    }
    let k: usize = w.trim().parse().ok()?;
    k.checked_sub(1).and_then(|i| names.get(i)).cloned()
}

fn is_blank(d: &Data) -> bool {
    match d {
        Data::Empty => true,
        Data::String(s) => s.trim().is_empty(),
        _ => false,
    }
}

/// Builds the dataset from the non-empty rows (`(1-based row number, cells)`).
fn table_from_rows(
    path: &str,
    sheet: &str,
    rows: &[(usize, &[Data])],
) -> Result<Dataset, DataError> {
    let (header_row, header) = rows.first().ok_or_else(|| DataError::EmptySheet {
        path: path.to_string(),
        sheet: sheet.to_string(),
    })?;
    // Columns to keep: named ones, and unnamed ones only if they hold data (then an error).
    let width = header.len();
    let mut keep: Vec<(usize, String)> = Vec::new();
    for j in 0..width {
        let name = header.get(j).map(header_name).unwrap_or_default();
        if name.is_empty() {
            let used = rows[1..]
                .iter()
                .any(|(_, r)| r.get(j).is_some_and(|c| !is_blank(c)));
            if used {
                return Err(DataError::EmptySheetHeaderName {
                    path: path.to_string(),
                    sheet: sheet.to_string(),
                    row: *header_row,
                    column: j + 1,
                });
            }
            continue;
        }
        if let Some(k) = keep.iter().position(|(_, n)| *n == name) {
            return Err(DataError::DuplicateSheetColumn {
                path: path.to_string(),
                sheet: sheet.to_string(),
                row: *header_row,
                name,
                first: keep[k].0 + 1,
                second: j + 1,
            });
        }
        keep.push((j, name));
    }
    if rows.len() < 2 {
        return Err(DataError::HeaderOnlySheet {
            path: path.to_string(),
            sheet: sheet.to_string(),
        });
    }
    let mut values = vec![Vec::with_capacity(rows.len() - 1); keep.len()];
    // Per kept column, the first cell that is not a number.
    let mut first_bad: Vec<Option<(DataError, usize)>> = vec![None; keep.len()];
    for (row, cells) in &rows[1..] {
        for (k, ((j, name), col)) in keep.iter().zip(values.iter_mut()).enumerate() {
            let cell = cells.get(*j).unwrap_or(&Data::Empty);
            match cell_value(cell) {
                Ok(v) => col.push(v),
                Err(kind) => {
                    col.push(f64::NAN);
                    if first_bad[k].is_none() {
                        let e = DataError::TextCell(Box::new(SheetCellError {
                            path: path.to_string(),
                            sheet: sheet.to_string(),
                            row: *row,
                            column: name.clone(),
                            text: cell.to_string(),
                            kind,
                        }));
                        first_bad[k] = Some((e, *row));
                    }
                }
            }
        }
    }
    // Columns with a cell that is not a number are also kept as text.
    let mut text = Vec::new();
    for (k, bad) in first_bad.into_iter().enumerate() {
        let Some((err, row)) = bad else { continue };
        let (j, name) = &keep[k];
        let mut b = TextBuilder::with_rows(rows.len() - 1);
        for (_, cells) in &rows[1..] {
            match cells.get(*j) {
                None | Some(Data::Empty) => b.push(""),
                Some(c) => b.push(&c.to_string()),
            }
        }
        text.push(b.finish(name, err, (row, *j)));
    }
    Ok(Dataset {
        columns: keep.into_iter().map(|(_, n)| n).collect(),
        values,
        text,
        source: path.to_string(),
        skipped_rows: 0,
    })
}

fn header_name(d: &Data) -> String {
    match d {
        Data::Empty => String::new(),
        other => other.to_string().trim().to_string(),
    }
}

/// A data cell's number (NaN when empty), or the kind of cell that is not a number.
fn cell_value(d: &Data) -> Result<f64, CellKind> {
    match d {
        Data::Empty => Ok(f64::NAN),
        Data::Float(v) if v.is_finite() => Ok(*v),
        Data::Float(_) => Err(CellKind::NonFinite),
        Data::Int(v) => Ok(*v as f64),
        Data::String(s) if s.trim().is_empty() => Ok(f64::NAN),
        Data::String(_) => Err(CellKind::Text),
        Data::Bool(_) => Err(CellKind::Bool),
        Data::DateTime(_) | Data::DateTimeIso(_) => Err(CellKind::DateTime),
        Data::DurationIso(_) => Err(CellKind::Duration),
        Data::Error(_) => Err(CellKind::ErrorValue),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn sheets_by_name_or_number() {
        let n = names(&["Run A", "2", "Run C"]);
        assert_eq!(choose_sheet(&n, None).as_deref(), Some("Run A"));
        assert_eq!(choose_sheet(&n, Some("Run C")).as_deref(), Some("Run C"));
        assert_eq!(choose_sheet(&n, Some("3")).as_deref(), Some("Run C"));
        assert_eq!(choose_sheet(&n, Some("2")).as_deref(), Some("2"));
        assert_eq!(choose_sheet(&n, Some("0")), None);
        assert_eq!(choose_sheet(&n, Some("4")), None);
        assert_eq!(choose_sheet(&n, Some("Run B")), None);
        assert_eq!(choose_sheet(&[], None), None);
    }

    #[test]
    fn workbook_extensions() {
        assert!(is_workbook_path("a/b.xlsx"));
        assert!(is_workbook_path("b.XLS"));
        assert!(!is_workbook_path("b.ods") && is_ods_path("b.ODS"));
        assert!(!is_workbook_path("b.csv"));
        assert!(!is_workbook_path("xlsx"));
    }

    fn rows_of(cells: Vec<Vec<Data>>) -> Vec<Vec<Data>> {
        cells
    }

    #[test]
    fn cells_become_numbers_or_errors() {
        let grid = rows_of(vec![
            vec![
                Data::String("t".into()),
                Data::String("y".into()),
                Data::Empty,
            ],
            vec![Data::Float(1.5), Data::Int(2), Data::Empty],
            vec![Data::Empty, Data::String(" ".into())],
        ]);
        let rows: Vec<(usize, &[Data])> = grid
            .iter()
            .enumerate()
            .map(|(i, r)| (i + 1, r.as_slice()))
            .collect();
        let d = table_from_rows("b.xlsx", "S", &rows).unwrap();
        assert_eq!(d.columns, vec!["t", "y"]);
        assert_eq!(d.values[0][0], 1.5);
        assert_eq!(d.values[1][0], 2.0);
        assert!(d.values[0][1].is_nan() && d.values[1][1].is_nan());

        let grid = rows_of(vec![
            vec![Data::String("t".into()), Data::String("y".into())],
            vec![Data::Float(1.0), Data::String("n/a".into())],
        ]);
        let rows: Vec<(usize, &[Data])> = grid
            .iter()
            .enumerate()
            .map(|(i, r)| (i + 3, r.as_slice()))
            .collect();
        let d = table_from_rows("b.xlsx", "S", &rows).unwrap();
        assert_eq!(d.text_column("y").unwrap().cell(0), Some("n/a"));
        assert!(d.text_column("t").is_none());
        let e = d.select(&["t", "y"]).unwrap_err();
        assert!(
            matches!(&e, DataError::TextCell(c) if c.row == 4 && c.column == "y" && c.text == "n/a" && c.kind == CellKind::Text)
        );
        assert!(
            e.to_string().starts_with(
                "b.xlsx, sheet 'S', row 4, column 'y': the text 'n/a' is not a number"
            ),
            "{e}"
        );
    }

    #[test]
    fn header_errors() {
        let grid = rows_of(vec![
            vec![Data::String("t".into()), Data::String("t".into())],
            vec![Data::Float(1.0), Data::Float(2.0)],
        ]);
        let rows: Vec<(usize, &[Data])> = grid
            .iter()
            .enumerate()
            .map(|(i, r)| (i + 1, r.as_slice()))
            .collect();
        assert!(matches!(
            table_from_rows("b.xlsx", "S", &rows).unwrap_err(),
            DataError::DuplicateSheetColumn {
                first: 1,
                second: 2,
                ..
            }
        ));
        let grid = rows_of(vec![
            vec![Data::String("t".into()), Data::Empty],
            vec![Data::Float(1.0), Data::Float(2.0)],
        ]);
        let rows: Vec<(usize, &[Data])> = grid
            .iter()
            .enumerate()
            .map(|(i, r)| (i + 1, r.as_slice()))
            .collect();
        assert!(matches!(
            table_from_rows("b.xlsx", "S", &rows).unwrap_err(),
            DataError::EmptySheetHeaderName {
                column: 2,
                row: 1,
                ..
            }
        ));
        let grid = rows_of(vec![vec![Data::String("t".into())]]);
        let rows: Vec<(usize, &[Data])> = grid
            .iter()
            .enumerate()
            .map(|(i, r)| (i + 1, r.as_slice()))
            .collect();
        assert!(matches!(
            table_from_rows("b.xlsx", "S", &rows).unwrap_err(),
            DataError::HeaderOnlySheet { .. }
        ));
        assert!(matches!(
            table_from_rows("b.xlsx", "S", &[]).unwrap_err(),
            DataError::EmptySheet { .. }
        ));
    }
}
