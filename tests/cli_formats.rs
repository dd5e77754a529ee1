//! Output formats of `fit` through the real binary: table, JSON, YAML and
//! CSV agree on the numbers; JSON has every field docs/schema/fit.schema.json
//! requires; `--out` writes the file atomically.

mod common;

use common::cli::{run, scratch};

use std::path::{Path, PathBuf};

/// Invented: y = 2 + 6/(1 + exp(-1.5*(x - 4))) on x = 0 .. 10, no noise, so
/// the least-squares estimates are these values.
fn logistic_file(dir: &Path) -> PathBuf {
    let mut text = String::from("x,y\n");
    for i in 0..=40 {
        let x = i as f64 * 0.25;
        text += &format!(
            "{x},{:.17e}\n",
            2.0 + 6.0 / (1.0 + (-1.5 * (x - 4.0)).exp())
        );
    }
    let p = dir.join("logistic.csv");
    std::fs::write(&p, text).unwrap();
    p
}

fn fit_args<'a>(data: &'a str, format: &'a str) -> Vec<&'a str> {
    vec![
        "fit",
        data,
        "--model",
        "logistic-4",
        "--start",
        "baseline=1,full_effect=7,x_half=3.5,slope=1",
        "--format",
        format,
    ]
}

/// The true values in the library's documented order of `logistic-4`, the
/// order every format lists the parameters in.
const TRUE: [(&str, f64); 4] = [
    ("baseline", 2.0),
    ("full_effect", 8.0),
    ("x_half", 4.0),
    ("slope", 1.5),
];

#[test]
fn every_format_gives_the_same_estimates() {
    let d = scratch("all");
    let data = logistic_file(&d);
    let p = data.to_str().unwrap();

    let (code, json, err) = run(&fit_args(p, "json"));
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    for (i, (name, want)) in TRUE.iter().enumerate() {
        assert_eq!(v["parameters"][i]["name"], *name);
        let got = v["parameters"][i]["estimate"].as_f64().unwrap();
        assert!((got - want).abs() < 1e-7, "{name}: {got}");
    }

    let (code, yaml, _) = run(&fit_args(p, "yaml"));
    assert_eq!(code, 0);
    let y: serde_yaml_ng::Value = serde_yaml_ng::from_str(&yaml).unwrap();
    for (i, (name, want)) in TRUE.iter().enumerate() {
        assert_eq!(y["parameters"][i]["name"].as_str(), Some(*name));
        let got = y["parameters"][i]["estimate"].as_f64().unwrap();
        assert!((got - want).abs() < 1e-7, "{name}: {got}");
    }
    assert_eq!(y["converged"].as_bool(), Some(true));

    let (code, csv, _) = run(&fit_args(p, "csv"));
    assert_eq!(code, 0);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines[0],
        "name,estimate,std_error,t_value,ci_low,ci_high,identifiable,unidentified_reason"
    );
    assert_eq!(lines.len(), 5);
    for (line, (name, want)) in lines[1..].iter().zip(TRUE) {
        let c: Vec<&str> = line.split(',').collect();
        assert_eq!(c.len(), 8);
        assert_eq!(c[0], name);
        assert_eq!(c[6], "true", "{line}");
        let got: f64 = c[1].parse().unwrap();
        assert!((got - want).abs() < 1e-7, "{name}: {got}");
        assert_eq!(
            c[1].parse::<f64>().unwrap(),
            v["parameters"]
                .as_array()
                .unwrap()
                .iter()
                .find(|q| q["name"] == name)
                .unwrap()["estimate"]
                .as_f64()
                .unwrap(),
            "CSV keeps full precision"
        );
    }

    let (code, table, _) = run(&fit_args(p, "table"));
    assert_eq!(code, 0);
    let row = table
        .lines()
        .find(|l| l.starts_with("full_effect "))
        .unwrap();
    assert!(row.contains("8.000000"), "{table}");
    // The table lists the parameters in the same documented order.
    let order: Vec<&str> = table
        .lines()
        .filter_map(|l| l.split_whitespace().next())
        .filter(|w| TRUE.iter().any(|(n, _)| n == w))
        .collect();
    assert_eq!(
        order,
        ["baseline", "full_effect", "x_half", "slope"],
        "{table}"
    );
    let _ = std::fs::remove_dir_all(&d);
}

