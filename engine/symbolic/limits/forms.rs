//! The leading forms of the asymptotic analysis: a growth form
//! `coef · t^power · (log t)^log_power · exp(Σ_k exp_coefs[k-1]·t^(±k))` and what a
//! subexpression does as the variable tends somewhere ([`Asymptote`]).

use super::super::algebra;
use super::super::expr::Expr;
use super::super::simplify::{self, simplify};

/// `coef · t^power · (log t)^log_power · exp(Σ_k exp_coefs[k-1]·t^(±k))`.
#[derive(Debug, Clone)]
pub(super) struct GrowthForm {
    pub(super) coef: Expr,
    pub(super) power: Expr,
    pub(super) log_power: i32,
    pub(super) exp_coefs: Vec<Expr>,
}

impl GrowthForm {
    pub(super) fn constant(c: Expr) -> GrowthForm {
        GrowthForm {
            coef: c,
            power: Expr::Num(0.0),
            log_power: 0,
            exp_coefs: Vec::new(),
        }
    }
    pub(super) fn combine(&self, o: &GrowthForm, s: f64) -> GrowthForm {
        let n = self.exp_coefs.len().max(o.exp_coefs.len());
        let get = |f: &GrowthForm, k: usize| f.exp_coefs.get(k).cloned().unwrap_or(Expr::Num(0.0));
        let exp_coefs = (0..n)
            .map(|k| {
                let b = get(o, k);
                simplify(&if s > 0.0 {
                    simplify::add(get(self, k), b)
                } else {
                    simplify::sub(get(self, k), b)
                })
            })
            .collect();
        GrowthForm {
            coef: simplify(&if s > 0.0 {
                simplify::mul(self.coef.clone(), o.coef.clone())
            } else {
                simplify::div(self.coef.clone(), o.coef.clone())
            }),
            power: simplify(&if s > 0.0 {
                simplify::add(self.power.clone(), o.power.clone())
            } else {
                simplify::sub(self.power.clone(), o.power.clone())
            }),
            log_power: if s > 0.0 {
                self.log_power + o.log_power
            } else {
                self.log_power - o.log_power
            },
            exp_coefs,
        }
    }
    pub(super) fn scale(&self, k: Expr) -> GrowthForm {
        GrowthForm {
            coef: simplify(&simplify::mul(k, self.coef.clone())),
            ..self.clone()
        }
    }
    pub(super) fn has_exp(&self) -> bool {
        self.exp_coefs.iter().any(|e| !algebra::is_zero(e))
    }
}

/// What a subexpression does as the variable tends somewhere.
#[derive(Debug, Clone)]
pub(super) enum Asymptote {
    /// Behaves like this form.
    Like(GrowthForm),
    /// → 0 faster than any power.
    Vanishes,
    /// → ±∞ faster than any power (0: sign unknown).
    Explodes(i8),
    /// Bounded, oscillating.
    Oscillates,
    /// No sound statement.
    Unknown,
}

/// The leading non-zero coefficient of the exponent polynomial (0 when there is none).
pub(super) fn leading_exp_coef(a: &GrowthForm) -> Expr {
    (0..a.exp_coefs.len())
        .rev()
        .map(|k| a.exp_coefs[k].clone())
        .find(|e| !algebra::is_zero(e))
        .unwrap_or(Expr::Num(0.0))
}

/// A non-zero constant form (no growth or decay).
pub(super) fn is_nonzero_constant(a: &GrowthForm) -> bool {
    !a.has_exp() && a.log_power == 0 && algebra::is_zero(&a.power) && !algebra::is_zero(&a.coef)
}

pub(super) fn negated(x: Asymptote) -> Asymptote {
    match x {
        Asymptote::Like(a) => Asymptote::Like(a.scale(Expr::Num(-1.0))),
        Asymptote::Explodes(s) => Asymptote::Explodes(-s),
        o => o,
    }
}

pub(super) fn product(x: &Asymptote, y: &Asymptote, multiply: bool) -> Asymptote {
    match (x, y, multiply) {
        (Asymptote::Like(a), Asymptote::Like(b), m) => {
            Asymptote::Like(a.combine(b, if m { 1.0 } else { -1.0 }))
        }
        (Asymptote::Vanishes, Asymptote::Like(a), true)
        | (Asymptote::Like(a), Asymptote::Vanishes, true)
            if !a.has_exp() =>
        {
            Asymptote::Vanishes
        }
        (Asymptote::Vanishes, Asymptote::Like(a), false) if !a.has_exp() => Asymptote::Vanishes,
        (Asymptote::Like(a), Asymptote::Explodes(_), false) if !a.has_exp() => Asymptote::Vanishes,
        (Asymptote::Like(a), Asymptote::Vanishes, false) if !a.has_exp() => Asymptote::Explodes(0),
        (Asymptote::Explodes(_), Asymptote::Like(a), _)
        | (Asymptote::Like(a), Asymptote::Explodes(_), true)
            if !a.has_exp() =>
        {
            Asymptote::Explodes(0)
        }
        (Asymptote::Like(a), Asymptote::Oscillates, _)
        | (Asymptote::Oscillates, Asymptote::Like(a), _)
            if is_nonzero_constant(a) =>
        {
            Asymptote::Oscillates
        }
        (Asymptote::Oscillates, Asymptote::Oscillates, true) => Asymptote::Oscillates,
        (Asymptote::Vanishes, Asymptote::Vanishes, true) => Asymptote::Vanishes,
        (Asymptote::Explodes(s), Asymptote::Explodes(t), true) => Asymptote::Explodes(s * t),
        _ => Asymptote::Unknown,
    }
}
