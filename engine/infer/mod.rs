//! Starting-value inference: model structure matched to data features, with
//! the derivation of every value.
//!
//! [`infer`] runs the strategies of the design notes on one problem, each
//! producing full candidate parameter vectors scored by the residual sum of
//! squares of the original problem (the linear parameters solved exactly where
//! the model is separable):
//! - separable least squares over grids of the nonlinear parameters
//!   ([`separable`], Golub & Pereyra 1973), with features fixing bump centres
//!   and widths and oscillation periods ([`feature_seeds`]) and neutral values
//!   for shape exponents;
//! - linearising transforms and cross-multiplied rational forms ([`linearised`]).
//!
//! The best distinct candidates are ranked; the best is the start, each value
//! with a sentence saying how it was obtained. No randomness: the same problem
//! always gives the same answer.

pub mod draft;
pub mod feature_seeds;
pub mod limit_seeds;
pub mod linearised;
pub mod lsq;
pub mod projection;
pub mod roots;
pub mod scales;
pub mod scan;
pub mod separable;
pub mod symmetry;

use crate::features::{detect, DataFeatures};
use crate::fit::problem::Problem;
use crate::symbolic::roles::roles;
use draft::{rank, Draft};
use projection::Projector;
pub use scales::ScanRange;
use serde::Serialize;
use thiserror::Error;

/// Options of the inference.
#[derive(Debug, Clone)]
pub struct InferOptions {
    /// Most candidates returned.
    pub max_candidates: usize,
    /// Try the linearising transforms and cross-multiplied forms.
    pub linearised: bool,
}

impl Default for InferOptions {
    fn default() -> Self {
        InferOptions {
            max_candidates: 8,
            linearised: true,
        }
    }
}

/// Why no start could be inferred.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum InferError {
    /// The problem has no rows.
    #[error("the data have no usable rows")]
    NoRows,
    /// No strategy found parameters where the model is finite at every row.
    #[error("no starting values were found at which the model is finite on every row")]
    NothingFinite,
    /// Every row has the same response: no shape to infer anything from.
    #[error("the response '{response}' is constant ({value} in all {rows} rows), so the data have no curve to fit; give --start to fit it anyway")]
    ConstantResponse {
        response: String,
        value: f64,
        rows: usize,
    },
}

/// One parameter's starting value and how it was obtained.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamStart {
    /// Parameter name.
    pub name: String,
    /// Starting value.
    pub start: f64,
    /// The derivation, in words.
    pub derivation: String,
}

/// One candidate start.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// Parameters in model order.
    pub params: Vec<f64>,
    /// Residual sum of squares of the original problem there.
    pub ssr: f64,
    /// The strategy that produced it.
    pub strategy: String,
}

/// The result of inference.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Inference {
    /// The best start, in model parameter order.
    pub start: Vec<f64>,
    /// The best start with derivations.
    pub parameters: Vec<ParamStart>,
    /// Distinct candidates, best (least ssr) first.
    pub candidates: Vec<Candidate>,
    /// Each parameter's natural range, for a multistart search around the candidates.
    pub scales: Vec<ScanRange>,
    /// The features found in the data (first predictor against the response).
    pub features: DataFeatures,
    /// Remarks on the run.
    pub notes: Vec<String>,
}

/// Rows above which the search for starts works on a summary of the data:
/// features, grid scans and the short reduced fits read this many rows evenly
/// spaced in the order of the first predictor ([`crate::features::summary_rows`]);
/// the linear parameters are then re-solved, the best start refitted briefly
/// and every candidate scored on all rows. The scans cost O(summary) per grid
/// point instead of O(rows), so inference grows with the rows only through one
/// sort and a few passes over them.
pub const SUMMARY_ROWS: usize = 500;

/// Iterations of the short reduced fit of the best start on all rows.
const FULL_REFINE_ITERATIONS: usize = 12;

/// Infers starting values for every parameter of `problem` from the model and the data.
pub fn infer(problem: &Problem, opts: &InferOptions) -> Result<Inference, InferError> {
    let n = problem.y.len();
    if n == 0 || problem.x.is_empty() {
        return Err(InferError::NoRows);
    }
    let model = &problem.model;
    if let Some(value) = problem.constant_response() {
        return Err(InferError::ConstantResponse {
            response: model.response_text(),
            value,
            rows: n,
        });
    }
    if n > SUMMARY_ROWS {
        return infer_on_summary(problem, opts);
    }
    infer_all_rows(problem, opts)
}

