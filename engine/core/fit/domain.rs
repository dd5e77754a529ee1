//! Terms of a model that use data only (no parameters) and are undefined at
//! some row — the log of a value ≤ 0, the square root of a negative value,
//! a division by zero — so that no parameter values can make the model
//! finite there. Found before fitting, to be reported as bad input with the
//! row and the cells, instead of as a fit that cannot start.

use crate::symbolic::expr::{BinOp, Func};
use crate::symbolic::Expr;

/// A data-only term undefined at one row.
#[derive(Debug, Clone, PartialEq)]
pub struct DomainFault<'a> {
    /// The smallest term whose operands are finite but whose value is not.
    pub term: &'a Expr,
    /// The row, as an index into the columns given.
    pub row: usize,
}

/// The first data-only term of `e` (left to right, then in row order) that is
/// undefined at one of `rows`, or a division by a data-only term that is zero
/// there; `x[j]` is the column of `Var(j)`. Overflow (e.g. `exp` of a large
/// value) is not a fault: the model may still be finite.
pub fn domain_fault<'a>(e: &'a Expr, x: &[&[f64]], rows: &[usize]) -> Option<DomainFault<'a>> {
    let mut vars = vec![0.0; x.len()];
    first_fault(e, x, rows, &mut vars)
}

fn first_fault<'a>(
    e: &'a Expr,
    x: &[&[f64]],
    rows: &[usize],
    vars: &mut [f64],
) -> Option<DomainFault<'a>> {
    if !e.has_any_param() {
        if !e.has_any_var() {
            return None;
        }
        for &row in rows {
            for (v, c) in vars.iter_mut().zip(x) {
                *v = c[row];
            }
            if e.eval(&[], vars).is_finite() {
                continue;
            }
            if let Some(term) = culprit(e, vars) {
                return Some(DomainFault { term, row });
            }
        }
        return None;
    }
    match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => None,
        Expr::Neg(a) | Expr::Call(_, a) => first_fault(a, x, rows, vars),
        Expr::Bin(op, a, b) => first_fault(a, x, rows, vars)
            .or_else(|| first_fault(b, x, rows, vars))
            .or_else(|| {
                if *op != BinOp::Div || b.has_any_param() || !b.has_any_var() {
                    return None;
                }
                let row = rows.iter().copied().find(|&row| {
                    for (v, c) in vars.iter_mut().zip(x) {
                        *v = c[row];
                    }
                    b.eval(&[], vars) == 0.0
                })?;
                Some(DomainFault { term: e, row })
            }),
    }
}

/// Within a data-only term not finite at `vars`: the smallest term whose
/// operands are finite and whose value is not, when that is a domain fault.
fn culprit<'a>(e: &'a Expr, vars: &[f64]) -> Option<&'a Expr> {
    let children: Vec<&Expr> = match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => Vec::new(),
        Expr::Neg(a) | Expr::Call(_, a) => vec![a],
        Expr::Bin(_, a, b) => vec![a, b],
    };
    for c in &children {
        if !c.eval(&[], vars).is_finite() {
            return culprit(c, vars);
        }
    }
    let value = e.eval(&[], vars);
    let fault = value.is_nan()
        || match e {
            Expr::Call(Func::Log | Func::Log10, _) => true,
            Expr::Bin(BinOp::Div, _, _) => true,
            Expr::Bin(BinOp::Pow, a, _) => a.eval(&[], vars) == 0.0,
            _ => false,
        };
    fault.then_some(e)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::Model;

    fn fault_of(formula: &str, x: &[f64]) -> Option<(String, usize)> {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new(formula, &cols, None).unwrap();
        let rows: Vec<usize> = (0..x.len()).collect();
        domain_fault(&m.rhs, &[x], &rows)
            .map(|f| (f.term.display(&m.params, &m.vars).to_string(), f.row))
    }

    #[test]
    fn log_of_zero_and_sqrt_of_a_negative_value_are_found_with_their_row() {
        let (term, row) = fault_of("a*log(x) + b", &[1.0, 2.0, 0.0, 3.0]).unwrap();
        assert_eq!((term.as_str(), row), ("log(x)", 2));
        let (term, row) = fault_of("a*sqrt(x)", &[1.0, -4.0]).unwrap();
        assert_eq!((term.as_str(), row), ("sqrt(x)", 1));
        let (term, row) = fault_of("a/x + b", &[1.0, 0.0]).unwrap();
        assert_eq!((term.as_str(), row), ("a/x", 1));
        let (term, row) = fault_of("a*x^-1", &[2.0, 0.0]).unwrap();
        assert_eq!((term.as_str(), row), ("x^(-1)", 1));
    }

    #[test]
    fn defined_terms_overflow_and_parameter_terms_are_not_faults() {
        assert_eq!(fault_of("a*log(x) + b", &[1.0, 2.0, 3.0]), None);
        // exp(1000) overflows, but a/(1 + exp(x)) is still finite: not a domain fault.
        assert_eq!(fault_of("a/(1 + exp(x))", &[1.0, 1000.0]), None);
        // log(k*x) depends on the parameter: the fitter decides, not this check.
        assert_eq!(fault_of("log(k*x)", &[0.0, 1.0]), None);
    }
}
