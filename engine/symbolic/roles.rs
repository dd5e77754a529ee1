//! How each parameter meets the data, to set the scale of its scan (design
//! note §5) and neutral values for shape parameters (§6): location (x − c),
//! rate (k·x inside a function), inverse scale (x/c), width (an inverse scale
//! inside an even power, sign-free), exponent, amplitude (outer factor),
//! offset (additive constant), period (x/P inside a trig function),
//! coefficient (multiplies a power of x inside a sum), other. Dimensional
//! reasoning of the trade (common practice); scan ranges come from `rules/neutral.yaml`.

use super::algebra;
use super::expr::{BinOp, Expr, Func};
use super::functions::facts;
use super::model::Model;
use crate::rules::{rules, NeutralValue, ScaleRule};
use serde::Serialize;

/// A kind of role; its snake_case name keys `scales` in `rules/neutral.yaml`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RoleKind {
    Location,
    Rate,
    InverseScale,
    Width,
    Exponent,
    Amplitude,
    Offset,
    Period,
    Coefficient,
    Other,
}

impl RoleKind {
    /// Every kind, for tables and checks.
    pub const ALL: [RoleKind; 10] = [
        RoleKind::Location,
        RoleKind::Rate,
        RoleKind::InverseScale,
        RoleKind::Width,
        RoleKind::Exponent,
        RoleKind::Amplitude,
        RoleKind::Offset,
        RoleKind::Period,
        RoleKind::Coefficient,
        RoleKind::Other,
    ];

    /// The key in `rules/neutral.yaml` `scales`.
    pub fn key(self) -> &'static str {
        match self {
            RoleKind::Location => "location",
            RoleKind::Rate => "rate",
            RoleKind::InverseScale => "inverse_scale",
            RoleKind::Width => "width",
            RoleKind::Exponent => "exponent",
            RoleKind::Amplitude => "amplitude",
            RoleKind::Offset => "offset",
            RoleKind::Period => "period",
            RoleKind::Coefficient => "coefficient",
            RoleKind::Other => "other",
        }
    }
}

/// One way a parameter meets the data.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Role {
    /// The kind.
    pub kind: RoleKind,
    /// The data variable involved, when one is.
    pub var: Option<usize>,
    /// The model is unchanged by flipping the parameter's sign here (e.g. a width in a square).
    pub sign_free: bool,
    /// The parameter must be positive here (log, square root, fractional power base).
    pub positive_required: bool,
    /// Neutral starting value with its derivation sentence (exponents that only bend).
    pub neutral: Option<NeutralValue>,
    /// Scan range from the rules.
    pub scale: Option<ScaleRule>,
}

/// All roles of one parameter.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamRoles {
    /// Parameter index.
    pub param: usize,
    /// Roles found (at least one; `Other` when nothing more specific).
    pub roles: Vec<Role>,
}

#[derive(Clone, Copy, Default)]
struct Ctx {
    in_function: bool,
    in_trig: bool,
    even_power: bool,
    denominator: bool,
}

/// Roles of every parameter of the model.
pub fn roles(model: &Model) -> Vec<ParamRoles> {
    let mut found: Vec<Vec<Role>> = vec![Vec::new(); model.n_params()];
    for t in algebra::sum_terms(&model.rhs) {
        if !t.has_any_var() {
            let (_, fs) = algebra::factors(&t);
            let single = fs.len() == 1 && matches!(fs[0], (Expr::Param(_), 1));
            for p in algebra::params_in(&t) {
                let k = if single {
                    RoleKind::Offset
                } else {
                    RoleKind::Other
                };
                push(&mut found, p, role(k, None));
            }
            continue;
        }
        let (_, fs) = algebra::factors(&t);
        for (f, s) in &fs {
            if f.has_any_var() {
                let cx = Ctx {
                    denominator: *s < 0,
                    ..Ctx::default()
                };
                walk(f, cx, &mut found);
            } else {
                for p in algebra::params_in(f) {
                    push(&mut found, p, role(RoleKind::Amplitude, None));
                }
            }
        }
    }
    // positivity: parameters directly under log/sqrt or as a fractional power's base
    mark_positive(&model.rhs, &mut found);
    found
        .into_iter()
        .enumerate()
        .map(|(param, mut roles)| {
            if roles.is_empty() {
                roles.push(role(RoleKind::Other, None));
            }
            ParamRoles { param, roles }
        })
        .collect()
}

fn role(kind: RoleKind, var: Option<usize>) -> Role {
    Role {
        kind,
        var,
        sign_free: false,
        positive_required: false,
        neutral: None,
        scale: rules().neutral.scales.get(kind.key()).copied(),
    }
}

fn push(found: &mut [Vec<Role>], p: usize, r: Role) {
    if let Some(v) = found.get_mut(p) {
        if !v.iter().any(|x| x.kind == r.kind && x.var == r.var) {
            v.push(r);
        }
    }
}

fn first_var(e: &Expr) -> Option<usize> {
    let (_, nv) = algebra::extent(e);
    (0..nv).find(|&v| e.has_var(v))
}

