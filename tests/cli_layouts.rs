//! Lab exports as they come (issue 17), through the real binary: the same
//! invented data written long and comma-separated, `;`-separated with
//! decimal commas, wide with one column per replicate, wide with one column
//! per sample, tab-separated with decimal commas, and as a workbook with
//! title rows above the header, give identical estimates (the CSV output,
//! every digit) with fit, infer, rank and report, single and batch.

mod common;

use common::cli::{run, scratch};
use common::xlsx::write_xlsx;
use std::path::{Path, PathBuf};

/// The model of the invented assays: a dose-response curve.
const MODEL: &str = "signal = top/(1+(ec50/dose)^h)";
/// The doses of every invented plate.
const DOSES: [f64; 9] = [0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0];

/// Invented reporter signal: top/(1+(ec50/dose)^h) plus a fixed wobble
/// standing in for noise, rounded to two decimals (as instruments print).
fn signal(dose: f64, top: f64, ec50: f64, h: f64, k: usize) -> String {
    let wobble = 2.0 * (1.7 * k as f64 + 0.3).sin();
    format!("{:.2}", top / (1.0 + (ec50 / dose).powf(h)) + wobble)
}

/// One plate of three replicate wells per dose (rows of cells; one cell left empty).
fn replicate_rows(top: f64) -> Vec<(f64, Vec<String>)> {
    DOSES
        .iter()
        .enumerate()
        .map(|(i, &d)| {
            let reps = (0..3)
                .map(|r| {
                    if i == 4 && r == 2 {
                        String::new() // a well that was not read
                    } else {
                        signal(d, top, 1.6, 1.1, 3 * i + r)
                    }
                })
                .collect();
            (d, reps)
        })
        .collect()
}

