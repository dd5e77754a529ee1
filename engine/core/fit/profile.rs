//! Profile-t intervals for single parameters (Bates & Watts 1988, Nonlinear
//! Regression Analysis and Its Applications, §6.1): for parameter θ_k held
//! at a value θ, the other parameters are refitted, giving the conditional
//! minimum S(θ); the profile t is
//!
//!   τ(θ) = sign(θ − θ̂_k)·√(S(θ) − S(θ̂))/s,   s² = S(θ̂)/(n − p),
//!
//! and the interval at level 1−α is the set where |τ(θ)| ≤ t(n−p, 1−α/2).
//! For a model linear in its parameters τ is linear in θ and the interval is
//! exactly θ̂_k ± t·se_k; curvature shows as an asymmetric interval.
//!
//! Holding a parameter fixed is done by a wrapper problem ([`Fixed`]) with
//! one parameter fewer, fitted by the same Levenberg–Marquardt driver.
//! Stepping (our choice, after Bates & Watts' algorithm): from θ̂_k outwards in
//! steps that start at se_k/4 and are rescaled to aim at Δτ ≈ 0.25 per step
//! (factor clamped to [½, 4]), each refit starting from the previous
//! conditional optimum; tracing stops when |τ| ≥ t + 0.5, after
//! `max_steps`, beyond [`MAX_REACH`] standard errors, or when a refit fails.
//! The interval end is then refined by the Illinois false-position method
//! on |τ(θ)| − t = 0 within the bracketing
//! steps, stopping when the bracket is below 1e-10·(|θ̂_k| + se_k) wide or
//! after 100 refits. A side where |τ| never reaches t is reported open.
//!
//! Profiles of derived quantities g(θ) would need a fit constrained to
//! g(θ) = c; that is not implemented here (see the issue notes).

use super::lm::{levenberg_marquardt, LmOptions, LmResult};
use super::stats::FitSummary;
use super::tdist::t_quantile;
use super::Residuals;
use nalgebra::DMatrix;
use serde::Serialize;
use thiserror::Error;

/// Farthest a profile steps from the estimate, in standard errors: a side
/// still below t there is reported open (our bound; beyond it the linearised
/// scale says nothing and the values are useless for a plot).
pub const MAX_REACH: f64 = 1000.0;

/// Why a parameter cannot be profiled.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ProfileError {
    #[error("no parameter number {index} (the model has {count})")]
    NoSuchParameter { index: usize, count: usize },
    #[error("the fit has no residual degrees of freedom: profile intervals are undefined")]
    NoDof,
    #[error("parameter '{name}' has no finite positive standard error ({se}); its profile has no scale to step by")]
    NoScale { name: String, se: f64 },
    #[error("the fit's sum of squares is not finite or zero ({0}); profile t is undefined")]
    BadSsr(f64),
}

/// Settings of a profile.
#[derive(Debug, Clone)]
pub struct ProfileOptions {
    /// Confidence level, e.g. 0.95.
    pub level: f64,
    /// Most steps on each side.
    pub max_steps: usize,
    /// Fitter settings for the conditional fits.
    pub lm: LmOptions,
}

impl Default for ProfileOptions {
    fn default() -> Self {
        ProfileOptions {
            level: 0.95,
            max_steps: 60,
            lm: LmOptions::default(),
        }
    }
}

/// One point of the profile trace.
#[derive(Debug, Clone, Serialize)]
pub struct ProfilePoint {
    /// The value θ at which the parameter was held.
    pub value: f64,
    /// τ(θ).
    pub tau: f64,
    /// Conditional minimum S(θ).
    pub ssr: f64,
}

/// The profile of one parameter and its interval.
#[derive(Debug, Clone, Serialize)]
pub struct ParamProfile {
    pub name: String,
    pub estimate: f64,
    pub std_error: f64,
    pub level: f64,
    /// t(n−p, 1−α/2): the |τ| that bounds the interval.
    pub t_crit: f64,
    /// Lower end; `None` when τ never fell to −t_crit (open below).
    pub lower: Option<f64>,
    /// Upper end; `None` when τ never rose to t_crit (open above).
    pub upper: Option<f64>,
    /// Why the lower side is open: `not_reached` (steps or reach used up while |τ| < t)
    /// or `refit_failed` (a conditional fit did not converge or was not finite).
    pub lower_open: Option<&'static str>,
    pub upper_open: Option<&'static str>,
    /// The trace, sorted by value, including the estimate (τ = 0).
    pub trace: Vec<ProfilePoint>,
    /// A conditional fit found a sum of squares below the fit's: the fit was
    /// not at the least-squares minimum (that sum of squares).
    pub lower_minimum_found: Option<f64>,
}

