//! Grouped fits (`fit --by`) through the real binary: one summary row per
//! group in order of first appearance, a failing group that does not stop
//! the others, exit codes, and atomic output files.

mod common;

use common::cli::{file_names, run, scratch};

use std::path::{Path, PathBuf};

/// Invented: y = a*exp(-k*x) for groups 7, 3 and 5 (rows interleaved);
/// group 3 has only two rows, too few for two parameters.
fn grouped_file(dir: &Path) -> PathBuf {
    let mut text = String::from("batch,x,y\n");
    let params = [(7.0, 10.0, 0.3), (5.0, 4.0, 0.8)];
    for i in 0..12 {
        let x = i as f64 * 0.5;
        for (g, a, k) in params {
            if i == 0 && g == 5.0 {
                text += "3,0.5,2.0\n3,1.0,1.5\n";
            }
            text += &format!("{g},{x},{:.15}\n", a * (-k * x).exp());
        }
    }
    let p = dir.join("groups.csv");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn creep_specimens_fit_one_curve_each() {
    // Demo data generated with e0 = 0.110, 0.125, 0.098 and m = 0.42, 0.45,
    // 0.40 for specimens 1, 2, 3, plus noise (demo-data/README.md).
    let d = scratch("creep");
    let out_file = d.join("creep.csv");
    let (code, out, err) = run(&[
        "fit",
        "demo-data/creep_specimens.csv",
        "--model",
        "strain = e0 + a*hours^m",
        "--start",
        "e0=0.1,a=0.02,m=0.4",
        "--by",
        "specimen",
        "--format",
        "csv",
        "--out",
        out_file.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.is_empty(), "output went to the file: {out}");
    assert_eq!(file_names(&d), vec!["creep.csv"], "no temporary files left");
    let csv = std::fs::read_to_string(&out_file).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines[0],
        "specimen,status,n_obs,iterations,ssr,e0_estimate,e0_std_error,a_estimate,a_std_error,m_estimate,m_std_error,e0_identifiable,a_identifiable,m_identifiable,message",
        "parameter columns in order of first appearance in the formula"
    );
    assert_eq!(lines.len(), 4, "{csv}");
    let want = [("1", 0.110, 0.42), ("2", 0.125, 0.45), ("3", 0.098, 0.40)];
    for (line, (g, e0, m)) in lines[1..].iter().zip(want) {
        let c: Vec<&str> = line.split(',').collect();
        assert_eq!(c[0], g);
        assert_eq!(c[1], "converged");
        assert_eq!(c[2], "23");
        let e0_fit: f64 = c[5].parse().unwrap();
        let m_fit: f64 = c[9].parse().unwrap();
        assert!((e0_fit - e0).abs() < 0.012, "specimen {g}: e0 {e0_fit}");
        assert!((m_fit - m).abs() < 0.04, "specimen {g}: m {m_fit}");
    }
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn a_failing_group_does_not_stop_the_others() {
    let d = scratch("fail");
    let data = grouped_file(&d);
    let args = [
        "fit",
        data.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--start",
        "a=5,k=0.5",
        "--by",
        "batch",
        "--format",
        "json",
    ];
    let (code, out, err) = run(&args);
    assert_eq!(code, 1, "one group failed: {err}");
    assert!(err.contains("group batch = 3: failed"), "{err}");
    assert!(
        err.contains("foothold: error: 1 of 3 groups failed (batch = 3)\n"),
        "{err}"
    );
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let groups = v["groups"].as_array().unwrap();
    let keys: Vec<&str> = groups
        .iter()
        .map(|g| g["batch"].as_str().unwrap())
        .collect();
    assert_eq!(keys, vec!["7", "3", "5"], "order of first appearance");
    assert_eq!(groups[1]["status"], "failed");
    assert!(
        groups[1]["message"].as_str().unwrap().contains("too few"),
        "{}",
        groups[1]
    );
    assert!(groups[1]["parameters"][0]["estimate"].is_null());
    // The failed group had two rows: its row count says so.
    assert_eq!(groups[1]["n_obs"], 2);
    assert!(groups.iter().all(|g| g.get("group").is_none()), "keyed by --by");
    for (g, a, k) in [(0, 10.0, 0.3), (2, 4.0, 0.8)] {
        assert_eq!(groups[g]["status"], "converged");
        assert_eq!(groups[g]["n_obs"], 12);
        let p = groups[g]["parameters"].as_array().unwrap();
        assert_eq!(p[0]["name"], "a");
        let (ga, gk) = (
            p[0]["estimate"].as_f64().unwrap(),
            p[1]["estimate"].as_f64().unwrap(),
        );
        assert!((ga - a).abs() < 1e-8 && (gk - k).abs() < 1e-8, "{ga} {gk}");
    }
    // Deterministic: the same run gives the same bytes.
    assert_eq!(run(&args).1, out);
    // The table names the group column and marks the failure.
    let (code, table, _) = run(&[
        "fit",
        data.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--start",
        "a=5,k=0.5",
        "--by",
        "batch",
        "-q",
    ]);
    assert_eq!(code, 1);
    assert!(table.contains("batch  status"), "{table}");
    assert!(
        table
            .lines()
            .any(|l| l.starts_with("3") && l.contains("failed")),
        "{table}"
    );
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn bad_group_options_exit_two() {
    let d = scratch("bad");
    let data = grouped_file(&d);
    let p = data.to_str().unwrap();
    for (args, want) in [
        (
            vec![
                "fit",
                p,
                "--model",
                "a*exp(-k*x)",
                "--start",
                "a=5,k=0.5",
                "--by",
                "lot",
            ],
            "--by names column 'lot'",
        ),
        (
            vec![
                "fit",
                p,
                "--model",
                "a*exp(-k*x)",
                "--start",
                "a=5,k=0.5",
                "--by",
                "x",
            ],
            "the model uses 'x' itself",
        ),
        (
            vec![
                "fit",
                p,
                "--model",
                "a*exp(-k*x)",
                "--start",
                "a=5,k=0.5",
                "--by",
                "batch",
                "--plots",
                "pl",
            ],
            "cannot be combined with --by",
        ),
    ] {
        let (code, out, err) = run(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(out.is_empty());
        assert!(err.contains(want), "{args:?}: {err}");
    }
    let _ = std::fs::remove_dir_all(&d);
}

/// `fit --by compound` on the plate demo (invented) with a library model, no starts.
fn plate_fit(model: &str, format: &str) -> (i32, String, String) {
    run(&[
        "fit",
        "demo-data/plate_dose_response.csv",
        "--model",
        model,
        "--x",
        "log_dose",
        "--y",
        "response",
        "--by",
        "compound",
        "--format",
        format,
    ])
}

/// The `groups` of the plate demo batch as JSON (the run must succeed).
fn plate_groups(model: &str) -> Vec<serde_json::Value> {
    let (code, out, err) = plate_fit(model, "json");
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v["groups"].as_array().unwrap().clone()
}

#[test]
fn text_labels_and_no_starts_fit_every_compound() {
    // demo-data/plate_dose_response.csv: six compounds with text labels,
    // generated with (plateau, x_half, rate) per compound (demo-data/README.md);
    // no --start: inference and the multistart search give every group its starts.
    let groups = plate_groups("logistic-3");
    let want = [
        ("KX-101", 94.0, -0.40, 2.6),
        ("KX-102", 88.0, 0.35, 1.9),
        ("KX-117", 97.0, -1.30, 3.2),
        ("LT-4a", 78.0, 0.80, 2.2),
        ("LT-4b", 91.0, -0.05, 1.5),
        ("ref std", 96.0, -0.75, 2.4),
    ];
    assert_eq!(groups.len(), want.len());
    for (g, (name, plateau, x_half, rate)) in groups.iter().zip(want) {
        assert_eq!(g["compound"], name, "order of first appearance");
        assert_eq!(g["status"], "converged", "{g}");
        assert_eq!(g["n_obs"], 22);
        let p = g["parameters"].as_array().unwrap();
        // Parameters in the library's documented order: plateau, x_half, rate.
        let names: Vec<&str> = p.iter().map(|q| q["name"].as_str().unwrap()).collect();
        assert_eq!(names, ["plateau", "x_half", "rate"]);
        let est = |k: usize| p[k]["estimate"].as_f64().unwrap();
        let se = |k: usize| p[k]["std_error"].as_f64().unwrap();
        // Noise sd 2.5: each estimate within 4 standard errors of its
        // generating value.
        println!(
            "{name}: plateau {:.3} ± {:.3}, x_half {:.4} ± {:.4}, rate {:.3} ± {:.3}",
            est(0),
            se(0),
            est(1),
            se(1),
            est(2),
            se(2)
        );
        assert!(
            (est(0) - plateau).abs() < 4.0 * se(0),
            "{name} plateau {}",
            est(0)
        );
        assert!(
            (est(1) - x_half).abs() < 4.0 * se(1),
            "{name} x_half {}",
            est(1)
        );
        assert!(
            (est(2) - rate).abs() < 4.0 * se(2),
            "{name} rate {}",
            est(2)
        );
    }
    // The table prints the text labels in the group column.
    let (code, table, _) = plate_fit("logistic-3", "table");
    assert_eq!(code, 0);
    assert!(table.contains("compound  status"), "{table}");
    assert!(
        table
            .lines()
            .any(|l| l.starts_with("ref std") && l.contains("converged")),
        "{table}"
    );
}

#[test]
fn text_labels_with_empty_cells_and_a_text_cell_in_a_used_column() {
    let d = scratch("labels");
    // Invented: y = a*exp(-k*x) per well; one row has no well, and a note column holds text.
    let mut text = String::from("well,x,y,note\n");
    for (w, a, k) in [("B12", 10.0, 0.3), ("A1", 4.0, 0.8), ("spec 2", 6.0, 0.5)] {
        for i in 0..8 {
            let x = i as f64 * 0.5;
            text += &format!("{w},{x},{:.12},ok\n", a * (-k * x).exp());
        }
    }
    text += ",1,2,no well\n";
    let p = d.join("wells.csv");
    std::fs::write(&p, &text).unwrap();
    let (code, out, err) = run(&[
        "fit",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--by",
        "well",
        "--format",
        "csv",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("skipped 1 row with an empty 'well' cell"),
        "{err}"
    );
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines.len(), 4, "{out}");
    for (line, (w, a, k)) in
        lines[1..]
            .iter()
            .zip([("B12", 10.0, 0.3), ("A1", 4.0, 0.8), ("spec 2", 6.0, 0.5)])
    {
        let c: Vec<&str> = line.split(',').collect();
        assert_eq!(c[0], w);
        let (fa, fk): (f64, f64) = (c[5].parse().unwrap(), c[7].parse().unwrap());
        assert!((fa - a).abs() < 1e-6 && (fk - k).abs() < 1e-6, "{line}");
    }
    // A text cell in a column the model uses is refused as before, naming it.
    std::fs::write(&p, text.replace("A1,1,", "A1,abc,")).unwrap();
    let (code, out, err) = run(&[
        "fit",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--by",
        "well",
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(out.is_empty());
    assert!(
        err.contains("line 12, column 'x': 'abc' is not a number"),
        "{err}"
    );
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn four_parameter_logistic_reads_every_curve_the_same_way_round() {
    // baseline + (full_effect - baseline)/(1 + exp(slope*(x_half - x))) gives
    // the same curve with baseline and full_effect swapped and slope negated.
    // The search treats the two as one minimum and reports the image with
    // slope ≥ 0, so that across a batch `full_effect` is always the response
    // at high dose (as the library says).
    // demo-data/plate_dose_response.csv (invented) rises from about 0 to the
    // plateau of each compound (74–97 % inhibition).
    let groups = plate_groups("logistic-4");
    assert_eq!(groups.len(), 6);
    for g in groups {
        let est = |n: &str| {
            g["parameters"]
                .as_array()
                .unwrap()
                .iter()
                .find(|p| p["name"] == n)
                .and_then(|p| p["estimate"].as_f64())
                .unwrap()
        };
        let (baseline, full, slope) = (est("baseline"), est("full_effect"), est("slope"));
        println!(
            "{}: baseline {baseline:.3} full_effect {full:.3} slope {slope:.3}",
            g["compound"]
        );
        assert_eq!(g["status"], "converged", "{g}");
        assert!(slope > 0.0, "{g}");
        assert!(full > 60.0 && baseline.abs() < 10.0, "{g}");
    }
}
