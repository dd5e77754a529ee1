//! Symbolic differentiation with respect to a parameter or a variable.
//!
//! Forward recursion over the tree with the textbook rules (sum, product,
//! quotient, chain rule), each result built through the simplifier's smart
//! constructors so that zeros vanish as they appear, then simplified once more.
//! Each function's own derivative comes from the facts table (`functions`).

use super::expr::{BinOp, Expr, Func};
use super::functions::{derivative, vanishing_guard};
use super::simplify::{bin, call, neg, simplify};

/// What a derivative is taken with respect to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Wrt {
    Param(usize),
    Var(usize),
}

/// ∂e/∂(parameter p), simplified.
pub fn diff_param(e: &Expr, p: usize) -> Expr {
    simplify(&d(&simplify(e), Wrt::Param(p)))
}

/// ∂e/∂(variable v), simplified.
pub fn diff_var(e: &Expr, v: usize) -> Expr {
    simplify(&d(&simplify(e), Wrt::Var(v)))
}

/// The gradient with respect to parameters `0..n`, simplified.
pub fn gradient(e: &Expr, n: usize) -> Vec<Expr> {
    let s = simplify(e);
    (0..n).map(|p| simplify(&d(&s, Wrt::Param(p)))).collect()
}

fn is_zero(e: &Expr) -> bool {
    matches!(e, Expr::Num(v) if *v == 0.0)
}

fn n(v: f64) -> Expr {
    Expr::Num(v)
}

/// `u + 0^|u|`: equal to `u` except at u = 0 (±0), where it is 1, so that
/// `log` of it is 0 there. A positive number needs no guard.
fn guard_zero(u: &Expr) -> Expr {
    if matches!(u, Expr::Num(v) if *v > 0.0) {
        return u.clone();
    }
    let zero_pow = bin(BinOp::Pow, n(0.0), call(Func::Abs, u.clone()));
    bin(BinOp::Add, u.clone(), zero_pow)
}

/// The power-rule term `w·u^(w−1)·u'`, evaluated by its limit where the base
/// vanishes together with its derivative: at a row where the data make `u`
/// vanish for every parameter value (u = x/e at x = 0, the zero-dose control
/// of a dose–response curve) `u' = 0` too, and with 0 < w < 1 the
/// floating-point product is ∞·0 = NaN, while u^w ≡ 0 along the row so the
/// slope's limit is 0. The base is guarded by `functions::vanishing_guard`.
/// With w ≤ 0 the value u^w is ∞ on such a row, also constant in the
/// parameters (and often made finite downstream, as in exp(−u^w) = 0), so the
/// slope's limit is again 0. Only a constant exponent w ≥ 1 needs no guard:
/// `u^(w−1)` is then finite at u = 0.
fn power_slope(u: &Expr, w: &Expr, du: Expr) -> Expr {
    let needs_guard = !matches!(w, Expr::Num(v) if *v >= 1.0);
    let base = if needs_guard {
        vanishing_guard(u.clone(), u, &du)
    } else {
        u.clone()
    };
    let lowered = bin(BinOp::Pow, base, bin(BinOp::Sub, w.clone(), n(1.0)));
    bin(BinOp::Mul, bin(BinOp::Mul, w.clone(), lowered), du)
}

