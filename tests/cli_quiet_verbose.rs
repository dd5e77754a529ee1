//! `--quiet`, `--verbose` and the exit codes as README.md states them:
//! quiet prints nothing on stderr but errors; verbose adds the counts, the
//! stop reason and timings on stderr and leaves stdout as it was; exit 0 is
//! success, 1 a fit that ran but did not converge (result still printed),
//! 2 bad input.

mod common;

use common::cli::{run, scratch_file};

const COOLING: &str = "demo-data/part_cooling.csv";
const COOLING_MODEL: &str = "temp = ambient + delta*exp(-k*minutes)";

/// Invented: a straight line through the origin with one empty cell, so
/// that a fit warns about the skipped row.
const WITH_GAP: &str = "x,y\n1,2.1\n,3\n2,3.9\n3,6.2\n4,7.8\n";

#[test]
fn quiet_leaves_only_errors_on_stderr() {
    let p = scratch_file("quiet", WITH_GAP);
    let p = p.to_str().unwrap();
    let args = ["fit", p, "--model", "a*x"];
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    // Without --quiet the skipped row is a warning (so the check below can fail).
    assert!(err.contains("foothold: warning: skipped 1 row"), "{err}");
    let (code, quiet_out, quiet_err) = run(&[&args[..], &["--quiet"]].concat());
    assert_eq!(code, 0);
    assert_eq!(quiet_err, "", "--quiet printed on stderr");
    assert_eq!(quiet_out, out, "--quiet changed the result");
    // An error is still printed under --quiet, once.
    let (code, _, err) = run(&["fit", p, "--model", "a*x", "--x", "nope", "-q"]);
    assert_eq!(code, 2);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("foothold: error: --x names column 'nope'"),
        "{err}"
    );
}

#[test]
fn verbose_adds_counts_stop_reason_and_timings_on_stderr_only() {
    let args = ["fit", COOLING, "--model", COOLING_MODEL];
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    assert_eq!(err, "", "a clean fit prints nothing on stderr");
    let (code, v_out, v_err) = run(&[&args[..], &["--verbose"]].concat());
    assert_eq!(code, 0, "{v_err}");
    assert_eq!(v_out, out, "--verbose changed stdout");
    println!("{v_err}");
    for want in [
        "foothold: read 31 rows x 2 columns",
        "starts tried of at most 64",
        "stopped: ",
        "distinct minima",
        "foothold: stopped: ",
        "iterations",
        "model evaluations",
        " ms",
    ] {
        assert!(v_err.contains(want), "want {want:?} in {v_err}");
    }
    assert!(!v_err.contains("error"), "{v_err}");

    let (code, _, r_err) = run(&[
        "rank",
        COOLING,
        "--model",
        COOLING_MODEL,
        "--starts",
        "20",
        "--verbose",
    ]);
    assert_eq!(code, 0, "{r_err}");
    println!("{r_err}");
    // --starts is a ceiling: the count and the reason the search stopped are said.
    assert!(r_err.contains(" starts tried, "), "{r_err}");
    assert!(
        r_err.contains("stopped: every start tried") || r_err.contains("stopped: settled"),
        "{r_err}"
    );
    assert!(r_err.contains(" ms"), "{r_err}");

    // A batch counts its groups by how they ended.
    let (code, _, b_err) = run(&[
        "fit",
        "demo-data/creep_specimens.csv",
        "--model",
        "strain = e0 + a*hours^m",
        "--by",
        "specimen",
        "--verbose",
    ]);
    assert_eq!(code, 0, "{b_err}");
    println!("{b_err}");
    assert!(
        b_err.contains("batch: 3 groups by specimen: 3 converged, 0 not converged, 0 failed;"),
        "{b_err}"
    );
}

#[test]
fn exit_codes_are_zero_one_and_two_as_documented() {
    // 0: success.
    let (code, out, _) = run(&["fit", COOLING, "--model", COOLING_MODEL, "-q"]);
    assert_eq!(code, 0);
    assert!(out.contains("(converged)"), "{out}");

    // 1: the fit ran but did not converge; the result is still printed.
    // exp(b*x) with b = 1000 overflows at every x >= 1: the fitter cannot start.
    let p = scratch_file("exit1", "x,y\n0,1\n1,2.7\n2,7.4\n3,20.1\n4,54.6\n");
    let p = p.to_str().unwrap();
    let (code, out, err) = run(&["fit", p, "--model", "a*exp(b*x)", "--start", "a=1,b=1000"]);
    assert_eq!(code, 1, "{err}");
    assert!(out.contains("non_finite_start (NOT converged)"), "{out}");
    let errors: Vec<&str> = err
        .lines()
        .filter(|l| l.starts_with("foothold: error: "))
        .collect();
    assert_eq!(errors.len(), 1, "{err}");
    assert!(errors[0].contains("did not converge"), "{err}");
    // Under --quiet only that error line remains.
    let (code, _, err) = run(&[
        "fit",
        p,
        "--model",
        "a*exp(b*x)",
        "--start",
        "a=1,b=1000",
        "--quiet",
    ]);
    assert_eq!(code, 1);
    assert_eq!(err.lines().count(), 1, "{err}");

    // 2: bad input (the bad-input matrix covers the many kinds).
    let (code, out, err) = run(&["fit", p, "--model", "a*exp(b*x"]);
    assert_eq!(code, 2, "{err}");
    assert!(out.is_empty());
    assert!(err.starts_with("foothold: error: unbalanced '('"), "{err}");
}
