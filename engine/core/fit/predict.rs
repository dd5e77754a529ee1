//! Prediction at new predictor values and inverse prediction (calibration)
//! from a finished fit.
//!
//! Prediction: ŷ(x) = f(x; θ̂) with standard error se(x) = √(gᵀ·C·g),
//! g = ∇_θ f(x; θ̂) (delta method, Seber & Wild 1989, Nonlinear Regression,
//! §5.1), confidence band ŷ ± t·se and prediction band for the mean of m new
//! readings ŷ ± t·√(se² + s²/m), t = t(n−p, 1−α/2) (Draper & Smith 1998,
//! Applied Regression Analysis, §3.1 for the straight line; section numbers
//! from memory). All values are on the response scale the fit used, i.e.
//! after a left-hand transform such as `log(y) = …`.
//!
//! Inverse prediction (one predictor only): the x̂ with f(x̂; θ̂) = ȳ₀, ȳ₀ the
//! mean of the m readings (transformed like the response), searched over the
//! range of the data; its interval is the set of x whose prediction band for
//! m readings contains ȳ₀, i.e. |f(x) − ȳ₀| ≤ t·√(se(x)² + s²/m) (inverting
//! the prediction band, Seber & Wild 1989, §5.12; Draper & Smith 1998, §3.2).
//! The curve is sampled at [`INVERSE_GRID`] points over the data range; it
//! must be strictly monotone on that sample, and roots are located by
//! bisection in the bracketing grid cell until the cell is below
//! 1e-15·(x_max − x_min) wide (at most 200 halvings).

use super::covariance::quadratic_form;
use super::problem::Problem;
use super::stats::FitSummary;
use super::tdist::t_quantile;
use crate::symbolic::simplify::simplify;
use crate::symbolic::{Expr, Tape};
use serde::Serialize;
use thiserror::Error;

/// Grid points on which the curve is sampled for inverse prediction.
pub const INVERSE_GRID: usize = 2001;

/// Why a prediction cannot be made.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum PredictError {
    #[error("prediction needs {expected} predictor column(s) ({names}), got {got}")]
    WrongColumns {
        expected: usize,
        names: String,
        got: usize,
    },
    #[error("predictor column {column} has {len} values, the first has {expected}")]
    ColumnLength {
        column: usize,
        len: usize,
        expected: usize,
    },
    #[error("inverse prediction needs a model with one predictor; this one has {0}")]
    NotOnePredictor(usize),
    #[error("inverse prediction needs at least one reading")]
    NoReadings,
    #[error("reading {value} has no finite value on the fitted response scale")]
    ReadingNotFinite { value: f64 },
    #[error("the fitted curve is not finite at {x} within the data range")]
    CurveNotFinite { x: f64 },
    #[error("the fitted curve is not monotone over the data range [{x_min}, {x_max}]: a response value may come from more than one x")]
    NotMonotone { x_min: f64, x_max: f64 },
    #[error("the value {y0} is outside the fitted curve's range [{y_min}, {y_max}] over the data range [{x_min}, {x_max}]; inverse prediction does not extrapolate")]
    OutsideRange {
        y0: f64,
        y_min: f64,
        y_max: f64,
        x_min: f64,
        x_max: f64,
    },
}

/// A fitted curve with what its bands need.
#[derive(Debug, Clone)]
pub struct FittedCurve {
    value: Tape,
    /// ∂f/∂θ_k, one output per parameter.
    gradient: Tape,
    params: Vec<f64>,
    cov: Vec<Vec<f64>>,
    /// Residual standard deviation s.
    pub residual_sd: f64,
    pub dof: usize,
    var_names: Vec<String>,
    lhs: Option<Expr>,
    /// (min, max) of each predictor over the fitted rows.
    pub x_range: Vec<(f64, f64)>,
}

/// The prediction at one point.
#[derive(Debug, Clone, Serialize)]
pub struct Prediction {
    /// Predictor values, in the model's variable order.
    pub x: Vec<f64>,
    pub fitted: f64,
    /// Standard error of the fitted value (delta method).
    pub std_error: f64,
    pub conf_low: f64,
    pub conf_high: f64,
    pub pred_low: f64,
    pub pred_high: f64,
}

