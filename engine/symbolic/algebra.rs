//! Small algebra shared by the structural analyses (linearity, transforms,
//! limits, roles): tidy constructors that fold numbers and trivial identities,
//! sum/product flattening, numeric identity testing, a one-unknown equation
//! solver, and the text form used when analysis results are serialised.

use super::expr::{BinOp, Expr, Func};
use serde::Serializer;

/// `a + b`, folding numbers, zeros and a negated right side.
pub fn add(a: Expr, b: Expr) -> Expr {
    match (&a, &b) {
        (Expr::Num(x), Expr::Num(y)) => Expr::Num(x + y),
        (Expr::Num(x), _) if *x == 0.0 => b,
        (_, Expr::Num(y)) if *y == 0.0 => a,
        (_, Expr::Num(y)) if *y < 0.0 => Expr::sub(a, Expr::Num(-y)),
        (_, Expr::Neg(nb)) => sub(a, (**nb).clone()),
        (Expr::Neg(na), _) => sub(b, (**na).clone()),
        _ => Expr::add(a, b),
    }
}

/// `a - b`, folding numbers, zeros and a negated right side.
pub fn sub(a: Expr, b: Expr) -> Expr {
    match (&a, &b) {
        (Expr::Num(x), Expr::Num(y)) => Expr::Num(x - y),
        (_, Expr::Num(y)) if *y == 0.0 => a,
        (Expr::Num(x), _) if *x == 0.0 => neg(b),
        (_, Expr::Neg(nb)) => add(a, (**nb).clone()),
        _ if a == b => Expr::Num(0.0),
        _ => Expr::sub(a, b),
    }
}

/// `-a`, folding numbers, double negation and a numeric factor.
pub fn neg(a: Expr) -> Expr {
    match a {
        Expr::Num(x) => Expr::Num(-x),
        Expr::Neg(x) => *x,
        Expr::Bin(BinOp::Mul, l, r) => match *l {
            Expr::Num(c) => mul(Expr::Num(-c), *r),
            Expr::Neg(x) => mul(*x, *r),
            l => Expr::neg(Expr::mul(l, *r)),
        },
        Expr::Bin(BinOp::Sub, l, r) => Expr::sub(*r, *l),
        other => Expr::neg(other),
    }
}

/// `a * b`, folding numbers, ones, zeros and signs; numbers go to the left.
pub fn mul(a: Expr, b: Expr) -> Expr {
    match (&a, &b) {
        (Expr::Num(x), Expr::Num(y)) => Expr::Num(x * y),
        (Expr::Num(x), _) | (_, Expr::Num(x)) if *x == 0.0 => Expr::Num(0.0),
        (Expr::Num(x), _) if *x == 1.0 => b,
        (_, Expr::Num(y)) if *y == 1.0 => a,
        (Expr::Num(x), _) if *x == -1.0 => neg(b),
        (_, Expr::Num(y)) if *y == -1.0 => neg(a),
        (_, Expr::Num(_)) => mul(b, a),
        (Expr::Neg(x), _) => neg(mul((**x).clone(), b)),
        (_, Expr::Neg(y)) => neg(mul(a, (**y).clone())),
        (Expr::Num(x), Expr::Bin(BinOp::Mul, l, r)) => match **l {
            Expr::Num(y) => mul(Expr::Num(x * y), (**r).clone()),
            _ => Expr::mul(a, b),
        },
        (_, Expr::Bin(BinOp::Div, l, r)) if matches!(**l, Expr::Num(v) if v == 1.0) => {
            div(a, (**r).clone())
        }
        _ => Expr::mul(a, b),
    }
}

/// `a / b`, folding numbers, ones, zeros and signs.
pub fn div(a: Expr, b: Expr) -> Expr {
    match (&a, &b) {
        (Expr::Num(x), Expr::Num(y)) if *y != 0.0 => Expr::Num(x / y),
        (_, Expr::Num(y)) if *y == 1.0 => a,
        (_, Expr::Num(y)) if *y == -1.0 => neg(a),
        (Expr::Num(x), _) if *x == 0.0 => Expr::Num(0.0),
        (Expr::Neg(x), _) => neg(div((**x).clone(), b)),
        (_, Expr::Neg(y)) => neg(div(a, (**y).clone())),
        _ if a == b => Expr::Num(1.0),
        _ => Expr::div(a, b),
    }
}

/// `a ^ b`, folding numbers, `^0`, `^1` and nested numeric powers.
pub fn pow(a: Expr, b: Expr) -> Expr {
    match (&a, &b) {
        (_, Expr::Num(y)) if *y == 0.0 => Expr::Num(1.0),
        (_, Expr::Num(y)) if *y == 1.0 => a,
        (Expr::Num(x), Expr::Num(y)) => {
            let v = super::expr::pow(*x, *y);
            if v.is_finite() {
                Expr::Num(v)
            } else {
                Expr::pow(a, b)
            }
        }
        (Expr::Bin(BinOp::Pow, base, e), Expr::Num(y)) => match **e {
            Expr::Num(x) if (x * y).fract() == 0.0 && x.fract() == 0.0 => {
                pow((**base).clone(), Expr::Num(x * y))
            }
            _ => Expr::pow(a, b),
        },
        _ => Expr::pow(a, b),
    }
}

/// `f(a)`, folding numbers and `log(exp(u))` (exact for every real u);
/// `exp(log(u))` is kept, since it is undefined for u ≤ 0 where `u` is not.
pub fn call(f: Func, a: Expr) -> Expr {
    if let Expr::Num(x) = a {
        let v = f.apply(x);
        if v.is_finite() {
            return Expr::Num(v);
        }
    }
    match (f, &a) {
        (Func::Log, Expr::Call(Func::Exp, u)) => (**u).clone(),
        _ => Expr::call(f, a),
    }
}

/// Applies `op` through the tidy constructors.
pub fn bin(op: BinOp, a: Expr, b: Expr) -> Expr {
    match op {
        BinOp::Add => add(a, b),
        BinOp::Sub => sub(a, b),
        BinOp::Mul => mul(a, b),
        BinOp::Div => div(a, b),
        BinOp::Pow => pow(a, b),
    }
}

/// Rebuilds an expression bottom-up through the tidy constructors; then hands it
/// to the shared simplifier so results improve when that grows.
pub fn tidy(e: &Expr) -> Expr {
    super::simplify::simplify(&tidy_local(e))
}

fn tidy_local(e: &Expr) -> Expr {
    match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => e.clone(),
        Expr::Neg(a) => neg(tidy_local(a)),
        Expr::Call(f, a) => call(*f, tidy_local(a)),
        Expr::Bin(op, a, b) => bin(*op, tidy_local(a), tidy_local(b)),
    }
}

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
    fn tidy_folds_trivia() {
        assert_eq!(tidy(&p("1*a + 0")), Expr::Param(0));
        assert_eq!(tidy(&p("a*(1-1)")), Expr::Num(0.0));
        assert_eq!(tidy(&p("-(-a)")), Expr::Param(0));
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