fn comma(s: &str) -> String {
    s.replace('.', ",")
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// Runs the binary on `path` with `args`; exit 0 asserted; stdout with the path replaced.
fn ok(path: &Path, args: &[&str]) -> String {
    let p = path.to_str().unwrap();
    let mut all = vec![args[0], p];
    all.extend_from_slice(&args[1..]);
    let (code, out, err) = run(&all);
    assert_eq!(code, 0, "{all:?}: {err}");
    out.replace(p, "DATA")
}

#[test]
fn replicate_layouts_give_identical_estimates() {
    let dir = scratch("replicates");
    let rows = replicate_rows(100.0);
    // Long, comma-separated: one row per well, the unread well left out.
    let mut long = String::from("dose,signal\n");
    let mut semi = String::from("dose;signal\n");
    for (d, reps) in &rows {
        for v in reps.iter().filter(|v| !v.is_empty()) {
            long += &format!("{d},{v}\n");
            semi += &format!("{};{}\n", comma(&d.to_string()), comma(v));
        }
    }
    // Wide: one column per replicate, a notes column with a line break in a quoted cell.
    let mut wide = String::from("dose,rep1,rep2,rep3,note\n");
    let mut tab = String::from("Reporter assay, plate 7\n\ndose\trep1\trep2\trep3\n");
    for (i, (d, reps)) in rows.iter().enumerate() {
        let note = if i == 2 {
            "\"bubble in well B3;\nre-read\""
        } else {
            ""
        };
        wide += &format!("{d},{},{note}\n", reps.join(","));
        let cells: Vec<String> = reps.iter().map(|v| comma(v)).collect();
        tab += &format!("{}\t{}\n", comma(&d.to_string()), cells.join("\t"));
    }
    let long = write(&dir, "long.csv", &long);
    let semi = write(&dir, "long_semicolon.csv", &semi);
    let wide = write(&dir, "wide.csv", &wide);
    let tab = write(&dir, "wide_decimal_comma.tsv", &tab);
    // A workbook: a title, a blank row and an export line above the header.
    let book = dir.join("wide.xlsx");
    let mut sheet: Vec<Vec<Option<&str>>> = vec![
        vec![Some("Reporter assay, plate 7")],
        vec![],
        vec![Some("Exported"), Some("2026-11-02")],
        vec![Some("dose"), Some("rep1"), Some("rep2"), Some("rep3")],
    ];
    let doses: Vec<String> = rows.iter().map(|(d, _)| d.to_string()).collect();
    for ((_, reps), d) in rows.iter().zip(&doses) {
        let mut r = vec![Some(d.as_str())];
        r.extend(reps.iter().map(|v| (!v.is_empty()).then_some(v.as_str())));
        sheet.push(r);
    }
    write_xlsx(&book, &[("Plate 7", sheet)]);

    for command in ["fit", "infer", "rank"] {
        let csv = ["--model", MODEL, "--format", "csv"];
        let want = ok(&long, &[&[command][..], &csv].concat());
        assert!(want.contains("ec50"), "{want}");
        let layouts: [(&Path, Vec<&str>); 4] = [
            (&semi, vec![]),
            (&wide, vec!["--y", "rep*"]),
            (&tab, vec!["--decimal", ",", "--y", "rep1,rep2,rep3"]),
            (&book, vec!["--y", "rep1..rep3"]),
        ];
        for (path, extra) in layouts {
            let got = ok(path, &[&[command][..], &csv, &extra].concat());
            assert_eq!(got, want, "{command} {path:?} {extra:?}");
        }
    }
    // The estimates themselves: the invented curve is recovered.
    let fit = ok(
        &wide,
        &["fit", "--model", MODEL, "--y", "rep*", "--format", "csv"],
    );
    let ec50: f64 = fit
        .lines()
        .find_map(|l| l.strip_prefix("ec50,"))
        .and_then(|l| l.split(',').next())
        .unwrap()
        .parse()
        .unwrap();
    assert!((ec50 - 1.6).abs() < 0.15, "{fit}");
    let (code, out, _) = run(&[
        "fit",
        long.to_str().unwrap(),
        "--model",
        MODEL,
        "--format",
        "json",
    ]);
    assert_eq!(code, 0);
    assert!(out.contains("\"n_obs\": 26") || out.contains("26"), "{out}");

    // --verbose names the skipped title rows and the layout.
    let (code, _, err) = run(&[
        "fit",
        book.to_str().unwrap(),
        "--model",
        MODEL,
        "--y",
        "rep*",
        "-v",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("header on row 4; skipped 2 title rows above it (1, 3)"),
        "{err}"
    );
    assert!(
        err.contains("stacked rep1, rep2, rep3 into 'signal': 26 observations from 9 rows (1 empty cell left out)"),
        "{err}"
    );
    let (_, _, err) = run(&[
        "fit",
        tab.to_str().unwrap(),
        "--model",
        MODEL,
        "--y",
        "rep*",
        "--decimal",
        ",",
        "-v",
    ]);
    assert!(
        err.contains("header on row 3; skipped 1 title row above it (1); cells separated by tab; decimal comma"),
        "{err}"
    );
    // Without --decimal, the tab file's message names the cause.
    let (code, _, err) = run(&[
        "fit",
        tab.to_str().unwrap(),
        "--model",
        MODEL,
        "--y",
        "rep*",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("(decimal comma? try --decimal ,)"), "{err}");

    // report: the pooled replicates make one page.
    let page = dir.join("page.html");
    let (code, _, err) = run(&[
        "report",
        wide.to_str().unwrap(),
        "--model",
        MODEL,
        "--y",
        "rep*",
        "--out",
        page.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.contains("ec50") && html.contains("signal"));
}

#[test]
fn replicates_pooled_within_each_plate_of_a_batch() {
    let dir = scratch("plates");
    let mut long = String::from("plate,dose,signal\n");
    let mut wide = String::from("plate,dose,r1,r2,r3\n");
    for (plate, top) in [("P1", 100.0), ("P2", 80.0)] {
        for (d, reps) in replicate_rows(top) {
            for v in reps.iter().filter(|v| !v.is_empty()) {
                long += &format!("{plate},{d},{v}\n");
            }
            wide += &format!("{plate},{d},{}\n", reps.join(","));
        }
    }
    let long = write(&dir, "long.csv", &long);
    let wide = write(&dir, "wide.csv", &wide);
    let args = ["--model", MODEL, "--by", "plate", "--format", "csv"];
    let want = ok(&long, &[&["fit"][..], &args].concat());
    let got = ok(&wide, &[&["fit"][..], &args, &["--y", "r?"]].concat());
    assert_eq!(got, want);
    let lines: Vec<&str> = want.lines().collect();
    assert_eq!(lines.len(), 3, "{want}");
    assert!(lines[1].starts_with("P1,converged,26,") && lines[2].starts_with("P2,converged,26,"));
    let page = dir.join("batch.html");
    let (code, _, err) = run(&[
        "report",
        wide.to_str().unwrap(),
        "--model",
        MODEL,
        "--y",
        "r*",
        "--by",
        "plate",
        "--out",
        page.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(std::fs::read_to_string(&page).unwrap().contains("P2"));
}

#[test]
fn sample_columns_become_groups() {
    let dir = scratch("samples");
    // Invented: four samples of one compound family, ec50 0.8, 1.5, 3 and 6.
    let ec50 = [0.8, 1.5, 3.0, 6.0];
    let mut long = String::from("sample,dose,signal\n");
    let mut wide = String::from("dose,S1,S2,S3,S4\n");
    let mut semi = String::from("Plate 9 - export\nReader;B;;;\ndose;S1;S2;S3;S4\n");
    let mut grid: Vec<Vec<String>> = Vec::new();
    for (i, &d) in DOSES.iter().enumerate() {
        let cells: Vec<String> = ec50
            .iter()
            .enumerate()
            .map(|(s, &e)| signal(d, 100.0, e, 1.2, 4 * i + s))
            .collect();
        for (s, v) in cells.iter().enumerate() {
            long += &format!("S{},{d},{v}\n", s + 1);
        }
        wide += &format!("{d},{}\n", cells.join(","));
        let c: Vec<String> = cells.iter().map(|v| comma(v)).collect();
        semi += &format!("{};{}\n", comma(&d.to_string()), c.join(";"));
        grid.push(std::iter::once(d.to_string()).chain(cells).collect());
    }
    let long = write(&dir, "long.csv", &long);
    let wide = write(&dir, "wide.csv", &wide);
    let semi = write(&dir, "wide_semicolon.csv", &semi);
    let book = dir.join("samples.xlsx");
    let mut sheet: Vec<Vec<Option<&str>>> = vec![
        vec![Some("Plate 9")],
        vec![Some("dose"), Some("S1"), Some("S2"), Some("S3"), Some("S4")],
    ];
    for row in &grid {
        sheet.push(row.iter().map(|c| Some(c.as_str())).collect());
    }
    write_xlsx(&book, &[("Sheet1", sheet)]);

    let csv = ["--model", MODEL, "--format", "csv"];
    let want = ok(&long, &[&["fit"][..], &csv, &["--by", "sample"]].concat());
    for (path, spec) in [(&wide, "S1..S4"), (&semi, "S*"), (&book, "S1,S2,S3,S4")] {
        let got = ok(
            path,
            &[&["fit"][..], &csv, &["--wide-groups", spec]].concat(),
        );
        assert_eq!(got, want, "{path:?} {spec}");
    }
    // Each sample's own ec50 is recovered.
    for (line, e) in want.lines().skip(1).zip(ec50) {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells[1], "converged", "{line}");
        let got: f64 = cells[5].parse().unwrap();
        assert!((got - e).abs() < 0.15 * e, "{line}: ec50 {e}");
    }
    let page = dir.join("samples.html");
    let (code, _, err) = run(&[
        "report",
        book.to_str().unwrap(),
        "--model",
        MODEL,
        "--wide-groups",
        "S*",
        "--out",
        page.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.contains("S4") && html.contains("sample"));
}

#[test]
fn by_a_column_of_distinct_values_is_warned_about() {
    let dir = scratch("by_dose");
    let mut text = String::from("dose,signal,plate,well\n");
    for (k, d) in DOSES.iter().enumerate() {
        text += &format!("{d},{},A,{}\n", signal(*d, 100.0, 1.6, 1.1, k), k + 1);
    }
    let f = write(&dir, "d.csv", &text);
    let (_, _, err) = run(&[
        "fit",
        f.to_str().unwrap(),
        "--model",
        "signal = a*dose",
        "--by",
        "well",
        "--format",
        "csv",
    ]);
    assert!(
        err.contains("--by well makes 9 groups of one row each"),
        "{err}"
    );
    let (_, _, err) = run(&[
        "fit",
        f.to_str().unwrap(),
        "--model",
        "signal = a*dose",
        "--by",
        "plate",
        "--format",
        "csv",
    ]);
    assert!(!err.contains("groups of one row"), "{err}");
}
