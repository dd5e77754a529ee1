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

#[test]
fn synthetic_suite_from_inferred_starts() {
    let mut r = Rng::new(20261203);
    let (mut total, mut ok) = (0usize, 0usize);
    let mut failures = Vec::new();
    for f in forms() {
        let mut form_ok = 0;
        for i in 0..PER_FORM {
            let c = draw_case(&f, &mut r);
            let (pr, truth) = problem_of(&c);
            let opts = LmOptions::default();
            let from_truth = levenberg_marquardt(&pr, &truth, &opts);
            let y2: f64 = pr.y.iter().map(|v| v * v).sum();
            let success = match infer(&pr, &InferOptions::default()) {
                Ok(inf) => {
                    let fit = levenberg_marquardt(&pr, &inf.start, &opts);
                    let good = fit.ssr <= from_truth.ssr * (1.0 + 1e-6) + 1e-14 * y2;
                    if !good && std::env::var("FOOTHOLD_DEBUG").is_ok() {
                        for c in &inf.candidates {
                            println!("  cand {:.6e} {} {:?}", c.ssr, c.strategy, c.params);
                        }
                        println!("  x {:?}", pr.x[0]);
                    }
                    if !good {
                        failures.push(format!(
                            "{} #{i}: ssr {:.6e} vs truth {:.6e}; start {:?} ({}); truth {:?}",
                            f.name,
                            fit.ssr,
                            from_truth.ssr,
                            inf.start,
                            inf.candidates
                                .first()
                                .map(|c| c.strategy.as_str())
                                .unwrap_or(""),
                            truth
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
        println!("{:<45} {:>3}/{}", f.name, form_ok, PER_FORM);
    }
    for m in &failures {
        println!("FAILED {m}");
    }
    let rate = ok as f64 / total as f64;
    println!("synthetic suite from inferred starts: {ok}/{total} = {rate:.3} (required 0.95)");
    assert!(total >= 240, "only {total} cases");
    assert!(rate >= 0.95, "success rate {rate:.3} below 0.95");
}

#[test]
fn synthetic_suite_through_inference_and_search() {
    // The same seed as above: the same 500 cases.
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
            // Exactly what `foothold fit` does when no --start is given.
            let success = match starts_and_counts(&pr) {
                Ok((start, (tried, _))) => {
                    fits += tried;
                    let fit = levenberg_marquardt(&pr, &start, &opts);
                    let good = fit.ssr <= from_truth.ssr * (1.0 + 1e-6) + 1e-14 * y2;
                    if !good && std::env::var("FOOTHOLD_DEBUG").is_ok() {
                        let (inf, out) =
                            foothold::auto_start::infer_and_search(&pr, &Default::default())
                                .unwrap();
                        println!("  inferred {:?} scales {:?}", inf.start, inf.scales);
                        for m in &out.minima {
                            println!(
                                "  min ssr {:.6e} div {:?} share {} {:?}",
                                m.ssr, m.divergent, m.share, m.params
                            );
                        }
                    }
                    if !good {
                        failures.push(format!(
                            "{} #{i}: ssr {:.6e} vs truth {:.6e}; start {:?}; truth {:?}",
                            f.name, fit.ssr, from_truth.ssr, start, truth
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
        "synthetic suite through inference + search: {ok}/{total} = {rate:.3} (required 0.99), {:.1} local fits per case",
        fits as f64 / total as f64
    );
    assert!(total >= 240, "only {total} cases");
    assert!(rate >= 0.99, "success rate {rate:.3} below 0.99");
}
