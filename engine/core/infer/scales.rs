//! The natural range of every parameter, from how it meets the data (design
//! note §5, dimensional reasoning of the trade): a rate in exp(−k·x) spans
//! several decades around 1/x-scale, a location lies over the x range or well
//! beyond it, a width is a fraction to a multiple of the x span, an exponent of
//! x lies within ±(0.05…10), a period between twice the smallest spacing and
//! twice the span. These ranges set the grids of the scans and are handed to
//! the multistart search.

use crate::fit::problem::Problem;
use crate::rules::NeutralValue;
use crate::symbolic::algebra;
use crate::symbolic::roles::{ParamRoles, RoleKind};
use crate::symbolic::{BinOp, Expr};
use serde::Serialize;

/// A parameter's natural range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScanRange {
    /// Low end: of |value| when `log`, of the value itself otherwise.
    pub lo: f64,
    /// High end: of |value| when `log`, of the value itself otherwise.
    pub hi: f64,
    /// The range is scanned log-spaced (in magnitude).
    pub log: bool,
    /// The parameter may take either sign: the log range applies to both.
    pub sign_free: bool,
    /// A typical value, used when the parameter is held while others are scanned.
    pub typical: f64,
}

/// Spread of one predictor column.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VarScale {
    /// Smallest value.
    pub min: f64,
    /// Largest value.
    pub max: f64,
    /// max − min (1 when the column is constant).
    pub span: f64,
    /// Largest |value|.
    pub abs_max: f64,
    /// Smallest positive gap between distinct sorted values.
    pub step: f64,
    /// Number of distinct values.
    pub n_distinct: usize,
}

impl VarScale {
    /// Measures a column.
    pub fn of(x: &[f64]) -> VarScale {
        let mut v: Vec<f64> = x.iter().copied().filter(|t| t.is_finite()).collect();
        v.sort_by(|a, b| a.total_cmp(b));
        v.dedup();
        let (min, max) = match (v.first(), v.last()) {
            (Some(a), Some(b)) => (*a, *b),
            _ => (0.0, 1.0),
        };
        let mut span = max - min;
        if span <= 0.0 || !span.is_finite() {
            span = min.abs().max(1.0);
        }
        let step = v
            .windows(2)
            .map(|w| w[1] - w[0])
            .filter(|d| *d > 0.0)
            .fold(f64::INFINITY, f64::min);
        let step = if step.is_finite() { step } else { span };
        VarScale {
            min,
            max,
            span,
            abs_max: min.abs().max(max.abs()).max(f64::MIN_POSITIVE),
            step: step.max(span * 1e-4),
            n_distinct: v.len(),
        }
    }

    /// The smallest x scale the data resolve.
    pub fn small(&self) -> f64 {
        self.step.max(self.span * 1e-4)
    }

    /// The largest x scale the data show.
    pub fn large(&self) -> f64 {
        self.span.max(self.abs_max)
    }
}

/// Everything known about one parameter's scale.
#[derive(Debug, Clone)]
pub struct ParamScale {
    /// The role chosen to set the range.
    pub kind: RoleKind,
    /// The predictor it meets.
    pub var: usize,
    /// Its range.
    pub range: ScanRange,
    /// For a location: parameter = factor × (the x value where its factor vanishes).
    pub location_factor: f64,
    /// Neutral value when the parameter only bends the curve.
    pub neutral: Option<NeutralValue>,
    /// The predictor's spread.
    pub x: VarScale,
}

/// Words for a role in derivation sentences.
pub fn role_words(kind: RoleKind) -> &'static str {
    match kind {
        RoleKind::Location => "location",
        RoleKind::Rate => "rate",
        RoleKind::InverseScale => "inverse scale",
        RoleKind::Width => "width",
        RoleKind::Exponent => "exponent",
        RoleKind::Amplitude => "amplitude",
        RoleKind::Offset => "offset",
        RoleKind::Period => "period",
        RoleKind::Coefficient => "coefficient",
        RoleKind::Other => "parameter",
    }
}

fn priority(kind: RoleKind) -> usize {
    match kind {
        RoleKind::Period => 0,
        RoleKind::Rate => 1,
        RoleKind::InverseScale => 2,
        RoleKind::Width => 3,
        RoleKind::Location => 4,
        RoleKind::Exponent => 5,
        RoleKind::Amplitude => 6,
        RoleKind::Offset => 7,
        RoleKind::Coefficient => 8,
        RoleKind::Other => 9,
    }
}

