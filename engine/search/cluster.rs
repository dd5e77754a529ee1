//! Grouping end points of local fits into distinct minima: two points are one
//! minimum when their sums of squares agree within a relative tolerance AND
//! their parameters agree within a scaled tolerance (parameters that have both
//! run off to the same infinity count as agreeing). Also the diagnostics of a
//! minimum: condition number and parameters at a boundary or at infinity.

use crate::fit::svd::safe_column_norm;
use super::scale::ParamScale;
use nalgebra::DMatrix;

/// A parameter beyond this multiple of its typical scale is taken to be at infinity.
pub const INFINITY_FACTOR: f64 = 1e6;
/// A Jacobian column (times its parameter's scale) this small relative to the
/// largest counts as vanished.
pub const VANISHING_COLUMN: f64 = 1e-10;

/// A minimum whose column-normalised Jacobian has a condition number above
/// this is rank-deficient: a valley of equal fits rather than a point.
pub const SINGULAR_CONDITION: f64 = 1e12;

/// When two end points are the same minimum.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerances {
    /// Relative agreement of the sums of squares.
    pub ssr_rtol: f64,
    /// Absolute agreement of the sums of squares (for exact fits, where ssr ≈ 0).
    pub ssr_atol: f64,
    /// Agreement of each parameter, relative to max(|a|, |b|, its typical scale).
    pub param_rtol: f64,
}

impl Default for Tolerances {
    fn default() -> Self {
        Tolerances {
            ssr_rtol: 1e-6,
            ssr_atol: 0.0,
            param_rtol: 1e-3,
        }
    }
}

/// True when two sums of squares agree within `rtol`·max + `atol`.
pub fn same_ssr(s: f64, t: f64, rtol: f64, atol: f64) -> bool {
    s.is_finite() && t.is_finite() && (s - t).abs() <= rtol * s.abs().max(t.abs()) + atol
}

/// True when parameter value `v` is at infinity for its scale (or not finite).
pub fn at_infinity(v: f64, s: &ParamScale) -> bool {
    !v.is_finite() || v.abs() > INFINITY_FACTOR * s.unit()
}

/// Largest scaled difference max_i |a_i − b_i| / max(|a_i|, |b_i|, typical_i),
/// with parameters at infinity of the same sign in both counted as equal.
pub fn scaled_gap(a: &[f64], b: &[f64], scales: &[ParamScale]) -> f64 {
    scaled_gap_except(a, b, scales, &[])
}

/// [`scaled_gap`] ignoring the parameters listed in `skip`.
pub fn scaled_gap_except(a: &[f64], b: &[f64], scales: &[ParamScale], skip: &[usize]) -> f64 {
    let mut gap: f64 = 0.0;
    for (i, (&x, &y)) in a.iter().zip(b).enumerate() {
        if skip.contains(&i) {
            continue;
        }
        let unit = scales.get(i).map(|s| s.unit()).unwrap_or(1.0);
        let s = scales
            .get(i)
            .cloned()
            .unwrap_or_else(|| ParamScale::from_value(1.0));
        if at_infinity(x, &s)
            && at_infinity(y, &s)
            && (x.is_sign_positive() == y.is_sign_positive())
        {
            continue;
        }
        if !(x.is_finite() && y.is_finite()) {
            return f64::INFINITY;
        }
        gap = gap.max((x - y).abs() / x.abs().max(y.abs()).max(unit));
    }
    gap
}

/// An end point as clustering sees it.
#[derive(Debug, Clone, Copy)]
pub struct EndPoint<'a> {
    /// Parameters, in canonical order.
    pub params: &'a [f64],
    /// Sum of squares.
    pub ssr: f64,
    /// Parameters at a boundary or at infinity ([`divergent_params`]), sorted.
    pub divergent: &'a [usize],
    /// True when the Jacobian there is rank-deficient ([`is_singular`]).
    pub singular: bool,
}

