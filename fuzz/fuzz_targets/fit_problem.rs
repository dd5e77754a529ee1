//! A fuzzed small formula, a few rows of fuzzed data and a fuzzed start go
//! through `Problem::from_columns`, `levenberg_marquardt` with a small budget
//! and `summarize`. Checks: no panic, bounded work, and outputs consistent
//! with each other — shapes, budgets, the stop reason, the sum of squares
//! never above the start's, the residuals those of the returned parameters,
//! and every non-finite output flagged by a warning.
#![no_main]

use arbitrary::{Result, Unstructured};
use foothold::fit::lm::{levenberg_marquardt, LmOptions, StopReason};
use foothold::fit::problem::Problem;
use foothold::fit::stats::summarize;
use foothold::fit::trust::enorm;
use foothold::fit::Residuals;
use foothold::symbolic::Model;
use foothold_fuzz::{gen_expr, same_bits};
use libfuzzer_sys::fuzz_target;

const MAX_TEXT: usize = 120;
const MAX_ROWS: usize = 9;

/// Special cells the data may hold besides ordinary numbers.
const SPECIAL: [f64; 8] = [
    0.0,
    -0.0,
    f64::NAN,
    f64::INFINITY,
    1e300,
    -1e300,
    1e-300,
    5e-324,
];

fn cell(u: &mut Unstructured) -> Result<f64> {
    let k: u8 = u.arbitrary()?;
    Ok(if k < 16 {
        SPECIAL[usize::from(k) % SPECIAL.len()]
    } else {
        f64::from(u.arbitrary::<i16>()?) / 256.0
    })
}

/// Input layout: a mode byte (odd: generated tree; even: formula text up to a
/// newline), then the row count, the cells column by column, the response and
/// the start; a cell is one byte below 16 for a special value, else a tag byte
/// and an i16 in 1/256 units.
fn check(u: &mut Unstructured) -> Result<()> {
    let cols = vec!["x".to_string(), "t".to_string(), "y".to_string()];
    let text = if u.arbitrary::<bool>()? {
        let np = u.int_in_range(1..=3)?;
        let nv = u.int_in_range(1..=2)?;
        let e = gen_expr(u, np, nv)?;
        let pn: Vec<String> = ["a", "b", "c"][..np]
            .iter()
            .map(|s| s.to_string())
            .collect();
        e.display(&pn, &cols[..nv]).to_string()
    } else {
        // Text up to the first newline; the data follow it.
        let rest = u.peek_bytes(u.len()).unwrap_or(&[]);
        let end = rest.iter().position(|&b| b == b'\n').unwrap_or(rest.len());
        let t = String::from_utf8_lossy(&rest[..end.min(MAX_TEXT)]).into_owned();
        u.bytes((end + 1).min(u.len()))?;
        t
    };
    let Ok(model) = Model::new(&text, &cols, None) else {
        return Ok(());
    };
    let rows = u.int_in_range(0..=MAX_ROWS)?;
    let x: Vec<Vec<f64>> = (0..model.vars.len())
        .map(|_| (0..rows).map(|_| cell(u)).collect::<Result<_>>())
        .collect::<Result<_>>()?;
    let y: Vec<f64> = (0..rows).map(|_| cell(u)).collect::<Result<_>>()?;
    let start: Vec<f64> = (0..model.n_params())
        .map(|_| cell(u))
        .collect::<Result<_>>()?;
    let names = model.params.clone();
    let Ok(problem) = Problem::from_columns(model, x, y) else {
        return Ok(());
    };
    let opts = LmOptions {
        max_iterations: 25,
        max_evaluations: 200,
        polish_steps: 5,
        ..LmOptions::default()
    };
    let (m, np) = (problem.n_obs(), problem.n_params());
    let mut r0 = vec![0.0; m];
    problem.residuals(&start, &mut r0);
    let ssr0: f64 = r0.iter().map(|r| r * r).sum();
    // ‖r‖ itself may overflow for finite residuals near 1e308: that start is not usable either.
    let start_finite = start.iter().all(|v| v.is_finite())
        && r0.iter().all(|v| v.is_finite())
        && enorm(&r0).is_finite();

    let res = levenberg_marquardt(&problem, &start, &opts);

    assert_eq!(res.params.len(), np);
    assert_eq!(res.residuals.len(), m);
    assert_eq!(res.jacobian.shape(), (m, np));
    assert!(
        res.iterations <= opts.max_iterations,
        "{} iterations",
        res.iterations
    );
    // One trial per evaluation check, plus at most one finite-difference repair per parameter.
    assert!(
        res.evaluations <= opts.max_evaluations + np + 1,
        "{} evaluations",
        res.evaluations
    );
    assert_eq!(res.converged, res.stop.is_converged());
    assert_eq!(
        res.stop == StopReason::NonFiniteStart,
        !start_finite,
        "stop {:?} with start finite = {start_finite}",
        res.stop
    );
    if start_finite {
        // Only trial points that lower the sum of squares are taken.
        assert!(
            res.ssr <= ssr0 * (1.0 + 1e-6) || ssr0.is_infinite(),
            "ssr rose from {ssr0} to {} ({:?})",
            res.ssr,
            res.stop
        );
        // The residuals returned are those of the parameters returned.
        let mut r1 = vec![0.0; m];
        problem.residuals(&res.params, &mut r1);
        for (a, b) in r1.iter().zip(&res.residuals) {
            assert!(same_bits(*a, *b), "residual {b} reported, {a} recomputed");
        }
    }

    let s = summarize(&names, &res);
    assert_eq!(s.parameters.len(), np);
    assert_eq!(s.correlation.len(), np);
    assert_eq!(s.n_obs, m);
    assert_eq!(s.dof, m.saturating_sub(np));
    assert_eq!(s.converged, res.converged);
    assert_eq!(s.stop_reason, res.stop.code());
    if !res.converged {
        assert!(s.warnings.iter().any(|w| w.contains("did not converge")));
    }
    let anything_non_finite = !res.ssr.is_finite()
        || res.params.iter().any(|v| !v.is_finite())
        || s.parameters
            .iter()
            .any(|e| !e.std_error.is_finite() || !e.ci_low.is_finite());
    if anything_non_finite {
        assert!(
            !s.warnings.is_empty(),
            "non-finite output without a warning: {s:?}"
        );
    }
    for (e, v) in s.parameters.iter().zip(&res.params) {
        assert!(same_bits(e.estimate, *v));
        assert!(
            e.std_error.is_nan() || e.std_error >= 0.0,
            "negative standard error {e:?}"
        );
    }
    Ok(())
}

fuzz_target!(|data: &[u8]| {
    let mut u = Unstructured::new(data);
    let _ = check(&mut u);
});
