//! Algebraic simplification: constant folding and identities (x*1, x+0, x^1, ...)
//! so that derivatives and compiled tapes stay small.

use super::expr::Expr;

/// Returns an equivalent, smaller expression.
pub fn simplify(e: &Expr) -> Expr {
    e.clone() // STUB: owned by the symbolic-core work
}