/// True when `a` and `b` are the same minimum under `tol`: sums of squares
/// agree, the same parameters are divergent, and the others agree. Divergent
/// parameters are not compared: a boundary minimum is approached from many
/// directions and ends wherever the fitter gave up. Nor are the parameters of
/// two rank-deficient points: such a minimum is a valley of equal fits (e.g.
/// two equal rates, whose amplitudes only count by their sum), and the fitter
/// stops anywhere along it.
pub fn same_minimum(a: &EndPoint, b: &EndPoint, scales: &[ParamScale], tol: &Tolerances) -> bool {
    same_ssr(a.ssr, b.ssr, tol.ssr_rtol, tol.ssr_atol)
        && a.divergent == b.divergent
        && ((a.singular && b.singular)
            || scaled_gap_except(a.params, b.params, scales, a.divergent) <= tol.param_rtol)
}

/// Condition number σmax/σmin of `j` (∞ when rank-deficient, NaN when not
/// finite or when the decomposition fails). The matrix is divided by its
/// largest magnitude first, which leaves the ratio unchanged and keeps the
/// decomposition from overflowing; the unordered SVD cannot panic on NaN.
pub fn condition_number(j: &DMatrix<f64>) -> f64 {
    if j.ncols() == 0 || j.nrows() == 0 || j.iter().any(|v| !v.is_finite()) {
        return f64::NAN;
    }
    let big = j.iter().fold(0.0f64, |b, v| b.max(v.abs()));
    if big == 0.0 {
        return f64::INFINITY;
    }
    let Some(svd) = nalgebra::SVD::try_new_unordered(j / big, false, false, f64::EPSILON, 1000)
    else {
        return f64::NAN;
    };
    let sv = svd.singular_values;
    if sv.iter().any(|v| !v.is_finite()) {
        return f64::NAN;
    }
    let max = sv.iter().cloned().fold(0.0, f64::max);
    let min = sv.iter().cloned().fold(f64::INFINITY, f64::min);
    if j.nrows() < j.ncols() || min == 0.0 {
        f64::INFINITY
    } else {
        max / min
    }
}

/// Condition number of `j` after scaling every column to unit length (Van der
/// Sluis 1969: nearly the best diagonal scaling), so that it measures
/// dependence among the columns, not their units. Zero columns count as
/// singular; column norms are taken without overflow.
pub fn scaled_condition(j: &DMatrix<f64>) -> f64 {
    if j.ncols() == 0 || j.nrows() == 0 || j.iter().any(|v| !v.is_finite()) {
        return f64::NAN;
    }
    let mut s = j.clone();
    for mut c in s.column_iter_mut() {
        let n = safe_column_norm(c.as_slice());
        if n == 0.0 {
            return f64::INFINITY;
        }
        c /= n;
    }
    condition_number(&s)
}

/// True when the column-scaled Jacobian is rank-deficient or not finite.
pub fn is_singular(j: &DMatrix<f64>) -> bool {
    let c = scaled_condition(j);
    !c.is_finite() || c > SINGULAR_CONDITION
}

/// Parameters of a minimum that sit at a boundary or at infinity: not finite,
/// grown beyond 1e6× their typical scale, or whose Jacobian column (times the
/// typical scale) has vanished against the largest one. When every column
/// vanishes the model is flat there (a plateau, not a minimum): all are listed.
pub fn divergent_params(
    params: &[f64],
    jacobian: &DMatrix<f64>,
    scales: &[ParamScale],
) -> Vec<usize> {
    let unit = |i: usize| scales.get(i).map(|s| s.unit()).unwrap_or(1.0);
    let col = |i: usize| -> f64 {
        if i < jacobian.ncols() {
            safe_column_norm(jacobian.column(i).as_slice()) * unit(i)
        } else {
            f64::NAN
        }
    };
    let largest = (0..params.len())
        .map(col)
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    (0..params.len())
        .filter(|&i| {
            let s = scales
                .get(i)
                .cloned()
                .unwrap_or_else(|| ParamScale::from_value(1.0));
            let c = col(i);
            at_infinity(params[i], &s) || !c.is_finite() || c <= VANISHING_COLUMN * largest
        })
        .collect()
}

