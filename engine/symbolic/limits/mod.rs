//! Limits and leading-order behaviour of a model as one variable tends to 0⁺,
//! +∞ or −∞ (other variables held finite), with case splits on the signs of
//! parameter expressions. Plateaus, intercepts, initial slopes and straight
//! segments in the data are matched against these (design note §4).
//!
//! Method: asymptotic expansion by recursive rules on the tree (e.g. de Bruijn,
//! *Asymptotic Methods in Analysis*, 1958, ch. 1): every subexpression gets a
//! leading form `c·t^p·(log t)^m·exp(P(t))` (t = x, or t = −x at −∞; at 0⁺ the
//! polynomial P is in 1/t). Sums keep the dominant term (the order of the
//! components, exp > power > log > const, comes from `rules/limits.yaml`), products
//! multiply forms, functions follow their behaviour in the facts table
//! (`symbolic::functions`). At 0⁺ an analytic model gets its first-order
//! expansion value + slope·x instead (forward-mode series using the table's
//! derivatives). Soundness over reach: cancellation of
//! leading terms, or any case without a rule, gives `Unknown`. Generic case:
//! leading coefficients are assumed non-zero.
//!
//! Parts: `results` (what is reported), `forms` (growth forms and asymptotes),
//! `signs` (signs under assumptions, case splits), `asymptotics` (the
//! expansion rules), `taylor` (the first-order expansion at 0).

mod asymptotics;
mod forms;
mod results;
mod signs;
mod taylor;

pub use results::{Condition, Direction, Leading, Limit, LimitCase, VarLimits};

use super::algebra;
use super::expr::Expr;
use super::model::Model;
use super::simplify::simplify;
use crate::rules::{rules, Component};

/// More cases than this collapse to one `Unknown` case.
pub const MAX_CASES: usize = 32;

/// One analysis: the variable, its direction and the dominance order.
pub(super) struct Analysis<'a> {
    /// The variable's index.
    pub(super) var: usize,
    /// Where it goes.
    pub(super) direction: Direction,
    /// Growth components in decreasing dominance (`rules/limits.yaml`).
    pub(super) dominance: &'a [Component],
}

/// Limits of the model's right side for every variable and direction.
pub fn limits(model: &Model) -> Vec<VarLimits> {
    let mut out = Vec::new();
    for v in 0..model.vars.len() {
        for d in [Direction::ZeroPlus, Direction::PosInf, Direction::NegInf] {
            out.push(VarLimits {
                var: v,
                direction: d,
                cases: limit_cases(&model.rhs, v, d),
            });
        }
    }
    out
}

