//! Algebraic simplification: constant folding and identities (x*1, x+0, x^1, ...)
//! so that derivatives and compiled tapes stay small.
//!
//! The rules are local rewrites applied bottom-up by smart constructors
//! ([`add`], [`sub`], [`mul`], [`div`], [`pow`], [`neg`], [`call`], and [`bin`]
//! for an operator chosen at run time) that assume their operands are already simple.
//!
//! Which constructor to use when: these smart constructors are the one tier that
//! simplifies, and every analysis that builds new expressions (differentiation,
//! limits, transforms, polynomial expansion, equation solving) builds through
//! them. The plain constructors `Expr::add`, `Expr::mul`, ... build exactly the
//! node asked for, with no rewriting; use them only where the exact tree matters:
//! the parser, tests that need an unsimplified input, and inside this module.
//! To simplify a tree built some other way, call [`simplify`].
//! Every rule either shrinks the tree or moves a sign or a numeric factor
//! outward/leftward, so rewriting terminates; [`simplify`] repeats the pass
//! until nothing changes, which makes it idempotent.
//!
//! Value preservation: wherever the original expression evaluates to a finite
//! number the result evaluates to the same number, exactly for the sign and
//! identity rules and up to rounding for the rules that regroup numeric factors
//! (`2*(3*x) → 6*x`, `a*(1/r) → a/r`). Rules that are only valid on part of
//! the real line (`exp(log(u)) → u`, `sqrt(u^2) → u`, `(u^2)^0.5 → u`) are not
//! applied; `log(exp(u)) → u` is, since it holds for every real u.

use super::expr::{BinOp, Expr, Func};

/// Most bottom-up passes before giving up on reaching a fixed point (never hit in practice).
const MAX_PASSES: usize = 16;

/// Returns an equivalent, smaller expression.
pub fn simplify(e: &Expr) -> Expr {
    let mut cur = pass(e);
    for _ in 0..MAX_PASSES {
        let next = pass(&cur);
        if next == cur {
            return cur;
        }
        cur = next;
    }
    cur
}

/// One bottom-up rewrite of the whole tree.
fn pass(e: &Expr) -> Expr {
    match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => e.clone(),
        Expr::Neg(a) => neg(pass(a)),
        Expr::Bin(op, a, b) => bin(*op, pass(a), pass(b)),
        Expr::Call(f, a) => call(*f, pass(a)),
    }
}

/// The number held by a `Num` node.
fn num(e: &Expr) -> Option<f64> {
    match e {
        Expr::Num(v) => Some(*v),
        _ => None,
    }
}

/// True when `e` is the number `v`.
fn is(e: &Expr, v: f64) -> bool {
    num(e) == Some(v)
}

/// `Some(c*x parts)` when `e` is `c * x` with a numeric factor `c` in front.
fn num_factor(e: &Expr) -> Option<(f64, &Expr)> {
    match e {
        Expr::Bin(BinOp::Mul, a, b) => num(a).map(|c| (c, b.as_ref())),
        _ => None,
    }
}

/// `-a` for an already simplified `a`.
pub fn neg(a: Expr) -> Expr {
    match a {
        Expr::Num(v) => Expr::Num(-v),
        Expr::Neg(x) => *x,
        // -(x - y) = y - x exactly (round-to-nearest is sign-symmetric).
        Expr::Bin(BinOp::Sub, x, y) => bin(BinOp::Sub, *y, *x),
        // Absorb the sign into a leading numeric factor.
        Expr::Bin(BinOp::Mul, x, y) if num(&x).is_some() => {
            bin(BinOp::Mul, Expr::Num(-num(&x).unwrap_or(0.0)), *y)
        }
        Expr::Bin(BinOp::Div, x, y) if num(&x).is_some() => {
            bin(BinOp::Div, Expr::Num(-num(&x).unwrap_or(0.0)), *y)
        }
        other => Expr::Neg(Box::new(other)),
    }
}

/// `a op b` for already simplified operands.
pub fn bin(op: BinOp, a: Expr, b: Expr) -> Expr {
    if let (Some(x), Some(y)) = (num(&a), num(&b)) {
        let v = op.apply(x, y);
        if v.is_finite() {
            return Expr::Num(v);
        }
        return Expr::Bin(op, Box::new(a), Box::new(b));
    }
    match op {
        BinOp::Add => plus(a, b),
        BinOp::Sub => minus(a, b),
        BinOp::Mul => times(a, b),
        BinOp::Div => over(a, b),
        BinOp::Pow => power(a, b),
    }
}

/// `a + b` for already simplified operands.
pub fn add(a: Expr, b: Expr) -> Expr {
    bin(BinOp::Add, a, b)
}

/// `a - b` for already simplified operands.
pub fn sub(a: Expr, b: Expr) -> Expr {
    bin(BinOp::Sub, a, b)
}

