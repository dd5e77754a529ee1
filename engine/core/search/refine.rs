//! Local refinement of one candidate by Levenberg–Marquardt, either as one
//! full-length fit or in short legs that stop early once the point is clearly
//! inside a basin already found (its minimum is then credited with the run).

use super::cluster::{divergent_params, is_singular, scaled_gap_except};
use super::scale::ParamScale;
use super::symmetry::Symmetries;
use crate::fit::lm::{levenberg_marquardt, LmOptions, LmResult, StopReason};
use crate::fit::Residuals;
use nalgebra::DMatrix;

/// A run is abandoned into a known minimum when its parameters are within this
/// scaled distance of the minimum's ...
pub const HEADING_PARAM: f64 = 1e-2;
/// ... and it has already made all but this fraction of the descent from its
/// start's sum of squares to the minimum's (and is not below it).
pub const HEADING_DESCENT: f64 = 1e-3;

/// True when a point (p, s), reached from a start with sum of squares `s0`, is
/// clearly inside the basin of the known minimum `k`.
/// Divergent parameters must be the same ones and are not compared.
pub fn heading_into(
    p: &[f64],
    divergent: &[usize],
    s: f64,
    s0: f64,
    k: &KnownMinimum,
    scales: &[ParamScale],
) -> bool {
    divergent == k.divergent.as_slice()
        && s.is_finite()
        && s0.is_finite()
        && s >= k.ssr
        && s0 > k.ssr
        && s - k.ssr <= HEADING_DESCENT * (s0 - k.ssr)
        && scaled_gap_except(p, &k.params, scales, divergent) <= HEADING_PARAM
}

/// A minimum known when a batch starts.
#[derive(Debug, Clone)]
pub struct KnownMinimum {
    /// Basin number.
    pub id: usize,
    /// Canonical best point.
    pub params: Vec<f64>,
    /// Its sum of squares.
    pub ssr: f64,
    /// Its divergent parameters.
    pub divergent: Vec<usize>,
}

/// The outcome of refining one start.
#[derive(Debug, Clone)]
pub struct Refined {
    /// End point as the fitter left it.
    pub end: Vec<f64>,
    /// End point in canonical order, and the permutation that made it (σ(end)).
    pub canonical: Vec<f64>,
    /// Permutation with `canonical[i] = end[perm[i]]`.
    pub perm: Vec<usize>,
    /// Sum of squares at `end`.
    pub ssr: f64,
    /// Jacobian at `end`.
    pub jacobian: DMatrix<f64>,
    /// Divergent parameters of `canonical` ([`divergent_params`]).
    pub divergent: Vec<usize>,
    /// Jacobian rank-deficient at `end` ([`is_singular`]).
    pub singular: bool,
    /// Iterations over all legs.
    pub iterations: usize,
    /// Residual evaluations over all legs.
    pub evaluations: usize,
    /// Why the last leg stopped.
    pub stop: StopReason,
    /// Reached a minimum by the fitter's tests.
    pub converged: bool,
    /// Basin it was abandoned into, if any.
    pub abandoned_into: Option<usize>,
}

/// The columns of `j` in the order of `perm` (`out[:, i] = j[:, perm[i]]`).
pub fn permuted_columns(j: &DMatrix<f64>, perm: &[usize]) -> DMatrix<f64> {
    let mut out = DMatrix::zeros(j.nrows(), perm.len());
    for (i, &k) in perm.iter().enumerate() {
        if k < j.ncols() {
            out.set_column(i, &j.column(k));
        }
    }
    out
}

/// A point in canonical order with its divergent parameters.
fn canonical_point(
    r: &LmResult,
    group: &Symmetries,
    scales: &[ParamScale],
) -> (Vec<f64>, Vec<usize>, Vec<usize>) {
    let (canonical, perm) = group.canonical_with(&r.params);
    let divergent = divergent_params(&canonical, &permuted_columns(&r.jacobian, &perm), scales);
    (canonical, perm, divergent)
}

fn finish(
    r: LmResult,
    iterations: usize,
    evaluations: usize,
    group: &Symmetries,
    scales: &[ParamScale],
    abandoned_into: Option<usize>,
) -> Refined {
    let (canonical, perm, divergent) = canonical_point(&r, group, scales);
    Refined {
        divergent,
        singular: is_singular(&r.jacobian),
        end: r.params,
        canonical,
        perm,
        ssr: r.ssr,
        jacobian: r.jacobian,
        iterations,
        evaluations,
        stop: r.stop,
        converged: r.converged,
        abandoned_into,
    }
}

/// Sum of squared residuals at `p` (∞ when not finite).
pub fn sum_of_squares(problem: &dyn Residuals, p: &[f64]) -> f64 {
    if p.len() != problem.n_params() {
        return f64::INFINITY;
    }
    let mut r = vec![0.0; problem.n_obs()];
    problem.residuals(p, &mut r);
    let s: f64 = r.iter().map(|v| v * v).sum();
    if s.is_finite() {
        s
    } else {
        f64::INFINITY
    }
}

/// One full-length fit from `start` with `lm` (polishing included).
pub fn refine_full(
    problem: &dyn Residuals,
    start: &[f64],
    lm: &LmOptions,
    scales: &[ParamScale],
    group: &Symmetries,
) -> Refined {
    let r = levenberg_marquardt(problem, start, lm);
    let (it, ev) = (r.iterations, r.evaluations);
    finish(r, it, ev, group, scales, None)
}

