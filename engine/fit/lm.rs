//! Levenberg–Marquardt with MINPACK-style scaling and trust region (Moré 1978).

use super::Residuals;
use nalgebra::DMatrix;
use serde::Serialize;

/// Tolerances and budgets for one local fit.
#[derive(Debug, Clone)]
pub struct LmOptions {
    /// Relative reduction of the sum of squares below which the fit stops.
    pub ftol: f64,
    /// Relative step size below which the fit stops.
    pub xtol: f64,
    /// Gradient (cosine) tolerance.
    pub gtol: f64,
    /// Most iterations (Jacobian evaluations).
    pub max_iterations: usize,
}

impl Default for LmOptions {
    fn default() -> Self {
        LmOptions { ftol: 1e-15, xtol: 1e-15, gtol: 1e-15, max_iterations: 1000 }
    }
}

/// Why the fitter stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StopReason {
    /// Sum of squares no longer decreasing (ftol).
    SmallReduction,
    /// Step no longer changing the parameters (xtol).
    SmallStep,
    /// Residuals orthogonal to the Jacobian's columns (gtol).
    SmallGradient,
    /// Exact fit: residuals zero.
    ZeroResidual,
    /// Iteration budget used up.
    MaxIterations,
    /// Model not finite at the starting point.
    NonFiniteStart,
}

/// The end point of one local fit.
#[derive(Debug, Clone)]
pub struct LmResult {
    pub params: Vec<f64>,
    pub ssr: f64,
    pub residuals: Vec<f64>,
    /// ∂r/∂p at `params`.
    pub jacobian: DMatrix<f64>,
    pub iterations: usize,
    pub evaluations: usize,
    pub stop: StopReason,
    /// True for the tolerance stops and an exact fit.
    pub converged: bool,
}

/// Minimises ½‖r(p)‖² from `start`.
pub fn levenberg_marquardt(problem: &dyn Residuals, start: &[f64], opts: &LmOptions) -> LmResult {
    let _ = (problem, start, opts);
    todo!("STUB: owned by the local-fitter work")
}
