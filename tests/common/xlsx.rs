//! Small .xlsx workbooks written in the tests; the reader's unit tests
//! (engine/core/data/file_tests.rs) include this file too.

#![allow(dead_code)]

use std::io::Write;
use std::path::Path;

/// The column letters of 0-based column `j` (A … Z, AA …).
fn column_letters(j: usize) -> String {
    let mut n = j + 1;
    let mut s = Vec::new();
    while n > 0 {
        let r = (n - 1) % 26;
        s.push((b'A' + r as u8) as char);
        n = (n - 1) / 26;
    }
    s.iter().rev().collect()
}

/// Writes a minimal .xlsx with the given sheets; each sheet is rows of cells,
/// a cell being `Some(text)` (a number if it parses, else inline text) or `None`.
pub fn write_xlsx(path: &Path, sheets: &[(&str, Vec<Vec<Option<&str>>>)]) {
    let sheets: Vec<(&str, String)> = sheets
        .iter()
        .map(|(sheet, rows)| {
            let mut xml = String::new();
            for (i, row) in rows.iter().enumerate() {
                let r = i + 1;
                xml += &format!(r#"<row r="{r}">"#);
                for (j, cell) in row.iter().enumerate() {
                    let col = column_letters(j);
                    match cell {
                        None => {}
                        Some(t) if t.parse::<f64>().is_ok() => {
                            xml += &format!(r#"<c r="{col}{r}"><v>{t}</v></c>"#)
                        }
                        Some(t) => {
                            xml +=
                                &format!(r#"<c r="{col}{r}" t="inlineStr"><is><t>{t}</t></is></c>"#)
                        }
                    }
                }
                xml += "</row>";
            }
            (*sheet, xml)
        })
        .collect();
    write_xlsx_xml(path, &sheets)
}

/// Writes a minimal .xlsx whose sheets hold the given `<sheetData>` contents.
pub fn write_xlsx_xml(path: &Path, sheets: &[(&str, String)]) {
    use zip::write::SimpleFileOptions;
    let mut buf = std::io::Cursor::new(Vec::new());
    {
        let mut z = zip::ZipWriter::new(&mut buf);
        let o = SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
        let mut ct = String::from(
            r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>"#,
        );
        let mut wb = String::from(
            r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>"#,
        );
        let mut rels = String::from(
            r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">"#,
        );
        for (k, (sheet, rows_xml)) in sheets.iter().enumerate() {
            let n = k + 1;
            ct += &format!(
                r#"<Override PartName="/xl/worksheets/sheet{n}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>"#
            );
            wb += &format!(r#"<sheet name="{sheet}" sheetId="{n}" r:id="rId{n}"/>"#);
            rels += &format!(
                r#"<Relationship Id="rId{n}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet{n}.xml"/>"#
            );
            let mut xml = String::from(
                r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>"#,
            );
            xml += rows_xml;
            xml += "</sheetData></worksheet>";
            z.start_file(format!("xl/worksheets/sheet{n}.xml"), o)
                .unwrap();
            z.write_all(xml.as_bytes()).unwrap();
        }
        ct += "</Types>";
        wb += "</sheets></workbook>";
        rels += "</Relationships>";
        z.start_file("[Content_Types].xml", o).unwrap();
        z.write_all(ct.as_bytes()).unwrap();
        z.start_file("_rels/.rels", o).unwrap();
        z.write_all(br#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>"#).unwrap();
        z.start_file("xl/workbook.xml", o).unwrap();
        z.write_all(wb.as_bytes()).unwrap();
        z.start_file("xl/_rels/workbook.xml.rels", o).unwrap();
        z.write_all(rels.as_bytes()).unwrap();
        z.finish().unwrap();
    }
    std::fs::write(path, buf.into_inner()).unwrap();
}
