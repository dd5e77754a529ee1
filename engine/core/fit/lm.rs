//! Levenberg–Marquardt with MINPACK-style scaling and trust region (Moré 1978).
//!
//! The driver follows Moré (1978), "The Levenberg–Marquardt algorithm:
//! implementation and theory" (MINPACK lmder): a pivoted QR of the Jacobian,
//! the Levenberg parameter from the trust radius ([`super::trust`]), scaling by
//! running maxima of the column norms, the ratio of actual to predicted
//! reduction with the standard radius updates, and the ftol/xtol/gtol tests.
//! Additions of our own: non-finite trial points are rejected (radius shrunk),
//! non-finite Jacobian columns are replaced by forward differences or zeroed,
//! and a few Gauss–Newton polishing steps via the SVD finish the fit when they
//! lower the sum of squares.

use super::trust::{enorm, levenberg_parameter, qr_pivoted};
use super::Residuals;
use nalgebra::{DMatrix, DVector};
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
    /// Most residual evaluations (trial points), a hard bound on the work.
    pub max_evaluations: usize,
    /// Initial trust radius as a multiple of ‖D·p₀‖ (Moré's `factor`).
    pub initial_step: f64,
    /// Most Gauss–Newton polishing steps after the trust-region loop (0 = none).
    pub polish_steps: usize,
    /// Typical size of the response (e.g. ‖y‖): the fit counts as exact when
    /// ‖r‖ ≤ 1e-13·scale. `None` asks the problem ([`Residuals::response_scale`]),
    /// then falls back to ‖r‖ at the start, which overstates exactness far off.
    pub zero_residual_scale: Option<f64>,
}

impl Default for LmOptions {
    fn default() -> Self {
        LmOptions {
            ftol: 1e-15,
            xtol: 1e-15,
            gtol: 1e-15,
            max_iterations: 5000,
            max_evaluations: 20000,
            initial_step: 100.0,
            polish_steps: 60,
            zero_residual_scale: None,
        }
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
    /// Evaluation budget used up.
    MaxEvaluations,
    /// Trust region collapsed against points where the model is not finite.
    Stalled,
    /// The residuals are finite but their sum of squares overflows (beyond
    /// 1.8e308): no step can be judged there, so no minimum is claimed.
    Overflow,
}

impl StopReason {
    /// True for the stops that mean a (local) minimum was reached.
    pub fn is_converged(self) -> bool {
        matches!(
            self,
            StopReason::SmallReduction
                | StopReason::SmallStep
                | StopReason::SmallGradient
                | StopReason::ZeroResidual
        )
    }

    /// Stable snake_case code (as serialised), e.g. "small_reduction".
    pub fn code(self) -> &'static str {
        match self {
            StopReason::SmallReduction => "small_reduction",
            StopReason::SmallStep => "small_step",
            StopReason::SmallGradient => "small_gradient",
            StopReason::ZeroResidual => "zero_residual",
            StopReason::MaxIterations => "max_iterations",
            StopReason::NonFiniteStart => "non_finite_start",
            StopReason::MaxEvaluations => "max_evaluations",
            StopReason::Stalled => "stalled",
            StopReason::Overflow => "overflow",
        }
    }

    /// Short human-readable description.
    pub fn describe(self) -> &'static str {
        match self {
            StopReason::SmallReduction => {
                "relative reduction of the sum of squares below tolerance"
            }
            StopReason::SmallStep => "relative step below tolerance",
            StopReason::SmallGradient => "gradient orthogonal to the residuals within tolerance",
            StopReason::ZeroResidual => "exact fit: residuals vanish",
            StopReason::MaxIterations => "iteration budget used up",
            StopReason::NonFiniteStart => "model not finite at the starting values",
            StopReason::MaxEvaluations => "evaluation budget used up",
            StopReason::Stalled => "stalled against points where the model is not finite",
            StopReason::Overflow => "the sum of squares overflows at the end point",
        }
    }
}

