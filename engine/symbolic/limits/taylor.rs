//! The first-order expansion `f(0) + f′(0)·x` at x = 0 of a model that is
//! regular there (forward-mode series; each function's derivative from the
//! facts table).

use super::super::algebra;
use super::super::expr::{BinOp, Expr, Func};
use super::super::functions::{derivative, facts};
use super::super::simplify::{self, simplify};
use super::Analysis;

impl Analysis<'_> {
    /// (f(0), f'(0)) when every node is regular at x = 0 (forward-mode series).
    pub(super) fn first_order(&self, e: &Expr) -> Option<(Expr, Expr)> {
        let v = self.var;
        if !e.has_var(v) {
            return Some((e.clone(), Expr::Num(0.0)));
        }
        Some(match e {
            Expr::Var(_) => (Expr::Num(0.0), Expr::Num(1.0)),
            Expr::Neg(a) => {
                let (a0, a1) = self.first_order(a)?;
                (simplify::neg(a0), simplify::neg(a1))
            }
            Expr::Bin(op, a, b) => {
                let (a0, a1) = self.first_order(a)?;
                let (b0, b1) = self.first_order(b)?;
                match op {
                    BinOp::Add => (simplify::add(a0, b0), simplify::add(a1, b1)),
                    BinOp::Sub => (simplify::sub(a0, b0), simplify::sub(a1, b1)),
                    BinOp::Mul => (
                        simplify::mul(a0.clone(), b0.clone()),
                        simplify::add(simplify::mul(a0, b1), simplify::mul(a1, b0)),
                    ),
                    BinOp::Div => {
                        if algebra::is_zero(&simplify(&b0)) {
                            return None;
                        }
                        let q = simplify::div(a0.clone(), b0.clone());
                        let d = simplify::div(
                            simplify::sub(simplify::mul(a1, b0.clone()), simplify::mul(a0, b1)),
                            simplify::pow(b0, Expr::Num(2.0)),
                        );
                        (q, d)
                    }
                    BinOp::Pow => {
                        if b.has_var(v) {
                            if algebra::is_zero(&simplify(&a0)) {
                                return None;
                            }
                            let r = Expr::call(
                                Func::Exp,
                                Expr::mul((**b).clone(), Expr::call(Func::Log, (**a).clone())),
                            );
                            return self.first_order(&r);
                        }
                        let natural = matches!(**b, Expr::Num(n) if n.fract() == 0.0 && n >= 0.0);
                        if !natural && algebra::is_zero(&simplify(&a0)) {
                            return None;
                        }
                        let k = (**b).clone();
                        (
                            simplify::pow(a0.clone(), k.clone()),
                            simplify::mul(
                                simplify::mul(
                                    k.clone(),
                                    simplify::pow(a0, simplify::sub(k, Expr::Num(1.0))),
                                ),
                                a1,
                            ),
                        )
                    }
                }
            }
            Expr::Call(f, a) => {
                let (a0, a1) = self.first_order(a)?;
                let a0t = simplify(&a0);
                if !facts(*f).smooth_at_zero && algebra::is_zero(&a0t) {
                    return None;
                }
                // f'(a0) from the facts table, with u' = 1 and f(a0) as a plain node
                let d = derivative(*f, &a0t, &Expr::call(*f, a0t.clone()), Expr::Num(1.0));
                (simplify::call(*f, a0t), simplify::mul(d, a1))
            }
            _ => return None,
        })
    }
}