/// [`infer`] for long data: inference on a summary of [`SUMMARY_ROWS`] rows,
/// then the linear parameters re-solved and the candidates re-scored on every
/// row, the best one first given a short reduced fit on every row.
fn infer_on_summary(problem: &Problem, opts: &InferOptions) -> Result<Inference, InferError> {
    let n = problem.y.len();
    let rows = crate::features::summary_rows(&problem.x[0], SUMMARY_ROWS);
    let mut sub = problem.clone();
    sub.y = rows.iter().map(|&i| problem.y[i]).collect();
    sub.x = problem
        .x
        .iter()
        .map(|c| rows.iter().map(|&i| c[i]).collect())
        .collect();
    sub.row_index = rows.iter().map(|&i| problem.row_index[i]).collect();
    let mut inf = infer_all_rows(&sub, opts)?;
    drop(sub);
    inf.features.n_input = n;
    let proj = Projector::new(problem);
    let nl = proj.sep.nonlinear.clone();
    let mut first = true;
    for c in inf.candidates.iter_mut() {
        let mut p = c.params.clone();
        if first && !nl.is_empty() {
            let (q, _) = proj.refine(&p, &nl, FULL_REFINE_ITERATIONS);
            p = q;
        } else {
            proj.project(&mut p);
        }
        first = false;
        let s = proj.ssr_at(&p);
        if s.is_finite() {
            c.params = p;
            c.ssr = s;
        } else {
            let s0 = proj.ssr_at(&c.params);
            c.ssr = if s0.is_finite() { s0 } else { f64::INFINITY };
        }
    }
    let mut order: Vec<(usize, Candidate)> =
        std::mem::take(&mut inf.candidates).into_iter().enumerate().collect();
    order.retain(|(_, c)| c.ssr.is_finite());
    // stable: the refined first candidate stays first on a tie
    order.sort_by(|a, b| a.1.ssr.total_cmp(&b.1.ssr));
    let same_candidate = order.first().is_some_and(|(i, _)| *i == 0);
    inf.candidates = order.into_iter().map(|(_, c)| c).collect();
    let best = inf.candidates.first().ok_or(InferError::NothingFinite)?;
    inf.start = best.params.clone();
    for (k, ps) in inf.parameters.iter_mut().enumerate() {
        let v = inf.start[k];
        if !same_candidate {
            ps.derivation = format!(
                "{}: from {}, the best candidate on all {n} rows",
                ps.name, best.strategy
            );
        } else if (v - ps.start).abs() > 1e-9 * v.abs().max(ps.start.abs()) {
            ps.derivation = if proj.sep.linear.contains(&k) {
                format!(
                    "{}; re-solved on all {n} rows: {}",
                    ps.derivation,
                    draft::num(v)
                )
            } else {
                format!(
                    "{}; a short reduced fit on all {n} rows took it to {}",
                    ps.derivation,
                    draft::num(v)
                )
            };
        }
        ps.start = v;
    }
    inf.notes.retain(|t| !t.starts_with("best start from"));
    inf.notes.push(format!(
        "features, grid scans and short fits read {} of the {n} rows (evenly spaced in the order of {}); the linear parameters and every residual sum of squares use all rows",
        rows.len(),
        problem.model.vars.first().map(String::as_str).unwrap_or("x")
    ));
    inf.notes.push(format!(
        "best start from {} (residual sum of squares {} on all rows)",
        best.strategy,
        draft::num(best.ssr)
    ));
    Ok(inf)
}

