//! Global shape of a view: monotonicity, sign of the response, and the
//! curvature (convex or concave) at each end.

use super::robust::spearman;
use super::smooth::{local_poly, Smoothed};
use serde::Serialize;

/// Direction of a response against x.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Direction {
    /// Rises throughout (within the noise).
    Increasing,
    /// Falls throughout (within the noise).
    Decreasing,
    /// Rises somewhere and falls elsewhere.
    NotMonotone,
    /// No significant slope anywhere.
    Flat,
}

/// Monotonicity of a view with its robust scores.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Monotonicity {
    /// Overall direction.
    pub direction: Direction,
    /// Spearman rank correlation of y with x (Spearman 1904).
    pub spearman: f64,
    /// Sign changes of the smoothed slope, counting only slopes beyond 4 standard deviations.
    pub slope_sign_changes: usize,
}

/// Monotonicity from Spearman's ρ and the significant signs of the smoothed slope.
pub fn monotonicity(x: &[f64], y: &[f64], sm: &Smoothed) -> Monotonicity {
    let rho = spearman(x, y);
    let mut signs: Vec<i8> = Vec::new();
    for i in 0..sm.d1.len() {
        let (d, sd) = (sm.d1[i], sm.sd_d1[i]);
        if sd.is_finite() && d.abs() > 4.0 * sd {
            let sg = if d > 0.0 { 1 } else { -1 };
            if signs.last() != Some(&sg) {
                signs.push(sg);
            }
        }
    }
    let changes = signs.len().saturating_sub(1);
    let direction = match (signs.first(), changes) {
        (None, _) if rho.abs() < 0.9 => Direction::Flat,
        (None, _) => {
            if rho > 0.0 {
                Direction::Increasing
            } else {
                Direction::Decreasing
            }
        }
        (Some(&s), 0) => {
            if s > 0 {
                Direction::Increasing
            } else {
                Direction::Decreasing
            }
        }
        _ => Direction::NotMonotone,
    };
    Monotonicity {
        direction,
        spearman: rho,
        slope_sign_changes: changes,
    }
}

/// Sign pattern of a response.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum SignPattern {
    /// Every value > 0.
    Positive,
    /// Every value < 0.
    Negative,
    /// Both signs occur.
    Mixed,
    /// Some values are exactly 0, the rest one sign (or all zero).
    ContainsZero,
    /// No values.
    Empty,
}

/// Sign of a response with its counts.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Sign {
    /// Overall pattern.
    pub pattern: SignPattern,
    /// Count of values > 0.
    pub positive: usize,
    /// Count of values < 0.
    pub negative: usize,
    /// Count of values = 0.
    pub zero: usize,
}

/// Sign pattern of the finite values of y.
pub fn sign(y: &[f64]) -> Sign {
    let f = y.iter().filter(|v| v.is_finite());
    let positive = f.clone().filter(|&&v| v > 0.0).count();
    let negative = f.clone().filter(|&&v| v < 0.0).count();
    let zero = f.filter(|&&v| v == 0.0).count();
    let pattern = if positive == 0 && negative == 0 && zero == 0 {
        SignPattern::Empty
    } else if positive > 0 && negative > 0 {
        SignPattern::Mixed
    } else if zero > 0 {
        SignPattern::ContainsZero
    } else if positive > 0 {
        SignPattern::Positive
    } else {
        SignPattern::Negative
    };
    Sign {
        pattern,
        positive,
        negative,
        zero,
    }
}

/// Bending of a curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Bend {
    /// Second derivative significantly positive (holds water).
    Convex,
    /// Second derivative significantly negative.
    Concave,
    /// Second derivative within three standard deviations of zero.
    Straight,
}

/// Curvature at one end of a view.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EndCurvature {
    /// Convex, concave or straight within the noise.
    pub bend: Bend,
    /// Second derivative of a quadratic through the end points.
    pub d2: f64,
    /// Its standard deviation from the noise.
    pub sd: f64,
}

/// Curvature of a quadratic through the first (`low`) or last fifth of the
/// points (at least 4) given noise σ.
pub fn end_curvature(x: &[f64], y: &[f64], sigma: f64, low: bool) -> Option<EndCurvature> {
    let n = x.len().min(y.len());
    if n < 4 {
        return None;
    }
    let k = ((n as f64 / 5.0).ceil() as usize).clamp(4, n);
    let (lo, hi) = if low { (0, k) } else { (n - k, n) };
    let xc = 0.5 * (x[lo] + x[hi - 1]);
    let p = local_poly(&x[lo..hi], &y[lo..hi], xc, 2)?;
    let d2 = p.deriv[2];
    let sd = sigma * p.var_factor[2].sqrt();
    let bend = if d2.abs() <= 3.0 * sd {
        Bend::Straight
    } else if d2 > 0.0 {
        Bend::Convex
    } else {
        Bend::Concave
    };
    Some(EndCurvature { bend, d2, sd })
}
