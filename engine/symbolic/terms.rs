//! Classifies the additive terms of a model by shape in one variable, so that
//! features found in the data (peaks, periods, plateaus, straight parts) can be
//! matched to the terms and parameters that produce them (design note §4).

use super::algebra::{self, ser_expr};
use super::expr::{BinOp, Expr, Func};
use super::model::Model;
use super::poly::{self, Atom};
use super::simplify::{self, simplify};
use serde::Serialize;

/// Peak shape of a bump term.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BumpKind {
    /// exp(quadratic in x).
    Gaussian,
    /// 1/(quadratic in x without real roots).
    Lorentzian,
}

/// The shape of one additive term.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Shape {
    /// Free of the variable.
    Constant,
    /// Polynomial of degree 1 in the variable.
    Linear,
    /// Polynomial of this degree (≥ 2) in the variable.
    Polynomial { degree: i32 },
    /// Contains exp(rate·x + …) and nothing else varying.
    Exponential {
        #[serde(serialize_with = "ser_expr")]
        rate: Expr,
    },
    /// x^exponent (exponent a parameter expression).
    Power {
        #[serde(serialize_with = "ser_expr")]
        exponent: Expr,
    },
    /// Rises or falls to a plateau: 1 − exp(−kx), atan, tanh, x/(k + x).
    Saturating,
    /// A peak with centre and width (σ for Gaussian, half-width at half maximum for Lorentzian).
    Bump {
        bump: BumpKind,
        #[serde(serialize_with = "ser_expr")]
        centre: Expr,
        #[serde(serialize_with = "ser_expr")]
        width: Expr,
        centre_params: Vec<usize>,
        width_params: Vec<usize>,
    },
    /// sin/cos of a linear function of x: angular frequency and period.
    Oscillation {
        #[serde(serialize_with = "ser_expr")]
        frequency: Expr,
        #[serde(serialize_with = "ser_expr")]
        period: Expr,
        period_params: Vec<usize>,
    },
    /// None of the above.
    Other,
}

/// One additive term with its shape.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Term {
    /// The term (sign included).
    #[serde(serialize_with = "ser_expr")]
    pub expr: Expr,
    /// Parameters it uses.
    pub params: Vec<usize>,
    /// Its shape in the variable.
    pub shape: Shape,
}

/// The model's additive terms classified in variable `var`.
pub fn terms(model: &Model, var: usize) -> Vec<Term> {
    algebra::sum_terms(&model.rhs)
        .into_iter()
        .map(|t| Term {
            params: algebra::params_in(&t),
            shape: classify(&t, var),
            expr: t,
        })
        .collect()
}

/// Coefficients a_k of `e` as a Laurent polynomial in `Var(v)`, or `None`.
fn coeffs_in(e: &Expr, v: usize) -> Option<Vec<(i32, Expr)>> {
    let p = poly::expand(e);
    let mut out = Vec::new();
    for (m, c) in p.group_by(&|a: &Atom| matches!(a, Atom::Var(i) if *i == v)) {
        let ce = c.to_expr();
        if ce.has_var(v) {
            return None;
        }
        out.push((m.values().map(|(_, e)| *e).sum(), ce));
    }
    Some(out)
}

fn coef(cs: &[(i32, Expr)], k: i32) -> Expr {
    cs.iter()
        .find(|(d, _)| *d == k)
        .map(|(_, c)| c.clone())
        .unwrap_or(Expr::Num(0.0))
}

fn find_calls<'a>(e: &'a Expr, pred: &dyn Fn(Func) -> bool, out: &mut Vec<(Func, &'a Expr)>) {
    match e {
        Expr::Call(f, a) => {
            if pred(*f) {
                out.push((*f, a));
            }
            find_calls(a, pred, out);
        }
        Expr::Neg(a) => find_calls(a, pred, out),
        Expr::Bin(_, a, b) => {
            find_calls(a, pred, out);
            find_calls(b, pred, out);
        }
        _ => {}
    }
}

