//! `foothold rank` on the real binary: ranked minima with their starts.

mod common;

use common::cli::run;

#[test]
fn rank_lists_the_saturation_minimum_first_with_its_start() {
    // demo-data/enzyme_assay.csv was generated with vmax = 42.5, km = 1.8 plus noise
    // (demo-data/README.md); the least-squares minimum lies close to them.
    let (code, out, err) = run(&[
        "rank",
        "demo-data/enzyme_assay.csv",
        "--model",
        "rate = vmax*substrate/(km + substrate)",
        "--format",
        "json",
        "--seed",
        "7",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json");
    let first = &v["candidates"][0];
    assert_eq!(first["rank"], 1);
    let p = first["parameters"].as_array().unwrap();
    let est = |n: &str| {
        p.iter().find(|q| q["name"] == n).unwrap()["estimate"]
            .as_f64()
            .unwrap()
    };
    assert!((est("vmax") - 42.5).abs() < 1.0, "vmax {}", est("vmax"));
    assert!((est("km") - 1.8).abs() < 0.2, "km {}", est("km"));
    assert!(p.iter().all(|q| q["start"].is_number()));
    assert!(first["share"].as_f64().unwrap() > 0.0);
    assert!(v["candidates_tried"].as_u64().unwrap() >= 1);
}

#[test]
fn fit_without_starts_reports_the_search() {
    // demo-data/part_cooling.csv was generated with k = 0.085 (demo-data/README.md).
    let (code, out, err) = run(&[
        "fit",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = ambient + delta*exp(-k*minutes)",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json");
    assert!(v["candidates_tried"].as_u64().unwrap() >= 1);
    assert!(v["minima_found"].as_u64().unwrap() >= 1);
    let k = v["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == "k")
        .unwrap();
    assert!((k["estimate"].as_f64().unwrap() - 0.085).abs() < 0.002);
}
