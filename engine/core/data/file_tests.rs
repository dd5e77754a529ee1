//! Reading real files: missing, directories, limits, binary content, text
//! with each separator, and workbooks written in the test.

use super::*;
use std::path::PathBuf;

/// The .xlsx writer shared with the integration tests.
#[path = "../../../tests/common/xlsx.rs"]
mod xlsx;

/// A fresh file in the system temp directory, removed when dropped.
struct TempFile(PathBuf);

impl TempFile {
    fn new(name: &str, bytes: &[u8]) -> TempFile {
        let dir = std::env::temp_dir().join(format!(
            "foothold-data-{}-{}",
            std::process::id(),
            name.replace('.', "_")
        ));
        let _ = std::fs::create_dir_all(&dir);
        let path = dir.join(name);
        std::fs::write(&path, bytes).unwrap();
        TempFile(path)
    }
    fn path(&self) -> &str {
        self.0.to_str().unwrap()
    }
}

impl Drop for TempFile {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
        if let Some(d) = self.0.parent() {
            let _ = std::fs::remove_dir(d);
        }
    }
}

fn read(path: &str) -> Result<Dataset, DataError> {
    read_table(path, &ReadOptions::default())
}

#[test]
fn reads_each_separator_from_files() {
    for (name, text) in [
        ("comma.csv", "t,y\n0,1.5\n1,2.5\n"),
        ("tab.tsv", "t\ty\n0\t1.5\n1\t2.5\n"),
        ("space.txt", "t y\n0   1.5\n 1 2.5\n"),
    ] {
        let f = TempFile::new(name, text.as_bytes());
        let d = read(f.path()).unwrap();
        assert_eq!(d.columns, vec!["t", "y"], "{name}");
        assert_eq!(d.values, vec![vec![0.0, 1.0], vec![1.5, 2.5]], "{name}");
        assert_eq!(d.source, f.path());
    }
}

#[test]
fn missing_file_and_directory() {
    let missing = std::env::temp_dir().join("foothold-surely-not-here-4711.csv");
    let p = missing.to_str().unwrap();
    assert_eq!(read(p).unwrap_err(), DataError::NotFound { path: p.into() });
    let f = TempFile::new("d.csv", b"x,y\n1,2\n");
    let dir = f.0.parent().unwrap().to_str().unwrap().to_string();
    assert_eq!(
        read(&dir).unwrap_err(),
        DataError::IsDirectory { path: dir.clone() }
    );
}

#[test]
fn empty_binary_and_oversized_files() {
    let f = TempFile::new("empty.csv", b"");
    assert!(matches!(
        read(f.path()).unwrap_err(),
        DataError::Empty { .. }
    ));
    let f = TempFile::new("bin.csv", b"x,y\n\x00\x01\x02");
    assert!(matches!(
        read(f.path()).unwrap_err(),
        DataError::Binary { .. }
    ));
    let f = TempFile::new("latin1.csv", b"x,\xe9t\xe9\n1,2\n");
    let e = read(f.path()).unwrap_err();
    assert!(e.to_string().contains("invalid UTF-8 at byte 3"), "{e}");
    let f = TempFile::new("big.csv", b"x,y\n1,2\n3,4\n");
    let opts = ReadOptions {
        max_bytes: 8,
        ..ReadOptions::default()
    };
    assert_eq!(
        read_table(f.path(), &opts).unwrap_err(),
        DataError::TooLarge {
            path: f.path().into(),
            limit: 8
        }
    );
}

#[test]
fn sheet_option_on_text_is_refused() {
    let f = TempFile::new("s.csv", b"x,y\n1,2\n");
    let opts = ReadOptions {
        sheet: Some("2".into()),
        ..ReadOptions::default()
    };
    assert!(matches!(
        read_table(f.path(), &opts).unwrap_err(),
        DataError::SheetOnText { .. }
    ));
}

/// Writes a minimal .xlsx with the given sheets into a fresh [`TempFile`]
/// (the writer is the integration tests' own, `tests/common/xlsx.rs`).
fn write_xlsx(name: &str, sheets: &[(&str, Vec<Vec<Option<&str>>>)]) -> TempFile {
    let f = TempFile::new(name, b"");
    xlsx::write_xlsx(&f.0, sheets);
    f
}

/// Writes a minimal .xlsx whose sheets hold the given `<sheetData>` contents.
fn write_xlsx_xml(name: &str, sheets: &[(&str, String)]) -> TempFile {
    let f = TempFile::new(name, b"");
    xlsx::write_xlsx_xml(&f.0, sheets);
    f
}

