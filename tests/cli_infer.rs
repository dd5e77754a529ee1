//! `foothold infer` through the binary: starting values with derivations, as a
//! table and as JSON, and the usage errors of the shared input handling.

mod common;

use common::cli::{run, scratch_file};

/// A cooling curve of our own: temperature = 20 + 60·exp(−0.15·minutes), no noise.
fn cooling() -> String {
    let mut text = String::from("minutes,temp\n");
    for i in 0..=30 {
        let t = i as f64;
        text += &format!("{},{:.12}\n", t, 20.0 + 60.0 * (-0.15 * t).exp());
    }
    text
}

#[test]
fn json_gives_every_parameter_with_a_derivation() {
    let p = scratch_file("json", &cooling());
    let (code, out, err) = run(&[
        "infer",
        p.to_str().unwrap(),
        "--model",
        "temp = ambient + drop*exp(-k*minutes)",
        "--format",
        "json",
    ]);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let params = v["parameters"].as_array().unwrap();
    assert_eq!(params.len(), 3);
    let get = |n: &str| {
        params
            .iter()
            .find(|p| p["name"] == n)
            .unwrap_or_else(|| panic!("{n} missing"))
    };
    // exact data: the inferred start is already close to the truth
    let k = get("k")["start"].as_f64().unwrap();
    assert!((k - 0.15).abs() < 0.015, "k = {k}");
    let amb = get("ambient")["start"].as_f64().unwrap();
    assert!((amb - 20.0).abs() < 2.0, "ambient = {amb}");
    assert!(get("k")["derivation"].as_str().unwrap().contains("rate"));
    assert!(get("drop")["derivation"]
        .as_str()
        .unwrap()
        .contains("enters linearly"));
    assert!(v["features"].is_object());
    assert!(!v["candidates"].as_array().unwrap().is_empty());
}

#[test]
fn table_lists_parameters_then_features() {
    let p = scratch_file("table", &cooling());
    let (code, out, err) = run(&[
        "infer",
        p.to_str().unwrap(),
        "--model",
        "ambient + drop*exp(-k*minutes)",
        "--y",
        "temp",
    ]);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("parameter") && out.contains("derivation"),
        "{out}"
    );
    assert!(out.contains("Features of the data"), "{out}");
    for n in ["ambient", "drop", "k"] {
        assert!(out.lines().any(|l| l.starts_with(n)), "{n}: {out}");
    }
}

#[test]
fn bad_input_exits_two() {
    let p = scratch_file("bad", &cooling());
    let (code, _, err) = run(&[
        "infer",
        p.to_str().unwrap(),
        "--model",
        "a*exp(-k*hours)",
        "--y",
        "temp",
    ]);
    let (code2, _, err2) = run(&["infer", p.to_str().unwrap(), "--model", "a*exp(-k*minutes)"]);
    let _ = std::fs::remove_dir_all(p.parent().unwrap());
    assert_eq!(code, 2, "{err}");
    assert!(err.starts_with("foothold: error: "), "{err}");
    // no column y and no --y
    assert_eq!(code2, 2, "{err2}");
}