/// The end point of one local fit.
#[derive(Debug, Clone)]
pub struct LmResult {
    /// Final parameter values.
    pub params: Vec<f64>,
    /// Sum of squared residuals at `params`.
    pub ssr: f64,
    /// Residuals at `params`.
    pub residuals: Vec<f64>,
    /// ∂r/∂p at `params`.
    pub jacobian: DMatrix<f64>,
    /// Trust-region iterations (each one Jacobian evaluation).
    pub iterations: usize,
    /// Residual evaluations, including finite-difference repairs.
    pub evaluations: usize,
    /// Why the fit stopped.
    pub stop: StopReason,
    /// True for the tolerance stops and an exact fit.
    pub converged: bool,
    /// Jacobian columns that were not finite and had to be repaired.
    pub jacobian_repairs: usize,
    /// Polishing steps accepted after the trust-region loop.
    pub polish_steps: usize,
    /// Trial points rejected because the residuals there were not finite.
    pub rejected_non_finite: usize,
}

/// Counts and a budget shared by the driver's helpers.
struct Counter {
    evals: usize,
    repairs: usize,
    non_finite: usize,
}

/// Residuals at `p` into `r` (padded rows stay zero); returns ‖r‖, or ∞ when
/// any residual is not finite.
fn eval_norm(problem: &dyn Residuals, p: &[f64], r: &mut [f64], m: usize, c: &mut Counter) -> f64 {
    c.evals += 1;
    problem.residuals(p, &mut r[..m]);
    if r.iter().any(|v| !v.is_finite()) {
        return f64::INFINITY;
    }
    let f = enorm(r);
    if f.is_finite() {
        f
    } else {
        f64::INFINITY
    }
}

/// Jacobian at `p` into the top `m` rows of `jac` (rest zero). Columns with
/// non-finite entries are replaced by forward differences; entries still not
/// finite are zeroed. Returns the number of repaired columns.
fn eval_jacobian(
    problem: &dyn Residuals,
    p: &[f64],
    r: &[f64],
    m: usize,
    jac: &mut DMatrix<f64>,
    c: &mut Counter,
) -> usize {
    let n = p.len();
    let mut top = DMatrix::zeros(m, n);
    problem.jacobian(p, &mut top);
    jac.fill(0.0);
    jac.view_mut((0, 0), (m, n)).copy_from(&top);
    let mut repaired = 0;
    let mut pt = p.to_vec();
    let mut rt = vec![0.0; m];
    for j in 0..n {
        if (0..m).all(|i| jac[(i, j)].is_finite()) {
            continue;
        }
        repaired += 1;
        let h = f64::EPSILON.sqrt() * p[j].abs().max(1.0);
        pt[j] = p[j] + h;
        let h = pt[j] - p[j];
        c.evals += 1;
        problem.residuals(&pt, &mut rt);
        pt[j] = p[j];
        for i in 0..m {
            let d = (rt[i] - r[i]) / h;
            jac[(i, j)] = if d.is_finite() { d } else { 0.0 };
        }
    }
    c.repairs += repaired;
    repaired
}