/// [`infer`] reading every row.
fn infer_all_rows(problem: &Problem, opts: &InferOptions) -> Result<Inference, InferError> {
    let model = &problem.model;
    let features = detect(&problem.x[0], &problem.y);
    let roles = roles(model);
    let sc = scales::param_scales(problem, &roles);
    let proj = Projector::new(problem);
    let mut drafts: Vec<Draft> = separable::separable_starts(&proj, &sc, &features);
    if opts.linearised {
        let lin = linearised::linearised_starts(&proj, &sc);
        // the best linearised starts also get a short reduced fit
        let nl = proj.sep.nonlinear.clone();
        for d in rank(lin.clone(), 2) {
            let (p, ssr) = proj.refine(&d.p, &nl, 40);
            let mut why = d.why.clone();
            for &q in &nl {
                if (p[q] - d.p[q]).abs() > 1e-9 * p[q].abs() {
                    why[q] = format!(
                        "{}; a short fit of the reduced (variable-projection) problem took it to {}",
                        why[q],
                        draft::num(p[q])
                    );
                }
            }
            drafts.push(Draft {
                p,
                ssr,
                strategy: format!("{} + reduced fit", d.strategy),
                why,
            });
        }
        drafts.extend(lin);
    }
    // one labelling of exchangeable terms; score every candidate on the original problem as given
    let exchange = symmetry::exchangeable(model, &sc);
    for d in drafts.iter_mut() {
        if d.why.len() == d.p.len() {
            symmetry::canonical(&exchange, &model.params, &mut d.p, &mut d.why);
        }
        let s = proj.ssr_at(&d.p);
        d.ssr = if s.is_finite() { s } else { f64::INFINITY };
    }
    drafts.retain(|d| d.ssr.is_finite());
    let ranked = rank(drafts, opts.max_candidates.max(1));
    let best = ranked.first().ok_or(InferError::NothingFinite)?;
    let mut notes = Vec::new();
    if !proj.sep.linear.is_empty() {
        notes.push(format!(
            "linear parameters (solved exactly for any values of the others): {}",
            proj.sep
                .linear
                .iter()
                .map(|&j| model.params[j].as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    notes.push(format!(
        "best start from {} (residual sum of squares {})",
        best.strategy,
        draft::num(best.ssr)
    ));
    let parameters = model
        .params
        .iter()
        .enumerate()
        .map(|(i, name)| {
            let why = best.why.get(i).cloned().unwrap_or_default();
            ParamStart {
                name: name.clone(),
                start: best.p[i],
                derivation: if why.is_empty() {
                    format!("{name}: from {}", best.strategy)
                } else {
                    why
                },
            }
        })
        .collect();
    Ok(Inference {
        start: best.p.clone(),
        parameters,
        candidates: ranked
            .iter()
            .map(|d| Candidate {
                params: d.p.clone(),
                ssr: d.ssr,
                strategy: d.strategy.clone(),
            })
            .collect(),
        scales: sc.iter().map(|s| s.range.clone()).collect(),
        features,
        notes,
    })
}

/// Puts a parameter vector (e.g. a minimum found by the search) into the same
/// canonical labelling of exchangeable terms that inference uses, so that every
/// answer for the same fit reads the same.
pub fn canonical_labelling(problem: &Problem, p: &mut [f64]) {
    let roles = crate::symbolic::roles::roles(&problem.model);
    let sc = scales::param_scales(problem, &roles);
    let exchange = symmetry::exchangeable(&problem.model, &sc);
    let mut why = vec![String::new(); p.len()];
    symmetry::canonical(&exchange, &problem.model.params, p, &mut why);
}

#[cfg(test)]
mod constant_response_tests {
    use super::*;
    use crate::symbolic::Model;

    #[test]
    fn a_constant_response_is_refused_with_its_value_and_row_count() {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new("a*exp(-k*x)", &cols, None).unwrap();
        let pr = Problem::from_columns(m, vec![vec![1.0, 2.0, 3.0, 4.0]], vec![5.0; 4]).unwrap();
        let e = infer(&pr, &InferOptions::default()).unwrap_err();
        assert_eq!(
            e,
            InferError::ConstantResponse {
                response: "y".into(),
                value: 5.0,
                rows: 4
            }
        );
        assert!(e.to_string().contains("give --start"), "{e}");
        // One differing row is enough to try.
        let m = Model::new("a*exp(-k*x)", &cols, None).unwrap();
        let pr = Problem::from_columns(m, vec![vec![1.0, 2.0, 3.0, 4.0]], vec![5.0, 5.0, 5.0, 4.0])
            .unwrap();
        assert!(infer(&pr, &InferOptions::default()).is_ok());
    }
}
