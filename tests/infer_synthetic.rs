//! Acceptance of starting-value inference on the seeded synthetic suite (model
//! forms of the trade with random true parameters over decades, and noise): the
//! inferred start must lead the local fitter to the optimum found from the true
//! parameters (ssr from the inferred start ≤ ssr from the truth·(1 + 1e−6) + a
//! tiny absolute amount) in at least 95% of the cases. Through the whole path of
//! `fit` with no starts (inference, then the multistart search, then the local
//! fit from the best minimum) the target is 99% (issue "multistart search").

mod common;

use common::synthetic::{draw_case, forms, Case, Rng};
use foothold::auto_start::starts_and_counts;
use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::infer::{infer, InferOptions};
use foothold::symbolic::Model;

/// Cases drawn per form.
const PER_FORM: usize = 20;

/// Binds a case as a problem; returns it with the true parameters in model order.
fn problem_of(c: &Case) -> (Problem, Vec<f64>) {
    let mut cols: Vec<String> = c.x.iter().map(|(n, _)| n.clone()).collect();
    cols.push("y".into());
    let m = Model::new(c.formula, &cols, Some("y")).expect("model");
    let truth: Vec<f64> = m
        .params
        .iter()
        .map(|n| c.truth.iter().find(|(t, _)| t == n).expect("truth").1)
        .collect();
    let x: Vec<Vec<f64>> = m
        .vars
        .iter()
        .map(|v| c.x.iter().find(|(n, _)| n == v).expect("column").1.clone())
        .collect();
    (
        Problem::from_columns(m, x, c.y.clone()).expect("problem"),
        truth,
    )
}

/// How one case's start came about: the start, a note for failures, and the
/// local fits spent finding it.
struct Found {
    start: Vec<f64>,
    note: String,
    fits: usize,
}

/// Runs the suite: for each case, `start_of` gives a start (or says why
/// not), one local fit runs from it, and the case succeeds when that fit's
/// sum of squares is no worse than the fit from the true parameters
/// (·(1 + 1e−6), plus 1e−14·Σy² absolute). Prints per-form counts and the
/// failures; asserts a success rate of at least `required`.
fn run_suite(label: &str, required: f64, start_of: impl Fn(&Problem) -> Result<Found, String>) {
    // The same seed in every run: the same 500 cases.
    let mut r = Rng::new(20261203);
    let (mut total, mut ok, mut fits) = (0usize, 0usize, 0usize);
    let mut failures = Vec::new();
    // FOOTHOLD_FORM=<part of a form's name> runs only those forms (debugging).
    let only = std::env::var("FOOTHOLD_FORM").ok();
    for f in forms() {
        let mut form_ok = 0;
        let skip = only.as_deref().is_some_and(|o| !f.name.contains(o));
        for i in 0..PER_FORM {
            let c = draw_case(&f, &mut r);
            if skip {
                continue;
            }
            let (pr, truth) = problem_of(&c);
            let opts = LmOptions::default();
            let from_truth = levenberg_marquardt(&pr, &truth, &opts);
            let y2: f64 = pr.y.iter().map(|v| v * v).sum();
            let success = match start_of(&pr) {
                Ok(found) => {
                    fits += found.fits;
                    let fit = levenberg_marquardt(&pr, &found.start, &opts);
                    let good = fit.ssr <= from_truth.ssr * (1.0 + 1e-6) + 1e-14 * y2;
                    if !good {
                        failures.push(format!(
                            "{} #{i}: ssr {:.6e} vs truth {:.6e}; start {:?} ({}); truth {:?}",
                            f.name, fit.ssr, from_truth.ssr, found.start, found.note, truth
                        ));
                    }
                    good
                }
                Err(e) => {
                    failures.push(format!("{} #{i}: {e}", f.name));
                    false
                }
            };
            total += 1;
            if success {
                ok += 1;
                form_ok += 1;
            }
        }
        if !skip {
            println!("{:<45} {:>3}/{}", f.name, form_ok, PER_FORM);
        }
    }
    for m in &failures {
        println!("FAILED {m}");
    }
    let rate = ok as f64 / total as f64;
    println!(
        "synthetic suite {label}: {ok}/{total} = {rate:.3} (required {required}), {:.1} local fits per case",
        fits as f64 / total as f64
    );
    assert!(total >= 240, "only {total} cases");
    assert!(rate >= required, "success rate {rate:.3} below {required}");
}

#[test]
fn synthetic_suite_from_inferred_starts() {
    run_suite("from inferred starts", 0.95, |pr| {
        let inf = infer(pr, &InferOptions::default()).map_err(|e| e.to_string())?;
        if std::env::var("FOOTHOLD_DEBUG").is_ok() {
            for c in &inf.candidates {
                println!("  cand {:.6e} {} {:?}", c.ssr, c.strategy, c.params);
            }
        }
        let note = inf
            .candidates
            .first()
            .map(|c| c.strategy.clone())
            .unwrap_or_default();
        Ok(Found {
            start: inf.start,
            note,
            fits: 0,
        })
    });
}

#[test]
fn synthetic_suite_through_inference_and_search() {
    // Exactly what `foothold fit` does when no --start is given (64 starts).
    run_suite("through inference + search", 0.99, |pr| {
        let (start, (tried, minima)) = starts_and_counts(pr).map_err(|e| e.to_string())?;
        Ok(Found {
            start,
            note: format!("{minima} minima"),
            fits: tried,
        })
    });
}