fn classify(t: &Expr, v: usize) -> Shape {
    if !t.has_var(v) {
        return Shape::Constant;
    }
    if let Some(cs) = coeffs_in(t, v) {
        let max = cs.iter().map(|(d, _)| *d).max().unwrap_or(0);
        let min = cs.iter().map(|(d, _)| *d).min().unwrap_or(0);
        if min >= 0 {
            return if max == 1 {
                Shape::Linear
            } else {
                Shape::Polynomial { degree: max }
            };
        }
    }
    // oscillation: sin/cos of a linear function of x
    let mut trig = Vec::new();
    find_calls(t, &|f| matches!(f, Func::Sin | Func::Cos), &mut trig);
    for (_, a) in &trig {
        if let Some(cs) = coeffs_in(a, v) {
            if cs.iter().all(|(d, _)| *d == 0 || *d == 1) {
                let w = simplify(&coef(&cs, 1));
                let period = simplify(&simplify::div(
                    Expr::Num(2.0 * std::f64::consts::PI),
                    w.clone(),
                ));
                return Shape::Oscillation {
                    period_params: algebra::params_in(&w),
                    frequency: w,
                    period,
                };
            }
        }
    }
    let mut exps = Vec::new();
    find_calls(t, &|f| f == Func::Exp, &mut exps);
    for (_, a) in &exps {
        let Some(cs) = coeffs_in(a, v) else { continue };
        let max = cs.iter().map(|(d, _)| *d).max().unwrap_or(0);
        let min = cs.iter().map(|(d, _)| *d).min().unwrap_or(0);
        if min >= 0 && max == 2 {
            // exp(a2 x² + a1 x + a0) = exp(−(x − c)²/(2σ²))·const: c = −a1/(2a2), σ = sqrt(−1/(2a2))
            let (a2, a1) = (coef(&cs, 2), coef(&cs, 1));
            let centre = simplify(&simplify::neg(simplify::div(
                a1,
                simplify::mul(Expr::Num(2.0), a2.clone()),
            )));
            let width = simplify(&simplify::pow(
                simplify::neg(simplify::div(
                    Expr::Num(1.0),
                    simplify::mul(Expr::Num(2.0), a2),
                )),
                Expr::Num(0.5),
            ));
            return bump(BumpKind::Gaussian, centre, width);
        }
        if min >= 0 && max == 1 {
            let rate = simplify(&coef(&cs, 1));
            if in_sum_with_constant(t, a) {
                return Shape::Saturating;
            }
            return Shape::Exponential { rate };
        }
    }
    let mut sat = Vec::new();
    find_calls(t, &|f| matches!(f, Func::Atan | Func::Tanh), &mut sat);
    if !sat.is_empty() {
        return Shape::Saturating;
    }
    if let Some((p, q)) = poly::as_rational(t) {
        let deg = |pp: &poly::Poly| -> Option<(i32, Vec<(i32, Expr)>)> {
            let cs = coeffs_in(&pp.to_expr(), v)?;
            Some((cs.iter().map(|(d, _)| *d).max().unwrap_or(0), cs))
        };
        if let (Some((dp, _)), Some((dq, qc))) = (deg(&p), deg(&q)) {
            if dq == 2 && dp == 0 {
                // 1/(q2 x² + q1 x + q0): centre −q1/(2q2), half-width sqrt(q0/q2 − c²)
                let (q2, q1, q0) = (coef(&qc, 2), coef(&qc, 1), coef(&qc, 0));
                let c = simplify::neg(simplify::div(q1, simplify::mul(Expr::Num(2.0), q2.clone())));
                let w = simplify::pow(
                    simplify::sub(
                        simplify::div(q0, q2),
                        simplify::pow(c.clone(), Expr::Num(2.0)),
                    ),
                    Expr::Num(0.5),
                );
                return bump(BumpKind::Lorentzian, simplify(&c), simplify(&w));
            }
            if dq >= 1 && dp == dq {
                return Shape::Saturating;
            }
        }
    }
    if let Some(e) = power_exponent(t, v) {
        return Shape::Power { exponent: e };
    }
    Shape::Other
}

fn bump(kind: BumpKind, centre: Expr, width: Expr) -> Shape {
    Shape::Bump {
        bump: kind,
        centre_params: algebra::params_in(&centre),
        width_params: algebra::params_in(&width),
        centre,
        width,
    }
}

