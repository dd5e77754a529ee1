//! Any bytes into the data reader: in memory through `parse_delimited` (text
//! as is, or converted lossily when it is not UTF-8), and as a file through
//! `read_table` — read as delimited text, and (zip or compound-file bytes)
//! as a workbook of each format. Checks: no panic or hang; the same bytes
//! read twice give the same result; a file and memory agree; NUL bytes and
//! invalid UTF-8 are refused as binary; the byte and cell limits hold
//! exactly; an accepted table has equal-length columns, unique non-empty
//! names and only finite or missing (NaN) values; an error prints as one
//! non-empty line naming the source; and an accepted table printed back as
//! CSV (shortest round-trip numbers) reads again to the same bits. The
//! layout options (each delimiter, the decimal comma, a header row) read the
//! same text without panicking, and a table's columns stacked into long form
//! give one row per non-empty cell.
#![no_main]

use foothold::data::{
    match_columns, parse_delimited, parse_delimited_with, read_table, stack_columns, DataError,
    Dataset, DecimalMark, ReadOptions, Separator,
};
use libfuzzer_sys::fuzz_target;
use std::path::PathBuf;
use std::sync::OnceLock;

/// Label given to in-memory reads of text that is not UTF-8.
const LOSSY: &str = "lossy input";

/// A directory of this process for the input files (tmpfs when there is one).
fn scratch() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let base = if std::path::Path::new("/dev/shm").is_dir() {
            PathBuf::from("/dev/shm")
        } else {
            std::env::temp_dir()
        };
        let d = base.join(format!("foothold-fuzz-read-table-{}", std::process::id()));
        std::fs::create_dir_all(&d).expect("scratch directory");
        d
    })
}

/// Writes the bytes to `name` in the scratch directory and returns the path.
fn put(name: &str, data: &[u8]) -> String {
    let p = scratch().join(name);
    std::fs::write(&p, data).expect("scratch file");
    p.to_str().expect("UTF-8 scratch path").to_string()
}

/// Same columns, same source and the same value bits (NaN included).
fn same(a: &Dataset, b: &Dataset) -> bool {
    a.columns == b.columns
        && a.source == b.source
        && a.skipped_rows == b.skipped_rows
        && a.values.len() == b.values.len()
        && a.values.iter().zip(&b.values).all(|(x, y)| {
            x.len() == y.len() && x.iter().zip(y).all(|(u, v)| u.to_bits() == v.to_bits())
        })
}

fn same_result(a: &Result<Dataset, DataError>, b: &Result<Dataset, DataError>) -> bool {
    match (a, b) {
        (Ok(x), Ok(y)) => same(x, y),
        (Err(x), Err(y)) => x == y,
        _ => false,
    }
}

/// The properties of every result read from `source`.
fn check_result(r: &Result<Dataset, DataError>, source: &str) {
    match r {
        Ok(d) => {
            assert_eq!(d.source, source);
            assert!(!d.columns.is_empty(), "a table without columns");
            assert_eq!(d.values.len(), d.columns.len(), "columns and names differ");
            let n = d.n_rows();
            assert!(n >= 1, "a table without rows");
            for (name, col) in d.columns.iter().zip(&d.values) {
                assert_eq!(
                    col.len(),
                    n,
                    "column {name:?} has {} rows, not {n}",
                    col.len()
                );
                assert!(!name.is_empty(), "an empty column name in {:?}", d.columns);
                assert_eq!(name.trim(), name, "column name {name:?} is not trimmed");
                for v in col {
                    assert!(!v.is_infinite(), "column {name:?} holds {v}");
                }
            }
            for (j, name) in d.columns.iter().enumerate() {
                assert!(
                    !d.columns[..j].contains(name),
                    "column name {name:?} twice in {:?}",
                    d.columns
                );
            }
        }
        Err(e) => {
            let shown = e.to_string();
            assert!(!shown.trim().is_empty(), "an empty message for {e:?}");
            // One line, and no control character that could move a terminal's cursor.
            assert!(
                !shown.contains(|c: char| c.is_control() || matches!(c, '\u{2028}' | '\u{2029}')),
                "the message is not one plain line: {shown:?}"
            );
            assert!(
                shown.contains(source),
                "the message {shown:?} does not name {source:?}"
            );
        }
    }
}

