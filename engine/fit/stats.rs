//! The statistics of a converged fit: standard errors, t values, intervals,
//! correlations and identifiability warnings (linearised asymptotic theory,
//! e.g. Bates & Watts 1988, ch. 2).

use super::lm::LmResult;
use serde::Serialize;

/// One parameter's estimate and its uncertainty.
#[derive(Debug, Clone, Serialize)]
pub struct ParamEstimate {
    pub name: String,
    pub estimate: f64,
    pub std_error: f64,
    pub t_value: f64,
    /// Approximate 95% interval (estimate ± t(0.975, dof)·se).
    pub ci_low: f64,
    pub ci_high: f64,
}

/// Everything a fit report states.
#[derive(Debug, Clone, Serialize)]
pub struct FitSummary {
    pub parameters: Vec<ParamEstimate>,
    pub ssr: f64,
    pub residual_sd: f64,
    pub dof: usize,
    pub n_obs: usize,
    pub iterations: usize,
    pub evaluations: usize,
    pub stop_reason: String,
    pub converged: bool,
    pub correlation: Vec<Vec<f64>>,
    pub condition_number: f64,
    pub warnings: Vec<String>,
}

/// Builds the summary for a finished fit.
pub fn summarize(names: &[String], result: &LmResult) -> FitSummary {
    let _ = (names, result);
    todo!("STUB: owned by the local-fitter work")
}
