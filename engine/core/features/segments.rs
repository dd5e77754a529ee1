//! Straight stretches of a view: the longest run of consecutive points that a
//! line fits within the noise, and the straight pieces at each end.
//!
//! A run is straight when (a) the weighted residual χ² per degree of freedom of
//! a line, with weights 1/σᵢ² from the local noise, is within its sampling spread
//! (Pearson's χ² goodness of fit) and (b) adding a quadratic term does not help
//! significantly (extra-sum-of-squares F test, common practice). The search over all
//! runs uses running sums about each run's first point (O(n²) cheap steps); the
//! line reported for a chosen run is then fitted with the `linregress` crate
//! (calling the crate for every one of the O(n²) candidate runs would cost a
//! pseudo-inverse each, too slow for a search).

use super::linefit::fit_line_linregress;
use serde::Serialize;

/// A straight stretch of a view and its fitted line (in view coordinates).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Segment {
    /// Index of the first point (in the view).
    pub i_from: usize,
    /// Index of the last point (inclusive).
    pub i_to: usize,
    /// View x of the first point.
    pub x_from: f64,
    /// View x of the last point.
    pub x_to: f64,
    /// Number of points in the stretch.
    pub n_points: usize,
    /// Fraction of the view's points in the stretch.
    pub fraction: f64,
    /// Slope of the fitted line.
    pub slope: f64,
    /// Value of the fitted line at view x = 0.
    pub intercept: f64,
    /// Coefficient of determination of the line on the stretch.
    pub r_squared: f64,
    /// Root mean square residual.
    pub rms: f64,
    /// Weighted χ² per degree of freedom (≈1 when straight within the noise).
    pub chi2_per_dof: f64,
}

/// The straight stretches found in one view.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Segments {
    /// The stretch with the most points that is straight within the noise (≥ 4 points).
    pub longest: Option<Segment>,
    /// The longest straight stretch starting at the lowest x (≥ 3 points).
    pub low_end: Option<Segment>,
    /// The longest straight stretch ending at the highest x (≥ 3 points).
    pub high_end: Option<Segment>,
}

/// Running weighted moments of (dx, dy) about a run's first point.
#[derive(Default, Clone, Copy)]
struct Moments {
    s: [f64; 5],
    t: [f64; 3],
    u: f64,
}

impl Moments {
    fn add(&mut self, w: f64, dx: f64, dy: f64) {
        let mut p = w;
        for k in 0..5 {
            self.s[k] += p;
            if k < 3 {
                self.t[k] += p * dy;
            }
            p *= dx;
        }
        self.u += w * dy * dy;
    }

    /// Weighted SSR of the best line; None if degenerate.
    fn ssr_line(&self) -> Option<f64> {
        let [s0, s1, s2, _, _] = self.s;
        let sxx = s2 - s1 * s1 / s0;
        let sxy = self.t[1] - s1 * self.t[0] / s0;
        let syy = self.u - self.t[0] * self.t[0] / s0;
        if sxx <= 0.0 {
            return None;
        }
        Some((syy - sxy * sxy / sxx).max(0.0))
    }

    /// Weighted SSR of the best quadratic; None if singular.
    fn ssr_quad(&self) -> Option<f64> {
        let s = self.s;
        let m = nalgebra::Matrix3::new(s[0], s[1], s[2], s[1], s[2], s[3], s[2], s[3], s[4]);
        let t = nalgebra::Vector3::new(self.t[0], self.t[1], self.t[2]);
        let beta = m.try_inverse()? * t;
        Some((self.u - beta.dot(&t)).max(0.0))
    }
}

/// Whether a run with these moments and `m` points is straight; returns χ²/dof when it is.
fn straight(mo: &Moments, m: usize) -> Option<f64> {
    if m < 3 {
        return None;
    }
    let ssr1 = mo.ssr_line()?;
    let dof = (m - 2) as f64;
    let chi = ssr1 / dof;
    if chi > 1.5 + 3.0 * (2.0 / dof).sqrt() {
        return None;
    }
    if m >= 6 {
        let ssr2 = mo.ssr_quad()?;
        let f = (ssr1 - ssr2).max(0.0) / (ssr2 / (m - 3) as f64).max(0.25);
        if f > 10.0 {
            return None;
        }
    }
    Some(chi)
}