/// True when the exp call `arg` sits in a sum that also has a term free of the data (1 − e^{−kx}).
fn in_sum_with_constant(t: &Expr, arg: &Expr) -> bool {
    t.any(&|n| {
        if !matches!(n, Expr::Bin(BinOp::Add | BinOp::Sub, ..)) {
            return false;
        }
        let terms = algebra::sum_terms(n);
        terms.iter().any(|s| !s.has_any_var())
            && terms
                .iter()
                .any(|s| s.any(&|m| matches!(m, Expr::Call(Func::Exp, a) if **a == *arg)))
    })
}

/// The first exponent (free of the data, with parameters) of a power whose base has the data.
fn power_exponent(e: &Expr, v: usize) -> Option<Expr> {
    match e {
        Expr::Bin(BinOp::Pow, a, b) if a.has_var(v) && b.has_any_param() && !b.has_var(v) => {
            Some((**b).clone())
        }
        Expr::Bin(_, a, b) => power_exponent(a, v).or_else(|| power_exponent(b, v)),
        Expr::Neg(a) | Expr::Call(_, a) => power_exponent(a, v),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    #[test]
    fn line_plus_exponential_plus_gaussian() {
        let m = model("b1 + b2*x + b3*exp(-b4*x) + b5*exp(-(x-b6)^2/(2*b7^2))");
        let ts = terms(&m, 0);
        assert_eq!(ts.len(), 4);
        assert_eq!(ts[0].shape, Shape::Constant);
        assert_eq!(ts[1].shape, Shape::Linear);
        match &ts[2].shape {
            Shape::Exponential { rate } => {
                assert_eq!(rate.eval(&[0.0, 0.0, 0.0, 0.3, 0.0, 0.0, 0.0], &[]), -0.3)
            }
            s => panic!("{:?}", s),
        }
        match &ts[3].shape {
            Shape::Bump {
                bump,
                centre,
                width,
                centre_params,
                width_params,
            } => {
                assert_eq!(*bump, BumpKind::Gaussian);
                let ps = [0.0, 0.0, 0.0, 0.0, 1.0, 2.5, 0.8];
                assert!((centre.eval(&ps, &[]) - 2.5).abs() < 1e-12);
                assert!((width.eval(&ps, &[]) - 0.8).abs() < 1e-12);
                assert_eq!(centre_params, &vec![5, 6]);
                assert_eq!(width_params, &vec![6]);
            }
            s => panic!("{:?}", s),
        }
    }

    #[test]
    fn oscillation_period() {
        let m = model("b1*cos(2*pi*x/b2) + b3*sin(2*pi*x/12)");
        let ts = terms(&m, 0);
        match &ts[0].shape {
            Shape::Oscillation {
                period,
                period_params,
                ..
            } => {
                assert!((period.eval(&[0.0, 26.0, 0.0], &[]) - 26.0).abs() < 1e-12);
                assert_eq!(period_params, &vec![1]);
            }
            s => panic!("{:?}", s),
        }
        match &ts[1].shape {
            Shape::Oscillation { period, .. } => {
                assert!((period.eval(&[0.0; 3], &[]) - 12.0).abs() < 1e-12)
            }
            s => panic!("{:?}", s),
        }
    }

    #[test]
    fn lorentzian_saturating_power() {
        let m = model("a/(w^2 + (x-c)^2)");
        match &terms(&m, 0)[0].shape {
            Shape::Bump {
                bump,
                centre,
                width,
                ..
            } => {
                assert_eq!(*bump, BumpKind::Lorentzian);
                // params sort as (a, c, w)
                assert!((centre.eval(&[1.0, 3.0, 0.5], &[]) - 3.0).abs() < 1e-12);
                assert!((width.eval(&[1.0, 3.0, 0.5], &[]) - 0.5).abs() < 1e-12);
            }
            s => panic!("{:?}", s),
        }
        assert_eq!(
            terms(&model("a*(1-exp(-k*x))"), 0)[0].shape,
            Shape::Saturating
        );
        assert_eq!(terms(&model("a*x/(k+x)"), 0)[0].shape, Shape::Saturating);
        match &terms(&model("a*x^p"), 0)[0].shape {
            Shape::Power { exponent } => assert_eq!(*exponent, Expr::Param(1)),
            s => panic!("{:?}", s),
        }
    }
}