/// Scales of every parameter of the problem.
pub fn param_scales(problem: &Problem, roles: &[ParamRoles]) -> Vec<ParamScale> {
    let xs: Vec<VarScale> = problem.x.iter().map(|c| VarScale::of(c)).collect();
    let fallback = VarScale::of(&[0.0, 1.0]);
    let y_abs = problem
        .y
        .iter()
        .filter(|v| v.is_finite())
        .fold(0.0f64, |a, v| a.max(v.abs()))
        .max(f64::MIN_POSITIVE);
    let (y_min, y_max) = problem
        .y
        .iter()
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        });
    let y_span = if y_max > y_min { y_max - y_min } else { y_abs };
    let n = problem.y.len().max(2) as f64;
    (0..problem.model.n_params())
        .map(|p| {
            let rs = roles.iter().find(|r| r.param == p);
            let best = rs.and_then(|r| r.roles.iter().min_by_key(|x| priority(x.kind)));
            let kind = best.map(|r| r.kind).unwrap_or(RoleKind::Other);
            let var = best.and_then(|r| r.var).unwrap_or(0);
            let x = xs.get(var).copied().unwrap_or(fallback);
            let positive = rs.is_some_and(|r| {
                r.roles
                    .iter()
                    .any(|x| x.positive_required || (x.sign_free && x.kind == kind))
            });
            let neutral = rs.and_then(|r| r.roles.iter().find_map(|x| x.neutral.clone()));
            let geo = |lo: f64, hi: f64| (lo * hi).sqrt();
            let mut location_factor = 1.0;
            let mut range = match kind {
                RoleKind::Rate => {
                    let (lo, hi) = (0.01 / x.large(), 100.0 / x.small());
                    ScanRange {
                        lo,
                        hi,
                        log: true,
                        sign_free: !positive,
                        typical: geo(lo, hi),
                    }
                }
                RoleKind::InverseScale => {
                    let (lo, hi) = (x.small() / 100.0, 100.0 * x.large());
                    ScanRange {
                        lo,
                        hi,
                        log: true,
                        sign_free: !positive,
                        typical: geo(lo, hi),
                    }
                }
                RoleKind::Width => {
                    let (lo, hi) = ((x.span / 1000.0).min(x.step / 2.0), 100.0 * x.span);
                    ScanRange {
                        lo,
                        hi,
                        log: true,
                        sign_free: false,
                        typical: x.span / 10.0,
                    }
                }
                RoleKind::Location => {
                    location_factor = location_sign(&problem.model.rhs, p, var);
                    let a = location_factor * (x.min - 100.0 * x.span);
                    let b = location_factor * (x.max + 100.0 * x.span);
                    ScanRange {
                        lo: a.min(b),
                        hi: a.max(b),
                        log: false,
                        sign_free: true,
                        typical: location_factor * 0.5 * (x.min + x.max),
                    }
                }
                RoleKind::Exponent => ScanRange {
                    lo: 0.05,
                    hi: 10.0,
                    log: true,
                    sign_free: !positive,
                    typical: 1.0,
                },
                RoleKind::Period => {
                    let lo = 2.0 * x.step.max(0.5 * x.span / (n - 1.0));
                    ScanRange {
                        lo,
                        hi: 2.0 * x.span,
                        log: true,
                        sign_free: false,
                        typical: x.span / 4.0,
                    }
                }
                RoleKind::Amplitude => ScanRange {
                    lo: 1e-3 * y_abs,
                    hi: 1e3 * y_abs,
                    log: true,
                    sign_free: !positive,
                    typical: y_abs,
                },
                RoleKind::Offset => ScanRange {
                    lo: y_min - y_span,
                    hi: y_max + y_span,
                    log: false,
                    sign_free: true,
                    typical: 0.5 * (y_min + y_max),
                },
                RoleKind::Coefficient | RoleKind::Other => ScanRange {
                    lo: 1e-4,
                    hi: 1e4,
                    log: true,
                    sign_free: !positive,
                    typical: 1.0,
                },
            };
            if let Some(nv) = &neutral {
                range.typical = nv.value;
            }
            ParamScale {
                kind,
                var,
                range,
                location_factor,
                neutral,
                x,
            }
        })
        .collect()
}

/// For a parameter p in a sum `a·x + b·p + …`: the factor s with p = s·(x where the sum's x part
/// cancels p), i.e. s = −a/b; 1 when no such sum is found.
fn location_sign(e: &Expr, p: usize, var: usize) -> f64 {
    let mut found = None;
    find_shift(e, p, var, &mut found);
    found.unwrap_or(1.0)
}

fn find_shift(e: &Expr, p: usize, var: usize, found: &mut Option<f64>) {
    if found.is_some() {
        return;
    }
    if let Expr::Bin(BinOp::Add | BinOp::Sub, ..) = e {
        let terms = algebra::sum_terms(e);
        let mut cx = None;
        let mut cp = None;
        for t in &terms {
            let (c, fs) = algebra::factors(t);
            if fs.len() == 1 {
                match fs[0] {
                    (Expr::Var(v), 1) if v == var => cx = Some(c),
                    (Expr::Param(q), 1) if q == p => cp = Some(c),
                    _ => {}
                }
            }
        }
        if let (Some(a), Some(b)) = (cx, cp) {
            if b != 0.0 {
                *found = Some(-a / b);
                return;
            }
        }
    }
    match e {
        Expr::Neg(a) | Expr::Call(_, a) => find_shift(a, p, var, found),
        Expr::Bin(_, a, b) => {
            find_shift(a, p, var, found);
            find_shift(b, p, var, found);
        }
        _ => {}
    }
}

fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    if n <= 1 {
        return vec![0.5 * (a + b)];
    }
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

fn logspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    linspace(a.ln(), b.ln(), n)
        .into_iter()
        .map(f64::exp)
        .collect()
}

/// A grid of about `n` values over the parameter's whole natural range.
pub fn global_grid(s: &ParamScale, n: usize) -> Vec<f64> {
    let r = &s.range;
    let n = n.max(4);
    match s.kind {
        RoleKind::Location => {
            // dense over the data (extended by half the span), log-spaced offsets beyond
            let x = &s.x;
            let n_in = (n * 3 / 5).max(3);
            let n_out = ((n - n_in) / 2).max(1);
            let mut v = linspace(x.min - 0.5 * x.span, x.max + 0.5 * x.span, n_in);
            for d in logspace(0.5 * x.span, 100.0 * x.span, n_out + 1)
                .into_iter()
                .skip(1)
            {
                v.push(x.min - d);
                v.push(x.max + d);
            }
            v.sort_by(|a, b| a.total_cmp(b));
            v.into_iter().map(|l| l * s.location_factor).collect()
        }
        _ if r.log => {
            if r.sign_free {
                let half = (n / 2).max(2);
                let pos = logspace(r.lo, r.hi, half);
                let mut v: Vec<f64> = pos.iter().rev().map(|x| -x).collect();
                v.extend(pos);
                v
            } else {
                let sign = if r.typical < 0.0 { -1.0 } else { 1.0 };
                logspace(r.lo, r.hi, n)
                    .into_iter()
                    .map(|x| sign * x)
                    .collect()
            }
        }
        _ => linspace(r.lo, r.hi, n),
    }
}

/// A grid of `n` values around `v` (a factor of `ratio` each way for log
/// ranges; a share of the x span for locations and linear ranges).
pub fn local_grid(s: &ParamScale, v: f64, n: usize, ratio: f64) -> Vec<f64> {
    let r = &s.range;
    if r.log && v != 0.0 && v.is_finite() {
        return logspace(v.abs() / ratio, v.abs() * ratio, n)
            .into_iter()
            .map(|x| x * v.signum())
            .collect();
    }
    let half = match s.kind {
        RoleKind::Location => 0.25 * s.x.span * ratio.ln().max(0.1),
        _ if r.log => return global_grid(s, n),
        _ => 0.1 * (r.hi - r.lo),
    };
    linspace(v - half, v + half, n)
}

/// Number of grid values a period scan needs so that the spacing resolves
/// valleys of relative width ≈ P/span (at most `cap`).
pub fn period_points(s: &ParamScale, n_rows: usize, cap: usize) -> usize {
    let r = &s.range;
    let decades = (r.hi / r.lo).max(1.0).ln();
    ((decades * n_rows as f64 * 0.8) as usize).clamp(60, cap)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::roles::roles;
    use crate::symbolic::Model;

    fn problem(f: &str, x: Vec<f64>) -> Problem {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new(f, &cols, None).unwrap();
        let y = x.iter().map(|v| 1.0 + v).collect();
        Problem::from_columns(m, vec![x], y).unwrap()
    }

    #[test]
    fn rate_range_spans_decades_around_the_x_scale() {
        let x: Vec<f64> = (0..11).map(|i| i as f64).collect();
        let pr = problem("a*exp(-k*x)", x);
        let s = param_scales(&pr, &roles(&pr.model));
        let k = &s[1];
        assert_eq!(k.kind, RoleKind::Rate);
        // 0.01/10 … 100/1 (smallest step 1)
        assert!((k.range.lo - 1e-3).abs() < 1e-12 && (k.range.hi - 100.0).abs() < 1e-9);
        assert!(k.range.sign_free);
        let g = global_grid(k, 20);
        assert_eq!(g.len(), 20);
        assert!(g.iter().any(|v| *v < 0.0) && g.iter().any(|v| *v > 0.0));
    }

    #[test]
    fn locations_follow_the_sign_of_the_shift() {
        let x: Vec<f64> = (0..11).map(|i| 10.0 + i as f64).collect();
        let pr = problem("a*exp(b/(x+c))", x.clone());
        let s = param_scales(&pr, &roles(&pr.model));
        assert_eq!(s[2].kind, RoleKind::Location);
        assert_eq!(s[2].location_factor, -1.0);
        let pr = problem("a/(1+((x-c)/w)^2)", x);
        let s = param_scales(&pr, &roles(&pr.model));
        assert_eq!(s[1].location_factor, 1.0);
        let g = global_grid(&s[1], 40);
        // reaches far beyond the data on both sides
        assert!(g.iter().any(|v| *v < 10.0 - 500.0) && g.iter().any(|v| *v > 20.0 + 500.0));
    }
}
