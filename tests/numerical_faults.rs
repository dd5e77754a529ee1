//! Numerical faults met while fitting real formulas — overflow at trial points,
//! singular Jacobians, parameters running to infinity, NaN-producing domains —
//! must come back as stop reasons and warnings in the result, never as panics.
//! Every problem is built the way users build them: `Model::new` on a formula,
//! then `Problem::from_columns`.

use foothold::fit::lm::{levenberg_marquardt, LmOptions, LmResult, StopReason};
use foothold::fit::problem::Problem;
use foothold::fit::stats::{summarize, FitSummary};
use foothold::symbolic::Model;

/// Binds `formula` to columns `x`, `y` as a least-squares problem.
fn problem(formula: &str, x: &[f64], y: &[f64]) -> Problem {
    let cols = vec!["x".to_string(), "y".to_string()];
    let m = Model::new(formula, &cols, None).expect("formula binds");
    Problem::from_columns(m, vec![x.to_vec()], y.to_vec()).expect("problem builds")
}

fn fit(p: &Problem, start: &[f64]) -> (LmResult, FitSummary) {
    let r = levenberg_marquardt(p, start, &LmOptions::default());
    let s = summarize(&p.model.params, &r);
    (r, s)
}

fn has_warning(s: &FitSummary, needle: &str) -> bool {
    s.warnings.iter().any(|w| w.contains(needle))
}

/// x = 0, 50, …, 1000 and y = 2·exp(0.005·x): exp(b·x) overflows for b > ~0.71.
fn growth_data() -> (Vec<f64>, Vec<f64>) {
    let x: Vec<f64> = (0..=20).map(|i| 50.0 * i as f64).collect();
    let y = x.iter().map(|x| 2.0 * (0.005 * x).exp()).collect();
    (x, y)
}

#[test]
fn overflow_at_trial_points_is_rejected_and_the_fit_recovers() {
    let (x, y) = growth_data();
    let p = problem("a*exp(b*x)", &x, &y);
    // From b = −0.5 the first Gauss–Newton steps overshoot to b ≳ 0.71, where
    // exp(b·1000) = ∞: those trial points are rejected and the fit recovers.
    let (r, s) = fit(&p, &[1.0, -0.5]);
    assert!(r.rejected_non_finite > 0, "no overflow was provoked");
    assert_eq!(r.stop, StopReason::ZeroResidual);
    assert!((r.params[0] - 2.0).abs() < 1e-9, "{:?}", r.params);
    assert!((r.params[1] - 0.005).abs() < 1e-12, "{:?}", r.params);
    assert!(s.parameters.iter().all(|e| e.estimate.is_finite()));
}

#[test]
fn far_start_near_overflow_is_not_called_an_exact_fit() {
    let (x, y) = growth_data();
    let p = problem("a*exp(b*x)", &x, &y);
    // From b = 0.5 the start's residuals are ~1e217; the fit stalls where b
    // cannot move. Regression (found by fuzzing the fitter): this used to be
    // reported as ZeroResidual, since "exact" was judged against ‖r‖ at the start.
    let (r, s) = fit(&p, &[1.0, 0.5]);
    assert!(r.params.iter().all(|v| v.is_finite()), "{:?}", r.params);
    assert!(r.ssr.is_finite() && r.ssr > 1e5, "ssr {}", r.ssr);
    assert_ne!(r.stop, StopReason::ZeroResidual);
    assert_eq!(r.stop, StopReason::SmallStep);
    assert_eq!(s.stop_reason, "small_step");
}

#[test]
fn overflow_at_the_start_is_a_stop_reason() {
    let (x, y) = growth_data();
    let p = problem("a*exp(b*x)", &x, &y);
    // exp(1·1000) = ∞: nothing can be computed at the start.
    let (r, s) = fit(&p, &[1.0, 1.0]);
    assert_eq!(r.stop, StopReason::NonFiniteStart);
    assert!(!r.converged);
    assert_eq!(r.iterations, 0);
    assert_eq!(s.stop_reason, "non_finite_start");
    assert!(
        has_warning(&s, "model not finite at the starting values"),
        "{:?}",
        s.warnings
    );
    assert!(has_warning(&s, "non-finite"), "{:?}", s.warnings);
}

