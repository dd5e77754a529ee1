//! Real fits through the `foothold` binary from good starting values.
//! Needs the Levenberg–Marquardt fitter, `Problem` and `summarize`.

mod common;

use common::cli::{run, scratch_file};

fn estimate(json: &serde_json::Value, name: &str) -> f64 {
    json["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == name)
        .and_then(|p| p["estimate"].as_f64())
        .unwrap_or_else(|| panic!("no estimate for {name} in {json}"))
}

#[test]
fn recovers_known_parameters_from_noise_free_data() {
    // y = a*exp(-k*x) + c with a = 5, k = 0.7, c = 1.2, computed here, no noise:
    // the least-squares estimates are exactly these values.
    let (a, k, c) = (5.0_f64, 0.7_f64, 1.2_f64);
    let mut text = String::from("x,y\n");
    for i in 0..=25 {
        let x = i as f64 * 0.2;
        text += &format!("{},{:.17e}\n", x, a * (-k * x).exp() + c);
    }
    let p = scratch_file("exact", &text);
    let (code, out, err) = run(&[
        "fit",
        p.to_str().unwrap(),
        "--model",
        "y = a*exp(-k*x) + c",
        "--start",
        "a=4,k=0.5,c=1",
        "--format",
        "json",
    ]);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 0, "{err}\n{out}");
    assert!(!err.contains("panicked"), "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["converged"], true);
    for (name, want) in [("a", a), ("k", k), ("c", c)] {
        let got = estimate(&v, name);
        assert!(
            (got - want).abs() < 1e-6 * want.abs(),
            "{name}: {got} vs {want}"
        );
    }
    assert!(v["ssr"].as_f64().unwrap() < 1e-12, "{out}");
    assert_eq!(v["dof"], 23);
}

#[test]
fn fits_the_cooling_demo_close_to_its_generating_values() {
    // demo-data/make_demo_data.py drew this file from ambient = 22.5,
    // delta = 157.5, k = 0.085 with noise sd 0.4 C; the estimates land within 2 %.
    let file = concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/part_cooling.csv");
    let (code, out, err) = run(&[
        "fit",
        file,
        "--model",
        "temp = ambient + delta*exp(-k*minutes)",
        "--start",
        "ambient=20,delta=150,k=0.1",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}\n{out}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    for (name, want) in [("ambient", 22.5), ("delta", 157.5), ("k", 0.085)] {
        let got = estimate(&v, name);
        assert!((got - want).abs() < 0.02 * want, "{name}: {got} vs {want}");
    }
    assert_eq!(v["n_obs"], 31);
    assert_eq!(v["dof"], 28);

    let (code, table, _) = run(&[
        "fit",
        file,
        "--model",
        "temp = ambient + delta*exp(-k*minutes)",
        "--start",
        "ambient=20,delta=150,k=0.1",
    ]);
    assert_eq!(code, 0);
    assert!(
        table.contains("parameter") && table.contains("std. error"),
        "{table}"
    );
    assert!(table.lines().any(|l| l.starts_with("ambient ")), "{table}");
    assert!(table.contains("degrees of freedom       28"), "{table}");
}

#[test]
fn rows_with_empty_cells_are_skipped_with_a_warning() {
    let mut text = String::from("x,y,note\n");
    for i in 0..12 {
        let x = i as f64;
        let y = 3.0 + 2.0 * x;
        if i == 4 {
            text += &format!("{x},,\n");
        } else {
            text += &format!("{x},{y},\n");
        }
    }
    let p = scratch_file("skip", &text);
    let args = [
        "fit",
        p.to_str().unwrap(),
        "--model",
        "y = b0 + b1*x",
        "--start",
        "b0=1,b1=1",
    ];
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains("foothold: warning: skipped 1 row with an empty cell in x, y"),
        "{err}"
    );
    assert!(out.contains("(11 rows used, 1 skipped)"), "{out}");
    let mut quiet = args.to_vec();
    quiet.push("--quiet");
    let (code, _, err) = run(&quiet);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 0);
    assert!(!err.contains("warning"), "{err}");
}

#[test]
fn search_budget_and_seed_of_a_fit_without_starts() {
    // Invented cooling data (demo-data/part_cooling.csv, generated with
    // ambient 22.5, delta 157.5, k 0.085): the search's budget and seed are the user's.
    let args = |starts: &str, seed: &str| {
        run(&[
            "fit",
            "demo-data/part_cooling.csv",
            "--model",
            "temp = ambient + delta*exp(-k*minutes)",
            "--starts",
            starts,
            "--seed",
            seed,
            "--format",
            "json",
        ])
    };
    let (code, out, err) = args("8", "3");
    assert_eq!(code, 0, "{err}");
    let json: serde_json::Value = serde_json::from_str(&out).unwrap();
    println!(
        "candidates_tried {} minima_found {} k {}",
        json["candidates_tried"],
        json["minima_found"],
        estimate(&json, "k")
    );
    // --starts is a ceiling: the search may settle earlier (the inferred start fits to the noise).
    let tried = json["candidates_tried"].as_u64().unwrap();
    assert!((4..=8).contains(&tried), "{out}");
    assert!((estimate(&json, "k") - 0.085).abs() < 0.005, "{out}");
    // Same seed, same bytes; another budget is honoured too.
    assert_eq!(args("8", "3").1, out);
    let (_, more, _) = args("24", "3");
    let more: serde_json::Value = serde_json::from_str(&more).unwrap();
    assert!(more["candidates_tried"].as_u64().unwrap() <= 24);
    assert!((estimate(&more, "k") - estimate(&json, "k")).abs() < 1e-9);
}

#[test]
fn a_constant_response_fitted_from_given_starts_is_flagged() {
    // Without --start a constant response is refused (bad-input matrix); with
    // starts the fit runs (it is exact) and says its standard errors mean nothing.
    let p = scratch_file("constant", "x,y\n1,5\n2,5\n3,5\n4,5\n");
    let (code, out, err) = run(&[
        "fit",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-k*x)",
        "--start",
        "a=5,k=0.1",
        "--format",
        "json",
    ]);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 0, "{err}");
    let json: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert!((estimate(&json, "a") - 5.0).abs() < 1e-9, "{out}");
    let warned = json["warnings"].as_array().unwrap().iter().any(|w| {
        w.as_str()
            .unwrap_or("")
            .contains("'y' is constant (5 in all 4 rows)")
    });
    assert!(warned, "{out}");
    assert!(
        err.contains("foothold: warning: the response 'y' is constant"),
        "{err}"
    );
}