/// A fit from `start` in legs of `leg` iterations (no polishing between legs);
/// after each leg the point is compared, in canonical order, with `known`
/// minima, and the run stops when it is clearly inside the basin of one
/// ([`heading_into`]). A run
/// that converges is polished by one more fit with the full `lm` options. The
/// iteration and evaluation budgets of `lm` bound the whole run.
pub fn refine_in_legs(
    problem: &dyn Residuals,
    start: &[f64],
    lm: &LmOptions,
    leg: usize,
    known: &[KnownMinimum],
    scales: &[ParamScale],
    group: &Symmetries,
) -> Refined {
    let leg = leg.max(1);
    let mut x = start.to_vec();
    let s0 = sum_of_squares(problem, start);
    let (mut iters, mut evals) = (0usize, 1usize);
    loop {
        let leg_opts = LmOptions {
            max_iterations: leg.min(lm.max_iterations.saturating_sub(iters)).max(1),
            max_evaluations: lm.max_evaluations.saturating_sub(evals).max(1),
            polish_steps: 0,
            ..lm.clone()
        };
        let r = levenberg_marquardt(problem, &x, &leg_opts);
        iters += r.iterations;
        evals += r.evaluations;
        let out_of_budget = iters >= lm.max_iterations || evals >= lm.max_evaluations;
        if r.converged {
            let polish_opts = LmOptions {
                max_iterations: lm.max_iterations.saturating_sub(iters).max(1),
                max_evaluations: lm.max_evaluations.saturating_sub(evals).max(1),
                ..lm.clone()
            };
            let p = levenberg_marquardt(problem, &r.params, &polish_opts);
            let (it, ev) = (iters + p.iterations, evals + p.evaluations);
            if p.ssr.is_finite() && p.ssr <= r.ssr {
                let mut p = p;
                if !p.converged {
                    p.stop = r.stop;
                    p.converged = true;
                }
                return finish(p, it, ev, group, scales, None);
            }
            return finish(r, it, ev, group, scales, None);
        }
        if r.stop != StopReason::MaxIterations || out_of_budget {
            return finish(r, iters, evals, group, scales, None);
        }
        let (here, _, div) = canonical_point(&r, group, scales);
        let hit = known
            .iter()
            .find(|k| heading_into(&here, &div, r.ssr, s0, k, scales));
        if let Some(k) = hit {
            return finish(r, iters, evals, group, scales, Some(k.id));
        }
        x = r.params;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// r = (p − 3, 10·(p − 3)²): a single minimum at 3, slow from afar.
    struct Bowl;
    impl Residuals for Bowl {
        fn n_obs(&self) -> usize {
            2
        }
        fn n_params(&self) -> usize {
            1
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            r[0] = p[0] - 3.0;
            r[1] = 10.0 * (p[0] - 3.0).powi(2);
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            j[(0, 0)] = 1.0;
            j[(1, 0)] = 20.0 * (p[0] - 3.0);
        }
    }

    #[test]
    fn legs_converge_like_a_full_fit() {
        let lm = LmOptions::default();
        let full = refine_full(
            &Bowl,
            &[50.0],
            &lm,
            &[ParamScale::from_value(3.0)],
            &Symmetries::default(),
        );
        let legs = refine_in_legs(
            &Bowl,
            &[50.0],
            &lm,
            2,
            &[],
            &[ParamScale::from_value(3.0)],
            &Symmetries::default(),
        );
        assert!(full.converged && legs.converged);
        assert!((full.end[0] - 3.0).abs() < 1e-10);
        assert!((legs.end[0] - 3.0).abs() < 1e-10);
        assert!(legs.abandoned_into.is_none());
        assert_eq!(legs.perm, vec![0]);
    }

    #[test]
    fn abandoned_into_a_known_minimum() {
        let lm = LmOptions::default();
        let scales = [ParamScale::from_value(3.0)];
        // Once the point is within 1 % of the known minimum at 3 and has made
        // 99.9 % of the descent, the run stops, before the fitter would.
        let full = refine_full(&Bowl, &[3.2], &lm, &scales, &Symmetries::default());
        let k = [KnownMinimum {
            id: 4,
            params: vec![3.0],
            ssr: 0.0,
            divergent: vec![],
        }];
        let a = refine_in_legs(&Bowl, &[3.2], &lm, 1, &k, &scales, &Symmetries::default());
        assert_eq!(a.abandoned_into, Some(4));
        assert!(
            a.iterations < full.iterations,
            "{} vs {}",
            a.iterations,
            full.iterations
        );
        assert!(!a.converged);
        assert!((a.end[0] - 3.0).abs() <= 0.03);
        assert!(a.ssr <= 1e-3 * sum_of_squares(&Bowl, &[3.2]));
        // A known minimum elsewhere: the run goes on to convergence.
        let other = [KnownMinimum {
            id: 1,
            params: vec![-3.0],
            ssr: 0.0,
            divergent: vec![],
        }];
        let b = refine_in_legs(
            &Bowl,
            &[3.02],
            &lm,
            1,
            &other,
            &scales,
            &Symmetries::default(),
        );
        assert!(b.converged && b.abandoned_into.is_none());
    }
}