#[test]
fn product_of_parameters_is_reported_rank_deficient() {
    let x: Vec<f64> = (1..=10).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|x| 6.0 * x + 0.01 * (x * 7.0).sin()).collect();
    let p = problem("a*b*x", &x, &y);
    let (r, s) = fit(&p, &[1.0, 1.0]);
    // Only the product is determined: a·b ≈ 6.
    assert!(
        (r.params[0] * r.params[1] - 6.0).abs() < 1e-2,
        "{:?}",
        r.params
    );
    assert!(
        has_warning(&s, "rank-deficient Jacobian (1 of 2 directions singular)"),
        "{:?}",
        s.warnings
    );
    assert!(has_warning(&s, "cannot separate a, b"), "{:?}", s.warnings);
    assert!(s.parameters.iter().all(|e| e.std_error.is_infinite()));
}

#[test]
fn parameter_without_effect_is_named_in_the_warning() {
    let x: Vec<f64> = (1..=8).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|x| 3.0 * x + 0.05 * (x * 3.0).cos()).collect();
    let p = problem("a*x + 0*c", &x, &y);
    assert_eq!(p.model.params, vec!["a", "c"]);
    let (r, s) = fit(&p, &[1.0, 5.0]);
    assert!(r.converged, "{:?}", r.stop);
    // c keeps its start: nothing moves it.
    assert_eq!(r.params[1], 5.0);
    assert!(
        has_warning(&s, "cannot separate c;"),
        "warning should name c alone: {:?}",
        s.warnings
    );
    assert!(s.parameters[0].std_error.is_finite());
    assert!(s.parameters[1].std_error.is_infinite());
    assert!(has_warning(&s, "standard errors are not finite for: c"));
}

#[test]
fn parameters_running_to_infinity_end_with_a_stop_reason_and_a_warning() {
    // a·x/(b + x) on a straight line through the origin: the best fit is the
    // limit b → ∞ with a/b = 2, which no finite point reaches.
    let x: Vec<f64> = (1..=10).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|x| 2.0 * x).collect();
    let p = problem("a*x/(b+x)", &x, &y);
    let (r, s) = fit(&p, &[10.0, 1.0]);
    assert!(r.params[1] > 1e3, "b should run away: {:?}", r.params);
    assert!(
        (r.params[0] / r.params[1] - 2.0).abs() < 1e-2,
        "{:?}",
        r.params
    );
    assert!(!s.warnings.is_empty());
    assert!(
        has_warning(&s, "nearly non-identifiable")
            || has_warning(&s, "rank-deficient")
            || has_warning(&s, "did not converge"),
        "{:?}",
        s.warnings
    );
}

#[test]
fn sqrt_domain_wall_trial_points_are_rejected() {
    // y = sqrt(10.5 - x) on x = 0..10: any b below 10 makes a row NaN.
    let x: Vec<f64> = (0..=10).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|x| (10.5 - x).sqrt()).collect();
    let p = problem("sqrt(b - x)", &x, &y);
    let (r, _) = fit(&p, &[40.0]);
    assert!(r.rejected_non_finite > 0, "no trial point left the domain");
    assert!(r.converged, "{:?}", r.stop);
    assert!((r.params[0] - 10.5).abs() < 1e-10, "{:?}", r.params);
    // Started outside the domain, the fit does not start at all.
    let (r, s) = fit(&p, &[5.0]);
    assert_eq!(r.stop, StopReason::NonFiniteStart);
    assert!(has_warning(&s, "did not converge"));
}

#[test]
fn log_of_a_negative_argument_is_rejected() {
    let x: Vec<f64> = (1..=12).map(|i| 0.5 * f64::from(i)).collect();
    let y: Vec<f64> = x.iter().map(|x| (0.5 * x).ln()).collect();
    let p = problem("log(a*x)", &x, &y);
    // From a = 20 the Gauss–Newton step a·(1 + mean r) is negative: log of a
    // negative number, NaN, which must be rejected as a trial point.
    let (r, _) = fit(&p, &[20.0]);
    assert!(r.rejected_non_finite > 0, "no negative trial was provoked");
    assert!(r.converged, "{:?}", r.stop);
    assert!((r.params[0] - 0.5).abs() < 1e-12, "{:?}", r.params);
    // A start that makes the argument negative everywhere is refused as such.
    let (r, s) = fit(&p, &[-1.0]);
    assert_eq!(r.stop, StopReason::NonFiniteStart);
    assert!(r.residuals.iter().all(|v| v.is_nan()));
    assert!(has_warning(&s, "model not finite at the starting values"));
}