/// Sums of squares of two minima agreeing within this relative difference may
/// lie on one flat valley.
pub const VALLEY_SSR_RTOL: f64 = 1e-5;
/// Most the sum of squares may rise (relative) at the points t = ¼, ½, ¾ of
/// the segment between two such minima for them to count as one flat valley.
pub const VALLEY_RISE_RTOL: f64 = 1e-3;

/// A minimum as the flat-valley test sees it.
pub struct ValleyPoint<'a> {
    /// The point.
    pub params: &'a [f64],
    /// Sum of squares there.
    pub ssr: f64,
    /// Its divergent parameters ([`divergent_params`]).
    pub divergent: &'a [usize],
}

/// Groups minima lying on one flat valley: `group[i]` is the smallest index of
/// the valley holding minimum i (i itself when alone). Two minima join when
/// the same parameters are divergent, their sums of squares agree within
/// [`VALLEY_SSR_RTOL`], and the sum of squares along the straight segment
/// between them (`cost` at t = ¼, ½, ¾) rises by at most [`VALLEY_RISE_RTOL`]
/// over the higher end: the segment then runs along a near-null direction of
/// the Jacobian, where a local fitter stops anywhere. Valleys are the
/// connected components of that relation (single linkage), so a curved valley
/// joins through its nearer members.
pub fn flat_valleys(points: &[ValleyPoint], cost: impl Fn(&[f64]) -> f64) -> Vec<usize> {
    let n = points.len();
    let mut group: Vec<usize> = (0..n).collect();
    fn root(g: &mut [usize], mut i: usize) -> usize {
        while g[i] != i {
            g[i] = g[g[i]];
            i = g[i];
        }
        i
    }
    for i in 0..n {
        for j in (i + 1)..n {
            let (a, b) = (&points[i], &points[j]);
            if a.divergent != b.divergent
                || a.params.len() != b.params.len()
                || !same_ssr(a.ssr, b.ssr, VALLEY_SSR_RTOL, 0.0)
                || root(&mut group, i) == root(&mut group, j)
            {
                continue;
            }
            let top = a.ssr.max(b.ssr);
            let flat = [0.25, 0.5, 0.75].iter().all(|&t| {
                let p: Vec<f64> = a
                    .params
                    .iter()
                    .zip(b.params)
                    .map(|(x, y)| x + t * (y - x))
                    .collect();
                let c = cost(&p);
                c.is_finite() && c <= top * (1.0 + VALLEY_RISE_RTOL)
            });
            if flat {
                let (ri, rj) = (root(&mut group, i), root(&mut group, j));
                let (lo, hi) = (ri.min(rj), ri.max(rj));
                group[hi] = lo;
            }
        }
    }
    (0..n).map(|i| root(&mut group, i)).collect()
}

/// Parameters that change along a valley: those whose values across `points`
/// differ by more than `rtol` relative to their size (or typical scale).
pub fn valley_direction(points: &[&[f64]], scales: &[ParamScale], rtol: f64) -> Vec<usize> {
    let Some(first) = points.first() else {
        return Vec::new();
    };
    (0..first.len())
        .filter(|&i| {
            let unit = scales.get(i).map(|s| s.unit()).unwrap_or(1.0);
            let vals: Vec<f64> = points.iter().filter_map(|p| p.get(i).copied()).collect();
            let lo = vals.iter().cloned().fold(f64::INFINITY, f64::min);
            let hi = vals.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            let size = lo.abs().max(hi.abs()).max(unit);
            (hi - lo) > rtol * size
        })
        .collect()
}

/// One group of end points: a distinct minimum as the search sees it.
#[derive(Debug, Clone)]
pub struct Basin {
    /// Best (lowest-ssr) point, in canonical order.
    pub params: Vec<f64>,
    /// Sum of squares at `params`.
    pub ssr: f64,
    /// Divergent parameters of the basin's points.
    pub divergent: Vec<usize>,
    /// Jacobian rank-deficient at the best point.
    pub singular: bool,
    /// Run whose end point is `params`.
    pub best_run: usize,
    /// Runs that ended here.
    pub members: Vec<usize>,
    /// Runs stopped early and credited here.
    pub credited: Vec<usize>,
}

