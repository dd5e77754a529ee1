//! Noise level of a response from the data alone, without a model: robust
//! scale of the pseudo-residuals of Gasser, Sroka & Jennen-Steinmetz (1986),
//! the uneven-x form of the difference-based estimator of Rice (1984).

use super::robust::{mad_sigma, median};

/// Smallest noise the detectors assume: a tiny fraction of the response scale,
/// so exact data do not divide by zero.
pub fn noise_floor(y: &[f64]) -> f64 {
    let (mut lo, mut hi, mut amax) = (f64::INFINITY, f64::NEG_INFINITY, 0.0f64);
    for &v in y {
        lo = lo.min(v);
        hi = hi.max(v);
        amax = amax.max(v.abs());
    }
    let range = if hi > lo { hi - lo } else { 0.0 };
    let scale = range.max(1e-3 * amax);
    if scale > 0.0 && scale.is_finite() {
        1e-6 * scale
    } else {
        f64::MIN_POSITIVE * 1e10
    }
}

/// Pseudo-residuals e_i/c_i, each with the noise variance, from interpolating
/// y_i linearly between its neighbours (Gasser et al. 1986); x must be strictly
/// increasing. Empty for fewer than 3 points.
pub fn pseudo_residuals(x: &[f64], y: &[f64]) -> Vec<f64> {
    let n = x.len().min(y.len());
    if n < 3 {
        return Vec::new();
    }
    let mut out = Vec::with_capacity(n - 2);
    for i in 1..n - 1 {
        let span = x[i + 1] - x[i - 1];
        if span <= 0.0 {
            continue;
        }
        let a = (x[i + 1] - x[i]) / span;
        let b = (x[i] - x[i - 1]) / span;
        let e = a * y[i - 1] + b * y[i + 1] - y[i];
        let c = (a * a + b * b + 1.0).sqrt();
        out.push(e / c);
    }
    out
}

/// Robust global noise standard deviation of y (at least the floor).
pub fn global_noise(x: &[f64], y: &[f64]) -> f64 {
    let floor = noise_floor(y);
    let e = pseudo_residuals(x, y);
    // Pseudo-residuals have mean zero: scale by median |e|, not MAD about the median.
    let abs: Vec<f64> = e.iter().map(|v| v.abs()).collect();
    match median(&abs) {
        Some(m) if m.is_finite() => (1.4826 * m).max(floor),
        _ => floor,
    }
}

/// Noise standard deviation near each point (running median of |pseudo-residuals|
/// over ±half neighbours), floored at a quarter of the global value.
pub fn local_noise(x: &[f64], y: &[f64], half: usize) -> Vec<f64> {
    let n = x.len().min(y.len());
    let global = global_noise(x, y);
    let e: Vec<f64> = pseudo_residuals(x, y).iter().map(|v| v.abs()).collect();
    if e.len() < 5 {
        return vec![global; n];
    }
    let m = e.len();
    (0..n)
        .map(|i| {
            // point i has pseudo-residual index i-1 (clamped at the ends)
            let c = i.saturating_sub(1).min(m - 1);
            let lo = c.saturating_sub(half);
            let hi = (c + half + 1).min(m);
            let s = median(&e[lo..hi]).map(|v| 1.4826 * v).unwrap_or(global);
            s.max(0.25 * global)
        })
        .collect()
}

/// Robust spread of residuals about a fitted curve (for callers with a fit in hand).
pub fn residual_noise(residuals: &[f64]) -> Option<f64> {
    mad_sigma(residuals)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::features::testdata::Rng;

    #[test]
    fn recovers_noise_on_a_curve_with_uneven_x() {
        let mut rng = Rng::new(7);
        let mut x: Vec<f64> = (0..400).map(|_| rng.uniform() * 10.0).collect();
        x.sort_by(|a, b| a.total_cmp(b));
        let y: Vec<f64> = x
            .iter()
            .map(|&t| 5.0 * (-0.3 * t).exp() + 0.05 * rng.normal())
            .collect();
        let s = global_noise(&x, &y);
        assert!((s - 0.05).abs() < 0.006, "noise {s}");
        let loc = local_noise(&x, &y, 50);
        assert_eq!(loc.len(), 400);
        let (lo, hi) = loc
            .iter()
            .fold((1.0f64, 0.0f64), |(a, b), &v| (a.min(v), b.max(v)));
        assert!(lo > 0.03 && hi < 0.075, "{lo} {hi}");
    }

    #[test]
    fn exact_and_tiny_inputs_do_not_break() {
        assert!(global_noise(&[1.0, 2.0], &[3.0, 3.0]) > 0.0);
        let x = [1.0, 2.0, 3.0, 4.0];
        let s = global_noise(&x, &[2.0, 4.0, 6.0, 8.0]);
        assert!(s > 0.0 && s <= 1e-5);
    }
}