/// `a * b` for already simplified operands.
pub fn mul(a: Expr, b: Expr) -> Expr {
    bin(BinOp::Mul, a, b)
}

/// `a / b` for already simplified operands.
pub fn div(a: Expr, b: Expr) -> Expr {
    bin(BinOp::Div, a, b)
}

/// `a ^ b` for already simplified operands.
pub fn pow(a: Expr, b: Expr) -> Expr {
    bin(BinOp::Pow, a, b)
}

fn plus(a: Expr, b: Expr) -> Expr {
    if is(&a, 0.0) {
        return b;
    }
    if is(&b, 0.0) {
        return a;
    }
    if let Some(c) = num(&b).filter(|c| *c < 0.0) {
        return minus(a, Expr::Num(-c));
    }
    if let Some(c) = num(&a).filter(|c| *c < 0.0) {
        return minus(b, Expr::Num(-c));
    }
    if let Expr::Neg(y) = b {
        return minus(a, *y);
    }
    if let Expr::Neg(x) = a {
        return minus(b, *x);
    }
    if a == b {
        // x + x = 2*x exactly.
        return times(Expr::Num(2.0), a);
    }
    Expr::add(a, b)
}

fn minus(a: Expr, b: Expr) -> Expr {
    if is(&b, 0.0) {
        return a;
    }
    if is(&a, 0.0) {
        return neg(b);
    }
    if a == b {
        return Expr::Num(0.0);
    }
    if let Some(c) = num(&b).filter(|c| *c < 0.0) {
        return plus(a, Expr::Num(-c));
    }
    if let Expr::Neg(y) = b {
        return plus(a, *y);
    }
    if let Expr::Neg(x) = a {
        // -x - b = -(x + b)
        return neg(plus(*x, b));
    }
    Expr::sub(a, b)
}

fn times(a: Expr, b: Expr) -> Expr {
    if is(&a, 0.0) || is(&b, 0.0) {
        return Expr::Num(0.0);
    }
    if is(&a, 1.0) {
        return b;
    }
    if is(&b, 1.0) {
        return a;
    }
    if is(&a, -1.0) {
        return neg(b);
    }
    if is(&b, -1.0) {
        return neg(a);
    }
    if num(&b).is_some() && num(&a).is_none() {
        // Numbers go in front: x*c = c*x exactly. (Two numbers reach here only
        // when their product overflows; swapping them would recurse forever —
        // found by fuzzing.)
        return times(b, a);
    }
    if let Expr::Neg(x) = a {
        return neg(times(*x, b));
    }
    if let Expr::Neg(y) = b {
        return neg(times(a, *y));
    }
    if let Some(c1) = num(&a) {
        // Collect numeric factors: c1*(c2*y) → (c1*c2)*y, c1*(c2/y) → (c1*c2)/y.
        match &b {
            Expr::Bin(BinOp::Mul, x, y) => {
                if let Some(c2) = num(x) {
                    let c = c1 * c2;
                    if c.is_finite() && c != 0.0 {
                        return times(Expr::Num(c), (**y).clone());
                    }
                }
            }
            Expr::Bin(BinOp::Div, x, y) => {
                if let Some(c2) = num(x) {
                    let c = c1 * c2;
                    if c.is_finite() && c != 0.0 {
                        return over(Expr::Num(c), (**y).clone());
                    }
                }
            }
            _ => {}
        }
        return Expr::mul(a, b);
    }
    // Neither operand is a number: pull a leading numeric factor out.
    if let Some((c, x)) = num_factor(&a) {
        let rest = times(x.clone(), b);
        return times(Expr::Num(c), rest);
    }
    if let Some((c, y)) = num_factor(&b) {
        let rest = times(a, y.clone());
        return times(Expr::Num(c), rest);
    }
    if a == b {
        // x*x = x^2 exactly (`expr::pow` squares by one multiplication).
        return Expr::pow(a, Expr::Num(2.0));
    }
    if let Expr::Bin(BinOp::Div, one, r) = &b {
        if is(one, 1.0) {
            // a*(1/r) → a/r: one rounding instead of two.
            return over(a, (**r).clone());
        }
    }
    Expr::mul(a, b)
}

fn over(a: Expr, b: Expr) -> Expr {
    if is(&b, 1.0) {
        return a;
    }
    if is(&b, -1.0) {
        return neg(a);
    }
    if is(&a, 0.0) {
        return Expr::Num(0.0);
    }
    if a == b {
        return Expr::Num(1.0);
    }
    if let Expr::Neg(x) = a {
        return neg(over(*x, b));
    }
    if let Expr::Neg(y) = b {
        return neg(over(a, *y));
    }
    if num(&b).is_none() {
        if let Some((c, x)) = num_factor(&a) {
            // (c*x)/b → c*(x/b): collects the factor where products can see it.
            let rest = over(x.clone(), b);
            return times(Expr::Num(c), rest);
        }
    }
    Expr::div(a, b)
}