// NaN-aware on purpose: `!(x > 0.0)` is also true for NaN, which must take
// the same branch as a non-positive value (clippy's partial_cmp form hides that).
#[allow(clippy::neg_cmp_op_on_partial_ord)]
/// Minimises ½‖r(p)‖² from `start`.
pub fn levenberg_marquardt(problem: &dyn Residuals, start: &[f64], opts: &LmOptions) -> LmResult {
    let n = start.len();
    let m_obs = problem.n_obs();
    // MINPACK needs m ≥ n: pad with zero residual rows when there are fewer observations.
    let m = m_obs.max(n);
    let eps = f64::EPSILON;
    let mut c = Counter {
        evals: 0,
        repairs: 0,
        non_finite: 0,
    };
    let mut x = start.to_vec();
    let mut fvec = vec![0.0; m];

    let finish =
        |x: Vec<f64>, fvec: &[f64], iters: usize, stop: StopReason, c: &Counter, polish: usize| {
            let mut jac = DMatrix::zeros(m_obs, n);
            if x.iter().all(|v| v.is_finite()) && fvec.iter().all(|v| v.is_finite()) {
                problem.jacobian(&x, &mut jac);
            } else {
                jac.fill(f64::NAN);
            }
            let res = fvec[..m_obs].to_vec();
            let ssr = res.iter().map(|r| r * r).sum::<f64>();
            LmResult {
                params: x,
                ssr,
                residuals: res,
                jacobian: jac,
                iterations: iters,
                evaluations: c.evals,
                stop,
                converged: stop.is_converged(),
                jacobian_repairs: c.repairs,
                polish_steps: polish,
                rejected_non_finite: c.non_finite,
            }
        };

    let mut fnorm = if x.iter().all(|v| v.is_finite()) {
        eval_norm(problem, &x, &mut fvec, m_obs, &mut c)
    } else {
        f64::INFINITY
    };
    if !fnorm.is_finite() {
        if x.iter().all(|v| v.is_finite()) {
            // Keep whatever the model gave so the caller can see it.
        } else {
            fvec.iter_mut().for_each(|v| *v = f64::NAN);
        }
        return finish(x, &fvec, 0, StopReason::NonFiniteStart, &c, 0);
    }
    if n == 0 {
        let stop = if fnorm == 0.0 {
            StopReason::ZeroResidual
        } else {
            StopReason::SmallStep
        };
        return finish(x, &fvec, 0, stop, &c, 0);
    }
    let fnorm0 = fnorm;

    let mut jac = DMatrix::zeros(m, n);
    let mut diag = vec![0.0; n];
    let mut qtf = vec![0.0; n];
    let mut wa1 = vec![0.0; n];
    let mut wa2 = vec![0.0; n];
    let mut wa3 = vec![0.0; n];
    let mut sdiag = vec![0.0; n];
    let mut wa4 = vec![0.0; m];
    let mut delta = 0.0;
    let mut xnorm = 0.0;
    let mut par = 0.0;
    let mut iter = 0usize;
    let stop: StopReason;

    'outer: loop {
        if fnorm == 0.0 {
            stop = StopReason::ZeroResidual;
            break;
        }
        if iter >= opts.max_iterations {
            stop = StopReason::MaxIterations;
            break;
        }
        iter += 1;
        eval_jacobian(problem, &x, &fvec, m_obs, &mut jac, &mut c);
        let qr = qr_pivoted(&mut jac);
        let perm = qr.perm;
        let acnorm = qr.col_norms;

        if iter == 1 {
            for j in 0..n {
                diag[j] = if acnorm[j] == 0.0 || !acnorm[j].is_finite() {
                    1.0
                } else {
                    acnorm[j]
                };
            }
            let dx: Vec<f64> = (0..n).map(|j| diag[j] * x[j]).collect();
            xnorm = enorm(&dx);
            delta = opts.initial_step * xnorm;
            if delta == 0.0 || !delta.is_finite() {
                delta = opts.initial_step;
            }
        }

        // qtf = Qᵀ r (first n entries), and R's diagonal back in place.
        wa4.copy_from_slice(&fvec);
        for j in 0..n {
            let ajj = jac[(j, j)];
            if ajj != 0.0 {
                let mut sum = 0.0;
                for i in j..m {
                    sum += jac[(i, j)] * wa4[i];
                }
                let temp = -sum / ajj;
                for i in j..m {
                    wa4[i] += jac[(i, j)] * temp;
                }
            }
            jac[(j, j)] = qr.rdiag[j];
            qtf[j] = wa4[j];
        }

        // Scaled gradient norm: largest cosine between r and a column of J.
        let mut gnorm: f64 = 0.0;
        for j in 0..n {
            let l = perm[j];
            if acnorm[l] != 0.0 {
                let mut sum = 0.0;
                for i in 0..=j {
                    sum += jac[(i, j)] * (qtf[i] / fnorm);
                }
                gnorm = gnorm.max((sum / acnorm[l]).abs());
            }
        }
        if gnorm <= opts.gtol {
            stop = StopReason::SmallGradient;
            break;
        }

        for j in 0..n {
            if acnorm[j].is_finite() {
                diag[j] = diag[j].max(acnorm[j]);
            }
        }

        // Inner loop: trial steps until one is accepted.
        loop {
            par = levenberg_parameter(
                &mut jac, &perm, &diag, &qtf, delta, par, &mut wa1, &mut sdiag,
            );
            for j in 0..n {
                wa1[j] = -wa1[j];
                wa2[j] = x[j] + wa1[j];
                wa3[j] = diag[j] * wa1[j];
            }
            let pnorm = enorm(&wa3);
            let step_ok = pnorm.is_finite() && wa2.iter().all(|v| v.is_finite());
            if iter == 1 && step_ok {
                delta = delta.min(pnorm);
            }

            let fnorm1 = if step_ok {
                eval_norm(problem, &wa2, &mut wa4, m_obs, &mut c)
            } else {
                f64::INFINITY
            };
            let trial_finite = fnorm1.is_finite();
            if !trial_finite {
                c.non_finite += 1;
            }

            let mut actred = -1.0;
            if 0.1 * fnorm1 < fnorm {
                let t = fnorm1 / fnorm;
                actred = 1.0 - t * t;
            }
            // Predicted reduction and directional derivative.
            let (prered, dirder, ratio);
            if step_ok {
                for j in 0..n {
                    wa3[j] = 0.0;
                    let temp = wa1[perm[j]];
                    for i in 0..=j {
                        wa3[i] += jac[(i, j)] * temp;
                    }
                }
                let temp1 = enorm(&wa3) / fnorm;
                let temp2 = par.sqrt() * pnorm / fnorm;
                prered = temp1 * temp1 + temp2 * temp2 / 0.5;
                dirder = -(temp1 * temp1 + temp2 * temp2);
                ratio = if prered != 0.0 { actred / prered } else { 0.0 };
            } else {
                prered = 0.0;
                dirder = 0.0;
                ratio = 0.0;
            }

            // Radius update.
            if !trial_finite {
                delta = 0.1
                    * if pnorm.is_finite() {
                        delta.min(pnorm / 0.1)
                    } else {
                        delta
                    };
                par = if par > 0.0 { par * 10.0 } else { par };
            } else if ratio <= 0.25 {
                let mut temp = if actred >= 0.0 {
                    0.5
                } else {
                    0.5 * dirder / (dirder + 0.5 * actred)
                };
                if 0.1 * fnorm1 >= fnorm || !(temp >= 0.1) {
                    temp = 0.1;
                }
                delta = temp * delta.min(pnorm / 0.1);
                par /= temp;
            } else if par == 0.0 || ratio >= 0.75 {
                delta = pnorm / 0.5;
                par *= 0.5;
            }

            let accepted = trial_finite && ratio >= 1e-4;
            if accepted {
                x.copy_from_slice(&wa2);
                fvec.copy_from_slice(&wa4);
                let dx: Vec<f64> = (0..n).map(|j| diag[j] * x[j]).collect();
                xnorm = enorm(&dx);
                fnorm = fnorm1;
            }

            // Convergence tests (Moré 1978, section 8).
            let f_ok = actred.abs() <= opts.ftol && prered <= opts.ftol && 0.5 * ratio <= 1.0;
            let x_ok = delta <= opts.xtol * xnorm;
            if f_ok || x_ok {
                stop = if !trial_finite && x_ok && !f_ok {
                    StopReason::Stalled
                } else if x_ok && !f_ok {
                    StopReason::SmallStep
                } else {
                    StopReason::SmallReduction
                };
                break 'outer;
            }
            if fnorm == 0.0 {
                stop = StopReason::ZeroResidual;
                break 'outer;
            }
            if c.evals >= opts.max_evaluations {
                stop = StopReason::MaxEvaluations;
                break 'outer;
            }
            // Tolerances below machine precision: nothing more can be gained.
            if actred.abs() <= eps && prered <= eps && 0.5 * ratio <= 1.0 {
                stop = StopReason::SmallReduction;
                break 'outer;
            }
            if delta <= eps * xnorm || delta == 0.0 {
                stop = if trial_finite {
                    StopReason::SmallStep
                } else {
                    StopReason::Stalled
                };
                break 'outer;
            }
            if gnorm <= eps {
                stop = StopReason::SmallGradient;
                break 'outer;
            }
            if accepted {
                break;
            }
        }
    }

    // Gauss–Newton polishing. Near a minimum the sum of squares is flat to
    // second order, so ftol can stop the loop while the parameters still carry
    // errors near √ε. Full Gauss–Newton steps −J⁺r (SVD) converge the
    // parameters themselves; a step is kept when it lowers the sum of squares,
    // or leaves it unchanged within rounding while the steps keep contracting.
    let mut polished = 0;
    if opts.polish_steps > 0 && stop != StopReason::ZeroResidual && fnorm > 0.0 {
        let mut jtop = DMatrix::zeros(m_obs, n);
        let mut trial = vec![0.0; m];
        let mut prev_rel = f64::INFINITY;
        for _ in 0..opts.polish_steps {
            if c.evals >= opts.max_evaluations || fnorm == 0.0 {
                break;
            }
            jtop.fill(0.0);
            problem.jacobian(&x, &mut jtop);
            if jtop.iter().any(|v| !v.is_finite()) {
                break;
            }
            let Some(step) = gauss_newton_step(&jtop, &fvec[..m_obs]) else {
                break;
            };
            // Largest step relative to the parameter's size.
            let rel = step
                .iter()
                .zip(x.iter())
                .map(|(d, v)| d.abs() / v.abs().max(f64::MIN_POSITIVE))
                .fold(0.0, f64::max);
            if !(rel > 0.0) || !rel.is_finite() {
                break;
            }
            let xt: Vec<f64> = x.iter().zip(step.iter()).map(|(a, d)| a + d).collect();
            let f1 = eval_norm(problem, &xt, &mut trial, m_obs, &mut c);
            let lower = f1 < fnorm;
            let level = f1 <= fnorm * (1.0 + 1e-9) && rel < 1e-4 && rel < 0.9 * prev_rel;
            if !(lower || level) {
                break;
            }
            x = xt;
            fvec.copy_from_slice(&trial);
            fnorm = f1;
            polished += 1;
            prev_rel = rel;
            if rel <= 4.0 * eps {
                break;
            }
        }
    }

    let mut stop = stop;
    // The response's own size when known: ‖r‖ at a far start (1e217 from an
    // exp(500) overshoot) would call any end point "exact" (found by fuzzing).
    let scale = opts
        .zero_residual_scale
        .filter(|s| s.is_finite() && *s >= 0.0)
        .or_else(|| {
            problem
                .response_scale()
                .filter(|s| s.is_finite() && *s >= 0.0)
        })
        .unwrap_or(fnorm0);
    if stop.is_converged() && (fnorm == 0.0 || fnorm <= 1e-13 * scale) {
        stop = StopReason::ZeroResidual;
    }
    // ‖r‖ may be finite while Σr² is not (residuals near 1e160 and beyond):
    // the tolerance tests compare nothing there (issue 10).
    if stop.is_converged() && !fvec[..m_obs].iter().map(|r| r * r).sum::<f64>().is_finite() {
        stop = StopReason::Overflow;
    }
    finish(x, &fvec, iter, stop, &c, polished)
}

