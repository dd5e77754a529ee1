//! The six transformed views of the data a practitioner plots to read off
//! starting values: y, 1/y and log y against x and against log x.

use serde::Serialize;

/// Scale of the horizontal axis of a view.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum XAxis {
    /// x as given.
    Linear,
    /// Natural logarithm of x (only x > 0 kept).
    Log,
}

/// Transform applied to the response in a view.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum YTransform {
    /// y as given.
    Identity,
    /// 1/y (only y ≠ 0 kept).
    Reciprocal,
    /// Natural logarithm of y (only y > 0 kept, or of −y when every y < 0).
    Log,
}

/// Counts of input points left out of a view, by reason.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize)]
pub struct Exclusions {
    /// x or y was NaN or infinite (or the transform overflowed).
    pub non_finite: usize,
    /// x ≤ 0 in a log-x view.
    pub x_not_positive: usize,
    /// y ≤ 0 (or ≥ 0 when negated) in a log-y view.
    pub y_not_positive: usize,
    /// y = 0 in a reciprocal view.
    pub y_zero: usize,
    /// x and y had different lengths; the extra entries were ignored.
    pub unpaired: usize,
}

impl Exclusions {
    /// Total number of input entries left out.
    pub fn total(&self) -> usize {
        self.non_finite + self.x_not_positive + self.y_not_positive + self.y_zero + self.unpaired
    }
}

/// One transformed view: points sorted by view-x, duplicates of x merged.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct View {
    /// Horizontal scale.
    pub x_axis: XAxis,
    /// Response transform.
    pub y_transform: YTransform,
    /// True when the log-y view was taken of −y because every usable y was negative.
    pub negated: bool,
    /// (view x, view y), strictly increasing in x; logs are natural logs.
    pub points: Vec<(f64, f64)>,
    /// How many input points were averaged (in view coordinates) into each point.
    pub counts: Vec<usize>,
    /// Input points left out, by reason.
    pub excluded: Exclusions,
}

/// The six (x axis, y transform) pairs, identity-on-linear first.
pub const ALL_VIEWS: [(XAxis, YTransform); 6] = [
    (XAxis::Linear, YTransform::Identity),
    (XAxis::Linear, YTransform::Reciprocal),
    (XAxis::Linear, YTransform::Log),
    (XAxis::Log, YTransform::Identity),
    (XAxis::Log, YTransform::Reciprocal),
    (XAxis::Log, YTransform::Log),
];

impl View {
    /// Build a view from raw (x, y): drop unusable points, sort, merge repeated x by averaging.
    pub fn build(x: &[f64], y: &[f64], x_axis: XAxis, y_transform: YTransform) -> View {
        let n = x.len().min(y.len());
        let mut excluded = Exclusions {
            unpaired: x.len().max(y.len()) - n,
            ..Exclusions::default()
        };
        // Negate for the log view when every usable y is negative.
        let usable = |xi: f64, yi: f64| {
            xi.is_finite() && yi.is_finite() && (x_axis == XAxis::Linear || xi > 0.0)
        };
        let mut any_pos = false;
        let mut any_neg = false;
        for i in 0..n {
            if usable(x[i], y[i]) {
                any_pos |= y[i] > 0.0;
                any_neg |= y[i] < 0.0;
            }
        }
        let negated = y_transform == YTransform::Log && any_neg && !any_pos;
        let mut raw: Vec<(f64, f64)> = Vec::with_capacity(n);
        for i in 0..n {
            let (xi, yi) = (x[i], y[i]);
            if !xi.is_finite() || !yi.is_finite() {
                excluded.non_finite += 1;
                continue;
            }
            let vx = match x_axis {
                XAxis::Linear => xi,
                XAxis::Log => {
                    if xi <= 0.0 {
                        excluded.x_not_positive += 1;
                        continue;
                    }
                    xi.ln()
                }
            };
            let vy = match y_transform {
                YTransform::Identity => yi,
                YTransform::Reciprocal => {
                    if yi == 0.0 {
                        excluded.y_zero += 1;
                        continue;
                    }
                    1.0 / yi
                }
                YTransform::Log => {
                    let v = if negated { -yi } else { yi };
                    if v <= 0.0 {
                        excluded.y_not_positive += 1;
                        continue;
                    }
                    v.ln()
                }
            };
            if !vx.is_finite() || !vy.is_finite() {
                excluded.non_finite += 1;
                continue;
            }
            raw.push((vx, vy));
        }
        raw.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut points: Vec<(f64, f64)> = Vec::with_capacity(raw.len());
        let mut counts: Vec<usize> = Vec::with_capacity(raw.len());
        let mut i = 0;
        while i < raw.len() {
            let x0 = raw[i].0;
            let mut j = i;
            while j < raw.len() && raw[j].0 == x0 {
                j += 1;
            }
            let c = j - i;
            // mean as Σ v/c so that huge values cannot overflow
            let mean: f64 = raw[i..j].iter().map(|p| p.1 / c as f64).sum();
            if mean.is_finite() {
                points.push((x0, mean));
                counts.push(c);
            } else {
                excluded.non_finite += c;
            }
            i = j;
        }
        View {
            x_axis,
            y_transform,
            negated,
            points,
            counts,
            excluded,
        }
    }

    /// Number of (merged) points in the view.
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// True when the view has no usable point.
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// View x coordinates.
    pub fn xs(&self) -> Vec<f64> {
        self.points.iter().map(|p| p.0).collect()
    }

    /// View y coordinates.
    pub fn ys(&self) -> Vec<f64> {
        self.points.iter().map(|p| p.1).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_view_drops_and_merges() {
        let x = [3.0, 1.0, -1.0, 1.0, 2.0, f64::NAN];
        let y = [8.0, 2.0, 5.0, 4.0, 0.0, 1.0];
        let v = View::build(&x, &y, XAxis::Log, YTransform::Log);
        assert_eq!(v.excluded.non_finite, 1);
        assert_eq!(v.excluded.x_not_positive, 1);
        assert_eq!(v.excluded.y_not_positive, 1);
        assert_eq!(v.len(), 2);
        assert_eq!(v.counts, vec![2, 1]);
        // merged in view coordinates: mean of ln 2 and ln 4 = ln √8
        assert!((v.points[0].1 - 8f64.sqrt().ln()).abs() < 1e-12);
        assert!((v.points[1].0 - 3f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn negative_response_log_uses_minus_y() {
        let v = View::build(
            &[1.0, 2.0],
            &[-1.0, -std::f64::consts::E],
            XAxis::Linear,
            YTransform::Log,
        );
        assert!(v.negated);
        assert!((v.points[1].1 - 1.0).abs() < 1e-12);
        let r = View::build(
            &[1.0, 2.0, 3.0],
            &[0.5, 0.0, 3.0],
            XAxis::Linear,
            YTransform::Reciprocal,
        );
        assert_eq!(r.excluded.y_zero, 1);
        assert_eq!(r.points, vec![(1.0, 2.0), (3.0, 1.0 / 3.0)]);
    }
}