/// Find the straight stretches of (x, y) (x strictly increasing) given the local
/// noise σᵢ at each point.
pub fn find_segments(x: &[f64], y: &[f64], sigma: &[f64]) -> Segments {
    let n = x.len().min(y.len()).min(sigma.len());
    if n < 3 {
        return Segments::default();
    }
    let xspan = x[n - 1] - x[0];
    if xspan <= 0.0 || !xspan.is_finite() {
        return Segments::default();
    }
    // σ and y share units; work in units of σ so weights are O(1).
    let smin = sigma[..n].iter().cloned().fold(f64::INFINITY, f64::min);
    if smin <= 0.0 || !smin.is_finite() {
        return Segments::default();
    }
    let w: Vec<f64> = sigma[..n].iter().map(|s| (smin / s).powi(2)).collect();
    let ys: Vec<f64> = y[..n].iter().map(|v| v / smin).collect();
    let mut best_end = vec![None::<(usize, f64)>; n];
    let mut high_start: Option<(usize, f64)> = None;
    for i in 0..n - 2 {
        let mut mo = Moments::default();
        for j in i..n {
            mo.add(w[j], (x[j] - x[i]) / xspan, ys[j] - ys[i]);
            let m = j - i + 1;
            if m >= 3 {
                if let Some(chi) = straight(&mo, m) {
                    best_end[i] = Some((j, chi));
                    if j == n - 1 && high_start.is_none() {
                        high_start = Some((i, chi));
                    }
                }
            }
        }
    }
    let make = |i: usize, j: usize, chi: f64| -> Option<Segment> {
        let line = fit_line_linregress(&x[i..=j], &y[i..=j], Some(&w[i..=j]))?;
        Some(Segment {
            i_from: i,
            i_to: j,
            x_from: x[i],
            x_to: x[j],
            n_points: j - i + 1,
            fraction: (j - i + 1) as f64 / n as f64,
            slope: line.slope,
            intercept: line.intercept,
            r_squared: line.r_squared,
            rms: line.rms,
            chi2_per_dof: chi,
        })
    };
    let mut longest: Option<(usize, usize, f64)> = None;
    for (i, be) in best_end.iter().enumerate() {
        if let Some((j, chi)) = *be {
            let len = j - i + 1;
            let better = match longest {
                None => true,
                Some((a, b, _)) => {
                    len > b - a + 1 || (len == b - a + 1 && x[j] - x[i] > x[b] - x[a])
                }
            };
            if len >= 4.min(n) && better {
                longest = Some((i, j, chi));
            }
        }
    }
    Segments {
        longest: longest.and_then(|(i, j, c)| make(i, j, c)),
        low_end: best_end[0].and_then(|(j, c)| make(0, j, c)),
        high_end: high_start.and_then(|(i, c)| make(i, n - 1, c)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::features::testdata::Rng;

    #[test]
    fn broken_line_gives_its_two_pieces() {
        let mut rng = Rng::new(3);
        let x: Vec<f64> = (0..60).map(|i| i as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .map(|&t| if t < 40.0 { 2.0 * t } else { 80.0 - 0.5 * (t - 40.0) } + 0.3 * rng.normal())
            .collect();
        let s = find_segments(&x, &y, &vec![0.3; 60]);
        let l = s.longest.unwrap();
        assert!((l.slope - 2.0).abs() < 0.02, "{l:?}");
        assert!(l.i_from <= 1 && (38..=41).contains(&l.i_to), "{l:?}");
        let h = s.high_end.unwrap();
        assert!(
            (h.slope + 0.5).abs() < 0.06 && (39..=42).contains(&h.i_from),
            "{h:?}"
        );
        assert_eq!(s.low_end.unwrap().i_to, l.i_to);
    }

    #[test]
    fn exact_line_is_straight_throughout() {
        let x: Vec<f64> = (0..8).map(|i| 1e-12 * i as f64).collect();
        let y: Vec<f64> = x.iter().map(|t| 1e12 - 3e22 * t).collect();
        let s = find_segments(&x, &y, &[1e-6 * 2.1e11; 8]);
        let l = s.longest.unwrap();
        assert_eq!(l.n_points, 8);
        assert!((l.slope / -3e22 - 1.0).abs() < 1e-9);
    }
}