/// The minimum-norm Gauss–Newton step −J⁺r from the SVD of J, dropping
/// singular values below max(m, n)·ε·σ_max (column-scaled for stability).
/// `None` when the decomposition fails ([`super::svd::scaled_svd`]): polishing
/// then stops, the point reached so far stands.
fn gauss_newton_step(j: &DMatrix<f64>, r: &[f64]) -> Option<Vec<f64>> {
    let (m, n) = j.shape();
    let svd = super::svd::scaled_svd(j, 0, true, 500)?;
    let u = svd.u.as_ref()?;
    let vt = &svd.v_t;
    let sv = &svd.singular;
    let cut = (m.max(n) as f64) * f64::EPSILON * svd.max();
    let rv = DVector::from_column_slice(r);
    let utr = u.transpose() * rv;
    let mut z: DVector<f64> = DVector::zeros(n);
    for k in 0..sv.len() {
        if sv[k] > cut {
            let coef = utr[k] / sv[k];
            for i in 0..n {
                z[i] += vt[(k, i)] * coef;
            }
        }
    }
    let step: Vec<f64> = (0..n).map(|k| -z[k] / svd.scale[k]).collect();
    step.iter().all(|v| v.is_finite()).then_some(step)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rosenbrock as least squares: r = (10(p₂ − p₁²), 1 − p₁).
    struct Rosenbrock;
    impl Residuals for Rosenbrock {
        fn n_obs(&self) -> usize {
            2
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            r[0] = 10.0 * (p[1] - p[0] * p[0]);
            r[1] = 1.0 - p[0];
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            j[(0, 0)] = -20.0 * p[0];
            j[(0, 1)] = 10.0;
            j[(1, 0)] = -1.0;
            j[(1, 1)] = 0.0;
        }
    }

    /// y = a·exp(−b·x) data, residual y − model.
    struct ExpDecay {
        x: Vec<f64>,
        y: Vec<f64>,
    }
    impl Residuals for ExpDecay {
        fn n_obs(&self) -> usize {
            self.x.len()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            for (i, ri) in r.iter_mut().enumerate().take(self.x.len()) {
                *ri = self.y[i] - p[0] * (-p[1] * self.x[i]).exp();
            }
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            for i in 0..self.x.len() {
                let e = (-p[1] * self.x[i]).exp();
                j[(i, 0)] = -e;
                j[(i, 1)] = p[0] * self.x[i] * e;
            }
        }
    }

    /// y = a·exp(b·x) with x up to 400: exp overflows for b ≳ 1.8.
    struct Growth {
        x: Vec<f64>,
        y: Vec<f64>,
    }
    impl Residuals for Growth {
        fn n_obs(&self) -> usize {
            self.x.len()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            for (i, ri) in r.iter_mut().enumerate().take(self.x.len()) {
                *ri = self.y[i] - p[0] * (p[1] * self.x[i]).exp();
            }
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            for i in 0..self.x.len() {
                let e = (p[1] * self.x[i]).exp();
                j[(i, 0)] = -e;
                j[(i, 1)] = -p[0] * self.x[i] * e;
            }
        }
    }

    fn growth_problem() -> Growth {
        let x: Vec<f64> = (0..=40).map(|i| 10.0 * i as f64).collect();
        let y = x.iter().map(|x| 2.0 * (0.01 * x).exp()).collect();
        Growth { x, y }
    }

    #[test]
    fn rosenbrock_from_standard_start() {
        let r = levenberg_marquardt(&Rosenbrock, &[-1.2, 1.0], &LmOptions::default());
        assert!(r.converged, "{:?}", r.stop);
        assert!((r.params[0] - 1.0).abs() < 1e-12);
        assert!((r.params[1] - 1.0).abs() < 1e-12);
        assert!(r.ssr < 1e-25);
        assert_eq!(r.stop, StopReason::ZeroResidual);
    }

    #[test]
    fn exponential_decay_from_far_start() {
        let x: Vec<f64> = (0..30).map(|i| 0.25 * i as f64).collect();
        let y = x.iter().map(|x| 5.0 * (-0.7 * x).exp()).collect();
        let p = ExpDecay { x, y };
        let r = levenberg_marquardt(&p, &[50.0, 0.01], &LmOptions::default());
        assert!(r.converged, "{:?}", r.stop);
        assert!((r.params[0] - 5.0).abs() < 1e-10, "{:?}", r.params);
        assert!((r.params[1] - 0.7).abs() < 1e-10, "{:?}", r.params);
        assert_eq!(r.stop, StopReason::ZeroResidual);
    }

    #[test]
    fn overflowing_trial_points_are_rejected_not_fatal() {
        let p = growth_problem();
        // From b = 1.5, full steps overshoot into exp(b·400) = ∞ territory.
        // From b = −0.5 the first Gauss–Newton steps overshoot to b ≳ 1.8, where
        // exp(b·400) overflows; those trial points must be rejected, not fatal.
        let r = levenberg_marquardt(&p, &[1.0, -0.5], &LmOptions::default());
        assert!(r.rejected_non_finite > 0, "no overflow was provoked");
        assert!(r.params.iter().all(|v| v.is_finite()));
        assert!(r.ssr.is_finite());
        assert!(r.converged, "{:?} at {:?}", r.stop, r.params);
        assert!((r.params[0] - 2.0).abs() < 1e-8, "{:?}", r.params);
        assert!((r.params[1] - 0.01).abs() < 1e-10, "{:?}", r.params);
    }

    #[test]
    fn non_finite_start_is_reported() {
        let p = growth_problem();
        let r = levenberg_marquardt(&p, &[1.0, 5.0], &LmOptions::default());
        assert_eq!(r.stop, StopReason::NonFiniteStart);
        assert!(!r.converged);
        let r = levenberg_marquardt(&p, &[f64::NAN, 0.0], &LmOptions::default());
        assert_eq!(r.stop, StopReason::NonFiniteStart);
        assert!(!r.converged);
    }

    /// A model whose analytic Jacobian is NaN in one column: the column is
    /// rebuilt by forward differences and the fit still converges.
    struct BadJacobian(ExpDecay);
    impl Residuals for BadJacobian {
        fn n_obs(&self) -> usize {
            self.0.n_obs()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            self.0.residuals(p, r)
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            self.0.jacobian(p, j);
            j[(0, 1)] = f64::NAN;
        }
    }

    #[test]
    fn non_finite_jacobian_is_repaired() {
        let x: Vec<f64> = (0..20).map(|i| 0.5 * i as f64).collect();
        let y = x.iter().map(|x| 3.0 * (-0.3 * x).exp()).collect();
        let p = BadJacobian(ExpDecay { x, y });
        let r = levenberg_marquardt(&p, &[1.0, 1.0], &LmOptions::default());
        assert!(r.jacobian_repairs > 0);
        assert!(r.converged, "{:?}", r.stop);
        assert!((r.params[0] - 3.0).abs() < 1e-6, "{:?}", r.params);
        assert!((r.params[1] - 0.3).abs() < 1e-6, "{:?}", r.params);
    }

    #[test]
    fn budgets_are_respected() {
        let opts = LmOptions {
            max_iterations: 3,
            ..LmOptions::default()
        };
        let r = levenberg_marquardt(&Rosenbrock, &[-1.2, 1.0], &opts);
        assert_eq!(r.stop, StopReason::MaxIterations);
        assert!(!r.converged);
        assert!(r.iterations <= 3);
        let opts = LmOptions {
            max_evaluations: 4,
            polish_steps: 0,
            ..LmOptions::default()
        };
        let r = levenberg_marquardt(&Rosenbrock, &[-1.2, 1.0], &opts);
        assert!(r.evaluations <= 4, "{}", r.evaluations);
        assert!(!r.converged);
    }

    /// Nonzero-residual problem: the fit must stop on a tolerance with the
    /// normal equations satisfied, Jᵀr ≈ 0.
    #[test]
    fn nonzero_residual_fit_satisfies_normal_equations() {
        let x: Vec<f64> = (0..25).map(|i| 0.3 * i as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, x)| 4.0 * (-0.5 * x).exp() + if i % 2 == 0 { 0.01 } else { -0.01 })
            .collect();
        let p = ExpDecay { x, y };
        let r = levenberg_marquardt(&p, &[1.0, 2.0], &LmOptions::default());
        assert!(r.converged, "{:?}", r.stop);
        assert_ne!(r.stop, StopReason::ZeroResidual);
        let g = r.jacobian.transpose() * DVector::from_column_slice(&r.residuals);
        assert!(g.norm() < 1e-12, "gradient {}", g.norm());
    }

    /// r(p) = p − 2 where the model exists (p ≤ 1), NaN beyond: the minimum
    /// lies outside the domain, so the fit must stall at the wall, not claim success.
    struct Wall;
    impl Residuals for Wall {
        fn n_obs(&self) -> usize {
            1
        }
        fn n_params(&self) -> usize {
            1
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            r[0] = if p[0] <= 1.0 { p[0] - 2.0 } else { f64::NAN };
        }
        fn jacobian(&self, _p: &[f64], j: &mut DMatrix<f64>) {
            j[(0, 0)] = 1.0;
        }
    }

    #[test]
    fn minimum_beyond_the_domain_stalls() {
        let r = levenberg_marquardt(&Wall, &[0.0], &LmOptions::default());
        assert!(!r.converged, "{:?} at {:?}", r.stop, r.params);
        assert_eq!(r.stop, StopReason::Stalled);
        assert!(r.params[0] <= 1.0 && r.params[0] > 0.99, "{:?}", r.params);
    }

    /// r = (1 − p, −1 − p): the best fit p = 0 leaves ‖r‖ = √2; the response is (1, −1).
    struct TwoPoints;
    impl Residuals for TwoPoints {
        fn n_obs(&self) -> usize {
            2
        }
        fn n_params(&self) -> usize {
            1
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            r[0] = 1.0 - p[0];
            r[1] = -1.0 - p[0];
        }
        fn jacobian(&self, _p: &[f64], j: &mut DMatrix<f64>) {
            j[(0, 0)] = -1.0;
            j[(1, 0)] = -1.0;
        }
        fn response_scale(&self) -> Option<f64> {
            Some(2f64.sqrt())
        }
    }

    /// Regression (found by fuzzing): from a far start, "exact fit" was judged
    /// against ‖r‖ there (1e15), so ‖r‖ = √2 counted as zero.
    #[test]
    fn far_start_does_not_make_a_residual_look_zero() {
        let r = levenberg_marquardt(&TwoPoints, &[1e15], &LmOptions::default());
        assert!(r.converged, "{:?}", r.stop);
        assert_ne!(r.stop, StopReason::ZeroResidual);
        assert!(r.params[0].abs() < 1e-3, "{:?}", r.params);
        assert!((r.ssr - 2.0).abs() < 1e-6, "{}", r.ssr);
    }

    /// Fewer observations than parameters: r = y − (a + b), one row.
    struct Underdetermined;
    impl Residuals for Underdetermined {
        fn n_obs(&self) -> usize {
            1
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            r[0] = 3.0 - p[0] - p[1];
        }
        fn jacobian(&self, _p: &[f64], j: &mut DMatrix<f64>) {
            j[(0, 0)] = -1.0;
            j[(0, 1)] = -1.0;
        }
    }

    #[test]
    fn fewer_rows_than_parameters_still_fits() {
        let r = levenberg_marquardt(&Underdetermined, &[0.0, 0.0], &LmOptions::default());
        assert_eq!(r.residuals.len(), 1);
        assert_eq!(r.jacobian.shape(), (1, 2));
        assert!((r.params[0] + r.params[1] - 3.0).abs() < 1e-12);
        assert!(r.converged);
    }
}