/// The basins found so far, in order of discovery (deterministic: runs are
/// added in candidate order).
#[derive(Debug, Clone, Default)]
pub struct Basins {
    /// The basins.
    pub list: Vec<Basin>,
}

impl Basins {
    /// The first basin that `p` belongs to.
    pub fn find(&self, p: &EndPoint, scales: &[ParamScale], tol: &Tolerances) -> Option<usize> {
        self.list.iter().position(|b| {
            let q = EndPoint {
                params: &b.params,
                ssr: b.ssr,
                divergent: &b.divergent,
                singular: b.singular,
            };
            same_minimum(p, &q, scales, tol)
        })
    }

    /// Adds run `run` ending at `p`; returns its basin.
    pub fn add(
        &mut self,
        run: usize,
        p: &EndPoint,
        scales: &[ParamScale],
        tol: &Tolerances,
    ) -> usize {
        match self.find(p, scales, tol) {
            Some(k) => {
                let b = &mut self.list[k];
                b.members.push(run);
                if p.ssr < b.ssr {
                    b.ssr = p.ssr;
                    b.params = p.params.to_vec();
                    b.singular = p.singular;
                    b.best_run = run;
                }
                k
            }
            None => {
                self.list.push(Basin {
                    params: p.params.to_vec(),
                    ssr: p.ssr,
                    divergent: p.divergent.to_vec(),
                    singular: p.singular,
                    best_run: run,
                    members: vec![run],
                    credited: Vec::new(),
                });
                self.list.len() - 1
            }
        }
    }