/// The `required` arrays of a JSON schema object, at the top and for array items.
fn required(schema: &serde_json::Value) -> Vec<String> {
    schema["required"]
        .as_array()
        .map(|a| {
            a.iter()
                .filter_map(|s| s.as_str().map(String::from))
                .collect()
        })
        .unwrap_or_default()
}

#[test]
fn fit_json_has_every_field_the_schema_requires() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("docs/schema/fit.schema.json")).unwrap(),
    )
    .unwrap();
    let d = scratch("schema");
    let data = logistic_file(&d);
    let (code, json, err) = run(&fit_args(data.to_str().unwrap(), "json"));
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let top = required(&schema);
    assert!(top.len() >= 10);
    for field in &top {
        assert!(v.get(field).is_some(), "missing {field}");
        let kind = &schema["properties"][field]["type"];
        let ok = match kind {
            serde_json::Value::String(t) => type_matches(&v[field], t),
            serde_json::Value::Array(ts) => ts
                .iter()
                .any(|t| type_matches(&v[field], t.as_str().unwrap())),
            _ => true,
        };
        assert!(ok, "{field} is not {kind}: {}", v[field]);
    }
    let item = &schema["properties"]["parameters"]["items"];
    for p in v["parameters"].as_array().unwrap() {
        for field in required(item) {
            assert!(p.get(&field).is_some(), "parameter lacks {field}: {p}");
        }
    }
    // The other schemas parse and name the documented fields.
    let infer: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("docs/schema/infer.schema.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(
        required(&infer["properties"]["parameters"]["items"]),
        vec!["name", "start", "derivation"]
    );
    let rank: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("docs/schema/rank.schema.json")).unwrap(),
    )
    .unwrap();
    let cand = &rank["properties"]["candidates"]["items"];
    assert_eq!(
        required(cand),
        vec!["rank", "parameters", "ssr", "share", "iterations"]
    );
    assert_eq!(
        required(&cand["properties"]["parameters"]["items"]),
        vec!["name", "start", "estimate"]
    );
    let _ = std::fs::remove_dir_all(&d);
}

fn type_matches(v: &serde_json::Value, t: &str) -> bool {
    match t {
        "string" => v.is_string(),
        "number" => v.is_number(),
        "integer" => v.is_u64() || v.is_i64(),
        "boolean" => v.is_boolean(),
        "array" => v.is_array(),
        "object" => v.is_object(),
        "null" => v.is_null(),
        _ => false,
    }
}

#[test]
fn out_writes_a_complete_file_and_no_temporary() {
    let d = scratch("out");
    let data = logistic_file(&d);
    let target = d.join("fit.yaml");
    let mut args = fit_args(data.to_str().unwrap(), "yaml");
    args.extend(["--out", target.to_str().unwrap()]);
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    assert!(out.is_empty());
    let text = std::fs::read_to_string(&target).unwrap();
    assert!(
        text.starts_with("model: ") && text.contains("warnings:"),
        "{text}"
    );
    let mut names: Vec<String> = std::fs::read_dir(&d)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, vec!["fit.yaml", "logistic.csv"]);
    // A directory that does not exist: exit 2, nothing written.
    let bad = d.join("nowhere/fit.yaml");
    let mut args = fit_args(data.to_str().unwrap(), "json");
    args.extend(["--out", bad.to_str().unwrap()]);
    let (code, _, err) = run(&args);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("cannot write"), "{err}");
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn infer_and_rank_json_have_every_field_their_schemas_require() {
    // demo-data/part_cooling.csv (invented) with the cooling model.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let schema = |name: &str| -> serde_json::Value {
        serde_json::from_str(
            &std::fs::read_to_string(root.join(format!("docs/schema/{name}.schema.json"))).unwrap(),
        )
        .unwrap()
    };
    let model = "temp = ambient + delta*exp(-k*minutes)";
    for (command, list) in [("infer", "parameters"), ("rank", "candidates")] {
        let (code, out, err) = run(&[
            command,
            "demo-data/part_cooling.csv",
            "--model",
            model,
            "--format",
            "json",
        ]);
        assert_eq!(code, 0, "{command}: {err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        let s = schema(command);
        for field in required(&s) {
            assert!(v.get(&field).is_some(), "{command}: missing {field}");
        }
        let items = v[list].as_array().unwrap();
        assert!(!items.is_empty(), "{command}: no {list}");
        for item in items {
            for field in required(&s["properties"][list]["items"]) {
                assert!(
                    item.get(&field).is_some(),
                    "{command}: {list} item lacks {field}: {item}"
                );
            }
        }
        println!(
            "{command}: {} {list}, every required field present",
            items.len()
        );
    }
}

