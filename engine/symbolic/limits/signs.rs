//! Signs under assumptions: what the analysis knows about the sign of a
//! parameter expression, and the case split on it when it does not know.

use super::super::algebra;
use super::super::expr::{BinOp, Expr};
use super::super::functions::facts;
use super::super::simplify;
use super::{Analysis, MAX_CASES};

/// Sign assumptions: expressions with their sign (±1).
pub(super) type Assumptions = Vec<(Expr, i8)>;

/// Results, one per case, each under its own sign assumptions.
pub(super) type Cases<T> = Vec<(Assumptions, T)>;

/// What is known about the sign of an expression.
pub(super) enum SignVerdict {
    /// Known: 1, −1 or 0.
    Known(i8),
    /// Depends on the sign of this expression, which the cases split on.
    DependsOn(Expr),
    /// Cannot be known (NaN).
    Unknown,
}

impl Analysis<'_> {
    /// The sign of `e` under the assumptions `asm`.
    pub(super) fn sign(&self, e: &Expr, asm: &Assumptions) -> SignVerdict {
        if !e.has_any_param() && !e.has_any_var() {
            let v = e.eval(&[], &[]);
            return if v.is_nan() {
                SignVerdict::Unknown
            } else {
                SignVerdict::Known(sign_of(v))
            };
        }
        let k = algebra::key(e);
        for (a, s) in asm {
            if algebra::key(a) == k {
                return SignVerdict::Known(*s);
            }
            if algebra::key(&simplify::neg(a.clone())) == k {
                return SignVerdict::Known(-*s);
            }
        }
        let both = |a: &Expr, b: &Expr| match self.sign(a, asm) {
            SignVerdict::Known(x) => match self.sign(b, asm) {
                SignVerdict::Known(y) => SignVerdict::Known(x * y),
                o => o,
            },
            o => o,
        };
        match e {
            Expr::Neg(a) => match self.sign(a, asm) {
                SignVerdict::Known(x) => SignVerdict::Known(-x),
                o => o,
            },
            Expr::Bin(BinOp::Mul | BinOp::Div, a, b) => both(a, b),
            Expr::Call(f, _) if facts(*f).never_negative() => SignVerdict::Known(1),
            Expr::Bin(BinOp::Pow, a, b) => match **b {
                Expr::Num(n) if n.fract() == 0.0 && (n as i64) % 2 == 0 => SignVerdict::Known(1),
                Expr::Num(n) if n.fract() == 0.0 => self.sign(a, asm),
                _ => match self.sign(a, asm) {
                    SignVerdict::Known(1) => SignVerdict::Known(1),
                    SignVerdict::Known(_) => SignVerdict::Unknown,
                    o => o,
                },
            },
            _ if algebra::is_zero(e) => SignVerdict::Known(0),
            _ => SignVerdict::DependsOn(e.clone()),
        }
    }

    /// Runs `f` with the sign of `e` known, splitting into cases as needed.
    pub(super) fn split_on_sign<T>(
        &self,
        asm: &Assumptions,
        e: &Expr,
        f: &dyn Fn(&Assumptions, i8) -> Cases<T>,
    ) -> Cases<T> {
        match self.sign(e, asm) {
            SignVerdict::Known(s) => f(asm, s),
            SignVerdict::Unknown => Vec::new(),
            SignVerdict::DependsOn(atom) => {
                let mut out = Vec::new();
                for s in [1i8, -1] {
                    let mut a2 = asm.clone();
                    a2.push((atom.clone(), s));
                    out.extend(self.split_on_sign(&a2, e, f));
                    if out.len() > MAX_CASES {
                        return Vec::new();
                    }
                }
                out
            }
        }
    }
}

/// The sign of a number: 1, −1 or 0 (also for NaN).
pub(super) fn sign_of(v: f64) -> i8 {
    if v > 0.0 {
        1
    } else if v < 0.0 {
        -1
    } else {
        0
    }
}
