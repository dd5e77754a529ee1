//! The statistics of a converged fit: standard errors, t values, intervals,
//! correlations and identifiability warnings (linearised asymptotic theory,
//! e.g. Bates & Watts 1988, ch. 2).
//!
//! The covariance s²·(JᵀJ)⁻¹ is never formed from JᵀJ: J is scaled to unit
//! columns, J = J_s·D, and (JᵀJ)⁻¹ = D⁻¹·V·Σ⁻²·Vᵀ·D⁻¹ from the SVD J_s = UΣVᵀ
//! (Golub & Van Loan 1996, §5.5), which keeps the accuracy of the singular
//! values and exposes rank deficiency through the small ones.

use super::lm::LmResult;
use super::tdist::{t_quantile, t_two_sided_p};
use nalgebra::DMatrix;
use serde::Serialize;

/// One parameter's estimate and its uncertainty.
#[derive(Debug, Clone, Serialize)]
pub struct ParamEstimate {
    pub name: String,
    pub estimate: f64,
    pub std_error: f64,
    pub t_value: f64,
    /// Two-sided p-value of the t value against zero (Student t, `dof`).
    pub p_value: f64,
    /// Approximate 95% interval (estimate ± t(0.975, dof)·se).
    pub ci_low: f64,
    pub ci_high: f64,
    /// Whether the data determine this parameter ([`identifiability`]);
    /// `None` when the statistics are undefined (no degrees of freedom,
    /// non-finite values).
    pub identifiable: Option<bool>,
    /// Why not, as a stable code: `singular_direction` or `relative_se`.
    pub unidentified_reason: Option<&'static str>,
}

/// Standard error beyond this multiple of |estimate| marks a parameter as not
/// identifiable: its 95% interval then spans more than ±2000 times the
/// estimate, so the data fix neither its sign nor its order of magnitude
/// (our threshold; a flat valley along the parameter, e.g. a rate whose
/// Jacobian column has vanished under the noise).
pub const RELATIVE_SE_LIMIT: f64 = 1e3;

/// Whether parameter estimate `est` with standard error `se` is determined by
/// the data, and if not why. Two tests: the parameter loads on a direction
/// whose singular value of the column-scaled Jacobian is at or below
/// max(n, p)·ε·σ_max (numerical rank, Golub & Van Loan 1996, §5.5), or
/// se > [`RELATIVE_SE_LIMIT`]·|est| (linearised standard error, Bates & Watts
/// 1988, §2.3). `None` when se is undefined for want of degrees of freedom or
/// finite inputs.
pub fn identifiability(
    est: f64,
    se: f64,
    on_singular_direction: bool,
) -> (Option<bool>, Option<&'static str>) {
    if on_singular_direction {
        return (Some(false), Some("singular_direction"));
    }
    if se.is_nan() || !est.is_finite() {
        return (None, None);
    }
    if se.is_infinite() || se > RELATIVE_SE_LIMIT * est.abs() {
        return (Some(false), Some("relative_se"));
    }
    (Some(true), None)
}

/// Plain words for an `unidentified_reason` code, as tables print them.
pub fn unidentified_text(code: &str) -> &'static str {
    match code {
        "singular_direction" => "not identifiable: on a singular direction of the Jacobian",
        "relative_se" => "not identifiable: std. error > 1000 x |estimate|",
        _ => "not identifiable",
    }
}

/// Everything a fit report states.
#[derive(Debug, Clone, Serialize)]
pub struct FitSummary {
    pub parameters: Vec<ParamEstimate>,
    pub ssr: f64,
    pub residual_sd: f64,
    pub dof: usize,
    pub n_obs: usize,
    pub iterations: usize,
    pub evaluations: usize,
    /// Stop reason code, e.g. "small_reduction" (see `StopReason::code`).
    pub stop_reason: String,
    pub converged: bool,
    pub correlation: Vec<Vec<f64>>,
    /// Ratio of extreme singular values of the Jacobian with unit columns.
    pub condition_number: f64,
    pub warnings: Vec<String>,
}

/// |correlation| above which a pair of parameters is reported as nearly
/// non-identifiable (common practice).
pub const CORRELATION_WARNING: f64 = 0.9999;

/// Loading in a null vector above which a parameter counts as involved in a
/// rank deficiency.
const NULL_LOADING: f64 = 1e-6;

