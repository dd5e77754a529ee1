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