fn power(a: Expr, b: Expr) -> Expr {
    if is(&b, 1.0) {
        return a;
    }
    if is(&b, 0.0) || is(&a, 1.0) {
        return Expr::Num(1.0);
    }
    if let (Expr::Neg(x), Some(n)) = (&a, num(&b)) {
        // (-x)^n = x^n for an even integer n within `expr::pow`'s integer range.
        if n.fract() == 0.0 && n.abs() <= 64.0 && (n / 2.0).fract() == 0.0 {
            return power((**x).clone(), b);
        }
    }
    if let (Expr::Bin(BinOp::Pow, base, m), Some(n)) = (&a, num(&b)) {
        // (u^m)^n = u^(m·n) for integers m and n (for every real u where u^m is finite).
        if let Some(m) = num(m) {
            if m.fract() == 0.0 && n.fract() == 0.0 {
                return power((**base).clone(), Expr::Num(m * n));
            }
        }
    }
    Expr::pow(a, b)
}

/// `f(a)` for an already simplified `a`.
pub fn call(f: Func, a: Expr) -> Expr {
    if let Some(x) = num(&a) {
        let v = f.apply(x);
        if v.is_finite() {
            return Expr::Num(v);
        }
        return Expr::call(f, a);
    }
    match (f, a) {
        // log(exp(u)) = u wherever exp(u) is finite and positive, i.e. always when finite.
        (Func::Log, Expr::Call(Func::Exp, u)) => *u,
        (Func::Abs, Expr::Neg(u)) => call(Func::Abs, *u),
        (Func::Abs, Expr::Call(Func::Abs, u)) => Expr::call(Func::Abs, *u),
        (f, a) => Expr::call(f, a),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::parse::parse_formula;

    /// Parses a right side and simplifies it, printed with its own names.
    fn s(text: &str) -> String {
        let p = parse_formula(text).unwrap();
        simplify(&p.rhs).display(&p.names, &[]).to_string()
    }

    #[test]
    fn identities() {
        assert_eq!(s("x*1"), "x");
        assert_eq!(s("1*x"), "x");
        assert_eq!(s("x*0"), "0");
        assert_eq!(s("0*x"), "0");
        assert_eq!(s("x+0"), "x");
        assert_eq!(s("0+x"), "x");
        assert_eq!(s("x-0"), "x");
        assert_eq!(s("0-x"), "-x");
        assert_eq!(s("x/1"), "x");
        assert_eq!(s("0/x"), "0");
        assert_eq!(s("x^1"), "x");
        assert_eq!(s("x^0"), "1");
        assert_eq!(s("1^x"), "1");
        assert_eq!(s("-(-x)"), "x");
        assert_eq!(s("a-(-b)"), "a + b");
        assert_eq!(s("a+(-b)"), "a - b");
        assert_eq!(s("x - x"), "0");
        assert_eq!(s("x/x"), "1");
    }

    #[test]
    fn folds_constants_and_collects_factors() {
        assert_eq!(s("2*3 + 1"), "7");
        assert_eq!(s("2*(3*x)"), "6*x");
        assert_eq!(s("(2*x)*(3*y)"), "6*(x*y)");
        assert_eq!(s("x*2"), "2*x");
        assert_eq!(s("(-a)*b"), "-(a*b)");
        assert_eq!(s("-(2*x)"), "-2*x");
        assert_eq!(s("log(exp(a*x))"), "a*x");
        assert_eq!(s("exp(log(x))"), "exp(log(x))");
        assert_eq!(s("cos(pi)"), "-1");
        assert_eq!(s("x + -3"), "x - 3");
        assert_eq!(s("x*x"), "x^2");
        assert_eq!(s("(-x)^2"), "x^2");
        assert_eq!(s("(-x)^3"), "(-x)^3");
        // Not finite: left alone rather than folded to inf/NaN.
        assert_eq!(s("log(0)"), "log(0)");
    }

    /// Regression (found by fuzzing): a product of two numbers that overflows
    /// is left unfolded; it used to swap its operands forever (stack overflow).
    #[test]
    fn overflowing_constant_product_terminates() {
        assert_eq!(s("1e308*10"), "1e308*10");
        assert_eq!(s("1e308*10*a*x"), "1e308*(10*(a*x))");
        let e = Expr::mul(Expr::Num(-1e300), Expr::Num(1e300));
        assert_eq!(simplify(&e), e);
    }

    #[test]
    fn idempotent_on_examples() {
        for t in [
            "a*(b*(2*(3*x)))",
            "-(a - b) + -(c/(-d))",
            "(x*2)/(y*(-4))",
            "exp(-(0 - a*x))^1",
        ] {
            let p = parse_formula(t).unwrap();
            let once = simplify(&p.rhs);
            assert_eq!(simplify(&once), once, "{t}");
        }
    }
}
