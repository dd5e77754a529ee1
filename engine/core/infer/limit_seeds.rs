//! Values from the model's limits matched with the data's features (design
//! note §4, the practitioner's graphical craft): a plateau reached at an end
//! equals the model's limit there, the intercept at x = 0 equals f(0) and the
//! initial slope f′(0), a straight end segment in the log–log view equals a
//! power-law leading form (exponent = slope), one in the log y–x view an
//! exponential leading form (rate = slope). Each match is an equation; an
//! equation in one unknown nonlinear parameter is solved for it (isolation or
//! Brent's method), and solved values are substituted before the next round.

use super::draft::num;
use super::feature_seeds::Seed;
use super::roots::solve_for;
use super::scales::ParamScale;
use crate::features::{DataFeatures, XAxis, YTransform};
use crate::symbolic::algebra;
use crate::symbolic::limits::{limits, Direction, Leading, Limit, LimitCase};
use crate::symbolic::{Expr, Model};

/// One equation `expr(params) = value`, with the evidence in words.
struct Equation {
    expr: Expr,
    value: f64,
    evidence: String,
}

/// Seeds from limits for the nonlinear parameters (single-predictor models).
pub fn limit_seeds(
    model: &Model,
    features: &DataFeatures,
    scales: &[ParamScale],
    typical: &[f64],
    nonlinear: &[usize],
) -> Vec<Seed> {
    if model.vars.len() != 1 {
        return Vec::new();
    }
    let lin = features.view(XAxis::Linear, YTransform::Identity);
    let logy = features.view(XAxis::Linear, YTransform::Log);
    let loglog = features.view(XAxis::Log, YTransform::Log);
    let mut eqs: Vec<Equation> = Vec::new();
    let x_low = scales.first().map(|s| s.x.min).unwrap_or(0.0);
    let x_span = scales.first().map(|s| s.x.span).unwrap_or(1.0);
    for vl in limits(model) {
        let Some(case) = pick_case(&vl.cases, typical) else {
            continue;
        };
        match vl.direction {
            Direction::ZeroPlus => {
                let near_zero = x_low >= 0.0 && x_low <= 0.1 * x_span;
                if let (true, Some(v)) = (near_zero, lin) {
                    if let Some(ic) = &v.features.intercept {
                        let (value, slope) = match &case.leading {
                            Leading::Const { value } => (Some(value.clone()), None),
                            Leading::Linear { value, slope } => {
                                (Some(value.clone()), Some(slope.clone()))
                            }
                            _ => (None, None),
                        };
                        if let Some(e) = value {
                            eqs.push(Equation {
                                expr: e,
                                value: ic.value,
                                evidence: format!("intercept of y at x = 0 ≈ {}", num(ic.value)),
                            });
                        }
                        if let Some(e) = slope {
                            eqs.push(Equation {
                                expr: e,
                                value: ic.slope,
                                evidence: format!(
                                    "initial slope of y at x = 0 ≈ {}",
                                    num(ic.slope)
                                ),
                            });
                        }
                    }
                }
                if let (Leading::Power { exponent, .. }, Some(v)) = (&case.leading, loglog) {
                    if let Some(seg) = &v.features.segments.low_end {
                        eqs.push(Equation {
                            expr: exponent.clone(),
                            value: seg.slope,
                            evidence: format!(
                                "straight low-end segment of log y against log x, slope ≈ {} (a power law x^p as x→0)",
                                num(seg.slope)
                            ),
                        });
                    }
                }
            }
            Direction::PosInf => {
                if let (Limit::Finite { value }, Some(v)) = (&case.limit, lin) {
                    if let Some(pl) = v.features.high_plateau.as_ref().filter(|p| p.reached) {
                        eqs.push(Equation {
                            expr: value.clone(),
                            value: pl.level,
                            evidence: format!("plateau of y as x grows ≈ {}", num(pl.level)),
                        });
                    }
                }
                match &case.leading {
                    Leading::Power { exponent, .. } => {
                        if let Some(seg) =
                            loglog.and_then(|v| v.features.segments.high_end.as_ref())
                        {
                            eqs.push(Equation {
                                expr: exponent.clone(),
                                value: seg.slope,
                                evidence: format!(
                                    "straight high-end segment of log y against log x, slope ≈ {} (a power law x^p as x→∞)",
                                    num(seg.slope)
                                ),
                            });
                        }
                    }
                    Leading::Exponential { rate, power, .. } if algebra::is_zero(power) => {
                        if let Some(seg) = logy.and_then(|v| v.features.segments.high_end.as_ref())
                        {
                            eqs.push(Equation {
                                expr: rate.clone(),
                                value: seg.slope,
                                evidence: format!(
                                    "straight high-end segment of log y against x, slope ≈ {} (an exponential e^(r·x) as x→∞)",
                                    num(seg.slope)
                                ),
                            });
                        }
                    }
                    _ => {}
                }
            }
            Direction::NegInf => {}
        }
    }
    // solve equations in one unknown nonlinear parameter, substituting as we go
    let mut seed = Seed {
        source: "limits",
        ..Seed::default()
    };
    let mut base = typical.to_vec();
    let mut used = vec![false; eqs.len()];
    loop {
        let mut progress = false;
        for (k, eq) in eqs.iter().enumerate() {
            if used[k] || !eq.value.is_finite() {
                continue;
            }
            let ps = algebra::params_in(&eq.expr);
            let unknown: Vec<usize> = ps
                .iter()
                .copied()
                .filter(|q| !seed.values.iter().any(|(s, _)| s == q))
                .collect();
            if unknown.len() != 1 || !nonlinear.contains(&unknown[0]) {
                continue;
            }
            // every other parameter in it must be known (a nonlinear one already solved)
            if ps
                .iter()
                .any(|q| *q != unknown[0] && !nonlinear.contains(q))
            {
                continue;
            }
            let q = unknown[0];
            used[k] = true;
            let Some(v) = solve_for(&eq.expr, q, eq.value, &base, &scales[q]) else {
                continue;
            };
            let r = &scales[q].range;
            let plausible = if r.log {
                v.abs() >= r.lo / 10.0 && v.abs() <= r.hi * 10.0
            } else {
                v >= r.lo && v <= r.hi
            };
            if !plausible {
                continue;
            }
            base[q] = v;
            seed.values.push((q, v));
            seed.why.push((
                q,
                format!(
                    "the model's limit form {} = {} (matched with the {}) ⇒ {}",
                    eq.expr.display(&model.params, &model.vars),
                    num(eq.value),
                    eq.evidence,
                    num(v)
                ),
            ));
            progress = true;
        }
        if !progress {
            break;
        }
    }
    if seed.values.is_empty() {
        Vec::new()
    } else {
        vec![seed]
    }
}

/// The case whose sign conditions hold at the typical values (or the only case).
fn pick_case<'a>(cases: &'a [LimitCase], typical: &[f64]) -> Option<&'a LimitCase> {
    if cases.len() == 1 {
        return cases.first();
    }
    cases
        .iter()
        .find(|c| c.conditions.iter().all(|k| k.holds(typical, &[])))
}
