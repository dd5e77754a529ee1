//! Symbolic differentiation with respect to a parameter or a variable.

use super::expr::Expr;

/// ∂e/∂(parameter p), simplified.
pub fn diff_param(e: &Expr, p: usize) -> Expr {
    let _ = (e, p);
    todo!("STUB: owned by the symbolic-core work")
}

/// ∂e/∂(variable v), simplified.
pub fn diff_var(e: &Expr, v: usize) -> Expr {
    let _ = (e, v);
    todo!("STUB: owned by the symbolic-core work")
}