/// A name that prints into CSV unchanged: ASCII, no separator, quote or space, no comment sign.
fn plain_name(name: &str) -> bool {
    name.bytes()
        .all(|b| b.is_ascii_graphic() && !matches!(b, b',' | b'"' | b'#'))
}

/// The table as CSV: shortest round-trip numbers, `""` for a missing cell
/// (an empty cell of a one-column table would be a blank line, which is skipped).
fn to_csv(d: &Dataset) -> String {
    let mut out = d.columns.join(",");
    out.push('\n');
    for i in 0..d.n_rows() {
        let row: Vec<String> = d
            .values
            .iter()
            .map(|c| {
                if c[i].is_nan() {
                    "\"\"".to_string()
                } else {
                    format!("{:?}", c[i])
                }
            })
            .collect();
        out += &row.join(",");
        out.push('\n');
    }
    out
}

fn check_round_trip(d: &Dataset) {
    // A header of numbers only is refused as a data row (a workbook may have one).
    let numeric = d.columns.iter().all(|n| n.parse::<f64>().is_ok());
    if numeric || !d.columns.iter().all(|n| plain_name(n)) {
        return;
    }
    let csv = to_csv(d);
    let again = parse_delimited(&csv, &d.source)
        .unwrap_or_else(|e| panic!("the table printed as CSV does not read again: {e}\n{csv}"));
    assert!(
        same(d, &again),
        "the table printed as CSV reads back differently:\n{csv}\n{d:?}\n{again:?}"
    );
}

/// Every column but the first stacked into long form (the wide-layout
/// options): one row per non-empty cell, the other columns kept, a pattern
/// `*` naming every column.
fn check_wide(d: &Dataset) {
    // A column named `*` itself is what `*` names (exact names come first).
    if !d.has_column("*") {
        assert_eq!(match_columns(d, "*", "--y").ok().as_deref(), Some(&d.columns[..]));
    }
    if d.columns.len() < 2 {
        return;
    }
    let cols = d.columns[1..].to_vec();
    match stack_columns(d, &cols, "value", Some("label")) {
        Ok(s) => {
            let cells: usize = cols
                .iter()
                .map(|c| d.column(c).unwrap().iter().filter(|v| !v.is_nan()).count())
                .sum();
            assert_eq!(s.data.n_rows(), cells, "stacked rows");
            assert_eq!(s.empty_cells + cells, d.n_rows() * cols.len());
            assert_eq!(s.data.columns.len(), 3, "{:?}", s.data.columns);
            assert!(s.data.values.iter().all(|c| c.len() == cells));
            assert_eq!(s.data.text_column("label").map(|t| t.len()), Some(cells));
        }
        Err(e) => check_result(&Err(e), &d.source),
    }
}

/// The layout options on the same text: no panic, the usual properties.
fn check_layouts(text: &str, path: &str) {
    let variants = [
        (Some(Separator::Byte(b';')), Some(DecimalMark::Comma), None),
        (Some(Separator::Byte(b'|')), None, Some(2)),
        (Some(Separator::Whitespace), Some(DecimalMark::Point), Some(1)),
        (None, Some(DecimalMark::Comma), None),
        (Some(Separator::Byte(b'\t')), None, Some(3)),
    ];
    for (delimiter, decimal, header_row) in variants {
        let opts = ReadOptions {
            delimiter,
            decimal,
            header_row,
            ..ReadOptions::default()
        };
        let r = parse_delimited_with(text, path, &opts).map(|(d, _)| d);
        check_result(&r, path);
        if let Ok(d) = &r {
            check_wide(d);
        }
    }
}

