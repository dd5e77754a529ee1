//! Starts from linearising transforms of the response (design note §2) and
//! from cross-multiplied rational forms (§3): each form T(y) = offset +
//! Σ φ_k·basis_k is fitted by weighted linear least squares, any parameters
//! left inside the bases scanned on their grids, and the coefficients mapped
//! back to the parameters.
//!
//! Weights: a transformed response T(y) has variance ≈ T′(y)²·σ² (the delta
//! method), so each row is weighted by 1/|∂R/∂y| where R = T(y) − offset − Σ φ·basis
//! is the row's equation; for log this is |y|, for 1/y it is y². When the
//! bases contain y (cross-multiplied forms) the weights depend on the
//! coefficients and are iterated (Sanathanan & Koerner 1963), which removes the
//! bias of the plain cross-multiplied fit.

use super::draft::Draft;
use super::lsq::lstsq;
use super::projection::Projector;
use super::scales::{global_grid, ParamScale};
use crate::symbolic::diff::diff_var;
use crate::symbolic::simplify::simplify;
use crate::symbolic::transforms::{linearise, LinearisedForm};
use crate::symbolic::Tape;

/// Most parameters a form may leave inside its bases (they are scanned jointly).
const MAX_REMAINING: usize = 2;

/// Candidate starts from every usable linearised form, scored on the original problem.
pub fn linearised_starts(proj: &Projector, scales: &[ParamScale]) -> Vec<Draft> {
    let model = &proj.problem.model;
    let mut out = Vec::new();
    for form in linearise(model) {
        if form.transform == "identity" {
            continue; // the separable scan covers it
        }
        if form.remaining_nonlinear.len() > MAX_REMAINING {
            continue;
        }
        if form
            .back_map
            .unresolved
            .iter()
            .any(|&q| scales.get(q).and_then(|s| s.neutral.as_ref()).is_none())
        {
            continue;
        }
        if let Some(d) = fit_form(proj, scales, &form) {
            out.push(d);
        }
    }
    out
}

/// The compiled pieces of one form and the response appended as the last column.
struct Compiled {
    /// [target, offset, basis..., ∂target/∂y, ∂offset/∂y, ∂basis/∂y...]
    tape: Tape,
    n_coef: usize,
    y_in_bases: bool,
}

fn compile(form: &LinearisedForm, yvar: usize) -> Compiled {
    let mut outs = vec![form.target.clone(), form.offset.clone()];
    outs.extend(form.coefficients.iter().map(|c| c.basis.clone()));
    let vals = outs.clone();
    for e in &vals {
        outs.push(simplify(&diff_var(e, yvar)));
    }
    let y_in_bases =
        form.coefficients.iter().any(|c| c.basis.has_var(yvar)) || form.offset.has_var(yvar);
    Compiled {
        tape: Tape::compile(&outs),
        n_coef: form.coefficients.len(),
        y_in_bases,
    }
}

/// Weighted fit of the form's coefficients at the given remaining-parameter values.
fn solve_coefficients(
    c: &Compiled,
    p: &[f64],
    cols: &[&[f64]],
    n: usize,
    min_rows: usize,
) -> Option<Vec<f64>> {
    let m = c.n_coef;
    let vals = c.tape.eval_columns(p, cols, n);
    let (v, d) = vals.split_at(m + 2);
    let mut phi = vec![0.0; m];
    let passes = if c.y_in_bases { 4 } else { 1 };
    let mut ok = false;
    for _ in 0..passes {
        let mut a = Vec::with_capacity(n * m);
        let mut rows = Vec::new();
        let mut ws = Vec::new();
        for i in 0..n {
            let mut dr = d[0][i] - d[1][i];
            for k in 0..m {
                dr -= phi[k] * d[k + 2][i];
            }
            let w = 1.0 / dr.abs();
            let finite = w.is_finite()
                && v[0][i].is_finite()
                && v[1][i].is_finite()
                && (0..m).all(|k| v[k + 2][i].is_finite());
            if finite {
                rows.push(i);
                ws.push(w);
            }
        }
        if rows.len() < min_rows {
            return None;
        }
        let nr = rows.len();
        for k in 0..m {
            for (&i, w) in rows.iter().zip(&ws) {
                a.push(w * v[k + 2][i]);
            }
        }
        let b: Vec<f64> = rows
            .iter()
            .zip(&ws)
            .map(|(&i, w)| w * (v[0][i] - v[1][i]))
            .collect();
        let s = lstsq(&a, nr, m, &b)?;
        phi = s.coef;
        ok = true;
    }
    ok.then_some(phi)
}

