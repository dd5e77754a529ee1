//! What a new user meets in the first hour, through the real binary: help
//! that says starting values are optional and lists only the formats read;
//! a misspelt library name answered with the nearest names; `~` answered
//! with a hint to write `=`; a formula starting with `-`; data columns named
//! `e` or `pi` used as columns, with a note.

mod common;

use common::cli::{run, scratch_file};

#[test]
fn help_says_starts_are_optional_and_lists_only_readable_formats() {
    let (code, top, _) = run(&["--help"]);
    assert_eq!(code, 0);
    assert!(!top.contains("from given starting values"), "{top}");
    assert!(top.contains("starting values are worked out"), "{top}");
    for command in ["fit", "report"] {
        let (code, out, _) = run(&[command, "--help"]);
        assert_eq!(code, 0);
        assert!(out.contains("Optional starting values"), "{command}: {out}");
        assert!(out.contains("Without --start they are worked out"), "{command}: {out}");
    }
    for command in ["fit", "infer", "rank", "report"] {
        let (_, out, _) = run(&[command, "--help"]);
        assert!(out.contains(".xlsx"), "{command}: {out}");
        assert!(!out.contains(".ods"), "{command} lists .ods, which is refused: {out}");
    }
}

/// Invented: y = 2*x + 0.5 exactly, on x = 1..6.
const LINE: &str = "x,y\n1,2.5\n2,4.5\n3,6.5\n4,8.5\n5,10.5\n6,12.5\n";

#[test]
fn a_misspelt_library_name_gets_the_nearest_names() {
    let data = scratch_file("misspelt", LINE);
    let d = data.to_str().unwrap();
    for (given, want) in [
        ("michaelis_menten", "michaelis-menten"),
        ("Michaelis-Menten", "michaelis-menten"),
        ("logistic3", "logistic-3"),
        ("exp_decay", "exp-decay"),
    ] {
        let (code, out, err) = run(&["fit", d, "--model", given]);
        assert_eq!(code, 2, "{given}: {err}");
        assert!(out.is_empty());
        assert_eq!(
            err,
            format!(
                "foothold: error: '{given}' is not a model in the library (did you mean {want}?); `foothold models` lists them\n"
            )
        );
    }
}

#[test]
fn a_tilde_is_answered_with_a_hint_to_write_equals() {
    let data = scratch_file("tilde", LINE);
    let (code, _, err) = run(&["fit", data.to_str().unwrap(), "--model", "y ~ a*x + b"]);
    assert_eq!(code, 2, "{err}");
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 3, "error, formula, caret: {err}");
    assert!(lines[0].contains("unexpected character '~'"), "{err}");
    assert!(lines[0].contains("write '=', as in 'y = a*exp(-k*x)'"), "{err}");
    assert!(lines[0].contains("at character 3"), "{err}");
    assert_eq!(lines[2], "    ^");
}

#[test]
fn a_formula_may_start_with_a_minus() {
    let data = scratch_file("minus", LINE);
    for args in [
        vec!["fit", data.to_str().unwrap(), "--model", "-a*x + b", "--format", "csv"],
        vec!["fit", data.to_str().unwrap(), "-m", "-a*x + b", "--format", "csv"],
    ] {
        let (code, out, err) = run(&args);
        assert_eq!(code, 0, "{args:?}: {err}");
        let est = |name: &str| -> f64 {
            let line = out.lines().find(|l| l.starts_with(&format!("{name},"))).unwrap();
            line.split(',').nth(1).unwrap().parse().unwrap()
        };
        assert!((est("a") + 2.0).abs() < 1e-9, "{out}");
        assert!((est("b") - 0.5).abs() < 1e-9, "{out}");
    }
}

#[test]
fn columns_named_e_and_pi_are_columns_with_a_note() {
    // Invented: e = 3*pi + 1 exactly (the columns e and pi, not the constants).
    let mut text = String::from("pi,e\n");
    for i in 1..=6 {
        text += &format!("{i},{}\n", 3 * i + 1);
    }
    let data = scratch_file("constants", &text);
    let d = data.to_str().unwrap();
    let (code, out, err) = run(&["fit", d, "--model", "e = a*pi + b", "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["response"], "e");
    let est = |i: usize| v["parameters"][i]["estimate"].as_f64().unwrap();
    assert_eq!(v["parameters"][0]["name"], "a");
    assert!((est(0) - 3.0).abs() < 1e-9 && (est(1) - 1.0).abs() < 1e-9, "{out}");
    let notes: Vec<&str> = err.lines().collect();
    assert_eq!(notes.len(), 2, "one note per constant hidden: {err}");
    assert!(
        notes[0].starts_with("foothold: warning: 'pi' in the formula is the data column 'pi', not the constant pi = 3.141593"),
        "{err}"
    );
    assert!(notes[0].ends_with("write 4*atan(1) for the constant"), "{err}");
    assert!(notes[1].contains("'e' in the formula is the data column 'e'"), "{err}");
    assert!(notes[1].ends_with("write exp(1) for the constant"), "{err}");
    let warnings = v["warnings"].as_array().unwrap();
    assert_eq!(warnings.len(), 2, "the notes are in the document: {out}");
    // --y e with a formula that has no left-hand side.
    let (code, _, err) = run(&["fit", d, "--model", "a*pi + b", "--y", "e"]);
    assert_eq!(code, 0, "{err}");
    // Where no column has the name, pi is the constant: y = 2*x + 0.5 = a*pi*x + b.
    let data = scratch_file("constant", LINE);
    let (code, out, err) = run(&[
        "fit",
        data.to_str().unwrap(),
        "--model",
        "a*pi*x + b",
        "--format",
        "csv",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(err, "", "no note without such a column");
    let a: f64 = out.lines().nth(1).unwrap().split(',').nth(1).unwrap().parse().unwrap();
    assert!((a - 2.0 / std::f64::consts::PI).abs() < 1e-9, "{out}");
}