#[test]
fn reads_workbook_sheets_by_default_name_and_number() {
    let f = write_xlsx(
        "book.xlsx",
        &[
            (
                "Run 1",
                vec![
                    vec![Some("hours"), Some("mass")],
                    vec![Some("0"), Some("0.25")],
                    vec![Some("2"), None],
                    vec![Some("4"), Some("1.5")],
                ],
            ),
            (
                "Run 2",
                vec![
                    vec![Some("hours"), Some("mass")],
                    vec![Some("1"), Some("7")],
                ],
            ),
        ],
    );
    let d = read(f.path()).unwrap();
    assert_eq!(d.columns, vec!["hours", "mass"]);
    assert_eq!(d.values[0], vec![0.0, 2.0, 4.0]);
    assert_eq!(d.values[1][0], 0.25);
    assert!(d.values[1][1].is_nan());
    assert_eq!(d.values[1][2], 1.5);
    for s in ["Run 2", "2"] {
        let opts = ReadOptions {
            sheet: Some(s.into()),
            ..ReadOptions::default()
        };
        let d = read_table(f.path(), &opts).unwrap();
        assert_eq!(d.values, vec![vec![1.0], vec![7.0]], "sheet {s}");
    }
    let opts = ReadOptions {
        sheet: Some("Run 3".into()),
        ..ReadOptions::default()
    };
    let e = read_table(f.path(), &opts).unwrap_err();
    assert_eq!(
        e,
        DataError::NoSuchSheet {
            path: f.path().into(),
            sheet: "Run 3".into(),
            available: "Run 1, Run 2".into()
        }
    );
}

#[test]
fn workbook_text_cell_names_sheet_row_and_column() {
    let f = write_xlsx(
        "text.xlsx",
        &[(
            "Data",
            vec![
                vec![Some("x"), Some("y")],
                vec![Some("1"), Some("2")],
                vec![Some("2"), Some("high")],
            ],
        )],
    );
    let e = read(f.path()).unwrap().select(&["x", "y"]).unwrap_err();
    assert!(
        matches!(&e, DataError::TextCell(c) if c.sheet == "Data" && c.row == 3 && c.column == "y" && c.text == "high"),
        "{e:?}"
    );
    assert_eq!(
        e.to_string(),
        format!("{}, sheet 'Data', row 3, column 'y': the text 'high' is not a number; if it is a number stored as text, convert the column to numbers", f.path())
    );
}

#[test]
fn workbook_group_labels_are_kept_as_text() {
    let f = write_xlsx(
        "labels.xlsx",
        &[(
            "Plate",
            vec![
                vec![Some("well"), Some("dose"), Some("signal")],
                vec![Some("A1"), Some("0.1"), Some("5")],
                vec![Some("B12"), Some("0.2"), Some("6")],
                vec![None, Some("0.3"), Some("7")],
                vec![Some("A1"), Some("0.4"), Some("8")],
                vec![Some("3"), Some("0.5"), Some("9")],
            ],
        )],
    );
    let d = read(f.path()).unwrap();
    let w = d.text_column("well").expect("well kept as text");
    assert_eq!(w.labels, vec!["A1", "B12", "3"]);
    assert_eq!(w.cell(2), None, "empty cell is missing");
    assert_eq!(w.label_index(3), Some(0));
    assert_eq!(d.column("signal").unwrap(), &[5.0, 6.0, 7.0, 8.0, 9.0]);
    let e = d.select(&["dose", "well"]).unwrap_err();
    assert!(
        e.to_string()
            .contains("sheet 'Plate', row 2, column 'well': the text 'A1' is not a number"),
        "{e}"
    );
}

#[test]
fn broken_workbook_is_a_workbook_error() {
    let f = TempFile::new("broken.xlsx", b"this is not a zip archive");
    assert!(matches!(
        read(f.path()).unwrap_err(),
        DataError::Workbook { .. }
    ));
    let f = write_xlsx("empty.xlsx", &[("Blank", vec![])]);
    assert!(matches!(
        read(f.path()).unwrap_err(),
        DataError::EmptySheet { .. }
    ));
}

