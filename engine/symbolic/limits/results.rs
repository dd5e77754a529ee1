//! What the limit analysis reports: per variable and direction, cases of sign
//! conditions with the leading-order behaviour and the limit under each.

use super::super::algebra::ser_expr;
use super::super::expr::Expr;
use super::super::model::Model;
use serde::Serialize;

/// Where the variable goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// x → 0⁺.
    ZeroPlus,
    /// x → +∞.
    PosInf,
    /// x → −∞.
    NegInf,
}

/// A sign assumption `expr > 0` (positive) or `expr < 0`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Condition {
    /// The expression whose sign is assumed.
    #[serde(serialize_with = "ser_expr")]
    pub expr: Expr,
    /// True for `> 0`, false for `< 0`.
    pub positive: bool,
}

impl Condition {
    /// Text with the model's names, e.g. `k > 0`.
    pub fn text(&self, m: &Model) -> String {
        let op = if self.positive { ">" } else { "<" };
        format!("{} {} 0", self.expr.display(&m.params, &m.vars), op)
    }

    /// True when the condition holds at these parameter values (and variables).
    pub fn holds(&self, params: &[f64], vars: &[f64]) -> bool {
        let v = self.expr.eval(params, vars);
        if self.positive {
            v > 0.0
        } else {
            v < 0.0
        }
    }
}

/// Leading-order behaviour. At −∞, `power` and `Log` refer to |x| and `rate`
/// multiplies x itself.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Leading {
    /// f → value (non-zero generic constant).
    Const {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
    },
    /// f ≈ value + slope·x (first-order expansion at 0⁺).
    Linear {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
        #[serde(serialize_with = "ser_expr")]
        slope: Expr,
    },
    /// f ~ coef·x^exponent.
    Power {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        exponent: Expr,
    },
    /// f ~ coef·x^power·exp(rate·x) (at ±∞).
    Exponential {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        power: Expr,
        #[serde(serialize_with = "ser_expr")]
        rate: Expr,
    },
    /// f ~ coef·x^power·exp(rate/x) (at 0⁺).
    ExponentialInverse {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
        #[serde(serialize_with = "ser_expr")]
        power: Expr,
        #[serde(serialize_with = "ser_expr")]
        rate: Expr,
    },
    /// f ~ coef·log x.
    Log {
        #[serde(serialize_with = "ser_expr")]
        coef: Expr,
    },
    /// f → 0 faster than any power.
    Zero,
    /// f → ±∞ faster than any power (sign 0 = unknown).
    Infinite { sign: i8 },
    /// f stays bounded and oscillates.
    Oscillating,
    /// No sound statement.
    Unknown,
}

/// The limit value.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Limit {
    /// A finite value (0 included).
    Finite {
        #[serde(serialize_with = "ser_expr")]
        value: Expr,
    },
    /// +∞.
    PosInf,
    /// −∞.
    NegInf,
    /// No limit: bounded oscillation.
    Oscillating,
    /// Not determined.
    Unknown,
}

/// One case: under `conditions`, the model behaves as `leading` and tends to `limit`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitCase {
    /// Sign assumptions of this case (empty: unconditional).
    pub conditions: Vec<Condition>,
    /// Leading-order form.
    pub leading: Leading,
    /// Limit value.
    pub limit: Limit,
}

/// All cases for one variable and direction.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VarLimits {
    /// Variable index.
    pub var: usize,
    /// Direction.
    pub direction: Direction,
    /// Cases (their conditions partition the generic parameter space).
    pub cases: Vec<LimitCase>,
}