/// Degree in the data of a var-containing factor, when it is plain: x, x^n, or a
/// sum with one term ±x (a shifted x).
fn plain_degree(e: &Expr) -> Option<f64> {
    match e {
        Expr::Var(_) => Some(1.0),
        Expr::Bin(BinOp::Pow, a, b) => match (&**a, &**b) {
            (a, Expr::Num(n)) => plain_degree(a).map(|d| d * n),
            _ => None,
        },
        Expr::Bin(BinOp::Add | BinOp::Sub, ..) => {
            let terms = algebra::sum_terms(e);
            let with_var: Vec<&Expr> = terms.iter().filter(|t| t.has_any_var()).collect();
            if with_var.len() == 1 && shifted_var(with_var[0]) {
                Some(1.0)
            } else {
                None
            }
        }
        _ => None,
    }
}

/// ±(number)·x.
fn shifted_var(t: &Expr) -> bool {
    let (_, fs) = algebra::factors(t);
    fs.len() == 1 && matches!(fs[0], (Expr::Var(_), 1))
}

fn walk(e: &Expr, cx: Ctx, found: &mut Vec<Vec<Role>>) {
    let var = first_var(e);
    match e {
        Expr::Num(_) | Expr::Var(_) => {}
        Expr::Param(p) => push(found, *p, role(RoleKind::Other, var)),
        Expr::Neg(a) => walk(a, cx, found),
        Expr::Bin(BinOp::Add | BinOp::Sub, ..) => {
            let terms = algebra::sum_terms(e);
            let var_terms: Vec<&Expr> = terms.iter().filter(|t| t.has_any_var()).collect();
            let shift = var_terms.len() == 1 && shifted_var(var_terms[0]);
            for t in &terms {
                if t.has_any_var() {
                    sum_term(t, cx, found);
                } else {
                    let (_, fs) = algebra::factors(t);
                    let single = fs.len() == 1 && matches!(fs[0], (Expr::Param(_), 1));
                    let kind = if shift && single {
                        RoleKind::Location
                    } else {
                        RoleKind::Coefficient
                    };
                    for p in algebra::params_in(t) {
                        push(found, p, role(kind, var));
                    }
                }
            }
        }
        Expr::Bin(BinOp::Mul | BinOp::Div, ..) => sum_term(e, cx, found),
        Expr::Bin(BinOp::Pow, a, b) => {
            if a.has_any_var() && b.has_any_param() {
                let neutral_key = if cx.denominator || is_negative(b) {
                    Some("bending_exponent")
                } else if matches!(&**b, Expr::Bin(BinOp::Div, n, d) if matches!(**n, Expr::Num(_)) && matches!(**d, Expr::Param(_)))
                {
                    Some("reciprocal_exponent")
                } else {
                    None
                };
                for p in algebra::params_in(b) {
                    let mut r = role(RoleKind::Exponent, var);
                    r.neutral = neutral_key.and_then(|k| rules().neutral.neutral.get(k).cloned());
                    push(found, p, r);
                }
                let mut c2 = cx;
                c2.in_function = true;
                c2.denominator ^= is_negative(b);
                walk(a, c2, found);
            } else if b.has_any_var() {
                for p in algebra::params_in(a) {
                    push(found, p, role(RoleKind::Other, var));
                }
                let mut c2 = cx;
                c2.in_function = true;
                walk(b, c2, found);
            } else {
                let mut c2 = cx;
                if let Expr::Num(n) = **b {
                    c2.even_power |= n.fract() == 0.0 && (n as i64) % 2 == 0;
                    c2.denominator ^= n < 0.0;
                    c2.in_function |= n.fract() != 0.0;
                }
                walk(a, c2, found);
            }
        }
        Expr::Call(f, a) => {
            let c2 = Ctx {
                in_function: true,
                in_trig: matches!(f, Func::Sin | Func::Cos | Func::Tan),
                ..cx
            };
            walk(a, c2, found);
        }
    }
}

/// A product (term of a sum, or factor chain) containing data.
fn sum_term(t: &Expr, cx: Ctx, found: &mut Vec<Vec<Role>>) {
    let var = first_var(t);
    let (_, fs) = algebra::factors(t);
    let mut degree = Some(0.0);
    for (f, s) in &fs {
        if f.has_any_var() {
            degree = match (degree, plain_degree(f)) {
                (Some(d), Some(k)) => Some(d + k * *s as f64),
                _ => None,
            };
        }
    }
    for (f, s) in &fs {
        if f.has_any_var() {
            let mut c2 = cx;
            c2.denominator ^= *s < 0;
            walk(f, c2, found);
            continue;
        }
        let even_factor = matches!(f, Expr::Bin(BinOp::Pow, _, b) if matches!(**b, Expr::Num(n) if n.fract() == 0.0 && (n as i64) % 2 == 0));
        for p in algebra::params_in(f) {
            let kind = match (cx.in_function, degree) {
                (true, Some(d)) if d != 0.0 => {
                    // numerator parameter with positive degree of x multiplies x: a rate
                    let rate = (d > 0.0) == (*s > 0);
                    match (rate, cx.in_trig) {
                        (true, _) => RoleKind::Rate,
                        (false, true) => RoleKind::Period,
                        (false, false) if cx.even_power || even_factor => RoleKind::Width,
                        (false, false) => RoleKind::InverseScale,
                    }
                }
                _ => RoleKind::Coefficient,
            };
            let mut r = role(kind, var);
            r.sign_free = cx.even_power || even_factor;
            push(found, p, r);
        }
    }
}