/// Delimited text: in memory, then as a file with the default and with tight limits.
fn check_text(data: &[u8]) {
    let path = put("in.csv", data);
    let text = std::str::from_utf8(data).ok();
    let memory = match text {
        Some(t) => parse_delimited(t, &path),
        None => parse_delimited(&String::from_utf8_lossy(data), LOSSY),
    };
    check_result(&memory, if text.is_some() { &path } else { LOSSY });
    if let Ok(d) = &memory {
        check_round_trip(d);
        check_wide(d);
    }
    if let Some(t) = text {
        check_layouts(t, &path);
    }

    let opts = ReadOptions::default();
    let file = read_table(&path, &opts);
    check_result(&file, &path);
    assert!(
        same_result(&file, &read_table(&path, &opts)),
        "two reads differ"
    );
    if data.contains(&0) || text.is_none() {
        assert!(
            matches!(file, Err(DataError::Binary { .. })),
            "binary bytes read as {file:?}"
        );
    } else {
        assert!(
            same_result(&file, &memory),
            "file {file:?} and memory {memory:?} differ"
        );
    }

    // The byte limit: one byte short is refused before reading.
    if !data.is_empty() {
        let short = ReadOptions {
            max_bytes: data.len() as u64 - 1,
            ..ReadOptions::default()
        };
        let r = read_table(&path, &short);
        check_result(&r, &path);
        assert!(
            matches!(r, Err(DataError::TooLarge { .. })),
            "over the byte limit: {r:?}"
        );
    }
    // The cell limit counts the header's cells too: exactly enough is accepted, one fewer refused.
    if let Ok(d) = &file {
        let cells = d.columns.len() * (d.n_rows() + 1);
        let exact = ReadOptions {
            max_cells: cells,
            ..ReadOptions::default()
        };
        assert!(
            same_result(&read_table(&path, &exact), &file),
            "refused at exactly {cells} cells"
        );
        let fewer = ReadOptions {
            max_cells: cells - 1,
            ..ReadOptions::default()
        };
        let r = read_table(&path, &fewer);
        check_result(&r, &path);
        assert!(
            matches!(r, Err(DataError::TooManyCells { .. })),
            "over {} cells: {r:?}",
            cells - 1
        );
    }
}

/// Workbook bytes (zip or compound file) as each workbook format.
fn check_workbook(data: &[u8]) {
    let names: &[&str] = if data.starts_with(b"PK") {
        &["in.xlsx", "in.xlsb"]
    } else if data.starts_with(&[0xd0, 0xcf, 0x11, 0xe0]) {
        &["in.xls"]
    } else {
        // Anything else is refused at once; one format keeps that path covered.
        &["in.xlsx"]
    };
    for name in names {
        let path = put(name, data);
        let opts = ReadOptions::default();
        let r = read_table(&path, &opts);
        check_result(&r, &path);
        assert!(
            same_result(&r, &read_table(&path, &opts)),
            "two reads of {name} differ"
        );
        if let Ok(d) = &r {
            // The whole used range counts (blank rows and unnamed columns too), so at least this many.
            let cells = d.columns.len() * (d.n_rows() + 1);
            assert!(cells <= opts.max_cells);
            let fewer = ReadOptions {
                max_cells: cells - 1,
                ..ReadOptions::default()
            };
            let r2 = read_table(&path, &fewer);
            check_result(&r2, &path);
            assert!(
                matches!(r2, Err(DataError::TooManyCells { .. })),
                "over {} cells: {r2:?}",
                cells - 1
            );
            check_round_trip(d);
            // The second sheet by number: another sheet or a clear error.
            let second = ReadOptions {
                sheet: Some("2".into()),
                ..ReadOptions::default()
            };
            check_result(&read_table(&path, &second), &path);
        }
    }
}

fuzz_target!(|data: &[u8]| {
    check_text(data);
    check_workbook(data);
});
