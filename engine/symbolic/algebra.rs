//! Small algebra shared by the structural analyses (linearity, transforms,
//! limits, roles): sum/product flattening, numeric identity testing, a
//! one-unknown equation solver, and the text form used when analysis results
//! are serialised. New expressions are built with the simplifying constructors
//! of `simplify` (see there for which constructor to use when).

use super::expr::{BinOp, Expr, Func};
use super::simplify::{add, call, div, mul, neg, pow, sub};
use serde::Serializer;

/// The additive terms of `e`, signs pushed into the terms.
pub fn sum_terms(e: &Expr) -> Vec<Expr> {
    let mut out = Vec::new();
    collect_terms(e, false, &mut out);
    out
}

fn collect_terms(e: &Expr, negate: bool, out: &mut Vec<Expr>) {
    match e {
        Expr::Bin(BinOp::Add, a, b) => {
            collect_terms(a, negate, out);
            collect_terms(b, negate, out);
        }
        Expr::Bin(BinOp::Sub, a, b) => {
            collect_terms(a, negate, out);
            collect_terms(b, !negate, out);
        }
        Expr::Neg(a) => collect_terms(a, !negate, out),
        _ => out.push(if negate { neg(e.clone()) } else { e.clone() }),
    }
}

/// The factors of a product: a numeric multiplier and `(factor, ±1)` pairs,
/// `-1` for a factor in the denominator.
pub fn factors(e: &Expr) -> (f64, Vec<(Expr, i32)>) {
    let mut c = 1.0;
    let mut out = Vec::new();
    collect_factors(e, 1, &mut c, &mut out);
    (c, out)
}

fn collect_factors(e: &Expr, sign: i32, c: &mut f64, out: &mut Vec<(Expr, i32)>) {
    match e {
        Expr::Bin(BinOp::Mul, a, b) => {
            collect_factors(a, sign, c, out);
            collect_factors(b, sign, c, out);
        }
        Expr::Bin(BinOp::Div, a, b) => {
            collect_factors(a, sign, c, out);
            collect_factors(b, -sign, c, out);
        }
        Expr::Neg(a) => {
            *c = -*c;
            collect_factors(a, sign, c, out);
        }
        Expr::Num(v) if *v != 0.0 => {
            if sign > 0 {
                *c *= v
            } else {
                *c /= v
            }
        }
        _ => out.push((e.clone(), sign)),
    }
}

/// One more than the largest parameter index and variable index used in `e`.
pub fn extent(e: &Expr) -> (usize, usize) {
    match e {
        Expr::Num(_) => (0, 0),
        Expr::Param(i) => (i + 1, 0),
        Expr::Var(i) => (0, i + 1),
        Expr::Neg(a) | Expr::Call(_, a) => extent(a),
        Expr::Bin(_, a, b) => {
            let (p, v) = extent(a);
            let (q, w) = extent(b);
            (p.max(q), v.max(w))
        }
    }
}

/// Parameters that occur in `e`, ascending.
pub fn params_in(e: &Expr) -> Vec<usize> {
    let (np, _) = extent(e);
    (0..np).filter(|&p| e.has_param(p)).collect()
}

/// Sample points for identity testing: irregular values in [0.6, 2.3] so that
/// logs and roots stay real and coincidental zeros are unlikely.
fn sample(i: usize, s: usize) -> f64 {
    let t = 0.618_033_988_75 * (i as f64 + 1.0) * (s as f64 + 1.3) + 0.137 * s as f64;
    0.6 + 1.7 * (t - t.floor())
}

/// True when `e` is zero at every sample point (probabilistic identity test,
/// Schwartz 1980 / Zippel 1979 in spirit); false when it is not or cannot be evaluated.
pub fn is_zero(e: &Expr) -> bool {
    if let Expr::Num(v) = e {
        return *v == 0.0;
    }
    let (np, nv) = extent(e);
    for s in 0..4 {
        let ps: Vec<f64> = (0..np).map(|i| sample(i, s)).collect();
        let vs: Vec<f64> = (0..nv).map(|i| sample(i + 101, s)).collect();
        let v = e.eval(&ps, &vs);
        if !v.is_finite() || v.abs() > 1e-9 {
            return false;
        }
    }
    true
}

/// True when `a − b` is identically zero by [`is_zero`].
pub fn same(a: &Expr, b: &Expr) -> bool {
    a == b || is_zero(&Expr::sub(a.clone(), b.clone()))
}

/// A stable text key for an expression (structural, not semantic).
pub fn key(e: &Expr) -> String {
    format!("{:?}", e)
}