/// The derivative of `e`; operands of `e` are assumed simplified.
fn d(e: &Expr, w: Wrt) -> Expr {
    match e {
        Expr::Num(_) => n(0.0),
        Expr::Var(i) => n(if w == Wrt::Var(*i) { 1.0 } else { 0.0 }),
        Expr::Param(i) => n(if w == Wrt::Param(*i) { 1.0 } else { 0.0 }),
        Expr::Neg(a) => neg(d(a, w)),
        Expr::Bin(op, a, b) => {
            let (a, b) = (a.as_ref(), b.as_ref());
            let da = d(a, w);
            let db = d(b, w);
            match op {
                BinOp::Add => bin(BinOp::Add, da, db),
                BinOp::Sub => bin(BinOp::Sub, da, db),
                BinOp::Mul => bin(
                    BinOp::Add,
                    bin(BinOp::Mul, da, b.clone()),
                    bin(BinOp::Mul, a.clone(), db),
                ),
                BinOp::Div => {
                    if is_zero(&db) {
                        bin(BinOp::Div, da, b.clone())
                    } else {
                        // (a' - (a/b) b')/b rather than (a'b - ab')/b^2: b^2 and
                        // a'b overflow or underflow long before a/b does
                        // (2/exp(sinh(a)) at a = 7.25 gave inf/inf; found by fuzzing).
                        // a/b is the formula's own node, shared in the tape.
                        let num = bin(
                            BinOp::Sub,
                            da,
                            bin(BinOp::Mul, bin(BinOp::Div, a.clone(), b.clone()), db),
                        );
                        bin(BinOp::Div, num, b.clone())
                    }
                }
                BinOp::Pow => {
                    if is_zero(&db) {
                        // Power rule n*u^(n-1)*u': no log of the base, so negative
                        // bases with integer exponents keep a finite derivative.
                        power_slope(a, b, da)
                    } else if is_zero(a) {
                        // 0^w is piecewise constant in w (0, 1 or inf): no slope.
                        n(0.0)
                    } else {
                        // d(u^w) = w' u^w log u + w u^(w-1) u'. Written this way
                        // (not u^w (w' log u + w u'/u)) so that u = 0 gives a finite
                        // slope where one exists. At u = 0, 0^w is 0 (w > 0) or ∞
                        // (w < 0), constant in w either way, so the limit of the first
                        // term is 0; in floating point it is 0·(−∞) or ∞·(−∞). Both
                        // the power and the log are therefore taken of g = u + 0^|u|,
                        // which is u for u ≠ 0 and 1 at u = 0: g^w·log g is exactly
                        // u^w·log u elsewhere and 1·0 = 0 there (x^b at x = 0, found
                        // by fuzzing; exp(−(x/e)^b) with b < 0 at a zero dose).
                        let t1 = if matches!(a, Expr::Num(v) if *v > 0.0) {
                            bin(
                                BinOp::Mul,
                                db,
                                bin(BinOp::Mul, e.clone(), call(Func::Log, a.clone())),
                            )
                        } else {
                            let g = guard_zero(a);
                            let gw = bin(BinOp::Pow, g.clone(), b.clone());
                            bin(BinOp::Mul, db, bin(BinOp::Mul, gw, call(Func::Log, g)))
                        };
                        let t2 = if is_zero(&da) {
                            n(0.0)
                        } else {
                            power_slope(a, b, da)
                        };
                        bin(BinOp::Add, t1, t2)
                    }
                }
            }
        }
        Expr::Call(f, u) => {
            let u = u.as_ref();
            let du = d(u, w);
            if is_zero(&du) {
                return n(0.0);
            }
            derivative(*f, u, e, du)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::parse::parse_formula;

    /// Derivative of a right side with respect to the name `wrt`, printed.
    fn dd(text: &str, wrt: &str) -> String {
        let p = parse_formula(text).unwrap();
        let i = p.names.iter().position(|n| n == wrt).unwrap();
        diff_param(&p.rhs, i).display(&p.names, &[]).to_string()
    }

    #[test]
    fn textbook_derivatives() {
        assert_eq!(dd("a*x + b", "a"), "x");
        assert_eq!(dd("a*x + b", "b"), "1");
        assert_eq!(dd("a*exp(-b*x)", "a"), "exp(-(b*x))");
        assert_eq!(dd("a*exp(-b*x)", "b"), "-(a*(exp(-(b*x))*x))");
        assert_eq!(dd("x^3", "x"), "3*x^2");
        assert_eq!(dd("x^a", "a"), "(x + 0^abs(x))^a*log(x + 0^abs(x))");
        assert_eq!(dd("2^a", "a"), "0.6931471805599453*2^a");
        assert_eq!(dd("log(x)", "x"), "1/x");
        assert_eq!(dd("sin(2*x)", "x"), "2*cos(2*x)");
        assert_eq!(dd("1/x", "x"), "-1/x/x");
        assert_eq!(dd("abs(x)", "x"), "x/abs(x)");
    }

    #[test]
    fn power_rule_keeps_negative_bases_finite() {
        // d/da (a*x)^3 at a = 1, x = -2: 3*(a*x)^2*x = 3*4*(-2) = -24.
        let p = parse_formula("(a*x)^3").unwrap();
        let a = p.names.iter().position(|n| n == "a").unwrap();
        let mut vals = vec![0.0; 2];
        vals[a] = 1.0;
        vals[1 - a] = -2.0;
        assert_eq!(diff_param(&p.rhs, a).eval(&vals, &[]), -24.0);
    }

    /// Regression (found by fuzzing): d/db x^b at x = 0 was 0^b·log(0) = NaN;
    /// the function is 0 for every b > 0, so the slope is 0.
    #[test]
    fn power_with_a_zero_base_has_a_finite_slope() {
        let p = parse_formula("x^b").unwrap();
        let b = p.names.iter().position(|n| n == "b").unwrap();
        let db = diff_param(&p.rhs, b);
        assert_eq!(db.eval(&[0.0, 0.3125], &[]), 0.0);
        assert_eq!(db.eval(&[-0.0, 2.5], &[]), 0.0);
        // Elsewhere it is still x^b·log(x).
        let v = db.eval(&[2.0, 1.5], &[]);
        assert!((v - 2f64.powf(1.5) * 2f64.ln()).abs() < 1e-15, "{v}");
        assert!(db.eval(&[-2.0, 1.5], &[]).is_nan());
        // d/da (a*x)^b at x = 0 with b > 1: b·0^(b-1)·x = 0, not 0·(0/0).
        let q = parse_formula("(a*x)^b").unwrap();
        let a = q.names.iter().position(|n| n == "a").unwrap();
        let mut vals = vec![0.0; 3];
        vals[a] = 1.5;
        vals[q.names.iter().position(|n| n == "b").unwrap()] = 2.5;
        assert_eq!(diff_param(&q.rhs, a).eval(&vals, &[]), 0.0);
    }

    /// A base that the data make vanish (u = x/e at x = 0, a zero-dose control)
    /// has slopes evaluated by their limits: u^b ≡ 0 along that row for b > 0,
    /// so every slope is 0 there, also for 0 < b < 1 where b·u^(b−1)·u′ is ∞·0.
    #[test]
    fn slopes_at_a_vanishing_base_are_their_limits() {
        let p = parse_formula("(x/ed)^b").unwrap();
        let idx = |s: &str| p.names.iter().position(|n| n == s).unwrap();
        let (x, e, b) = (idx("x"), idx("ed"), idx("b"));
        for bv in [0.3, 0.55, 1.0, 2.5] {
            let mut vals = vec![0.0; 3];
            vals[e] = 1.8;
            vals[b] = bv;
            for k in [e, b] {
                assert_eq!(diff_param(&p.rhs, k).eval(&vals, &[]), 0.0, "b = {bv}");
            }
            // Elsewhere the ordinary power rule: d/de = −b·(x/e)^b/e.
            vals[x] = 3.0;
            let got = diff_param(&p.rhs, e).eval(&vals, &[]);
            let want = -bv * (3.0f64 / 1.8).powf(bv) / 1.8;
            assert!((got - want).abs() <= 1e-14 * want.abs(), "{got} vs {want}");
        }
        // A constant exponent in (0, 1) and sqrt: the same limit.
        for text in ["(x/ed)^0.5", "sqrt(x/ed)", "abs(x/ed)"] {
            let q = parse_formula(text).unwrap();
            let e = q.names.iter().position(|n| n == "ed").unwrap();
            let mut vals = vec![0.0; 2];
            vals[e] = 1.8;
            assert_eq!(diff_param(&q.rhs, e).eval(&vals, &[]), 0.0, "{text}");
        }
        // A negative exponent: (x/ed)^b = ∞ at x = 0, exp(−∞) = 0, constant in
        // ed and b along that row, so both slopes are 0 (and d/dd is 0 too).
        let w = parse_formula("d*exp(-(x/ed)^b)").unwrap();
        let wi = |s: &str| w.names.iter().position(|n| n == s).unwrap();
        let mut vals = vec![0.0; 4];
        vals[wi("d")] = 2.0;
        vals[wi("ed")] = 1.8;
        vals[wi("b")] = -0.7;
        for k in ["d", "ed", "b"] {
            assert_eq!(diff_param(&w.rhs, wi(k)).eval(&vals, &[]), 0.0, "{k}");
        }
        // A genuinely infinite slope stays infinite: d/da (x − a)^0.5 at x = a.
        let q = parse_formula("(x - a)^0.5").unwrap();
        let a = q.names.iter().position(|n| n == "a").unwrap();
        let vals = [1.0, 1.0];
        assert_eq!(diff_param(&q.rhs, a).eval(&vals, &[]), f64::NEG_INFINITY);
    }

    /// Regression (found by fuzzing): the quotient rule over b^2 overflowed or
    /// underflowed where a/b itself is an ordinary number.
    #[test]
    fn quotient_rule_does_not_square_the_denominator() {
        // d/db a/b at a = b = 1e200 is −1e-200; b^2 = inf made it −0.
        let p = parse_formula("a/b").unwrap();
        assert_eq!(diff_param(&p.rhs, 1).eval(&[1e200, 1e200], &[]), -1e-200);
        // d/db a/(1e-300 − b) at a = 1e-300, b = 0 is 1e300; (1e-300)^2 = 0 made it inf.
        let q = parse_formula("a/(1e-300 - b)").unwrap();
        let got = diff_param(&q.rhs, 1).eval(&[1e-300, 0.0], &[]);
        assert!((got - 1e300).abs() <= 1e-15 * 1e300, "{got}");
    }

    #[test]
    fn variable_derivative_ignores_parameters() {
        // d/dx (p0 * x0^2 + p1) = 2 p0 x0
        let e = Expr::add(
            Expr::mul(Expr::Param(0), Expr::pow(Expr::Var(0), Expr::Num(2.0))),
            Expr::Param(1),
        );
        let g = diff_var(&e, 0);
        assert_eq!(g.eval(&[3.0, 5.0], &[2.0]), 12.0);
        assert_eq!(diff_var(&e, 1), Expr::Num(0.0));
        let grad = gradient(&e, 2);
        assert_eq!(grad[0].eval(&[3.0, 5.0], &[2.0]), 4.0);
        assert_eq!(grad[1], Expr::Num(1.0));
    }

    #[test]
    fn every_function_matches_known_values() {
        // f'(0.3) for each function of x, against closed forms (textbook calculus).
        let x: f64 = 0.3;
        let want = [
            (Func::Exp, x.exp()),
            (Func::Log, 1.0 / x),
            (Func::Log10, 1.0 / (x * std::f64::consts::LN_10)),
            (Func::Sqrt, 0.5 / x.sqrt()),
            (Func::Abs, 1.0),
            (Func::Sin, x.cos()),
            (Func::Cos, -x.sin()),
            (Func::Tan, 1.0 / (x.cos() * x.cos())),
            (Func::Asin, 1.0 / (1.0 - x * x).sqrt()),
            (Func::Acos, -1.0 / (1.0 - x * x).sqrt()),
            (Func::Atan, 1.0 / (1.0 + x * x)),
            (Func::Sinh, x.cosh()),
            (Func::Cosh, x.sinh()),
            (Func::Tanh, 1.0 / (x.cosh() * x.cosh())),
        ];
        for (f, v) in want {
            let g = diff_var(&Expr::call(f, Expr::Var(0)), 0).eval(&[], &[x]);
            assert!(
                (g - v).abs() <= 1e-14 * v.abs(),
                "{}: {} vs {}",
                f.name(),
                g,
                v
            );
        }
    }
}