/// An inverse prediction.
#[derive(Debug, Clone, Serialize)]
pub struct InversePrediction {
    /// Mean of the readings on the fitted response scale.
    pub y0: f64,
    pub readings: usize,
    pub x: f64,
    /// Interval ends; `None` when the band does not cross ȳ₀ within the data range.
    pub x_low: Option<f64>,
    pub x_high: Option<f64>,
    pub level: f64,
}

impl FittedCurve {
    /// The curve of `problem` at parameters `params` with the fit's statistics.
    pub fn new(
        problem: &Problem,
        params: &[f64],
        cov: Vec<Vec<f64>>,
        summary: &FitSummary,
    ) -> FittedCurve {
        let f = simplify(&problem.model.rhs);
        let grads: Vec<Expr> = problem
            .jacobian_exprs
            .iter()
            .map(|j| simplify(&Expr::neg(j.clone())))
            .collect();
        let x_range = problem
            .x
            .iter()
            .map(|c| {
                c.iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                        (a.min(v), b.max(v))
                    })
            })
            .collect();
        FittedCurve {
            value: Tape::compile(std::slice::from_ref(&f)),
            gradient: Tape::compile(&grads),
            params: params.to_vec(),
            cov,
            residual_sd: summary.residual_sd,
            dof: summary.dof,
            var_names: problem.model.vars.clone(),
            lhs: problem.model.lhs.clone(),
            x_range,
        }
    }

    fn t(&self, level: f64) -> f64 {
        if self.dof > 0 {
            t_quantile(0.5 + level / 2.0, self.dof as f64)
        } else {
            f64::NAN
        }
    }

    /// Fitted values and their standard errors at the rows of `x` (one column per predictor).
    fn values_and_se(&self, x: &[&[f64]], n: usize) -> (Vec<f64>, Vec<f64>) {
        let y = self.value.eval_columns(&self.params, x, n).remove(0);
        let g = self.gradient.eval_columns(&self.params, x, n);
        let se = (0..n)
            .map(|i| {
                let gi: Vec<f64> = g.iter().map(|c| c[i]).collect();
                let v = quadratic_form(&self.cov, &gi);
                if v >= 0.0 {
                    v.sqrt()
                } else {
                    f64::NAN
                }
            })
            .collect();
        (y, se)
    }

    /// Predictions with confidence and prediction bands at `level` for the
    /// mean of `replicates` new readings (1 for a single reading) at each row of `x`.
    pub fn predict(
        &self,
        x: &[Vec<f64>],
        level: f64,
        replicates: usize,
    ) -> Result<Vec<Prediction>, PredictError> {
        if x.len() != self.var_names.len() {
            return Err(PredictError::WrongColumns {
                expected: self.var_names.len(),
                names: self.var_names.join(", "),
                got: x.len(),
            });
        }
        let n = x.first().map(|c| c.len()).unwrap_or(0);
        for (j, c) in x.iter().enumerate() {
            if c.len() != n {
                return Err(PredictError::ColumnLength {
                    column: j + 1,
                    len: c.len(),
                    expected: n,
                });
            }
        }
        let cols: Vec<&[f64]> = x.iter().map(|c| c.as_slice()).collect();
        let (y, se) = self.values_and_se(&cols, n);
        let t = self.t(level);
        let s2m = self.residual_sd.powi(2) / replicates.max(1) as f64;
        Ok((0..n)
            .map(|i| {
                let pse = (se[i] * se[i] + s2m).sqrt();
                Prediction {
                    x: x.iter().map(|c| c[i]).collect(),
                    fitted: y[i],
                    std_error: se[i],
                    conf_low: y[i] - t * se[i],
                    conf_high: y[i] + t * se[i],
                    pred_low: y[i] - t * pse,
                    pred_high: y[i] + t * pse,
                }
            })
            .collect())
    }

    /// The x at which the fitted curve equals the mean of `readings` (raw
    /// response units; the model's left-hand transform is applied first), with
    /// the interval from inverting the prediction band for that many readings.
    pub fn inverse(&self, readings: &[f64], level: f64) -> Result<InversePrediction, PredictError> {
        if self.var_names.len() != 1 {
            return Err(PredictError::NotOnePredictor(self.var_names.len()));
        }
        if readings.is_empty() {
            return Err(PredictError::NoReadings);
        }
        let mut sum = 0.0;
        for &r in readings {
            let g = match &self.lhs {
                Some(l) => l.eval(&[], &[r]),
                None => r,
            };
            if !g.is_finite() {
                return Err(PredictError::ReadingNotFinite { value: r });
            }
            sum += g;
        }
        let m = readings.len();
        let y0 = sum / m as f64;
        let (x_min, x_max) = self.x_range[0];
        let grid: Vec<f64> = (0..INVERSE_GRID)
            .map(|i| x_min + (x_max - x_min) * i as f64 / (INVERSE_GRID - 1) as f64)
            .collect();
        let (fy, se) = self.values_and_se(&[&grid], grid.len());
        if let Some(i) = fy.iter().position(|v| !v.is_finite()) {
            return Err(PredictError::CurveNotFinite { x: grid[i] });
        }
        let rising = fy[INVERSE_GRID - 1] > fy[0];
        if fy
            .windows(2)
            .any(|w| if rising { w[1] <= w[0] } else { w[1] >= w[0] })
        {
            return Err(PredictError::NotMonotone { x_min, x_max });
        }
        let (y_min, y_max) = (
            fy[0].min(fy[INVERSE_GRID - 1]),
            fy[0].max(fy[INVERSE_GRID - 1]),
        );
        if !(y_min..=y_max).contains(&y0) {
            return Err(PredictError::OutsideRange {
                y0,
                y_min,
                y_max,
                x_min,
                x_max,
            });
        }
        let f_at = |x: f64| self.value.eval_one(&self.params, &[x])[0];
        let tol = 1e-15 * (x_max - x_min).max(f64::MIN_POSITIVE);
        // Root of f(x) − ȳ₀ in the grid cell that brackets it.
        let h0 = |x: f64| f_at(x) - y0;
        let cell = fy
            .windows(2)
            .position(|w| (w[0] - y0) * (w[1] - y0) <= 0.0)
            .unwrap_or(0);
        let x_hat = bisect(&h0, grid[cell], grid[cell + 1], tol);

        // Band edges: h(x) = |f(x) − ȳ₀| − t·√(se² + s²/m) ≤ 0 inside the interval.
        let t = self.t(level);
        let s2m = self.residual_sd.powi(2) / m as f64;
        let band = |fx: f64, sex: f64| (fx - y0).abs() - t * (sex * sex + s2m).sqrt();
        let h = |x: f64| {
            let (v, s) = self.values_and_se(&[&[x]], 1);
            band(v[0], s[0])
        };
        let hg: Vec<f64> = (0..INVERSE_GRID).map(|i| band(fy[i], se[i])).collect();
        let (x_low, x_high) = if t.is_finite() && self.residual_sd.is_finite() {
            // Walk outwards from the root's cell to the first grid point outside the band.
            let low = (0..=cell)
                .rev()
                .find(|&i| hg[i] >= 0.0)
                .map(|i| bisect(&h, grid[i], grid[i + 1].max(grid[i]), tol));
            let high = (cell + 1..INVERSE_GRID)
                .find(|&i| hg[i] >= 0.0)
                .map(|i| bisect(&h, grid[i - 1], grid[i], tol));
            (low, high)
        } else {
            (None, None)
        };
        Ok(InversePrediction {
            y0,
            readings: m,
            x: x_hat,
            x_low,
            x_high,
            level,
        })
    }
}

/// Bisection for a sign change of `h` in [a, b] until the bracket is below `tol`.
fn bisect(h: &dyn Fn(f64) -> f64, mut a: f64, mut b: f64, tol: f64) -> f64 {
    let mut ha = h(a);
    for _ in 0..200 {
        if (b - a).abs() <= tol {
            break;
        }
        let c = 0.5 * (a + b);
        let hc = h(c);
        if hc == 0.0 {
            return c;
        }
        if (hc < 0.0) == (ha < 0.0) {
            a = c;
            ha = hc;
        } else {
            b = c;
        }
    }
    0.5 * (a + b)
}