    /// Credits run `run` to basin `k` (ignored when there is no such basin).
    pub fn credit(&mut self, k: usize, run: usize) {
        if let Some(b) = self.list.get_mut(k) {
            b.credited.push(run);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::search::scale::SignFreedom;

    fn sc(t: f64) -> ParamScale {
        ParamScale {
            typical: t,
            log: false,
            sign: SignFreedom::Either,
            lo: -t,
            hi: t,
        }
    }

    #[test]
    fn grouping_needs_both_ssr_and_parameters() {
        let s = vec![sc(1.0), sc(1.0)];
        let tol = Tolerances::default();
        let mut b = Basins::default();
        let e = |params: &'static [f64], ssr: f64, divergent: &'static [usize]| EndPoint {
            params,
            ssr,
            divergent,
            singular: false,
        };
        assert_eq!(b.add(0, &e(&[1.0, 2.0], 5.0, &[]), &s, &tol), 0);
        assert_eq!(
            b.add(1, &e(&[1.0 + 1e-5, 2.0], 5.0 - 1e-7, &[]), &s, &tol),
            0
        );
        // Same ssr, other parameters: a different minimum.
        assert_eq!(b.add(2, &e(&[-1.0, 2.0], 5.0, &[]), &s, &tol), 1);
        // Same parameters, other ssr: different.
        assert_eq!(b.add(3, &e(&[1.0, 2.0], 5.1, &[]), &s, &tol), 2);
        assert_eq!(b.list[0].members, vec![0, 1]);
        assert_eq!(b.list[0].best_run, 1);
        // A boundary minimum: the divergent parameter ends anywhere, the others agree.
        assert_eq!(b.add(4, &e(&[3.0, 2.7e4], 1.0, &[1]), &s, &tol), 3);
        assert_eq!(b.add(5, &e(&[3.0, 9.0e5], 1.0, &[1]), &s, &tol), 3);
        assert_eq!(
            b.add(6, &e(&[3.0, 9.0e5], 1.0, &[]), &s, &tol),
            4,
            "not divergent there: other"
        );
        // Two rank-deficient points with the same ssr: one valley of minima.
        let v1 = EndPoint {
            params: &[5.0, -1.2],
            ssr: 2.0,
            divergent: &[],
            singular: true,
        };
        let v2 = EndPoint {
            params: &[-2.9, 6.7],
            ssr: 2.0,
            divergent: &[],
            singular: true,
        };
        assert_eq!(b.add(7, &v1, &s, &tol), 5);
        assert_eq!(b.add(8, &v2, &s, &tol), 5);
        assert_eq!(
            b.add(
                9,
                &EndPoint {
                    singular: false,
                    ..v2
                },
                &s,
                &tol
            ),
            6
        );
        // Both at +infinity in the first parameter: the same.
        assert_eq!(scaled_gap(&[3e7, 1.0], &[9e8, 1.0], &s), 0.0);
        assert!(scaled_gap(&[3e7, 1.0], &[-9e8, 1.0], &s) > 1.0);
        // Near zero the typical scale is the unit: 1e-4 apart on a unit scale.
        assert!((scaled_gap(&[1e-6], &[1e-4], &s) - 0.99e-4).abs() < 1e-12);
    }

    #[test]
    fn diagnostics() {
        let j = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 0.0, 2.0, 0.0, 0.0]);
        assert!((condition_number(&j) - 2.0).abs() < 1e-12);
        let z = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 0.0, 0.0]);
        assert_eq!(condition_number(&z), f64::INFINITY);
        let badly_scaled = DMatrix::from_row_slice(2, 2, &[1e8, 0.0, 0.0, 1e-8]);
        assert!((condition_number(&badly_scaled) - 1e16).abs() < 1.0);
        assert!((scaled_condition(&badly_scaled) - 1.0).abs() < 1e-12);
        assert!(!is_singular(&badly_scaled));
        let twins = DMatrix::from_row_slice(3, 2, &[1.0, 1.0, 0.5, 0.5, 0.2, 0.2]);
        assert!(is_singular(&twins));
        let s = vec![sc(1.0), sc(1.0), sc(1.0)];
        let j3 = DMatrix::from_row_slice(2, 3, &[1.0, 1e-12, 1.0, 1.0, 0.0, 1.0]);
        assert_eq!(divergent_params(&[1.0, 1.0, 1.0], &j3, &s), vec![1]);
        let j3b = DMatrix::from_row_slice(2, 3, &[1.0, 1.0, 1.0, 1.0, 0.5, 1.0]);
        assert_eq!(
            divergent_params(&[1.0, 2e6, f64::NAN], &j3b, &s),
            vec![1, 2]
        );
        assert!(divergent_params(&[1.0, 2.0, 3.0], &j3b, &s).is_empty());
        let flat = DMatrix::zeros(2, 3);
        assert_eq!(divergent_params(&[1.0, 2.0, 3.0], &flat, &s), vec![0, 1, 2]);
    }

    /// Cost (p₀·p₁ − 1)² + 1: a curved flat valley p₀·p₁ = 1 at cost 1.
    #[test]
    fn minima_on_a_flat_valley_join_and_a_ridge_keeps_them_apart() {
        let valley = |p: &[f64]| (p[0] * p[1] - 1.0).powi(2) + 1.0;
        let pts = [vec![1.0, 1.0], vec![1.1, 1.0 / 1.1], vec![1.2, 1.0 / 1.2], vec![-1.0, -1.0]];
        let vp: Vec<ValleyPoint> = pts
            .iter()
            .map(|p| ValleyPoint {
                params: p,
                ssr: valley(p),
                divergent: &[],
            })
            .collect();
        // The first three join along the valley (single linkage); the mirror
        // branch at (−1, −1) lies across a ridge of cost 2 at the origin.
        assert_eq!(flat_valleys(&vp, valley), vec![0, 0, 0, 3]);
        let ends: Vec<&[f64]> = pts[..3].iter().map(|p| p.as_slice()).collect();
        assert_eq!(valley_direction(&ends, &[], 1e-3), vec![0, 1]);
        // Different costs never join.
        let vp2 = [
            ValleyPoint { params: &pts[0], ssr: 1.0, divergent: &[] },
            ValleyPoint { params: &pts[1], ssr: 1.1, divergent: &[] },
        ];
        assert_eq!(flat_valleys(&vp2, valley), vec![0, 1]);
    }

}
