//! Feature detectors on the data and its transformed views: plateaus,
//! intercepts, straight segments, peaks, periods, monotonicity and sign.
//!
//! A practitioner finds starting values by plotting y, 1/y and log y against x
//! and against log x and reading off plateaus, intercepts, straight lines, peaks
//! and periods. [`detect`] builds those six views and reads the same features
//! from each automatically; [`detect_view`] analyses one view. Everything here
//! is numerical and model-free: the inference stage matches these features to
//! the model's symbolic limits.

pub mod intercept;
pub mod linefit;
pub mod noise;
pub mod peaks;
pub mod period;
pub mod plateau;
pub mod robust;
pub mod segments;
pub mod shape;
pub mod smooth;
pub mod views;

#[cfg(test)]
mod testdata;
#[cfg(test)]
mod tests;

pub use intercept::Intercept;
pub use linefit::Line;
pub use peaks::{Peak, PeakFeatures, Shoulder};
pub use period::Period;
pub use plateau::{End, Plateau};
pub use segments::{Segment, Segments};
pub use shape::{Bend, Direction, EndCurvature, Monotonicity, Sign, SignPattern};
pub use views::{Exclusions, View, XAxis, YTransform, ALL_VIEWS};

use serde::Serialize;

/// How many dominant periods [`detect_view`] reports.
pub const MAX_PERIODS: usize = 5;

/// Features read from one view (all in that view's coordinates; logs are natural).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ViewFeatures {
    /// Points analysed.
    pub n_points: usize,
    /// Robust noise standard deviation of the view's y.
    pub noise: f64,
    /// Plateau (or edge value) at the lowest x.
    pub low_plateau: Option<Plateau>,
    /// Plateau (or edge value) at the highest x.
    pub high_plateau: Option<Plateau>,
    /// Value extrapolated to x = 0 (linear axis) or read at the lowest x (log axis).
    pub intercept: Option<Intercept>,
    /// Slope of the straight piece at the low end.
    pub initial_slope: Option<f64>,
    /// Slope of the straight piece at the high end.
    pub final_slope: Option<f64>,
    /// Longest straight stretch and the straight pieces at the ends.
    pub segments: Segments,
    /// Peaks, troughs and shoulders (identity view on linear x only).
    pub peaks: PeakFeatures,
    /// Dominant periods (identity view on linear x only).
    pub periods: Vec<Period>,
    /// Increasing / decreasing / not monotone, with scores.
    pub monotonicity: Option<Monotonicity>,
    /// Sign of the view's y.
    pub sign: Sign,
    /// Convex or concave at the low end.
    pub low_curvature: Option<EndCurvature>,
    /// Convex or concave at the high end.
    pub high_curvature: Option<EndCurvature>,
}

/// One view with its features.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ViewReport {
    /// The transformed, sorted, merged points.
    pub view: View,
    /// What was read from them.
    pub features: ViewFeatures,
}

/// Everything detected in a data set: its noise, its sign and the six views.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DataFeatures {
    /// Number of (x, y) pairs given.
    pub n_input: usize,
    /// Robust noise standard deviation of y (identity view on linear x).
    pub noise: f64,
    /// Noise ÷ median |y| (∞ when the median is 0).
    pub relative_noise: f64,
    /// Sign of the raw response.
    pub sign: Sign,
    /// The six views in the order of [`ALL_VIEWS`].
    pub views: Vec<ViewReport>,
}

impl DataFeatures {
    /// The report of one view, by axis and transform.
    pub fn view(&self, x_axis: XAxis, y_transform: YTransform) -> Option<&ViewReport> {
        self.views
            .iter()
            .find(|r| r.view.x_axis == x_axis && r.view.y_transform == y_transform)
    }
}

/// Most rows the detectors read: longer data are read through a summary of
/// this many rows (see [`summary_rows`]), so that detection costs one sort plus
/// a bounded amount of work whatever the length (the segment search is
/// quadratic and the periodogram is frequencies × points in what they read).
pub const SUMMARY_POINTS: usize = 400;

