//! Plateaus at the low-x and high-x ends of a view: the level the curve settles
//! to, or, when it is still moving at the edge of the data, the extreme value seen.

use super::linefit::fit_line;
use super::robust::{mad_sigma, median};
use serde::Serialize;

/// Which end of the x range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum End {
    /// Smallest x.
    Low,
    /// Largest x.
    High,
}

/// The behaviour of a view at one end of its x range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plateau {
    /// Which end.
    pub end: End,
    /// Plateau level (median of the end points) when reached; otherwise the
    /// extreme observed value in the direction the curve is heading.
    pub level: f64,
    /// Robust spread of the end points (1.4826 × MAD).
    pub spread: f64,
    /// Number of end points examined.
    pub n_points: usize,
    /// True when the curve levels off there; false when the data merely end.
    pub reached: bool,
    /// Slope of a line through the end points.
    pub slope: f64,
    /// Standard error of that slope.
    pub slope_se: f64,
    /// |slope| × whole x span ÷ whole y range: how much the curve would still move.
    pub relative_change: f64,
    /// x span of the end points (view coordinates).
    pub x_from: f64,
    /// See `x_from`.
    pub x_to: f64,
}

/// Plateau at one end of (x, y) (x increasing); None for fewer than 3 points.
/// Levels off when the end slope carried over the whole x span would move the
/// curve by under 15 % of its range, or by under 35 % while the slope is within
/// two standard errors of zero (common practice, thresholds our own).
pub fn plateau(x: &[f64], y: &[f64], end: End) -> Option<Plateau> {
    let n = x.len().min(y.len());
    if n < 3 {
        return None;
    }
    let k = ((n as f64 / 5.0).ceil() as usize).clamp(3, n);
    let (lo, hi) = match end {
        End::Low => (0, k),
        End::High => (n - k, n),
    };
    let (xs, ys) = (&x[lo..hi], &y[lo..hi]);
    let line = fit_line(xs, ys, None)?;
    let (ymin, ymax) = y[..n]
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let range = ymax - ymin;
    let span = x[n - 1] - x[0];
    let rel = if range > 0.0 {
        line.slope.abs() * span / range
    } else {
        0.0
    };
    let insignificant = line.slope.abs() <= 2.0 * line.slope_se;
    let reached = rel <= 0.15 || (insignificant && rel <= 0.35);
    let level = if reached {
        median(ys)?
    } else {
        // heading up toward this end → max; heading down → min
        let heading_up = match end {
            End::High => line.slope > 0.0,
            End::Low => line.slope < 0.0,
        };
        let f = if heading_up { f64::max } else { f64::min };
        ys.iter().cloned().fold(ys[0], f)
    };
    Some(Plateau {
        end,
        level,
        spread: mad_sigma(ys).unwrap_or(0.0),
        n_points: k,
        reached,
        slope: line.slope,
        slope_se: line.slope_se,
        relative_change: rel,
        x_from: xs[0],
        x_to: xs[xs.len() - 1],
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flat_and_rising_ends() {
        let x: Vec<f64> = (0..50).map(|i| i as f64 * 0.1).collect();
        let y: Vec<f64> = x.iter().map(|t| 3.0 * (1.0 - (-2.0 * t).exp())).collect();
        let hi = plateau(&x, &y, End::High).unwrap();
        assert!(hi.reached && (hi.level - 3.0).abs() < 0.01, "{hi:?}");
        let lo = plateau(&x, &y, End::Low).unwrap();
        assert!(!lo.reached && lo.level == 0.0, "{lo:?}");
        let c = plateau(&x, &vec![2.0; 50], End::Low).unwrap();
        assert!(c.reached && c.level == 2.0 && c.spread == 0.0);
    }
}