#[test]
fn workbook_cells_far_apart_are_refused_before_the_grid_is_built() {
    // Found by the read_table fuzzer: a 2 kB workbook with cells at A1 and
    // XFD1048576 made the reader allocate a grid of 17 billion cells (512 GiB)
    // before the cell limit was checked.
    let corners = r#"<row r="1"><c r="A1" t="inlineStr"><is><t>x</t></is></c></row><row r="1048576"><c r="XFD1048576"><v>1</v></c></row>"#;
    let f = write_xlsx_xml("corners.xlsx", &[("Data", corners.to_string())]);
    let e = read(f.path()).unwrap_err();
    println!("{e}");
    assert_eq!(
        e,
        DataError::TooManyCells {
            path: f.path().into(),
            limit: MAX_CELLS
        }
    );
    // The same cells a few rows apart are read, and the limit counts the whole used range.
    let near = r#"<row r="1"><c r="A1" t="inlineStr"><is><t>x</t></is></c><c r="B1" t="inlineStr"><is><t>y</t></is></c></row><row r="3"><c r="B3"><v>1</v></c></row>"#;
    let f = write_xlsx_xml("near.xlsx", &[("Data", near.to_string())]);
    let d = read(f.path()).unwrap();
    assert_eq!(d.columns, vec!["x", "y"]);
    assert!(d.values[0][0].is_nan());
    assert_eq!(d.values[1], vec![1.0]);
    for (max_cells, ok) in [(6, true), (5, false)] {
        let opts = ReadOptions {
            max_cells,
            ..ReadOptions::default()
        };
        assert_eq!(read_table(f.path(), &opts).is_ok(), ok, "limit {max_cells}");
    }
}

#[test]
fn open_document_spreadsheets_are_refused_with_the_way_out() {
    // Any bytes: the extension alone decides, before the library sees the file.
    let f = TempFile::new("plate.ODS", b"PK\x03\x04 not really a spreadsheet");
    let e = read(f.path()).unwrap_err();
    assert!(matches!(e, DataError::OdsRefused { .. }), "{e:?}");
    let msg = e.to_string();
    assert!(
        msg.contains(f.path()) && msg.contains("save the sheet as .xlsx or CSV"),
        "{msg}"
    );
}

#[test]
fn workbook_title_rows_are_skipped_and_the_header_row_can_be_given() {
    let f = write_xlsx(
        "titled.xlsx",
        &[(
            "Plate",
            vec![
                vec![Some("Reporter assay, plate 7")],
                vec![],
                vec![Some("Exported"), Some("2026-11-02")],
                vec![Some("dose"), Some("rep1"), Some("rep2")],
                vec![Some("0.1"), Some("6.1"), Some("5.9")],
                vec![Some("0.2"), Some("11.3"), None],
            ],
        )],
    );
    let (d, notes) = read_table_noted(f.path(), &ReadOptions::default()).unwrap();
    assert_eq!(d.columns, vec!["dose", "rep1", "rep2"]);
    assert_eq!(d.values[1], vec![6.1, 11.3]);
    assert!(d.values[2][1].is_nan());
    assert_eq!(notes.title_rows, vec![1, 3]);
    assert_eq!(notes.header_row, 4);
    let at = |n| ReadOptions {
        header_row: Some(n),
        ..ReadOptions::default()
    };
    let (d, _) = read_table_noted(f.path(), &at(4)).unwrap();
    assert_eq!(d.columns, vec!["dose", "rep1", "rep2"]);
    assert_eq!(
        read_table(f.path(), &at(7)).unwrap_err(),
        DataError::HeaderRowBeyondEnd {
            path: f.path().into(),
            row: 7,
            last: 6
        }
    );
    assert!(matches!(
        read_table(f.path(), &at(2)).unwrap_err(),
        DataError::HeaderRowNotARow { row: 2, .. }
    ));
}

#[test]
fn semicolon_file_with_decimal_commas_and_a_title() {
    let f = TempFile::new(
        "euro.csv",
        "Messung 3;;\nDosis;Signal;Notiz\n0,5;1,25;\"zwei\nZeilen\"\n1;2,5;\n".as_bytes(),
    );
    let (d, notes) = read_table_noted(f.path(), &ReadOptions::default()).unwrap();
    assert_eq!(d.columns, vec!["Dosis", "Signal", "Notiz"]);
    assert_eq!(d.values[0], vec![0.5, 1.0]);
    assert_eq!(d.values[1], vec![1.25, 2.5]);
    assert_eq!(notes.decimal, DecimalMark::Comma);
    assert_eq!(notes.separator.as_deref(), Some("semicolon"));
    assert_eq!(notes.title_rows, vec![1]);
}
