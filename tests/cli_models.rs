//! The model library through the real binary: `foothold models` in every
//! format, and `--model NAME` with `--x`/`--y` mapping on the demo data.

mod common;

use common::cli::run;

fn estimate(json: &serde_json::Value, name: &str) -> (f64, f64) {
    let p = json["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == name)
        .unwrap_or_else(|| panic!("no {name} in {json}"));
    (
        p["estimate"].as_f64().unwrap(),
        p["std_error"].as_f64().unwrap(),
    )
}

#[test]
fn models_lists_the_library_in_every_format() {
    let (code, table, err) = run(&["models"]);
    assert_eq!(code, 0, "{err}");
    let lines: Vec<&str> = table.lines().collect();
    assert!(
        lines[0].starts_with("name") && lines[0].contains("formula") && lines[0].contains("use")
    );
    // Aligned: every formula starts in the same column.
    let col = lines[0].find("formula").unwrap();
    let mm = lines
        .iter()
        .find(|l| l.starts_with("michaelis-menten"))
        .unwrap();
    assert_eq!(&mm[col..col + 15], "vmax*x/(km + x)", "{table}");
    for name in [
        "logistic-4",
        "decay-to-floor",
        "gompertz",
        "van-genuchten",
        "damped-oscillation",
    ] {
        assert!(table.contains(name), "{name} missing:\n{table}");
    }

    let (code, json, _) = run(&["models", "--format", "json"]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let models = v["models"].as_array().unwrap();
    assert!(models.len() >= 20, "{}", models.len());
    for m in models {
        assert!(m["formula"].as_str().unwrap().contains('x'), "{m}");
        for p in m["parameters"].as_array().unwrap() {
            assert!(!p["meaning"].as_str().unwrap().is_empty(), "{m}");
        }
        assert!(!m["source"].as_str().unwrap().is_empty());
    }

    let (code, yaml, _) = run(&["models", "--format", "yaml"]);
    assert_eq!(code, 0);
    let y: serde_yaml_ng::Value = serde_yaml_ng::from_str(&yaml).unwrap();
    assert_eq!(y["models"].as_sequence().unwrap().len(), models.len());

    let (code, csv, _) = run(&["models", "--format", "csv"]);
    assert_eq!(code, 0);
    assert!(
        csv.starts_with("name,formula,use,parameters,source\n"),
        "{csv}"
    );
    assert_eq!(csv.lines().count(), models.len() + 1);
}

#[test]
fn library_model_with_x_and_y_mapped_to_columns() {
    // Demo data generated with vmax = 42.5, km = 1.8 plus noise (demo-data/README.md).
    let (code, out, err) = run(&[
        "fit",
        "demo-data/enzyme_assay.csv",
        "--model",
        "michaelis-menten",
        "--x",
        "substrate",
        "--y",
        "rate",
        "--start",
        "vmax=30,km=1",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["model"], "vmax*substrate/(km + substrate)");
    assert_eq!(v["response"], "rate");
    let (vmax, se_vmax) = estimate(&v, "vmax");
    let (km, _) = estimate(&v, "km");
    assert!((vmax - 42.5).abs() < 1.0, "vmax {vmax}");
    assert!((km - 1.8).abs() < 0.15, "km {km}");
    assert!(se_vmax > 0.05 && se_vmax < 1.0, "se {se_vmax}");
}

#[test]
fn x_renames_the_variable_of_a_written_formula() {
    // Demo data generated with ambient = 22.5, delta = 157.5, k = 0.085.
    let (code, out, err) = run(&[
        "fit",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = ambient + delta*exp(-k*x)",
        "--x",
        "minutes",
        "--start",
        "ambient=20,delta=150,k=0.1",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["model"], "temp = ambient + delta*exp(-k*minutes)");
    let (k, _) = estimate(&v, "k");
    assert!((k - 0.085).abs() < 0.005, "k {k}");
}

#[test]
fn mapping_mistakes_exit_two() {
    let cases: [(&[&str], &str); 3] = [
        (
            &[
                "fit",
                "demo-data/enzyme_assay.csv",
                "--model",
                "michaelis-menten",
                "--x",
                "conc",
                "--y",
                "rate",
                "--start",
                "vmax=1,km=1",
            ],
            "--x names column 'conc'",
        ),
        (
            &[
                "fit",
                "demo-data/enzyme_assay.csv",
                "--model",
                "michaelis-menten",
                "--x",
                "substrate",
                "--start",
                "vmax=1,km=1",
            ],
            "response column 'y' is not in the data",
        ),
        (
            &[
                "fit",
                "demo-data/enzyme_assay.csv",
                "--model",
                "michaelis-mentn",
                "--x",
                "substrate",
                "--y",
                "rate",
            ],
            "foothold models",
        ),
    ];
    for (args, want) in cases {
        let (code, _, err) = run(args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(
            err.starts_with("foothold: error: ") && err.contains(want),
            "{args:?}: {err}"
        );
    }
}

/// The parameter names of one library model in `foothold models --format yaml`.
fn listed_parameters(yaml: &serde_yaml_ng::Value, model: &str) -> Vec<String> {
    yaml["models"]
        .as_sequence()
        .unwrap()
        .iter()
        .find(|m| m["name"].as_str() == Some(model))
        .unwrap_or_else(|| panic!("no {model} in the library"))["parameters"]
        .as_sequence()
        .unwrap()
        .iter()
        .map(|p| p["name"].as_str().unwrap().to_string())
        .collect()
}

#[test]
fn models_shows_descriptive_names_in_the_documented_order() {
    let (code, yaml, err) = run(&["models", "--format", "yaml"]);
    assert_eq!(code, 0, "{err}");
    let y: serde_yaml_ng::Value = serde_yaml_ng::from_str(&yaml).unwrap();
    for (model, want) in [
        ("saturation-growth", &["plateau", "k"][..]),
        ("logistic-3", &["plateau", "x_half", "rate"]),
        ("gompertz", &["plateau", "shift", "rate"]),
        ("richards", &["plateau", "x_inflection", "rate", "nu"]),
        ("weibull-growth", &["plateau", "rise", "scale", "shape"]),
        (
            "logistic-4",
            &["baseline", "full_effect", "x_half", "slope"],
        ),
        (
            "logistic-5",
            &["baseline", "full_effect", "x_centre", "slope", "s"],
        ),
        (
            "log-logistic-4",
            &["baseline", "full_effect", "ec50", "slope"],
        ),
        ("michaelis-menten", &["vmax", "km"]),
    ] {
        assert_eq!(listed_parameters(&y, model), want, "{model}");
    }
    // The names the library gave up appear in no model's parameters.
    for m in y["models"].as_sequence().unwrap() {
        for p in m["parameters"].as_sequence().unwrap() {
            let name = p["name"].as_str().unwrap();
            assert!(
                !["asym", "xmid", "drop", "bottom", "top", "mid"].contains(&name),
                "{name} in {}",
                m["name"].as_str().unwrap()
            );
        }
    }
    // The table shows the formulas with the new names; CSV lists the
    // parameters in the same order.
    let (_, table, _) = run(&["models"]);
    let line = table
        .lines()
        .find(|l| l.starts_with("logistic-3 "))
        .unwrap();
    assert!(
        line.contains("plateau/(1 + exp(-rate*(x - x_half)))"),
        "{line}"
    );
    let (_, csv, _) = run(&["models", "--format", "csv"]);
    let line = csv
        .lines()
        .find(|l| l.starts_with("weibull-growth,"))
        .unwrap();
    assert!(line.contains(",plateau rise scale shape,"), "{line}");
}

#[test]
fn a_library_fit_lists_parameters_in_the_documented_order() {
    // michaelis-menten documents vmax, then km; the order of --start does
    // not matter. Demo data generated with vmax = 42.5, km = 1.8.
    let args = |format: &'static str| {
        [
            "fit",
            "demo-data/enzyme_assay.csv",
            "--model",
            "michaelis-menten",
            "--x",
            "substrate",
            "--y",
            "rate",
            "--start",
            "km=1,vmax=30",
            "--format",
            format,
        ]
    };
    let (code, json, err) = run(&args("json"));
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let names: Vec<&str> = v["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["vmax", "km"]);
    let vmax = v["parameters"][0]["estimate"].as_f64().unwrap();
    assert!((vmax - 42.5).abs() < 1.0, "vmax {vmax}");
    let (code, table, _) = run(&args("table"));
    assert_eq!(code, 0);
    let row = |n: &str| table.lines().position(|l| l.starts_with(&format!("{n} ")));
    assert!(row("vmax").unwrap() < row("km").unwrap(), "{table}");
    let (code, csv, _) = run(&args("csv"));
    assert_eq!(code, 0);
    let first: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    assert_eq!(first, ["vmax", "km"], "{csv}");
}

#[test]
fn a_written_formula_lists_parameters_in_order_of_first_appearance() {
    // tamb, t0, k: neither alphabetical (k, t0, tamb) nor the order of --start.
    // Demo data generated with ambient 22.5 and 22.5 + 157.5 = 180 at x = 0.
    let formula = "temp = tamb + (t0 - tamb)*exp(-k*minutes)";
    let names = |json: &str, key: &str| -> Vec<String> {
        let v: serde_json::Value = serde_json::from_str(json).unwrap();
        v[key]
            .as_array()
            .unwrap()
            .iter()
            .map(|p| p["name"].as_str().unwrap().to_string())
            .collect()
    };
    let (code, out, err) = run(&[
        "fit",
        "demo-data/part_cooling.csv",
        "--model",
        formula,
        "--start",
        "k=0.1,t0=170,tamb=20",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(names(&out, "parameters"), ["tamb", "t0", "k"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let tamb = v["parameters"][0]["estimate"].as_f64().unwrap();
    assert!((tamb - 22.5).abs() < 2.0, "tamb {tamb}");
    // Inference lists its starts in the same order.
    let (code, out, err) = run(&[
        "infer",
        "demo-data/part_cooling.csv",
        "--model",
        formula,
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(names(&out, "parameters"), ["tamb", "t0", "k"]);
}