/// A problem with parameter `k` held at `value`: the remaining parameters in order.
pub struct Fixed<'a> {
    pub inner: &'a dyn Residuals,
    pub k: usize,
    pub value: f64,
}

impl Fixed<'_> {
    /// The full parameter vector from the free ones.
    pub fn full(&self, q: &[f64]) -> Vec<f64> {
        let mut p = Vec::with_capacity(q.len() + 1);
        p.extend_from_slice(&q[..self.k]);
        p.push(self.value);
        p.extend_from_slice(&q[self.k..]);
        p
    }
}

impl Residuals for Fixed<'_> {
    fn n_obs(&self) -> usize {
        self.inner.n_obs()
    }
    fn n_params(&self) -> usize {
        self.inner.n_params() - 1
    }
    fn residuals(&self, q: &[f64], r: &mut [f64]) {
        self.inner.residuals(&self.full(q), r);
    }
    fn jacobian(&self, q: &[f64], j: &mut DMatrix<f64>) {
        let mut jf = DMatrix::zeros(self.inner.n_obs(), self.inner.n_params());
        self.inner.jacobian(&self.full(q), &mut jf);
        *j = jf.remove_column(self.k);
    }
    fn response_scale(&self) -> Option<f64> {
        self.inner.response_scale()
    }
}

/// A conditional optimum: free parameters and S(θ); `None` when the refit failed.
fn conditional(
    problem: &dyn Residuals,
    k: usize,
    value: f64,
    start: &[f64],
    lm: &LmOptions,
) -> Option<(Vec<f64>, f64)> {
    let fixed = Fixed {
        inner: problem,
        k,
        value,
    };
    if start.is_empty() {
        let mut r = vec![0.0; problem.n_obs()];
        problem.residuals(&[value], &mut r);
        let s: f64 = r.iter().map(|v| v * v).sum();
        return s.is_finite().then_some((Vec::new(), s));
    }
    let res: LmResult = levenberg_marquardt(&fixed, start, lm);
    (res.converged && res.ssr.is_finite()).then_some((res.params, res.ssr))
}

