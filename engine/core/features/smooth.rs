//! Smoothing and derivatives by local polynomial least squares: the
//! Savitzky & Golay (1964) filter, computed directly at each point so it also
//! works for uneven x. Each estimate carries its standard deviation for a given noise.

use nalgebra::{DMatrix, DVector};

/// A polynomial fitted around x0: derivatives at x0 and their variance factors.
#[derive(Debug, Clone, PartialEq)]
pub struct LocalPoly {
    /// Value, first and second derivative at x0 (missing orders are 0).
    pub deriv: [f64; 3],
    /// Variance of each derivative per unit noise variance (multiply by σ²).
    pub var_factor: [f64; 3],
}

/// Least-squares polynomial of `degree` (1..=3) through the points, expanded about x0.
/// None when there are too few distinct points or the system is singular.
pub fn local_poly(x: &[f64], y: &[f64], x0: f64, degree: usize) -> Option<LocalPoly> {
    let n = x.len().min(y.len());
    let degree = degree.clamp(1, 3);
    if n < degree + 1 {
        return None;
    }
    let h = x[..n].iter().map(|v| (v - x0).abs()).fold(0.0, f64::max);
    if h <= 0.0 || !h.is_finite() {
        return None;
    }
    let p = degree + 1;
    let a = DMatrix::from_fn(n, p, |i, j| ((x[i] - x0) / h).powi(j as i32));
    let b = DVector::from_fn(n, |i, _| y[i]);
    let ata = a.transpose() * &a;
    let inv = ata.try_inverse()?;
    let beta = &inv * (a.transpose() * b);
    if beta.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let mut deriv = [0.0; 3];
    let mut var_factor = [0.0; 3];
    let fact = [1.0, 1.0, 2.0];
    for k in 0..3.min(p) {
        let s = fact[k] / h.powi(k as i32);
        deriv[k] = beta[k] * s;
        var_factor[k] = inv[(k, k)].max(0.0) * s * s;
    }
    Some(LocalPoly { deriv, var_factor })
}

/// Smoothed values and derivatives at every point with their standard deviations.
#[derive(Debug, Clone, Default)]
pub struct Smoothed {
    /// Smoothed y.
    pub value: Vec<f64>,
    /// Smoothed dy/dx.
    pub d1: Vec<f64>,
    /// Smoothed d²y/dx².
    pub d2: Vec<f64>,
    /// Standard deviation of the smoothed value from noise.
    pub sd_value: Vec<f64>,
    /// Standard deviation of d1 from noise.
    pub sd_d1: Vec<f64>,
    /// Standard deviation of d2 from noise.
    pub sd_d2: Vec<f64>,
}

/// Savitzky–Golay smoothing with windows of 2·half+1 neighbouring points (shifted
/// inward at the ends) and a local polynomial of `degree`; `sigma` is the noise
/// near each point (one value repeated is fine). Points where a fit fails keep the raw
/// value and zero derivatives.
pub fn savitzky_golay(x: &[f64], y: &[f64], half: usize, degree: usize, sigma: &[f64]) -> Smoothed {
    let n = x.len().min(y.len());
    let mut s = Smoothed {
        value: y[..n].to_vec(),
        d1: vec![0.0; n],
        d2: vec![0.0; n],
        sd_value: vec![0.0; n],
        sd_d1: vec![f64::INFINITY; n],
        sd_d2: vec![f64::INFINITY; n],
    };
    let width = (2 * half + 1).min(n);
    if width < degree.clamp(1, 3) + 2 {
        return s;
    }
    for i in 0..n {
        let lo = i.saturating_sub(half).min(n - width);
        let hi = lo + width;
        let sig = sigma.get(i).or(sigma.last()).copied().unwrap_or(0.0);
        if let Some(p) = local_poly(&x[lo..hi], &y[lo..hi], x[i], degree) {
            s.value[i] = p.deriv[0];
            s.d1[i] = p.deriv[1];
            s.d2[i] = p.deriv[2];
            s.sd_value[i] = sig * p.var_factor[0].sqrt();
            s.sd_d1[i] = sig * p.var_factor[1].sqrt();
            s.sd_d2[i] = sig * p.var_factor[2].sqrt();
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quadratic_is_reproduced_exactly() {
        let x: Vec<f64> = (0..20).map(|i| (i as f64).powf(1.3)).collect();
        let y: Vec<f64> = x.iter().map(|t| 2.0 - 0.5 * t + 0.25 * t * t).collect();
        let s = savitzky_golay(&x, &y, 3, 2, &[0.1]);
        for i in 0..20 {
            assert!((s.value[i] - y[i]).abs() < 1e-8);
            assert!((s.d1[i] - (-0.5 + 0.5 * x[i])).abs() < 1e-8);
            assert!((s.d2[i] - 0.5).abs() < 1e-8);
            assert!(s.sd_d2[i] > 0.0 && s.sd_d2[i].is_finite());
        }
        // standard deviation of a mean of 3 equally spaced points by a line: σ/√3 at centre
        let p = local_poly(&[-1.0, 0.0, 1.0], &[0.0, 0.0, 0.0], 0.0, 1).unwrap();
        assert!((p.var_factor[0] - 1.0 / 3.0).abs() < 1e-12);
    }

    #[test]
    fn too_few_points_leave_data_alone() {
        let s = savitzky_golay(&[1.0, 2.0], &[3.0, 4.0], 3, 2, &[1.0]);
        assert_eq!(s.value, vec![3.0, 4.0]);
        assert!(local_poly(&[1.0, 1.0, 1.0], &[1.0, 2.0, 3.0], 1.0, 2).is_none());
    }
}
