//! Derived quantities: a function g(θ) of the fitted parameters (e.g. a
//! half-life `t_half = log(2)/k`), its estimate g(θ̂) and its standard error
//! by the delta method, se(g)² = ∇gᵀ·C·∇g with C the parameter covariance
//! (e.g. Seber & Wild 1989, Nonlinear Regression, §5.1; Bates & Watts 1988,
//! §2.3.2). The gradient is symbolic ([`crate::symbolic::diff`]), not numerical.

use super::covariance::quadratic_form;
use super::tdist::t_quantile;
use crate::symbolic::diff::diff_param;
use crate::symbolic::parse::{parse_formula, ParseError};
use crate::symbolic::simplify::simplify;
use crate::symbolic::Expr;
use serde::Serialize;
use thiserror::Error;

/// Why a derived quantity cannot be computed.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum DerivedError {
    #[error("derived quantity: {0}")]
    Parse(#[from] ParseError),
    #[error("derived quantity '{text}': unknown name '{name}'; it may use only the parameters ({known})")]
    UnknownName {
        text: String,
        name: String,
        known: String,
    },
    #[error("derived quantity '{text}': the left side must be a single new name, as in 't_half = log(2)/k'")]
    BadName { text: String },
    #[error("derived quantity '{text}': the name '{name}' is already a parameter; choose another")]
    NameIsParameter { text: String, name: String },
    #[error("derived quantity '{name}' has no finite value at the estimates ({value})")]
    NotFinite { name: String, value: f64 },
}

/// A parsed derived quantity, ready to evaluate at any parameter vector.
#[derive(Debug, Clone, PartialEq)]
pub struct DerivedExpr {
    /// The name given on the left (`t_half`), or the expression's text.
    pub name: String,
    /// The right side as written.
    pub text: String,
    /// g(θ) with `Param(i)` the model's parameter i.
    pub expr: Expr,
    /// ∂g/∂θ_i, simplified.
    pub gradient: Vec<Expr>,
}

/// The estimate and uncertainty of one derived quantity.
#[derive(Debug, Clone, Serialize)]
pub struct DerivedQuantity {
    pub name: String,
    pub expression: String,
    pub estimate: f64,
    /// Delta-method standard error (NaN when the covariance is undefined).
    pub std_error: f64,
    /// Linearised interval g(θ̂) ± t(ν, 1−α/2)·se at `level`.
    pub ci_low: f64,
    pub ci_high: f64,
    pub level: f64,
    /// ∇g at the estimates, in parameter order.
    pub gradient: Vec<f64>,
}

/// Parses `name = expression` (or a bare expression, then named by its text)
/// against the model's parameter names. Every name used must be a parameter.
pub fn parse_derived(text: &str, params: &[String]) -> Result<DerivedExpr, DerivedError> {
    let parsed = parse_formula(text)?;
    let known = params.join(", ");
    let (name, rhs_text) = match &parsed.lhs {
        Some(Expr::Param(i)) => {
            let n = parsed.names[*i].clone();
            if params.contains(&n) {
                return Err(DerivedError::NameIsParameter {
                    text: text.into(),
                    name: n,
                });
            }
            let rhs = text.split_once('=').map(|(_, r)| r.trim()).unwrap_or(text);
            (n, rhs.to_string())
        }
        Some(_) => return Err(DerivedError::BadName { text: text.into() }),
        None => (text.trim().to_string(), text.trim().to_string()),
    };
    let mut index = Vec::with_capacity(parsed.names.len());
    for (i, n) in parsed.names.iter().enumerate() {
        if !parsed.rhs.has_param(i) {
            index.push(usize::MAX);
            continue;
        }
        match params.iter().position(|p| p == n) {
            Some(j) => index.push(j),
            None => {
                return Err(DerivedError::UnknownName {
                    text: text.into(),
                    name: n.clone(),
                    known,
                })
            }
        }
    }
    let expr = simplify(&parsed.rhs.map(&|e| match e {
        Expr::Param(i) => Some(Expr::Param(index[*i])),
        _ => None,
    }));
    let gradient = (0..params.len()).map(|k| diff_param(&expr, k)).collect();
    Ok(DerivedExpr {
        name,
        text: rhs_text,
        expr,
        gradient,
    })
}

/// g(θ̂), its delta-method standard error from the covariance `cov`, and the
/// linearised interval at `level` (e.g. 0.95) with `dof` residual degrees of freedom.
pub fn derive(
    d: &DerivedExpr,
    estimates: &[f64],
    cov: &[Vec<f64>],
    dof: usize,
    level: f64,
) -> Result<DerivedQuantity, DerivedError> {
    let estimate = d.expr.eval(estimates, &[]);
    if !estimate.is_finite() {
        return Err(DerivedError::NotFinite {
            name: d.name.clone(),
            value: estimate,
        });
    }
    let gradient: Vec<f64> = d.gradient.iter().map(|g| g.eval(estimates, &[])).collect();
    let var = quadratic_form(cov, &gradient);
    let std_error = if var >= 0.0 { var.sqrt() } else { f64::NAN };
    let t = if dof > 0 {
        t_quantile(0.5 + level / 2.0, dof as f64)
    } else {
        f64::NAN
    };
    Ok(DerivedQuantity {
        name: d.name.clone(),
        expression: d.text.clone(),
        estimate,
        std_error,
        ci_low: estimate - t * std_error,
        ci_high: estimate + t * std_error,
        level,
        gradient,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn half_life_and_its_gradient() {
        let d = parse_derived("t_half = log(2)/k", &names(&["a", "k"])).unwrap();
        assert_eq!(d.name, "t_half");
        assert_eq!(d.text, "log(2)/k");
        let cov = vec![vec![0.04, 0.001], vec![0.001, 0.0004]];
        let q = derive(&d, &[5.0, 0.2], &cov, 10, 0.95).unwrap();
        assert!((q.estimate - 2f64.ln() / 0.2).abs() < 1e-14);
        // ∂/∂k log(2)/k = −log(2)/k²; se = |∂g/∂k|·sd(k)
        let g = -(2f64.ln()) / 0.04;
        assert!((q.gradient[1] - g).abs() < 1e-12);
        assert_eq!(q.gradient[0], 0.0);
        assert!((q.std_error - g.abs() * 0.02).abs() < 1e-12);
    }

    #[test]
    fn unknown_names_and_bad_left_sides_are_typed_errors() {
        let p = names(&["a", "k"]);
        match parse_derived("h = a/kk", &p).unwrap_err() {
            DerivedError::UnknownName { name, known, .. } => {
                assert_eq!(name, "kk");
                assert_eq!(known, "a, k");
            }
            e => panic!("{e:?}"),
        }
        assert!(matches!(
            parse_derived("k = a*2", &p),
            Err(DerivedError::NameIsParameter { .. })
        ));
        assert!(matches!(
            parse_derived("2*h = a", &p),
            Err(DerivedError::BadName { .. })
        ));
        assert!(matches!(
            parse_derived("a*(", &p),
            Err(DerivedError::Parse(_))
        ));
        let d = parse_derived("log(a - 10)", &p).unwrap();
        assert_eq!(d.name, "log(a - 10)");
        assert!(matches!(
            derive(&d, &[1.0, 1.0], &[vec![1.0, 0.0], vec![0.0, 1.0]], 3, 0.95),
            Err(DerivedError::NotFinite { .. })
        ));
    }
}
