//! Local fitting: the Levenberg–Marquardt fitter, the statistics of a fit,
//! and the binding of a model to data as a least-squares problem.

pub mod compare;
pub mod covariance;
pub mod derived;
pub mod domain;
pub mod lm;
pub mod predict;
pub mod problem;
pub mod profile;
pub mod stats;
pub mod svd;
pub mod tdist;
pub mod trust;

use nalgebra::DMatrix;

/// A least-squares problem as the fitter sees it: residuals r(p) and their
/// Jacobian ∂r/∂p. `Sync` so that many starts can be refined in parallel.
pub trait Residuals: Sync {
    /// Number of observations (rows of r).
    fn n_obs(&self) -> usize;
    /// Number of parameters.
    fn n_params(&self) -> usize;
    /// Writes r(p) into `r` (length `n_obs`). Non-finite values are allowed: the fitter rejects such points.
    fn residuals(&self, p: &[f64], r: &mut [f64]);
    /// Writes ∂r/∂p into `j` (`n_obs` × `n_params`).
    fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>);
    /// Typical size of the response (e.g. ‖y‖), against which a fit counts as
    /// exact; `None` when unknown (the fitter then falls back to ‖r‖ at the start).
    fn response_scale(&self) -> Option<f64> {
        None
    }
}