/// Solves `value = e` for parameter `p` when `p` occurs along a single path of
/// invertible operations (isolation by inverse operations). Notes collect the
/// branch choices made (even roots, principal inverses).
pub fn isolate(value: Expr, e: &Expr, p: usize, notes: &mut Vec<String>) -> Option<Expr> {
    let has = |x: &Expr| x.has_param(p);
    match e {
        Expr::Param(q) if *q == p => Some(value),
        Expr::Neg(a) => isolate(neg(value), a, p, notes),
        Expr::Bin(op, a, b) => {
            let (ha, hb) = (has(a), has(b));
            if ha == hb {
                return None;
            }
            let (a, b) = ((**a).clone(), (**b).clone());
            match (op, ha) {
                (BinOp::Add, true) => isolate(sub(value, b), &a, p, notes),
                (BinOp::Add, false) => isolate(sub(value, a), &b, p, notes),
                (BinOp::Sub, true) => isolate(add(value, b), &a, p, notes),
                (BinOp::Sub, false) => isolate(sub(a, value), &b, p, notes),
                (BinOp::Mul, true) => isolate(div(value, b), &a, p, notes),
                (BinOp::Mul, false) => isolate(div(value, a), &b, p, notes),
                (BinOp::Div, true) => isolate(mul(value, b), &a, p, notes),
                (BinOp::Div, false) => isolate(div(a, value), &b, p, notes),
                (BinOp::Pow, true) => {
                    if let Expr::Num(k) = b {
                        if k.fract() == 0.0 && (k as i64) % 2 == 0 {
                            notes.push("even power: the positive root is taken".into());
                        }
                    }
                    isolate(pow(value, div(Expr::Num(1.0), b)), &a, p, notes)
                }
                (BinOp::Pow, false) => isolate(
                    div(call(Func::Log, value), call(Func::Log, a)),
                    &b,
                    p,
                    notes,
                ),
            }
        }
        Expr::Call(f, a) => {
            let inv = super::functions::inverse(*f, value, notes)?;
            isolate(inv, a, p, notes)
        }
        _ => None,
    }
}

/// Text of an expression with generic names (`p0`, `x0`), for serialisation.
pub fn text(e: &Expr) -> String {
    e.display(&[], &[]).to_string()
}

/// Serialises an expression as its text with generic names (`p{i}`, `x{i}`).
pub fn ser_expr<S: Serializer>(e: &Expr, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(&text(e))
}

/// Serialises a list of expressions as texts.
pub fn ser_exprs<S: Serializer>(es: &[Expr], s: S) -> Result<S::Ok, S::Error> {
    s.collect_seq(es.iter().map(text))
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::symbolic::simplify::simplify;

    #[test]
    fn exp_of_log_is_not_folded_but_log_of_exp_is() {
        let x = Expr::Var(0);
        let kept = call(Func::Exp, call(Func::Log, x.clone()));
        assert_ne!(kept, x, "exp(log(x)) is undefined for x <= 0");
        assert_eq!(call(Func::Log, call(Func::Exp, x.clone())), x);
    }
    use crate::symbolic::parse::parse_formula;

    fn p(s: &str) -> Expr {
        parse_formula(s).unwrap().rhs
    }

    #[test]
    fn simplify_folds_trivia() {
        assert_eq!(simplify(&p("1*a + 0")), Expr::Param(0));
        assert_eq!(simplify(&p("a*(1-1)")), Expr::Num(0.0));
        assert_eq!(simplify(&p("-(-a)")), Expr::Param(0));
    }

    #[test]
    fn identity_test_sees_zero() {
        assert!(is_zero(&p("(a+b)^2 - a^2 - 2*a*b - b^2")));
        assert!(!is_zero(&p("(a+b)^2 - a^2 - b^2")));
    }

    #[test]
    fn isolates_a_parameter() {
        // c = a*b^2 solved for b at a = 2, c = 18 gives 3.
        let e = p("a*b^2");
        let mut notes = Vec::new();
        let sol = isolate(Expr::Num(18.0), &e, 1, &mut notes).unwrap();
        assert!((sol.eval(&[2.0, 0.0], &[]) - 3.0).abs() < 1e-12);
        assert_eq!(notes.len(), 1);
        // log(a) - c = v  ⇒ a = exp(v + c)
        let e = p("log(a) - c");
        let sol = isolate(Expr::Param(5), &e, 0, &mut notes).unwrap();
        let v = sol.eval(&[0.0, 0.7, 0.0, 0.0, 0.0, 0.3], &[]);
        assert!((v - 1f64.exp()).abs() < 1e-12);
    }
}
