//! Model comparison on the same data: information criteria with Akaike
//! weights, and the extra-sum-of-squares F test for nested models.
//!
//! Convention (least squares with independent normal errors, Burnham &
//! Anderson 2002, Model Selection and Multimodel Inference, 2nd ed., §2.2 and
//! §2.4): AIC = n·ln(SSR/n) + 2K, AICc = AIC + 2K(K+1)/(n−K−1), BIC =
//! n·ln(SSR/n) + K·ln(n) (Schwarz 1978), where K = p + 1 counts the p model
//! parameters **and** the error variance σ². The constant n·(ln 2π + 1) of the
//! maximised log-likelihood is dropped: it is the same for every model fitted
//! to the same n values of the same response, so differences and weights do
//! not depend on it, but the absolute numbers are not comparable with programs
//! that keep it. Akaike weights w_i = exp(−Δ_i/2)/Σ_j exp(−Δ_j/2) with
//! Δ_i = AICc_i − min AICc (Burnham & Anderson 2002, §2.9).

use super::tdist::incomplete_beta;
use serde::Serialize;
use thiserror::Error;

/// Why models cannot be compared.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum CompareError {
    #[error("no models to compare")]
    Empty,
    #[error("models are fitted to different data: '{first}' has {n_first} observations, '{other}' has {n_other}; criteria compare fits to the same rows only")]
    DifferentRows {
        first: String,
        n_first: usize,
        other: String,
        n_other: usize,
    },
    #[error("models are fitted to different responses ('{first}' fits {resp_first}, '{other}' fits {resp_other}); sums of squares on different scales cannot be compared")]
    DifferentResponse {
        first: String,
        resp_first: String,
        other: String,
        resp_other: String,
    },
    #[error("model '{name}': {n} observations are too few for AICc with {k} estimated quantities (need n > K + 1)")]
    TooFewRows { name: String, n: usize, k: usize },
    #[error("model '{name}' has a sum of squares of {ssr}; criteria need a positive finite one")]
    BadSsr { name: String, ssr: f64 },
    #[error("F test: the reduced model must have more residual degrees of freedom than the full one (reduced {reduced}, full {full})")]
    NotNested { reduced: usize, full: usize },
    #[error("F test: the full model has no residual degrees of freedom")]
    NoDof,
    #[error("F test: the full model's sum of squares ({full}) exceeds the reduced model's ({reduced}); the full model did not reach its minimum or the models are not nested")]
    FullWorse { full: f64, reduced: f64 },
}

/// What the comparison needs from one fit.
#[derive(Debug, Clone)]
pub struct FitOutline {
    pub name: String,
    /// The response as fitted (after any left-hand transform), e.g. `log(y)`.
    pub response: String,
    pub n_obs: usize,
    pub n_params: usize,
    pub ssr: f64,
}

/// One model's scores.
#[derive(Debug, Clone, Serialize)]
pub struct ModelScore {
    pub name: String,
    pub n_obs: usize,
    pub n_params: usize,
    /// K = n_params + 1 (σ² counted).
    pub k: usize,
    pub ssr: f64,
    pub aic: f64,
    pub aicc: f64,
    pub bic: f64,
    /// AICc − smallest AICc.
    pub delta_aicc: f64,
    pub akaike_weight: f64,
}

/// Scores every model; all must be fitted to the same rows of the same response.
pub fn information_criteria(fits: &[FitOutline]) -> Result<Vec<ModelScore>, CompareError> {
    let first = fits.first().ok_or(CompareError::Empty)?;
    let mut out = Vec::with_capacity(fits.len());
    for f in fits {
        if f.n_obs != first.n_obs {
            return Err(CompareError::DifferentRows {
                first: first.name.clone(),
                n_first: first.n_obs,
                other: f.name.clone(),
                n_other: f.n_obs,
            });
        }
        if f.response != first.response {
            return Err(CompareError::DifferentResponse {
                first: first.name.clone(),
                resp_first: first.response.clone(),
                other: f.name.clone(),
                resp_other: f.response.clone(),
            });
        }
        if !(f.ssr.is_finite() && f.ssr > 0.0) {
            return Err(CompareError::BadSsr {
                name: f.name.clone(),
                ssr: f.ssr,
            });
        }
        let k = f.n_params + 1;
        if f.n_obs <= k + 1 {
            return Err(CompareError::TooFewRows {
                name: f.name.clone(),
                n: f.n_obs,
                k,
            });
        }
        let n = f.n_obs as f64;
        let kf = k as f64;
        let base = n * (f.ssr / n).ln();
        let aic = base + 2.0 * kf;
        out.push(ModelScore {
            name: f.name.clone(),
            n_obs: f.n_obs,
            n_params: f.n_params,
            k,
            ssr: f.ssr,
            aic,
            aicc: aic + 2.0 * kf * (kf + 1.0) / (n - kf - 1.0),
            bic: base + kf * n.ln(),
            delta_aicc: 0.0,
            akaike_weight: 0.0,
        });
    }
    let best = out.iter().map(|s| s.aicc).fold(f64::INFINITY, f64::min);
    let mut total = 0.0;
    for s in &mut out {
        s.delta_aicc = s.aicc - best;
        total += (-0.5 * s.delta_aicc).exp();
    }
    for s in &mut out {
        s.akaike_weight = (-0.5 * s.delta_aicc).exp() / total;
    }
    Ok(out)
}

/// The extra-sum-of-squares F test of a reduced model nested in a full one.
#[derive(Debug, Clone, Serialize)]
pub struct FTest {
    pub f: f64,
    /// Numerator degrees of freedom, df_reduced − df_full.
    pub df_num: usize,
    /// Denominator degrees of freedom, df_full.
    pub df_den: usize,
    /// P(F > f) under the reduced model.
    pub p_value: f64,
}