/// Profiles parameter `k` of a finished fit (`fit` is the fitter's result on
/// `problem`, `summary` its statistics).
pub fn profile_parameter(
    problem: &dyn Residuals,
    fit: &LmResult,
    summary: &FitSummary,
    k: usize,
    opts: &ProfileOptions,
) -> Result<ParamProfile, ProfileError> {
    let p = fit.params.len();
    if k >= p {
        return Err(ProfileError::NoSuchParameter { index: k, count: p });
    }
    if summary.dof == 0 {
        return Err(ProfileError::NoDof);
    }
    let s_hat = fit.ssr;
    if !(s_hat.is_finite() && s_hat > 0.0) {
        return Err(ProfileError::BadSsr(s_hat));
    }
    let est = &summary.parameters[k];
    let se = est.std_error;
    if !(se.is_finite() && se > 0.0) {
        return Err(ProfileError::NoScale {
            name: est.name.clone(),
            se,
        });
    }
    let s = (s_hat / summary.dof as f64).sqrt();
    let theta_hat = fit.params[k];
    let t_crit = t_quantile(0.5 + opts.level / 2.0, summary.dof as f64);
    let tau_stop = t_crit + 0.5;
    let mut lowest = s_hat;
    let free0: Vec<f64> = (0..p).filter(|&i| i != k).map(|i| fit.params[i]).collect();
    let tau_of =
        |v: f64, ssr: f64| -> f64 { (v - theta_hat).signum() * (ssr - s_hat).max(0.0).sqrt() / s };

    let mut trace = vec![ProfilePoint {
        value: theta_hat,
        tau: 0.0,
        ssr: s_hat,
    }];
    let mut bounds = [None, None];
    let mut open = [None, None];
    for (side, dir) in [(0usize, -1.0f64), (1, 1.0)] {
        // Points on this side: (value, |τ|, free parameters).
        let mut pts: Vec<(f64, f64, Vec<f64>)> = vec![(theta_hat, 0.0, free0.clone())];
        let mut step = se / 4.0;
        let mut failed = false;
        for _ in 0..opts.max_steps {
            let (v0, a0, q0) = pts.last().cloned().unwrap_or_default();
            let v = v0 + dir * step;
            if !v.is_finite() || (v - theta_hat).abs() > MAX_REACH * se {
                break;
            }
            let Some((q, ssr)) = conditional(problem, k, v, &q0, &opts.lm) else {
                failed = true;
                break;
            };
            lowest = lowest.min(ssr);
            let a = tau_of(v, ssr).abs();
            trace.push(ProfilePoint {
                value: v,
                tau: dir * a,
                ssr,
            });
            pts.push((v, a, q));
            if a >= tau_stop {
                break;
            }
            let gain = a - a0;
            let factor = if gain > 0.0 {
                (0.25 / gain).clamp(0.5, 4.0)
            } else {
                4.0
            };
            step *= factor;
        }
        // First crossing of |τ| = t_crit, refined between its bracketing points.
        match pts.iter().position(|pt| pt.1 >= t_crit) {
            Some(i) => {
                let (lo, hi) = (&pts[i - 1], &pts[i]);
                bounds[side] = Some(refine(
                    problem,
                    k,
                    lo,
                    hi,
                    t_crit,
                    &tau_of,
                    opts,
                    se + theta_hat.abs(),
                    &mut lowest,
                ));
            }
            None => {
                open[side] = Some(if failed {
                    "refit_failed"
                } else {
                    "not_reached"
                })
            }
        }
    }
    trace.sort_by(|a, b| a.value.total_cmp(&b.value));
    let lower_minimum_found = (lowest < s_hat * (1.0 - 1e-10)).then_some(lowest);
    Ok(ParamProfile {
        name: est.name.clone(),
        estimate: theta_hat,
        std_error: se,
        level: opts.level,
        t_crit,
        lower: bounds[0],
        upper: bounds[1],
        lower_open: open[0],
        upper_open: open[1],
        trace,
        lower_minimum_found,
    })
}

/// Illinois false position on h(θ) = |τ(θ)| − t between `lo` (h < 0) and
/// `hi` (h ≥ 0); each refit starts from the nearer end's conditional optimum.
#[allow(clippy::too_many_arguments)]
fn refine(
    problem: &dyn Residuals,
    k: usize,
    lo: &(f64, f64, Vec<f64>),
    hi: &(f64, f64, Vec<f64>),
    t_crit: f64,
    tau_of: &dyn Fn(f64, f64) -> f64,
    opts: &ProfileOptions,
    scale: f64,
    lowest: &mut f64,
) -> f64 {
    let (mut a, mut fa, mut qa) = (lo.0, lo.1 - t_crit, lo.2.clone());
    let (mut b, mut fb, mut qb) = (hi.0, hi.1 - t_crit, hi.2.clone());
    let mut last_side = 0i8;
    for _ in 0..100 {
        if (b - a).abs() <= 1e-10 * scale || fb == 0.0 {
            break;
        }
        let c = b - fb * (b - a) / (fb - fa);
        let c = if c.is_finite() && (c - a) * (c - b) < 0.0 {
            c
        } else {
            0.5 * (a + b)
        };
        let start = if (c - a).abs() < (c - b).abs() {
            &qa
        } else {
            &qb
        };
        let Some((q, ssr)) = conditional(problem, k, c, start, &opts.lm) else {
            break;
        };
        *lowest = lowest.min(ssr);
        let fc = tau_of(c, ssr).abs() - t_crit;
        if fc < 0.0 {
            (a, fa, qa) = (c, fc, q);
            if last_side == -1 {
                fb *= 0.5;
            }
            last_side = -1;
        } else {
            (b, fb, qb) = (c, fc, q);
            if last_side == 1 {
                fa *= 0.5;
            }
            last_side = 1;
        }
    }
    if fb.abs() <= fa.abs() {
        b
    } else {
        a
    }
}

/// Profiles every parameter whose standard error is finite; the others get their error.
pub fn profile_all(
    problem: &dyn Residuals,
    fit: &LmResult,
    summary: &FitSummary,
    opts: &ProfileOptions,
) -> Vec<Result<ParamProfile, ProfileError>> {
    (0..fit.params.len())
        .map(|k| profile_parameter(problem, fit, summary, k, opts))
        .collect()
}
