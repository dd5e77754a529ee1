//! What is known about each built-in function, in one table: its derivative,
//! its inverse, the sign of its value, its domain, and how it behaves as its
//! argument tends to 0, +∞ or −∞ or merely stays bounded. Differentiation
//! (`diff`), the asymptotic analysis (`limits`), parameter roles (`roles`),
//! linearising transforms (`transforms`) and equation solving
//! (`algebra::isolate`) all read their function knowledge from here and
//! nowhere else. Standard calculus facts (common practice).
//!
//! Why a Rust table and not a YAML file in `rules/`: the central facts are
//! code-shaped. A derivative is an expression built from the argument `u`,
//! the function's own value `f(u)` (so that exp′ reuses the node exp(u) the
//! compiled tape already holds) and the argument's derivative `u′` (so that
//! log′ is `u′/u`, one division); an inverse adds notes on the branch it takes.
//! Written in the model language they had to be parsed and substituted at
//! start, and the copy used by limit expansion drifted from the one used by
//! differentiation. The behaviour facts sit beside them so that one function's
//! facts read together; `rules/limits.yaml` keeps only the dominance order of
//! growth components, which is a rule of the analysis, not a function fact.

use super::expr::{BinOp, Expr, Func};
use super::simplify::{bin, call, neg};
use std::f64::consts::{LN_10, LOG10_E, PI};

/// How a function behaves as its argument tends somewhere.
#[derive(Debug, Clone, PartialEq)]
pub enum Behaviour {
    /// Tends to this constant.
    Value(Expr),
    /// `f(u) ~ k·u`.
    LikeArg(f64),
    /// `f(u) ~ scale·exp(sign·u)`.
    ExpOfArg { scale: f64, sign: f64 },
    /// `f(u) ~ k·log(u)`.
    LogOfArg(f64),
    /// `f(u) ~ u^q`.
    Power(f64),
    /// Bounded, no limit (oscillates).
    Bounded,
    /// No usable rule (outside the domain, or poles).
    Unknown,
}

/// Where a function is defined on the real line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Domain {
    /// Every real argument.
    Real,
    /// u > 0 (logarithms).
    Positive,
    /// u ≥ 0 (square root).
    NonNegative,
    /// −1 ≤ u ≤ 1 (arcsine, arccosine).
    UnitInterval,
    /// Every u except the poles (tangent).
    AwayFromPoles,
}

/// The sign a function's value can take.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueSign {
    /// Always > 0 (exp, cosh).
    Positive,
    /// Always ≥ 0, zero only at isolated points (sqrt, abs).
    NonNegative,
    /// Either sign.
    Any,
}

/// One function's facts (the derivative and inverse are [`derivative`] and [`inverse`]).
#[derive(Debug, Clone, PartialEq)]
pub struct FunctionFacts {
    /// Where the function is defined.
    pub domain: Domain,
    /// The sign of its value.
    pub value_sign: ValueSign,
    /// False when it has no derivative at argument 0 (log, log10, sqrt, abs).
    pub smooth_at_zero: bool,
    /// Argument → +∞.
    pub pos_inf: Behaviour,
    /// Argument → −∞.
    pub neg_inf: Behaviour,
    /// Argument → 0.
    pub zero: Behaviour,
    /// Argument merely bounded.
    pub bounded_arg: Behaviour,
}

impl FunctionFacts {
    /// True when the argument must be positive (or non-negative) for a real value:
    /// a parameter there has a sign constraint, a rewrite there needs `u > 0`.
    pub fn needs_positive_argument(&self) -> bool {
        matches!(self.domain, Domain::Positive | Domain::NonNegative)
    }

    /// True when the value is never negative (generically positive).
    pub fn never_negative(&self) -> bool {
        self.value_sign != ValueSign::Any
    }
}

/// `π/2` as the model language reads `pi/2` (the tree, so that it prints `pi/2`).
fn half_pi() -> Expr {
    Expr::div(Expr::Num(PI), Expr::Num(2.0))
}