fn is_negative(e: &Expr) -> bool {
    match e {
        Expr::Num(v) => *v < 0.0,
        Expr::Neg(_) => true,
        Expr::Bin(BinOp::Mul | BinOp::Div, a, _) => matches!(**a, Expr::Num(v) if v < 0.0),
        _ => false,
    }
}

fn mark_positive(e: &Expr, found: &mut [Vec<Role>]) {
    let mut hit = |p: usize| {
        if let Some(v) = found.get_mut(p) {
            for r in v.iter_mut() {
                r.positive_required = true;
            }
        }
    };
    match e {
        Expr::Call(f, a) if facts(*f).needs_positive_argument() => {
            if let Expr::Param(p) = **a {
                hit(p);
            }
            mark_positive(a, found);
        }
        Expr::Bin(BinOp::Pow, a, b) => {
            if let (Expr::Param(p), false) = (&**a, matches!(**b, Expr::Num(n) if n.fract() == 0.0))
            {
                hit(*p);
            }
            mark_positive(a, found);
            mark_positive(b, found);
        }
        Expr::Bin(_, a, b) => {
            mark_positive(a, found);
            mark_positive(b, found);
        }
        Expr::Neg(a) | Expr::Call(_, a) => mark_positive(a, found),
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    fn kinds(m: &Model, name: &str) -> Vec<RoleKind> {
        let i = m.param_index(name).unwrap();
        roles(m)[i].roles.iter().map(|r| r.kind).collect()
    }

    #[test]
    fn every_role_has_a_scale_rule() {
        for k in RoleKind::ALL {
            assert!(rules().neutral.scales.contains_key(k.key()), "{}", k.key());
        }
        assert_eq!(rules().neutral.scales.len(), RoleKind::ALL.len());
    }

    #[test]
    fn offset_amplitude_rate() {
        let m = model("b1 + b2*exp(-b3*x)");
        assert_eq!(kinds(&m, "b1"), [RoleKind::Offset]);
        assert_eq!(kinds(&m, "b2"), [RoleKind::Amplitude]);
        assert_eq!(kinds(&m, "b3"), [RoleKind::Rate]);
    }

    #[test]
    fn gaussian_centre_and_width() {
        let m = model("a*exp(-((x-c)/w)^2)");
        assert_eq!(kinds(&m, "a"), [RoleKind::Amplitude]);
        assert_eq!(kinds(&m, "c"), [RoleKind::Location]);
        assert_eq!(kinds(&m, "w"), [RoleKind::Width]);
        let r = &roles(&m)[m.param_index("w").unwrap()].roles[0];
        assert!(r.sign_free);
    }

    #[test]
    fn period_inverse_scale_and_location() {
        let m = model("b1*cos(2*pi*x/p)");
        assert_eq!(kinds(&m, "p"), [RoleKind::Period]);
        let m = model("b1 - b2*x - atan(b3/(x-b4))/pi");
        assert_eq!(kinds(&m, "b4"), [RoleKind::Location]);
        assert_eq!(kinds(&m, "b3"), [RoleKind::InverseScale]);
        assert_eq!(kinds(&m, "b2"), [RoleKind::Amplitude]);
        let m = model("a*(1 - exp(-x/t))");
        assert_eq!(kinds(&m, "t"), [RoleKind::InverseScale]);
    }

    #[test]
    fn exponents_and_neutral_values() {
        let m = model("b1*x^b2");
        let r = &roles(&m)[1].roles[0];
        assert_eq!(r.kind, RoleKind::Exponent);
        assert!(r.neutral.is_none());
        // an exponent on a denominator only bends: neutral value 1
        let m = model("b1/(1 + b2*x)^b3");
        let r = &roles(&m)[2].roles[0];
        assert_eq!(r.kind, RoleKind::Exponent);
        assert_eq!(r.neutral.as_ref().map(|n| n.value), Some(1.0));
        let m = model("b1*(1 + b2*x)^(-1/b3)");
        let r = &roles(&m)[2].roles[0];
        assert_eq!(r.neutral.as_ref().map(|n| n.value), Some(1.0));
        assert!(roles(&m)[1].roles.iter().any(|r| r.kind == RoleKind::Rate));
    }

    #[test]
    fn positivity_under_log() {
        let m = model("log(a) + b*x");
        assert!(roles(&m)[0].roles[0].positive_required);
        assert!(!roles(&m)[1].roles[0].positive_required);
    }
}
