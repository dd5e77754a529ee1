//! Straight-line least-squares fits: a closed form for the many small fits the
//! detectors make, and the `linregress` crate for the reported segment lines.

use serde::Serialize;

/// A fitted straight line y = intercept + slope·x with its quality.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Line {
    /// dy/dx.
    pub slope: f64,
    /// Value at x = 0.
    pub intercept: f64,
    /// Number of points fitted.
    pub n: usize,
    /// Coefficient of determination (unweighted); 1 when y is constant and fitted exactly.
    pub r_squared: f64,
    /// Root mean square residual (unweighted).
    pub rms: f64,
    /// Standard error of the slope from the unweighted residual scatter (∞ when n ≤ 2).
    pub slope_se: f64,
}

impl Line {
    /// Value of the line at x.
    pub fn at(&self, x: f64) -> f64 {
        self.intercept + self.slope * x
    }
}

/// Closed-form ordinary (or weighted, if `w` is given) least-squares line, computed
/// about the weighted means for accuracy; None for < 2 points or constant x.
pub fn fit_line(x: &[f64], y: &[f64], w: Option<&[f64]>) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let wt = |i: usize| w.and_then(|w| w.get(i).copied()).unwrap_or(1.0);
    let (mut sw, mut sx, mut sy) = (0.0, 0.0, 0.0);
    for i in 0..n {
        sw += wt(i);
        sx += wt(i) * x[i];
        sy += wt(i) * y[i];
    }
    if sw <= 0.0 || !sw.is_finite() {
        return None;
    }
    let (mx, my) = (sx / sw, sy / sw);
    let (mut sxx, mut sxy) = (0.0, 0.0);
    for i in 0..n {
        let dx = x[i] - mx;
        sxx += wt(i) * dx * dx;
        sxy += wt(i) * dx * (y[i] - my);
    }
    if sxx <= 0.0 || !sxx.is_finite() {
        return None;
    }
    let slope = sxy / sxx;
    let intercept = my - slope * mx;
    Some(finish(x, y, n, slope, intercept))
}

/// Unweighted quality measures of a given line on the points.
fn finish(x: &[f64], y: &[f64], n: usize, slope: f64, intercept: f64) -> Line {
    let mean_x = x[..n].iter().sum::<f64>() / n as f64;
    let mean_y = y[..n].iter().sum::<f64>() / n as f64;
    let (mut ssr, mut sst, mut sxx) = (0.0, 0.0, 0.0);
    for i in 0..n {
        // residual computed about the means to avoid cancellation at large offsets
        let r = (y[i] - mean_y) - slope * (x[i] - mean_x) - (intercept + slope * mean_x - mean_y);
        ssr += r * r;
        sst += (y[i] - mean_y).powi(2);
        sxx += (x[i] - mean_x).powi(2);
    }
    let r_squared = if sst > 0.0 { 1.0 - ssr / sst } else { 1.0 };
    let slope_se = if n > 2 && sxx > 0.0 {
        (ssr / (n - 2) as f64 / sxx).sqrt()
    } else {
        f64::INFINITY
    };
    Line {
        slope,
        intercept,
        n,
        r_squared,
        rms: (ssr / n as f64).sqrt(),
        slope_se,
    }
}

/// Weighted least-squares line through the `linregress` crate
/// (`fit_low_level_regression_model_without_statistics`, pseudo-inverse OLS):
/// rows are scaled by √w, x and y are centred and scaled first so the
/// pseudo-inverse is well conditioned at any magnitude. Falls back to the
/// closed form if the crate reports an error.
pub fn fit_line_linregress(x: &[f64], y: &[f64], w: Option<&[f64]>) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let mx = x[..n].iter().sum::<f64>() / n as f64;
    let my = y[..n].iter().sum::<f64>() / n as f64;
    let sx = x[..n].iter().map(|v| (v - mx).abs()).fold(0.0, f64::max);
    let sy = y[..n].iter().map(|v| (v - my).abs()).fold(0.0, f64::max);
    if sx <= 0.0 || !sx.is_finite() {
        return None;
    }
    let sy = if sy > 0.0 && sy.is_finite() { sy } else { 1.0 };
    let wmax = w
        .map(|w| w.iter().take(n).fold(0.0f64, |a, &b| a.max(b)))
        .unwrap_or(1.0);
    let mut rows = Vec::with_capacity(3 * n);
    for i in 0..n {
        let wi = w.and_then(|w| w.get(i).copied()).unwrap_or(1.0);
        let r = if wmax > 0.0 { (wi / wmax).sqrt() } else { 1.0 };
        rows.push(r * (y[i] - my) / sy);
        rows.push(r);
        rows.push(r * (x[i] - mx) / sx);
    }
    match linregress::fit_low_level_regression_model_without_statistics(&rows, n, 3) {
        Ok(p) if p.len() == 2 && p.iter().all(|v| v.is_finite()) => {
            let slope = p[1] * sy / sx;
            let intercept = my + p[0] * sy - slope * mx;
            Some(finish(x, y, n, slope, intercept))
        }
        _ => fit_line(x, y, w),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_form_and_linregress_agree_at_large_offsets() {
        let x: Vec<f64> = (0..10).map(|i| 1e12 + i as f64 * 1e9).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, &t)| 3e-12 * t + 7.0 + if i % 2 == 0 { 1e-4 } else { -1e-4 })
            .collect();
        let a = fit_line(&x, &y, None).unwrap();
        let b = fit_line_linregress(&x, &y, None).unwrap();

        assert!((b.slope / a.slope - 1.0).abs() < 1e-9);
        assert!((a.slope / 3e-12 - 1.0).abs() < 1e-2);
        assert!((b.at(1e12) - a.at(1e12)).abs() < 1e-6);
        assert!(a.r_squared > 0.99);
        assert!(fit_line(&[1.0, 1.0], &[2.0, 3.0], None).is_none());
    }

    #[test]
    fn weights_pull_the_line() {
        let x = [0.0, 1.0, 2.0, 3.0];
        let y = [0.0, 1.0, 2.0, 10.0];
        let w = [1.0, 1.0, 1.0, 1e-9];
        let l = fit_line_linregress(&x, &y, Some(&w)).unwrap();
        assert!((l.slope - 1.0).abs() < 1e-6 && l.intercept.abs() < 1e-6);
    }
}