/// The facts for one function.
pub fn facts(f: Func) -> FunctionFacts {
    use Behaviour::*;
    let exp_like = |scale: f64, sign: f64| ExpOfArg { scale, sign };
    let one = || Value(Expr::Num(1.0));
    let (domain, value_sign, smooth_at_zero) = match f {
        Func::Exp | Func::Cosh => (Domain::Real, ValueSign::Positive, true),
        Func::Log | Func::Log10 => (Domain::Positive, ValueSign::Any, false),
        Func::Sqrt => (Domain::NonNegative, ValueSign::NonNegative, false),
        Func::Abs => (Domain::Real, ValueSign::NonNegative, false),
        Func::Asin | Func::Acos => (Domain::UnitInterval, ValueSign::Any, true),
        Func::Tan => (Domain::AwayFromPoles, ValueSign::Any, true),
        Func::Sin | Func::Cos | Func::Atan | Func::Sinh | Func::Tanh => {
            (Domain::Real, ValueSign::Any, true)
        }
    };
    // (argument → +∞, → −∞, → 0, merely bounded)
    let (pos_inf, neg_inf, zero, bounded_arg) = match f {
        Func::Exp => (exp_like(1.0, 1.0), exp_like(1.0, 1.0), one(), Bounded),
        Func::Log => (LogOfArg(1.0), Unknown, LogOfArg(1.0), Unknown),
        Func::Log10 => (LogOfArg(LOG10_E), Unknown, LogOfArg(LOG10_E), Unknown),
        Func::Sqrt => (Power(0.5), Unknown, Power(0.5), Unknown),
        Func::Abs => (LikeArg(1.0), LikeArg(-1.0), Unknown, Bounded),
        Func::Sin => (Bounded, Bounded, LikeArg(1.0), Bounded),
        Func::Cos => (Bounded, Bounded, one(), Bounded),
        Func::Tan | Func::Asin => (Unknown, Unknown, LikeArg(1.0), Unknown),
        Func::Acos => (Unknown, Unknown, Value(half_pi()), Unknown),
        Func::Atan => (
            Value(half_pi()),
            Value(Expr::div(Expr::Num(-PI), Expr::Num(2.0))),
            LikeArg(1.0),
            Bounded,
        ),
        Func::Sinh => (
            exp_like(0.5, 1.0),
            exp_like(-0.5, -1.0),
            LikeArg(1.0),
            Bounded,
        ),
        Func::Cosh => (exp_like(0.5, 1.0), exp_like(0.5, -1.0), one(), Bounded),
        Func::Tanh => (one(), Value(Expr::Num(-1.0)), LikeArg(1.0), Bounded),
    };
    FunctionFacts {
        domain,
        value_sign,
        smooth_at_zero,
        pos_inf,
        neg_inf,
        zero,
        bounded_arg,
    }
}

/// `g + 0^(|u| + |u′|)`: exactly `g` wherever the argument `u` or its
/// derivative `u′` is non-zero, and `g + 1` where both vanish.
///
/// Used as the divisor or base of a derivative factor that is singular at
/// u = 0 (u^(w−1) with 0 < w < 1, 1/√u, 1/|u|): where the data make `u`
/// vanish for every parameter value (u = x/e at x = 0), `u′ = 0` too, the
/// function is identically 0 (or constant) along that row, and the slope's
/// limit is 0; the floating-point product ∞·0 or quotient 0/0 would be NaN.
/// With the guard the factor is finite there and the slope is `…·0 = 0`,
/// while a genuinely infinite slope (u = 0, u′ ≠ 0) stays infinite. Written
/// with the ordinary operators so that the compiled tape and tree evaluation
/// agree bit for bit, and `0^w` differentiates to 0 (no slope of its own).
pub fn vanishing_guard(g: Expr, u: &Expr, du: &Expr) -> Expr {
    if matches!(u, Expr::Num(v) if *v != 0.0) || matches!(du, Expr::Num(v) if *v != 0.0) {
        return g;
    }
    let size = bin(
        BinOp::Add,
        call(Func::Abs, u.clone()),
        call(Func::Abs, du.clone()),
    );
    bin(BinOp::Add, g, bin(BinOp::Pow, Expr::Num(0.0), size))
}

/// `d f(u)` by the chain rule: `f′(u)·u′`, where `fu` is the node `f(u)` itself
/// and `du` is `u′`, built through the simplifying constructors. The forms reuse
/// `f(u)` where it serves (exp′ = exp, tan′ = 1 + tan², tanh′ = 1 − tanh²) and
/// divide by `u′`'s partner rather than multiply by a reciprocal (log′: `u′/u`).
pub fn derivative(f: Func, u: &Expr, fu: &Expr, du: Expr) -> Expr {
    let n = Expr::Num;
    let times = |g: Expr| bin(BinOp::Mul, g, du.clone());
    let sq = |x: Expr| bin(BinOp::Pow, x, n(2.0));
    match f {
        Func::Exp => times(fu.clone()),
        Func::Log => bin(BinOp::Div, du.clone(), u.clone()),
        Func::Log10 => bin(BinOp::Div, du.clone(), bin(BinOp::Mul, n(LN_10), u.clone())),
        // u′/(2√u), with √u guarded where u and u′ vanish together (limit 0).
        Func::Sqrt => bin(
            BinOp::Div,
            du.clone(),
            bin(BinOp::Mul, n(2.0), vanishing_guard(fu.clone(), u, &du)),
        ),
        // abs'(u) = sign(u) = u/|u|, with |u| guarded as for sqrt.
        Func::Abs => times(bin(
            BinOp::Div,
            u.clone(),
            vanishing_guard(fu.clone(), u, &du),
        )),
        Func::Sin => times(call(Func::Cos, u.clone())),
        Func::Cos => neg(times(call(Func::Sin, u.clone()))),
        Func::Tan => times(bin(BinOp::Add, n(1.0), sq(fu.clone()))),
        Func::Asin => bin(
            BinOp::Div,
            du.clone(),
            call(Func::Sqrt, bin(BinOp::Sub, n(1.0), sq(u.clone()))),
        ),
        Func::Acos => neg(bin(
            BinOp::Div,
            du.clone(),
            call(Func::Sqrt, bin(BinOp::Sub, n(1.0), sq(u.clone()))),
        )),
        Func::Atan => bin(
            BinOp::Div,
            du.clone(),
            bin(BinOp::Add, n(1.0), sq(u.clone())),
        ),
        Func::Sinh => times(call(Func::Cosh, u.clone())),
        Func::Cosh => times(call(Func::Sinh, u.clone())),
        Func::Tanh => times(bin(BinOp::Sub, n(1.0), sq(fu.clone()))),
    }
}

