//! Parameters the data do not determine are flagged beside their estimates
//! (issue 10): a decay fitted to pure noise converges, but its rate sits in a
//! flat valley (its Jacobian column has vanished under exp(−77·x)), with a
//! standard error of ~1e33. Every format must say so for that parameter only.

mod common;

use common::cli::{run, scratch_file};

/// Uniform noise on [0, 1) at x = 0..29, invented for this test (drawn once
/// with Python's `random.seed(1); random.uniform(0, 1)`, six decimals).
const NOISE: &str = "x,y\n0,0.134364\n1,0.847434\n2,0.763775\n3,0.255069\n4,0.495435\n\
5,0.449491\n6,0.651593\n7,0.788723\n8,0.093860\n9,0.028347\n10,0.835765\n11,0.432767\n\
12,0.762280\n13,0.002106\n14,0.445387\n15,0.721540\n16,0.228762\n17,0.945271\n\
18,0.901427\n19,0.030590\n20,0.025446\n21,0.541412\n22,0.939149\n23,0.381204\n\
24,0.216599\n25,0.422117\n26,0.029041\n27,0.221692\n28,0.437888\n29,0.495812\n";

fn fit(format: &str) -> (i32, String, String) {
    let p = scratch_file(&format!("noise-{format}"), NOISE);
    run(&[
        "fit",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-r*x)+c",
        "--start",
        "a=10,r=3,c=0.5",
        "--format",
        format,
    ])
}

#[test]
fn noise_fit_flags_the_rate_in_the_table() {
    let (code, out, err) = fit("table");
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("(converged)"), "{out}");
    let row = |name: &str| {
        out.lines()
            .find(|l| l.starts_with(&format!("{name} ")))
            .unwrap_or_else(|| panic!("no row {name}: {out}"))
            .to_string()
    };
    assert!(
        row("r").ends_with("not identifiable: std. error > 1000 x |estimate|"),
        "{out}"
    );
    assert!(!row("a").contains("not identifiable"), "{out}");
    assert!(!row("c").contains("not identifiable"), "{out}");
    assert!(out.contains("not identifiable from these data"), "{out}");
}

#[test]
fn noise_fit_flags_the_rate_in_json_and_csv() {
    let (code, out, err) = fit("json");
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json");
    let params = v["parameters"].as_array().unwrap();
    let get = |n: &str| params.iter().find(|p| p["name"] == n).unwrap().clone();
    let r = get("r");
    assert_eq!(r["identifiable"], false, "{r}");
    assert_eq!(r["unidentified_reason"], "relative_se", "{r}");
    // The rate's standard error is more than 1000 times its estimate.
    let (est, se) = (
        r["estimate"].as_f64().unwrap(),
        r["std_error"].as_f64().unwrap(),
    );
    assert!(se > 1e3 * est.abs(), "{r}");
    for n in ["a", "c"] {
        let p = get(n);
        assert_eq!(p["identifiable"], true, "{p}");
        assert!(p["unidentified_reason"].is_null(), "{p}");
    }

    let (code, csv, err) = fit("csv");
    assert_eq!(code, 0, "{err}");
    let r_line = csv.lines().find(|l| l.starts_with("r,")).expect("row r");
    assert!(r_line.ends_with(",false,relative_se"), "{csv}");
    let a_line = csv.lines().find(|l| l.starts_with("a,")).expect("row a");
    assert!(a_line.ends_with(",true,"), "{csv}");
}

/// A well-determined fit is not flagged: the enzyme demo (vmax = 42.5,
/// km = 1.8 plus noise, demo-data/README.md).
#[test]
fn determined_fit_has_no_flag() {
    let (code, out, err) = run(&[
        "fit",
        "demo-data/enzyme_assay.csv",
        "--model",
        "rate = vmax*substrate/(km + substrate)",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(!out.contains("not identifiable"), "{out}");
    assert!(
        !out.lines()
            .any(|l| l.starts_with("parameter") && l.ends_with("note")),
        "{out}"
    );
}

/// Batch output marks the rate of every group fitted to the noise.
#[test]
fn batch_marks_unidentified_parameters() {
    let mut data = String::from("run,x,y\n");
    for run in ["p", "q"] {
        for line in NOISE.lines().skip(1) {
            data += &format!("{run},{line}\n");
        }
    }
    let p = scratch_file("batch", &data);
    let args = |format: &'static str| {
        vec![
            "fit".to_string(),
            p.to_str().unwrap().to_string(),
            "--model".into(),
            "a*exp(-r*x)+c".into(),
            "--start".into(),
            "a=10,r=3,c=0.5".into(),
            "--by".into(),
            "run".into(),
            "--format".into(),
            format.into(),
        ]
    };
    let a = args("csv");
    let (code, csv, err) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(code, 0, "{err}");
    let head: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let col = |n: &str| head.iter().position(|h| *h == n).expect(n);
    let (ri, ai) = (col("r_identifiable"), col("a_identifiable"));
    for line in csv.lines().skip(1) {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells[ri], "false", "{line}");
        assert_eq!(cells[ai], "true", "{line}");
    }
    let a = args("table");
    let (code, table, err) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        table.matches("(n.i.)").count(),
        3,
        "two marks and the legend: {table}"
    );
    let a = args("json");
    let (_, json, _) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    let v: serde_json::Value = serde_json::from_str(&json).expect("json");
    let g = &v["groups"][0]["parameters"];
    let r = g
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == "r")
        .unwrap();
    assert_eq!(r["identifiable"], false, "{r}");
}

/// The HTML report marks the rate beside its estimate (the page itself is
/// checked in headless Chromium by tests/cli_report.rs; here only the row).
#[test]
fn report_marks_the_rate_beside_its_estimate() {
    let p = scratch_file("report", NOISE);
    let page = p.with_file_name("page.html");
    let (code, _, err) = run(&[
        "report",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-r*x)+c",
        "--start",
        "a=10,r=3,c=0.5",
        "--out",
        page.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    let row = html
        .lines()
        .find(|l| l.starts_with("<tr><td><code>r</code>") && l.contains("class=\"num\">7"))
        .unwrap_or_else(|| panic!("no estimate row for r"));
    assert!(
        row.contains(
            "<em class=\"unidentified\">(not identifiable: std. error &gt; 1000 x |estimate|)</em>"
        ),
        "{row}"
    );
    let a_row = html
        .lines()
        .filter(|l| l.starts_with("<tr><td><code>a</code>"))
        .last()
        .unwrap();
    assert!(!a_row.contains("unidentified"), "{a_row}");
}