/// F = ((SSR_r − SSR_f)/(df_r − df_f)) / (SSR_f/df_f) with its upper-tail
/// p-value (Bates & Watts 1988, §3.10; Draper & Smith 1998, §6.1). Nesting
/// is the caller's claim: it cannot be seen from sums of squares alone. For
/// nonlinear models the F distribution is an approximation.
pub fn extra_sum_of_squares(
    ssr_reduced: f64,
    dof_reduced: usize,
    ssr_full: f64,
    dof_full: usize,
) -> Result<FTest, CompareError> {
    if dof_full == 0 {
        return Err(CompareError::NoDof);
    }
    if dof_reduced <= dof_full {
        return Err(CompareError::NotNested {
            reduced: dof_reduced,
            full: dof_full,
        });
    }
    if ssr_full > ssr_reduced {
        return Err(CompareError::FullWorse {
            full: ssr_full,
            reduced: ssr_reduced,
        });
    }
    let df_num = dof_reduced - dof_full;
    let f = ((ssr_reduced - ssr_full) / df_num as f64) / (ssr_full / dof_full as f64);
    Ok(FTest {
        f,
        df_num,
        df_den: dof_full,
        p_value: f_upper_tail(f, df_num as f64, dof_full as f64),
    })
}

/// P(F > f) for the F distribution with (d1, d2) degrees of freedom:
/// I_{d2/(d2 + d1·f)}(d2/2, d1/2) (Abramowitz & Stegun 1964, 26.6.2 with
/// 26.5.1; Press et al. 1992, §6.4, eq. 6.4.11). 1 for f ≤ 0; NaN for NaN.
pub fn f_upper_tail(f: f64, d1: f64, d2: f64) -> f64 {
    if f.is_nan() || d1 <= 0.0 || d2 <= 0.0 {
        return f64::NAN;
    }
    if f <= 0.0 {
        return 1.0;
    }
    if f.is_infinite() {
        return 0.0;
    }
    incomplete_beta(d2 / 2.0, d1 / 2.0, d2 / (d2 + d1 * f))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn outline(name: &str, p: usize, ssr: f64) -> FitOutline {
        FitOutline {
            name: name.into(),
            response: "y".into(),
            n_obs: 20,
            n_params: p,
            ssr,
        }
    }

    /// AICc and BIC by the textbook formulas (Burnham & Anderson 2002, eqs.
    /// 2.13–2.14 as we recall them: AIC = n ln(σ̂²) + 2K, σ̂² = SSR/n; Schwarz
    /// 1978), evaluated here by hand for n = 20.
    #[test]
    fn criteria_by_the_formulas() {
        let s = information_criteria(&[outline("m2", 2, 8.0), outline("m3", 3, 5.0)]).unwrap();
        // m2: K = 3: 20 ln 0.4 + 6 = −18.325814637483102 + 6
        let aic2 = 20.0 * (0.4f64).ln() + 6.0;
        assert!((s[0].aic - aic2).abs() < 1e-12);
        assert!((s[0].aicc - (aic2 + 24.0 / 16.0)).abs() < 1e-12);
        assert!((s[0].bic - (20.0 * (0.4f64).ln() + 3.0 * 20f64.ln())).abs() < 1e-12);
        // m3: K = 4: 20 ln 0.25 + 8 + 40/15
        let aicc3 = 20.0 * (0.25f64).ln() + 8.0 + 40.0 / 15.0;
        assert!((s[1].aicc - aicc3).abs() < 1e-12);
        assert_eq!(s[1].delta_aicc, 0.0);
        let d = s[0].aicc - aicc3;
        let w3 = 1.0 / (1.0 + (-d / 2.0).exp());
        assert!((s[1].akaike_weight - w3).abs() < 1e-14);
        assert!((s[0].akaike_weight + s[1].akaike_weight - 1.0).abs() < 1e-15);
    }

    #[test]
    fn refusals_are_typed() {
        assert_eq!(information_criteria(&[]).unwrap_err(), CompareError::Empty);
        let mut b = outline("b", 2, 1.0);
        b.n_obs = 19;
        assert!(matches!(
            information_criteria(&[outline("a", 2, 1.0), b]),
            Err(CompareError::DifferentRows { .. })
        ));
        let mut c = outline("c", 2, 1.0);
        c.response = "log(y)".into();
        assert!(matches!(
            information_criteria(&[outline("a", 2, 1.0), c]),
            Err(CompareError::DifferentResponse { .. })
        ));
        assert!(matches!(
            information_criteria(&[outline("a", 18, 1.0)]),
            Err(CompareError::TooFewRows { .. })
        ));
        assert!(matches!(
            extra_sum_of_squares(1.0, 5, 2.0, 4),
            Err(CompareError::FullWorse { .. })
        ));
        assert!(matches!(
            extra_sum_of_squares(3.0, 4, 2.0, 4),
            Err(CompareError::NotNested { .. })
        ));
    }

    /// With one numerator degree of freedom F = T², so P(F > t²) equals the
    /// two-sided t p-value (an identity, e.g. Abramowitz & Stegun 1964, 26.6.4 vs 26.7.1).
    #[test]
    fn f_tail_with_one_numerator_df_is_two_sided_t() {
        for &(t, nu) in &[(0.5, 3.0), (2.1, 10.0), (4.0, 25.0)] {
            let a = f_upper_tail(t * t, 1.0, nu);
            let b = crate::fit::tdist::t_two_sided_p(t, nu);
            assert!((a - b).abs() < 1e-13, "{a} {b}");
        }
        assert_eq!(f_upper_tail(0.0, 2.0, 5.0), 1.0);
    }
}