fn fit_form(proj: &Projector, scales: &[ParamScale], form: &LinearisedForm) -> Option<Draft> {
    let pr = proj.problem;
    let model = &pr.model;
    let np = model.n_params();
    let n = pr.y.len();
    let yvar = model.vars.len();
    let compiled = compile(form, yvar);
    let mut cols: Vec<&[f64]> = pr.columns();
    cols.push(&pr.y);
    let min_rows = (np + 1).max(n * 3 / 5).min(n);
    // grids of the remaining parameters
    let y_ext =
        pr.y.iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(0.0f64, |a, v| if v.abs() > a.abs() { v } else { a });
    let per_dim = if form.remaining_nonlinear.len() == 1 {
        80
    } else {
        24
    };
    let grids: Vec<Vec<f64>> = form
        .remaining_nonlinear
        .iter()
        .map(|&q| {
            if Some(q) == form.plateau && y_ext != 0.0 {
                // a plateau lies beyond the most extreme response
                (0..per_dim)
                    .map(|i| y_ext * (1.0 + 1e-3 * 1e4f64.powf(i as f64 / (per_dim - 1) as f64)))
                    .collect()
            } else {
                scales
                    .get(q)
                    .map(|s| global_grid(s, per_dim))
                    .unwrap_or_default()
            }
        })
        .collect();
    let total: usize = grids.iter().map(|g| g.len()).product();
    let mut best: Option<(Vec<f64>, f64)> = None;
    let mut known = vec![f64::NAN; np];
    for &q in &form.back_map.unresolved {
        known[q] = scales[q]
            .neutral
            .as_ref()
            .map(|v| v.value)
            .unwrap_or(f64::NAN);
    }
    for flat in 0..total.max(1) {
        let mut r = flat;
        for (k, &q) in form.remaining_nonlinear.iter().enumerate().rev() {
            let g = &grids[k];
            if g.is_empty() {
                return None;
            }
            known[q] = g[r % g.len()];
            r /= g.len();
        }
        let Some(phi) = solve_coefficients(&compiled, &known, &cols, n, min_rows) else {
            continue;
        };
        let mut p = form.back_map.recover(&phi, &known);
        if !p.iter().all(|v| v.is_finite()) {
            continue;
        }
        let ssr = proj.project(&mut p);
        if ssr.is_finite() && best.as_ref().map_or(true, |b| ssr < b.1) {
            best = Some((p, ssr));
        }
    }
    let (p, ssr) = best?;
    let mut why = vec![String::new(); np];
    let tname = describe_transform(form);
    let weighting = if compiled.y_in_bases {
        "weights iterated as 1/|denominator| (Sanathanan–Koerner)"
    } else {
        "rows weighted by the delta method"
    };
    for step in &form.back_map.steps {
        if let Some(w) = why.get_mut(step.param) {
            *w = format!(
                "from the linear least-squares fit of {tname} ({weighting}): coefficient {} mapped back",
                step.from_coefficient + 1
            );
        }
    }
    for &q in &form.remaining_nonlinear {
        why[q] = if Some(q) == form.plateau {
            format!("plateau of the {tname}: scanned beyond the most extreme response; the value giving the least residual sum of squares")
        } else {
            format!("left inside the bases of the {tname}: scanned, the value giving the least residual sum of squares")
        };
    }
    for &q in &form.back_map.unresolved {
        if let Some(nv) = &scales[q].neutral {
            why[q] = nv.sentence.replace("{param}", &model.params[q]);
        }
    }
    Some(Draft {
        p,
        ssr,
        strategy: format!("linearised ({})", form.transform),
        why,
    })
}

/// Words for a transform in derivation sentences.
pub fn describe_transform(form: &LinearisedForm) -> String {
    match form.transform.as_str() {
        "log" => "log y".into(),
        "log_negated" => "log(−y)".into(),
        "reciprocal" => "1/y".into(),
        "logit" => "the logit transform against the plateau".into(),
        "cross_multiplied" => "the cross-multiplied rational form y·Q − P = 0".into(),
        other => format!("the {other} transform"),
    }
}