/// Builds the summary for a finished fit.
pub fn summarize(names: &[String], result: &LmResult) -> FitSummary {
    let p = result.params.len();
    let n = result.residuals.len();
    let dof = n.saturating_sub(p);
    let mut warnings = Vec::new();

    let given = names.len();
    let names: Vec<String> = (0..p)
        .map(|i| {
            names
                .get(i)
                .cloned()
                .unwrap_or_else(|| format!("p{}", i + 1))
        })
        .collect();
    if given < p {
        warnings.push("fewer parameter names than parameters; unnamed ones are numbered".into());
    }
    if !result.converged {
        warnings.push(format!(
            "the fit did not converge ({}); the statistics describe the last point",
            result.stop.describe()
        ));
    }
    if dof == 0 {
        warnings.push(format!(
            "no residual degrees of freedom ({n} observations, {p} parameters): \
             residual variance, standard errors and intervals are undefined"
        ));
    }

    let ssr = result.ssr;
    let s2 = if dof > 0 { ssr / dof as f64 } else { f64::NAN };
    let residual_sd = s2.sqrt();

    let inputs_finite = result.params.iter().all(|v| v.is_finite())
        && result.residuals.iter().all(|v| v.is_finite())
        && ssr.is_finite()
        && result.jacobian.shape() == (n, p)
        && result.jacobian.iter().all(|v| v.is_finite());

    let nan_matrix = vec![vec![f64::NAN; p]; p];
    let mut cov_scaled: Option<(DMatrix<f64>, Vec<f64>, Vec<bool>)> = None;
    let mut condition_number = f64::NAN;
    if !inputs_finite {
        warnings.push(
            "the parameters, residuals or Jacobian contain non-finite values (or have the \
             wrong shape); the statistics are undefined"
                .into(),
        );
    } else if p > 0 {
        match scaled_inverse(&result.jacobian) {
            Some(inv) => {
                condition_number = inv.condition;
                let involved: Vec<usize> = (0..p).filter(|&i| inv.singular[i]).collect();
                if !involved.is_empty() {
                    let list: Vec<&str> = involved.iter().map(|&i| names[i].as_str()).collect();
                    warnings.push(format!(
                        "rank-deficient Jacobian ({} of {} directions singular): the data cannot \
                         separate {}; their standard errors are unbounded",
                        inv.null_dims,
                        p,
                        list.join(", ")
                    ));
                }
                cov_scaled = Some((inv.cov, inv.scale, inv.singular));
            }
            None => warnings.push("the singular value decomposition of the Jacobian failed".into()),
        }
    }

    let t0 = if dof > 0 {
        t_quantile(0.975, dof as f64)
    } else {
        f64::NAN
    };
    let mut parameters = Vec::with_capacity(p);
    let mut correlation = nan_matrix;
    for i in 0..p {
        let est = result.params[i];
        let se = match &cov_scaled {
            Some((c, scale, singular)) => {
                if singular[i] {
                    f64::INFINITY
                } else {
                    (s2 * c[(i, i)]).sqrt() / scale[i]
                }
            }
            None => f64::NAN,
        };
        let on_singular = matches!(&cov_scaled, Some((_, _, singular)) if singular[i]);
        let (identifiable, unidentified_reason) = identifiability(est, se, on_singular);
        let t_value = est / se;
        let p_value = if dof > 0 {
            t_two_sided_p(t_value, dof as f64)
        } else {
            f64::NAN
        };
        parameters.push(ParamEstimate {
            name: names[i].clone(),
            estimate: est,
            std_error: se,
            t_value,
            p_value,
            ci_low: est - t0 * se,
            ci_high: est + t0 * se,
            identifiable,
            unidentified_reason,
        });
    }
    if let Some((c, _, singular)) = &cov_scaled {
        for i in 0..p {
            for j in 0..p {
                correlation[i][j] = if singular[i] || singular[j] {
                    f64::NAN
                } else if i == j {
                    1.0
                } else {
                    (c[(i, j)] / (c[(i, i)] * c[(j, j)]).sqrt()).clamp(-1.0, 1.0)
                };
            }
        }
        for i in 0..p {
            for j in (i + 1)..p {
                let r = correlation[i][j];
                if r.abs() > CORRELATION_WARNING {
                    warnings.push(format!(
                        "{} and {} are nearly non-identifiable (correlation {:+.6})",
                        names[i], names[j], r
                    ));
                }
            }
        }
    }
    let bad_se: Vec<&str> = parameters
        .iter()
        .filter(|e| !e.std_error.is_finite())
        .map(|e| e.name.as_str())
        .collect();
    if !bad_se.is_empty() {
        warnings.push(format!(
            "standard errors are not finite for: {}",
            bad_se.join(", ")
        ));
    }
    // A finite but huge standard error can still overflow the interval
    // (t·se beyond 1.8e308); say so rather than print ±inf silently (found by fuzzing).
    let bad_ci: Vec<&str> = parameters
        .iter()
        .filter(|e| e.std_error.is_finite() && dof > 0)
        .filter(|e| !e.ci_low.is_finite() || !e.ci_high.is_finite())
        .map(|e| e.name.as_str())
        .collect();
    let unidentified: Vec<&str> = parameters
        .iter()
        .filter(|e| e.identifiable == Some(false) && e.unidentified_reason == Some("relative_se"))
        .map(|e| e.name.as_str())
        .collect();
    if !unidentified.is_empty() {
        warnings.push(format!(
            "not identifiable from these data (standard error above 1000 times \
             the estimate; the estimate is arbitrary along a flat valley): {}",
            unidentified.join(", ")
        ));
    }
    if !bad_ci.is_empty() {
        warnings.push(format!(
            "confidence intervals overflow (standard errors near the largest number) for: {}",
            bad_ci.join(", ")
        ));
    }

    FitSummary {
        parameters,
        ssr,
        residual_sd,
        dof,
        n_obs: n,
        iterations: result.iterations,
        evaluations: result.evaluations,
        stop_reason: result.stop.code().to_string(),
        converged: result.converged,
        correlation,
        condition_number,
        warnings,
    }
}