/// `u` such that `f(u) = value`, on the principal branch; a note is pushed for
/// every branch choice. `None` when `f` is not invertible on the reals (sinh and
/// cosh are left out: their inverses are not among the built-in functions).
pub fn inverse(f: Func, value: Expr, notes: &mut Vec<String>) -> Option<Expr> {
    Some(match f {
        Func::Exp => call(Func::Log, value),
        Func::Log => call(Func::Exp, value),
        Func::Log10 => bin(BinOp::Pow, Expr::Num(10.0), value),
        Func::Sqrt => bin(BinOp::Pow, value, Expr::Num(2.0)),
        Func::Atan => call(Func::Tan, value),
        Func::Tan => {
            notes.push("tan inverted on its principal branch".into());
            call(Func::Atan, value)
        }
        Func::Sin => {
            notes.push("sin inverted on its principal branch".into());
            call(Func::Asin, value)
        }
        Func::Cos => {
            notes.push("cos inverted on its principal branch".into());
            call(Func::Acos, value)
        }
        Func::Asin => call(Func::Sin, value),
        Func::Acos => call(Func::Cos, value),
        Func::Abs => {
            notes.push("abs inverted taking the positive value".into());
            value
        }
        Func::Tanh => {
            // atanh(v) = log((1 + v)/(1 − v)) / 2
            let r = bin(
                BinOp::Div,
                bin(BinOp::Add, Expr::Num(1.0), value.clone()),
                bin(BinOp::Sub, Expr::Num(1.0), value),
            );
            bin(BinOp::Mul, Expr::Num(0.5), call(Func::Log, r))
        }
        Func::Sinh | Func::Cosh => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::parse::parse_formula;

    /// The constant limits are the trees the model language gives for them.
    #[test]
    fn constant_limits_read_as_the_model_language_writes_them() {
        let p = |s: &str| parse_formula(s).unwrap().rhs;
        assert_eq!(facts(Func::Atan).pos_inf, Behaviour::Value(p("pi/2")));
        assert_eq!(facts(Func::Atan).neg_inf, Behaviour::Value(p("-pi/2")));
        assert_eq!(facts(Func::Acos).zero, Behaviour::Value(p("pi/2")));
        assert_eq!(facts(Func::Tanh).neg_inf, Behaviour::Value(p("-1")));
        assert_eq!(facts(Func::Exp).zero, Behaviour::Value(p("1")));
    }

    /// Each limit fact agrees with the function's values near that limit.
    #[test]
    fn behaviours_agree_with_values() {
        for f in Func::ALL {
            let k = facts(f);
            for (b, far) in [(&k.pos_inf, 1.0), (&k.neg_inf, -1.0), (&k.zero, 0.0)] {
                // far out, but where exp still has a finite value
                let u = match b {
                    _ if far == 0.0 => 1e-9,
                    Behaviour::ExpOfArg { .. } => 40.0 * far,
                    _ => 1e8 * far,
                };
                let v = f.apply(u);
                let want = match b {
                    Behaviour::Value(c) => c.eval(&[], &[]),
                    Behaviour::LikeArg(s) => s * u,
                    Behaviour::ExpOfArg { scale, sign } => scale * (sign * u).exp(),
                    Behaviour::LogOfArg(s) => s * u.ln(),
                    Behaviour::Power(q) => u.powf(*q),
                    _ => continue,
                };
                assert!(
                    (v - want).abs() <= 1e-6 * want.abs().max(1e-9),
                    "{}",
                    f.name()
                );
            }
        }
    }

    /// Inverses undo the function at a point inside its principal branch.
    #[test]
    fn inverses_undo_the_function() {
        for f in Func::ALL {
            let mut notes = Vec::new();
            let Some(g) = inverse(f, Expr::Param(0), &mut notes) else {
                assert!(matches!(f, Func::Sinh | Func::Cosh), "{}", f.name());
                continue;
            };
            let u = 0.4;
            let back = g.eval(&[f.apply(u)], &[]);
            assert!((back - u).abs() < 1e-12, "{}: {back}", f.name());
        }
    }

    /// Positive-domain functions are the ones whose value is NaN for u = −1.
    #[test]
    fn domains_agree_with_values() {
        for f in Func::ALL {
            let k = facts(f);
            if k.needs_positive_argument() {
                assert!(f.apply(-1.0).is_nan(), "{}", f.name());
            }
            if k.never_negative() {
                assert!(f.apply(0.7) >= 0.0, "{}", f.name());
                if !k.needs_positive_argument() {
                    assert!(f.apply(-0.7) >= 0.0, "{}", f.name());
                }
            }
        }
    }
}