/// Limit cases of `f` as variable `var` goes in direction `dir`.
pub fn limit_cases(f: &Expr, var: usize, dir: Direction) -> Vec<LimitCase> {
    let analysis = Analysis {
        var,
        direction: dir,
        dominance: &rules().limits.dominance,
    };
    if dir == Direction::ZeroPlus {
        if let Some((v0, v1)) = analysis.first_order(f) {
            let (value, slope) = (simplify(&v0), simplify(&v1));
            let leading = if algebra::is_zero(&slope) {
                Leading::Const {
                    value: value.clone(),
                }
            } else {
                Leading::Linear {
                    value: value.clone(),
                    slope,
                }
            };
            return vec![LimitCase {
                conditions: Vec::new(),
                leading,
                limit: Limit::Finite { value },
            }];
        }
    }
    let mut out = Vec::new();
    for (asm, a) in analysis.expand(f, &Vec::new()) {
        for (asm2, case) in analysis.outcome(&asm, &a) {
            let conditions = asm2
                .into_iter()
                .map(|(expr, s)| Condition {
                    expr,
                    positive: s > 0,
                })
                .collect();
            out.push(LimitCase {
                conditions,
                leading: case.0,
                limit: case.1,
            });
        }
    }
    if out.len() > MAX_CASES || out.is_empty() {
        return vec![LimitCase {
            conditions: Vec::new(),
            leading: Leading::Unknown,
            limit: Limit::Unknown,
        }];
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    /// The case whose conditions hold at `ps`.
    fn case_at(m: &Model, dir: Direction, ps: &[f64]) -> LimitCase {
        let cases = limit_cases(&m.rhs, 0, dir);
        let hits: Vec<&LimitCase> = cases
            .iter()
            .filter(|c| c.conditions.iter().all(|k| k.holds(ps, &[])))
            .collect();
        assert_eq!(hits.len(), 1, "cases {:?}", cases);
        hits[0].clone()
    }

    fn finite(c: &LimitCase, ps: &[f64]) -> f64 {
        match &c.limit {
            Limit::Finite { value } => value.eval(ps, &[]),
            other => panic!("not finite: {:?}", other),
        }
    }

    #[test]
    fn decaying_and_growing_exponential() {
        let m = model("exp(-k*x)");
        let c = case_at(&m, Direction::PosInf, &[0.5]);
        assert_eq!(finite(&c, &[0.5]), 0.0);
        match &c.leading {
            Leading::Exponential { rate, coef, .. } => {
                assert_eq!(rate.eval(&[0.5], &[]), -0.5);
                assert_eq!(coef.eval(&[0.5], &[]), 1.0);
            }
            l => panic!("{:?}", l),
        }
        let c = case_at(&m, Direction::PosInf, &[-0.5]);
        assert_eq!(c.limit, Limit::PosInf);
        // at -inf the roles swap
        let c = case_at(&m, Direction::NegInf, &[0.5]);
        assert_eq!(c.limit, Limit::PosInf);
    }

    #[test]
    fn saturation_plateau_and_initial_slope() {
        let m = model("a*(1-exp(-k*x))");
        let ps = [3.0, 0.4];
        let c = case_at(&m, Direction::PosInf, &ps);
        assert_eq!(finite(&c, &ps), 3.0);
        let c = case_at(&m, Direction::ZeroPlus, &ps);
        assert_eq!(finite(&c, &ps), 0.0);
        match &c.leading {
            Leading::Linear { slope, .. } => assert!((slope.eval(&ps, &[]) - 1.2).abs() < 1e-12),
            l => panic!("{:?}", l),
        }
        // k < 0, a > 0: a(1 - e^{|k|x}) falls without bound
        let c = case_at(&m, Direction::PosInf, &[3.0, -0.4]);
        assert_eq!(c.limit, Limit::NegInf);
    }

    #[test]
    fn power_law_at_zero() {
        let m = model("b*x^c");
        assert_eq!(
            finite(&case_at(&m, Direction::ZeroPlus, &[2.0, 0.5]), &[2.0, 0.5]),
            0.0
        );
        assert_eq!(
            case_at(&m, Direction::ZeroPlus, &[2.0, -0.5]).limit,
            Limit::PosInf
        );
        assert_eq!(
            case_at(&m, Direction::ZeroPlus, &[-2.0, -0.5]).limit,
            Limit::NegInf
        );
        match case_at(&m, Direction::PosInf, &[2.0, 0.5]).leading {
            Leading::Power { coef, exponent } => {
                assert_eq!(coef.eval(&[2.0, 0.5], &[]), 2.0);
                assert_eq!(exponent.eval(&[2.0, 0.5], &[]), 0.5);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn rational_tends_to_ratio_of_leading_coefficients() {
        let m = model("(b1 + b2*x + b3*x^2)/(1 + b4*x + b5*x^2)");
        let ps = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert!((finite(&case_at(&m, Direction::PosInf, &ps), &ps) - 0.6).abs() < 1e-12);
        assert!((finite(&case_at(&m, Direction::NegInf, &ps), &ps) - 0.6).abs() < 1e-12);
        // at 0: value b1, slope b2 - b1 b4
        match case_at(&m, Direction::ZeroPlus, &ps).leading {
            Leading::Linear { value, slope } => {
                assert_eq!(value.eval(&ps, &[]), 1.0);
                assert!((slope.eval(&ps, &[]) - (2.0 - 4.0)).abs() < 1e-12);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn arctangent_limits() {
        let m = model("atan(x/w)");
        assert!(
            (finite(&case_at(&m, Direction::PosInf, &[2.0]), &[2.0]) - std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        assert!(
            (finite(&case_at(&m, Direction::PosInf, &[-2.0]), &[-2.0])
                + std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        assert!(
            (finite(&case_at(&m, Direction::NegInf, &[2.0]), &[2.0]) + std::f64::consts::FRAC_PI_2)
                .abs()
                < 1e-15
        );
        // b1 - b2*x - atan(b3/(x-b4))/pi at +inf: -inf for b2 > 0 (line dominates)
        let m = model("b1 - b2*x - atan(b3/(x-b4))/pi");
        assert_eq!(
            case_at(&m, Direction::PosInf, &[1.0, 2.0, 1.0, 1.0]).limit,
            Limit::NegInf
        );
    }

    #[test]
    fn gaussian_vanishes_and_oscillation_has_no_limit() {
        let m = model("a*exp(-((x-c)/w)^2)");
        let ps = [2.0, 1.0, 0.5];
        assert_eq!(finite(&case_at(&m, Direction::PosInf, &ps), &ps), 0.0);
        let m = model("a + b*cos(2*pi*x/p)");
        let c = case_at(&m, Direction::PosInf, &[1.0, 1.0, 12.0]);
        assert_eq!(c.limit, Limit::Oscillating);
    }

    #[test]
    fn cancellation_is_unknown_not_wrong() {
        // x*log(1 + b/x) → b, which needs the next order: must not claim 0
        let m = model("x*log(1 + b/x)");
        for c in limit_cases(&m.rhs, 0, Direction::PosInf) {
            assert_eq!(c.limit, Limit::Unknown);
        }
        let m = model("(x + b) - x");
        let c = &limit_cases(&m.rhs, 0, Direction::PosInf)[0];
        assert!(
            matches!(c.limit, Limit::Unknown)
                || matches!(&c.limit, Limit::Finite { value } if value.eval(&[1.5], &[]) == 1.5)
        );
    }

    #[test]
    fn sum_of_three_exponentials_picks_slowest_decay() {
        let m = model("b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x)");
        let ps = [1.0, 0.5, 2.0, 0.1, 3.0, 1.5];
        let c = case_at(&m, Direction::PosInf, &ps);
        match c.leading {
            Leading::Exponential { coef, rate, .. } => {
                assert_eq!(coef.eval(&ps, &[]), 2.0);
                assert_eq!(rate.eval(&ps, &[]), -0.1);
            }
            l => panic!("{:?}", l),
        }
    }

    #[test]
    fn exponential_with_shift_keeps_constant_factor() {
        // b1*exp(b2/(x+b3)) at +inf → b1; at 0+ analytic: b1*exp(b2/b3)
        let m = model("b1*exp(b2/(x+b3))");
        let ps = [2.0, 1.0, 4.0];
        assert_eq!(finite(&case_at(&m, Direction::PosInf, &ps), &ps), 2.0);
        assert!(
            (finite(&case_at(&m, Direction::ZeroPlus, &ps), &ps) - 2.0 * 0.25f64.exp()).abs()
                < 1e-12
        );
        // exp(-k*(x-c)) at +inf: coefficient exp(k c); parameters sort as (c, k)
        let m = model("exp(-k*(x-c))");
        let ps = [2.0, 0.5];
        match case_at(&m, Direction::PosInf, &ps).leading {
            Leading::Exponential { coef, rate, .. } => {
                assert!((coef.eval(&ps, &[]) - 1f64.exp()).abs() < 1e-12);
                assert_eq!(rate.eval(&ps, &[]), -0.5);
            }
            l => panic!("{:?}", l),
        }
    }
}