/// (J_sᵀJ_s)⁺ over the non-singular directions, with the column scales and
/// which parameters load on a singular direction.
struct ScaledInverse {
    cov: DMatrix<f64>,
    scale: Vec<f64>,
    singular: Vec<bool>,
    null_dims: usize,
    condition: f64,
}

/// SVD of the column-scaled Jacobian (padded with zero rows to be square when
/// there are fewer rows than columns). A singular value at or below
/// max(n, p)·ε·σ_max counts as zero (common practice for numerical rank).
fn scaled_inverse(j: &DMatrix<f64>) -> Option<ScaledInverse> {
    let (n, p) = j.shape();
    let rows = n.max(p);
    let svd = super::svd::scaled_svd(j, rows, false, 1000)?;
    let scale = svd.scale.clone();
    let vt = &svd.v_t;
    let sv = &svd.singular;
    let smax = svd.max();
    let smin = sv.iter().cloned().fold(f64::INFINITY, f64::min);
    let cut = rows as f64 * f64::EPSILON * smax;
    let mut cov = DMatrix::zeros(p, p);
    let mut singular = vec![false; p];
    let mut null_dims = 0;
    for k in 0..sv.len() {
        if sv[k] > cut && smax > 0.0 {
            let w = 1.0 / (sv[k] * sv[k]);
            for a in 0..p {
                for b in 0..p {
                    cov[(a, b)] += vt[(k, a)] * vt[(k, b)] * w;
                }
            }
        } else {
            null_dims += 1;
            for (a, s) in singular.iter_mut().enumerate() {
                if vt[(k, a)].abs() > NULL_LOADING {
                    *s = true;
                }
            }
        }
    }
    let condition = if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    Some(ScaledInverse {
        cov,
        scale,
        singular,
        null_dims,
        condition,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Regression (found by fuzzing): se ≈ 6e307 is finite but t·se is not;
    /// the ±inf interval used to come without a warning.
    #[test]
    fn overflowing_interval_is_flagged() {
        let result = LmResult {
            params: vec![0.0],
            ssr: 1.875e307,
            residuals: vec![1e153, 1e153, 1e153],
            jacobian: DMatrix::from_column_slice(3, 1, &[-3e-155, -3e-155, -3e-155]),
            iterations: 1,
            evaluations: 2,
            stop: StopReason::SmallReduction,
            converged: true,
            jacobian_repairs: 0,
            polish_steps: 0,
            rejected_non_finite: 0,
        };
        let s = summarize(&["a".to_string()], &result);
        assert!(s.parameters[0].std_error.is_finite());
        assert!(s.parameters[0].ci_high.is_infinite());
        assert!(
            s.warnings
                .iter()
                .any(|w| w.contains("confidence intervals overflow") && w.ends_with(": a")),
            "{:?}",
            s.warnings
        );
    }
    use crate::fit::lm::{levenberg_marquardt, LmOptions, StopReason};
    use crate::fit::Residuals;

    /// r = y − (a + b·x)
    struct Line {
        x: Vec<f64>,
        y: Vec<f64>,
    }
    impl Residuals for Line {
        fn n_obs(&self) -> usize {
            self.x.len()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            for (i, ri) in r.iter_mut().enumerate().take(self.x.len()) {
                *ri = self.y[i] - p[0] - p[1] * self.x[i];
            }
        }
        fn jacobian(&self, _p: &[f64], j: &mut DMatrix<f64>) {
            for i in 0..self.x.len() {
                j[(i, 0)] = -1.0;
                j[(i, 1)] = -self.x[i];
            }
        }
    }

    /// r = y − a·b·x: only the product a·b is identifiable.
    struct Product {
        x: Vec<f64>,
        y: Vec<f64>,
    }
    impl Residuals for Product {
        fn n_obs(&self) -> usize {
            self.x.len()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            for (i, ri) in r.iter_mut().enumerate().take(self.x.len()) {
                *ri = self.y[i] - p[0] * p[1] * self.x[i];
            }
        }
        fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
            for i in 0..self.x.len() {
                j[(i, 0)] = -p[1] * self.x[i];
                j[(i, 1)] = -p[0] * self.x[i];
            }
        }
    }

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn straight_line_matches_ordinary_least_squares() {
        let x: Vec<f64> = (1..=10).map(|i| i as f64).collect();
        let noise = [0.3, -0.2, 0.1, 0.4, -0.5, 0.2, -0.1, 0.3, -0.4, 0.1];
        let y: Vec<f64> = x
            .iter()
            .zip(noise)
            .map(|(x, e)| 2.0 + 0.5 * x + e)
            .collect();
        let prob = Line {
            x: x.clone(),
            y: y.clone(),
        };
        let fit = levenberg_marquardt(&prob, &[0.0, 0.0], &LmOptions::default());
        assert!(fit.converged);
        let s = summarize(&names(&["a", "b"]), &fit);

        // Closed-form OLS (any regression text): b = Sxy/Sxx, a = ȳ − b·x̄,
        // se(b) = s/√Sxx, se(a) = s·√(1/n + x̄²/Sxx), cov(a,b) = −x̄·s²/Sxx.
        let n = x.len() as f64;
        let xm = x.iter().sum::<f64>() / n;
        let ym = y.iter().sum::<f64>() / n;
        let sxx: f64 = x.iter().map(|v| (v - xm).powi(2)).sum();
        let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - xm) * (b - ym)).sum();
        let b = sxy / sxx;
        let a = ym - b * xm;
        let ssr: f64 = x
            .iter()
            .zip(&y)
            .map(|(xi, yi)| (yi - a - b * xi).powi(2))
            .sum();
        let s2 = ssr / (n - 2.0);
        let se_b = (s2 / sxx).sqrt();
        let se_a = (s2 * (1.0 / n + xm * xm / sxx)).sqrt();
        let corr = -xm * s2 / sxx / (se_a * se_b);

        let close = |u: f64, v: f64| (u - v).abs() <= 1e-10 * v.abs().max(1e-300);
        assert!(close(s.parameters[0].estimate, a));
        assert!(close(s.parameters[1].estimate, b));
        assert!(
            close(s.parameters[0].std_error, se_a),
            "{} vs {se_a}",
            s.parameters[0].std_error
        );
        assert!(close(s.parameters[1].std_error, se_b));
        assert!(close(s.correlation[0][1], corr));
        assert!(close(s.residual_sd, s2.sqrt()));
        assert_eq!(s.dof, 8);
        assert!(close(s.parameters[1].t_value, b / se_b));
        // t(0.975, 8) = 2.306 (textbook table, from memory).
        let half = s.parameters[1].ci_high - s.parameters[1].estimate;
        assert!((half / se_b - 2.306).abs() < 1e-3);
        assert!(s.condition_number > 1.0 && s.condition_number.is_finite());
        assert!(s.warnings.is_empty(), "{:?}", s.warnings);
        assert_eq!(s.stop_reason, fit.stop.code());
    }

    #[test]
    fn rank_deficient_product_is_flagged() {
        let x: Vec<f64> = (1..=8).map(|i| i as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, x)| 6.0 * x + 0.01 * (i % 3) as f64)
            .collect();
        let prob = Product { x, y };
        let fit = levenberg_marquardt(&prob, &[1.0, 2.0], &LmOptions::default());
        assert!((fit.params[0] * fit.params[1] - 6.0).abs() < 0.01);
        let s = summarize(&names(&["a", "b"]), &fit);
        let w = s
            .warnings
            .iter()
            .find(|w| w.contains("rank-deficient"))
            .unwrap_or_else(|| panic!("no rank warning in {:?}", s.warnings));
        assert!(w.contains("separate a, b"), "{w}");
        assert!(s.parameters.iter().all(|e| !e.std_error.is_finite()));
        assert!(s.condition_number > 1e12);
        assert!(s.warnings.iter().any(|w| w.contains("not finite")));
    }

    /// r = y − a·x − c·(x + δx²): columns nearly collinear but of full rank.
    struct NearCollinear {
        x: Vec<f64>,
        y: Vec<f64>,
        delta: f64,
    }
    impl Residuals for NearCollinear {
        fn n_obs(&self) -> usize {
            self.x.len()
        }
        fn n_params(&self) -> usize {
            2
        }
        fn residuals(&self, p: &[f64], r: &mut [f64]) {
            for (i, x) in self.x.iter().enumerate() {
                r[i] = self.y[i] - p[0] * x - p[1] * (x + self.delta * x * x);
            }
        }
        fn jacobian(&self, _p: &[f64], j: &mut DMatrix<f64>) {
            for (i, x) in self.x.iter().enumerate() {
                j[(i, 0)] = -x;
                j[(i, 1)] = -(x + self.delta * x * x);
            }
        }
    }

    #[test]
    fn near_collinearity_warns_without_rank_deficiency() {
        let x: Vec<f64> = (1..=12).map(|i| i as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, x)| 3.0 * x + 0.05 * ((i * 7) % 5) as f64)
            .collect();
        let prob = NearCollinear { x, y, delta: 1e-3 };
        let fit = levenberg_marquardt(&prob, &[1.0, 1.0], &LmOptions::default());
        let s = summarize(&names(&["a", "c"]), &fit);
        assert!(
            s.correlation[0][1].abs() > CORRELATION_WARNING,
            "{}",
            s.correlation[0][1]
        );
        assert!(
            s.warnings
                .iter()
                .any(|w| w.contains("nearly non-identifiable")),
            "{:?}",
            s.warnings
        );
        assert!(!s.warnings.iter().any(|w| w.contains("rank-deficient")));
        assert!(s.parameters.iter().all(|e| e.std_error.is_finite()));
    }

    fn fake_result(params: Vec<f64>, residuals: Vec<f64>, jac: DMatrix<f64>) -> LmResult {
        let ssr = residuals.iter().map(|r| r * r).sum();
        LmResult {
            params,
            ssr,
            residuals,
            jacobian: jac,
            iterations: 1,
            evaluations: 1,
            stop: StopReason::SmallReduction,
            converged: true,
            jacobian_repairs: 0,
            polish_steps: 0,
            rejected_non_finite: 0,
        }
    }

    #[test]
    fn non_finite_inputs_give_nan_and_a_warning() {
        let j = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, f64::NAN, 1.0, 1.0, 1.0]);
        let r = fake_result(vec![1.0, 2.0], vec![0.1, -0.1, 0.2], j);
        let s = summarize(&names(&["a", "b"]), &r);
        assert!(s.parameters.iter().all(|e| e.std_error.is_nan()));
        assert!(s.warnings.iter().any(|w| w.contains("non-finite")));
        // Wrong Jacobian shape and missing names must not panic either.
        let r = fake_result(vec![1.0, 2.0], vec![0.1, -0.1, 0.2], DMatrix::zeros(2, 2));
        let s = summarize(&[], &r);
        assert_eq!(s.parameters[1].name, "p2");
        assert!(s.warnings.iter().any(|w| w.contains("numbered")));
        assert!(s.parameters[0].std_error.is_nan());
    }

    #[test]
    fn zero_degrees_of_freedom_is_reported() {
        let prob = Line {
            x: vec![1.0, 3.0],
            y: vec![2.0, 5.0],
        };
        let fit = levenberg_marquardt(&prob, &[0.0, 0.0], &LmOptions::default());
        let s = summarize(&names(&["a", "b"]), &fit);
        assert_eq!(s.dof, 0);
        assert!(s.warnings.iter().any(|w| w.contains("degrees of freedom")));
        assert!(s.parameters[0].std_error.is_nan());
        assert!((s.parameters[1].estimate - 1.5).abs() < 1e-12);
        // Correlation needs no residual variance: −x̄/√(x̄² + Sxx/n) style, finite here.
        assert!(s.correlation[0][1].is_finite());
    }
}