/// Checks a document's `run` against docs/schema/run.schema.json: every
/// required field with its type, and the arguments as given.
fn check_run(doc: &serde_json::Value, args: &[&str], searched: bool) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("docs/schema/run.schema.json")).unwrap(),
    )
    .unwrap();
    let run = &doc["run"];
    for field in required(&schema) {
        assert!(run.get(&field).is_some(), "run lacks {field}: {run}");
        let ok = match &schema["properties"][&field]["type"] {
            serde_json::Value::String(t) => type_matches(&run[&field], t),
            serde_json::Value::Array(ts) => ts
                .iter()
                .any(|t| type_matches(&run[&field], t.as_str().unwrap())),
            _ => true,
        };
        assert!(ok, "run.{field} has the wrong type: {run}");
    }
    assert_eq!(run["version"], env!("CARGO_PKG_VERSION"));
    let given: Vec<&str> = run["arguments"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| a.as_str().unwrap())
        .collect();
    assert_eq!(given, args, "the command line as given");
    assert_eq!(run["seed"].is_u64(), searched, "{run}");
    assert_eq!(run["starts"].is_u64(), searched, "{run}");
}

#[test]
fn every_document_records_its_run() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let model = "temp = ambient + delta*exp(-k*minutes)";
    let data = "demo-data/part_cooling.csv";
    let cases: Vec<(Vec<&str>, bool)> = vec![
        (vec!["fit", data, "--model", model, "--format", "json"], true),
        (
            vec![
                "fit",
                data,
                "--model",
                model,
                "--start",
                "ambient=20,delta=150,k=0.1",
                "--format",
                "json",
            ],
            false,
        ),
        (vec!["infer", data, "--model", model, "--format", "json"], false),
        (
            vec!["rank", data, "--model", model, "--seed", "7", "--starts", "12", "--format", "json"],
            true,
        ),
    ];
    for (args, searched) in &cases {
        let (code, out, err) = run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        check_run(&v, args, *searched);
        // YAML carries the same run.
        let mut yaml_args = args.clone();
        *yaml_args.last_mut().unwrap() = "yaml";
        let (code, out, _) = run(&yaml_args);
        assert_eq!(code, 0);
        let y: serde_json::Value = serde_yaml_ng::from_str(&out).unwrap();
        check_run(&y, &yaml_args, *searched);
    }
    let (_, out, _) = run(&cases[3].0);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["run"]["seed"], 7);
    assert_eq!(v["run"]["starts"], 12);

    // The batch document: every field its schema requires, the group's field
    // named after --by, and the run.
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root.join("docs/schema/batch.schema.json")).unwrap(),
    )
    .unwrap();
    let args = [
        "fit",
        "demo-data/creep_specimens.csv",
        "--model",
        "strain = e0 + a*hours^m",
        "--start",
        "e0=0.1,a=0.02,m=0.4",
        "--by",
        "specimen",
        "--format",
        "json",
    ];
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    for field in required(&schema) {
        assert!(v.get(&field).is_some(), "batch: missing {field}");
    }
    assert_eq!(v["by"], "specimen");
    let groups = v["groups"].as_array().unwrap();
    assert_eq!(groups.len(), 3);
    for (g, label) in groups.iter().zip(["1", "2", "3"]) {
        assert_eq!(g["specimen"], label, "{g}");
        for field in required(&schema["properties"]["groups"]["items"]) {
            assert!(g.get(&field).is_some(), "group lacks {field}: {g}");
        }
        assert_eq!(g["n_obs"], 23);
    }
    check_run(&v, &args, false);
}