/// Indices of at most `max` rows evenly spaced in the order of `x` (the rows of
/// lowest and highest x always among them), in that order; every row, in x
/// order, when there are no more than `max`. A decimated, sorted copy keeps each
/// point's own noise (unlike bin means), so noise estimates read from it stay
/// those of single rows. O(n log n) for the sort.
pub fn summary_rows(x: &[f64], max: usize) -> Vec<usize> {
    let mut order: Vec<usize> = (0..x.len()).collect();
    order.sort_by(|&a, &b| x[a].total_cmp(&x[b]).then(a.cmp(&b)));
    let n = order.len();
    if n <= max || max < 2 {
        return order;
    }
    (0..max)
        .map(|k| order[((k as f64) * (n - 1) as f64 / (max - 1) as f64).round() as usize])
        .collect()
}

/// Build the six views of (x, y) and detect the features of each; data longer
/// than [`SUMMARY_POINTS`] are read through [`summary_rows`] (`n_input` still
/// counts every row).
pub fn detect(x: &[f64], y: &[f64]) -> DataFeatures {
    let n = x.len().min(y.len());
    if n > SUMMARY_POINTS {
        let rows = summary_rows(&x[..n], SUMMARY_POINTS);
        let xs: Vec<f64> = rows.iter().map(|&i| x[i]).collect();
        let ys: Vec<f64> = rows.iter().map(|&i| y[i]).collect();
        let mut f = detect_all(&xs, &ys);
        f.n_input = n;
        f.sign = shape::sign(&y[..n]);
        return f;
    }
    detect_all(x, y)
}

/// [`detect`] on every row given.
fn detect_all(x: &[f64], y: &[f64]) -> DataFeatures {
    let views: Vec<ViewReport> = ALL_VIEWS
        .iter()
        .map(|&(ax, ty)| {
            let view = View::build(x, y, ax, ty);
            let features = detect_view(&view);
            ViewReport { view, features }
        })
        .collect();
    let n = x.len().min(y.len());
    let (noise, relative_noise) = match views.first() {
        Some(r) => {
            let s = r.features.noise;
            let ys = r.view.ys();
            let abs: Vec<f64> = ys.iter().map(|v| v.abs()).collect();
            let m = robust::median(&abs).unwrap_or(0.0);
            (s, if m > 0.0 { s / m } else { f64::INFINITY })
        }
        None => (0.0, f64::INFINITY),
    };
    DataFeatures {
        n_input: n,
        noise,
        relative_noise,
        sign: shape::sign(&y[..n]),
        views,
    }
}

/// Detect the features of one view; fewer points give fewer features, never a panic.
pub fn detect_view(view: &View) -> ViewFeatures {
    let x = view.xs();
    let y = view.ys();
    let n = x.len();
    let noise = noise::global_noise(&x, &y);
    let local = noise::local_noise(&x, &y, (n / 8).max(5));
    let segments = segments::find_segments(&x, &y, &local);
    let half = ((n as f64 / 25.0).round() as usize).clamp(2, 15);
    let monotonicity = (n >= 3).then(|| {
        let sm = smooth::savitzky_golay(&x, &y, half, 2, &local);
        shape::monotonicity(&x, &y, &sm)
    });
    let meaningful = view.x_axis == XAxis::Linear && view.y_transform == YTransform::Identity;
    ViewFeatures {
        n_points: n,
        noise,
        low_plateau: plateau::plateau(&x, &y, End::Low),
        high_plateau: plateau::plateau(&x, &y, End::High),
        intercept: intercept::intercept(&x, &y, view.x_axis, segments.low_end.as_ref()),
        initial_slope: segments.low_end.as_ref().map(|s| s.slope),
        final_slope: segments.high_end.as_ref().map(|s| s.slope),
        peaks: if meaningful {
            peaks::find_peaks(&x, &y, noise)
        } else {
            PeakFeatures::default()
        },
        periods: if meaningful {
            period::dominant_periods(&x, &y, MAX_PERIODS)
        } else {
            Vec::new()
        },
        monotonicity,
        sign: shape::sign(&y),
        low_curvature: shape::end_curvature(&x, &y, noise, true),
        high_curvature: shape::end_curvature(&x, &y, noise, false),
        segments,
    }
}
