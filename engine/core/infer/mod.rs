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
