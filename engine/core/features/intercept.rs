//! The value a view extrapolates to at its low end (x → 0 on a linear axis,
//! the lowest x on a log axis) and the slopes at both ends, from the straight
//! pieces found at the ends.

use super::linefit::fit_line;
use super::segments::Segment;
use super::views::XAxis;
use serde::Serialize;

/// Extrapolated value at the low end of a view.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Intercept {
    /// View x where the value is read: 0 on a linear axis, the lowest x on a log axis.
    pub x_at: f64,
    /// Value of the local straight line there.
    pub value: f64,
    /// Slope of that line.
    pub slope: f64,
    /// Points in the local line.
    pub n_points: usize,
    /// Distance from the data to x_at as a fraction of the x span (0 when inside the data).
    pub extrapolation: f64,
    /// True when x_at lies within the data or within 10 % of the span from it.
    pub near: bool,
}

/// Intercept of a view from its low-end straight piece; when x = 0 lies inside a
/// linear-axis view, a straight line through the points nearest 0 is used instead.
pub fn intercept(
    x: &[f64],
    y: &[f64],
    axis: XAxis,
    low_piece: Option<&Segment>,
) -> Option<Intercept> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let (xmin, xmax) = (x[0], x[n - 1]);
    let span = xmax - xmin;
    if span <= 0.0 {
        return None;
    }
    let x_at = match axis {
        XAxis::Linear => 0.0,
        XAxis::Log => xmin,
    };
    if axis == XAxis::Linear && xmin < 0.0 && xmax > 0.0 {
        // interpolate: line through the nearest points to 0
        let k = ((n as f64 / 10.0).ceil() as usize).clamp(3.min(n), n);
        let mut idx: Vec<usize> = (0..n).collect();
        idx.sort_by(|&a, &b| x[a].abs().total_cmp(&x[b].abs()));
        idx.truncate(k);
        idx.sort_unstable();
        let xs: Vec<f64> = idx.iter().map(|&i| x[i]).collect();
        let ys: Vec<f64> = idx.iter().map(|&i| y[i]).collect();
        let l = fit_line(&xs, &ys, None)?;
        return Some(Intercept {
            x_at,
            value: l.at(0.0),
            slope: l.slope,
            n_points: k,
            extrapolation: 0.0,
            near: true,
        });
    }
    let seg = low_piece?;
    let extrapolation = if x_at < xmin {
        (xmin - x_at) / span
    } else if x_at > xmax {
        (x_at - xmax) / span
    } else {
        0.0
    };
    Some(Intercept {
        x_at,
        value: seg.intercept + seg.slope * x_at,
        slope: seg.slope,
        n_points: seg.n_points,
        extrapolation,
        near: extrapolation <= 0.1,
    })
}
