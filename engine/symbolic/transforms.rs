//! Linearising transforms of the response (design note §2) and
//! cross-multiplication of rational models (design note §3).
//!
//! For each transform T listed in `rules/transforms.yaml` (identity, log,
//! reciprocal, logit against a plateau parameter, ...), T(f) is built
//! symbolically and rewritten with the YAML rules (log of a product → sum of
//! logs, log(exp u) → u, 1/(u/v) → v/u, ...), expanded into
//! `Σ coefficient(params) × basis(data)` and grouped by basis. Each coefficient
//! φ_k is a new linear unknown; parameters left inside a basis stay nonlinear
//! (a separable form in the transformed space, Golub & Pereyra 1973). A
//! back-map solves the φ_k for the original parameters by isolating one unknown
//! at a time (e.g. φ = log b1 ⇒ b1 = exp φ).
//!
//! Cross-multiplication writes f = P/Q and fits y·Q − P = 0, linear in the
//! coefficients of P and Q once one coefficient of Q is fixed to a number.

use super::algebra::{self, ser_expr};
use super::expr::{Expr, Func};
use super::functions::facts;
use super::linearity::affine_in;
use super::model::Model;
use super::poly::{self, Atom, Poly};
use super::simplify::{self, simplify};
use super::transform_rules::{transform_library, RewriteRule, TransformSpec};
use crate::rules::Guard;
use serde::Serialize;

/// One new linear coefficient φ_k = `expr_in_params`, multiplying `basis`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Coefficient {
    /// φ_k as a function of the original parameters.
    #[serde(serialize_with = "ser_expr")]
    pub expr_in_params: Expr,
    /// The data function φ_k multiplies (may contain the remaining nonlinear
    /// parameters; the response is `Var(n_vars)` in cross-multiplied forms).
    #[serde(serialize_with = "ser_expr")]
    pub basis: Expr,
}

/// One step of a back-map: `param = expr`, where in `expr` `Param(i)` for
/// `i < n_params` is an original parameter (known or solved by an earlier step)
/// and `Param(n_params + k)` is coefficient φ_k.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BackStep {
    /// The parameter solved.
    pub param: usize,
    /// Its formula.
    #[serde(serialize_with = "ser_expr")]
    pub expr: Expr,
    /// The coefficient equation it came from.
    pub from_coefficient: usize,
}

/// How to recover the original parameters from fitted coefficients.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BackMap {
    /// Number of original parameters (coefficient symbols start here).
    pub n_params: usize,
    /// Steps, in evaluation order.
    pub steps: Vec<BackStep>,
    /// Parameters that are neither known in advance nor solved by a step.
    pub unresolved: Vec<usize>,
    /// Branch choices made while solving (even roots, principal inverses).
    pub notes: Vec<String>,
}

impl BackMap {
    /// The symbol standing for coefficient φ_k in step formulas.
    pub fn coefficient_symbol(&self, k: usize) -> Expr {
        Expr::Param(self.n_params + k)
    }

    /// Recovers parameters: `known[i]` holds values for the parameters fixed in
    /// advance (the remaining nonlinear ones; others may be NaN); the result has
    /// every solved parameter filled in, NaN where unresolved.
    pub fn recover(&self, coefficients: &[f64], known: &[f64]) -> Vec<f64> {
        let mut v: Vec<f64> = (0..self.n_params)
            .map(|i| known.get(i).copied().unwrap_or(f64::NAN))
            .collect();
        v.extend_from_slice(coefficients);
        for s in &self.steps {
            let x = s.expr.eval(&v, &[]);
            if let Some(slot) = v.get_mut(s.param) {
                *slot = x;
            }
        }
        v.truncate(self.n_params);
        v
    }
}

/// A model made linear in new coefficients by a transform of the response:
/// `target = offset + Σ_k φ_k·basis_k`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LinearisedForm {
    /// Transform name from the rules (or `cross_multiplied`).
    pub transform: String,
    /// The plateau parameter a plateau transform divides by.
    pub plateau: Option<usize>,
    /// T(response): the response is `Var(n_vars)`.
    #[serde(serialize_with = "ser_expr")]
    pub target: Expr,
    /// The known part of T(f): numbers, data, and remaining nonlinear parameters only.
    #[serde(serialize_with = "ser_expr")]
    pub offset: Expr,
    /// The new linear coefficients.
    pub coefficients: Vec<Coefficient>,
    /// Parameters that still need values (scanned) before the linear solve.
    pub remaining_nonlinear: Vec<usize>,
    /// Coefficients → parameters.
    pub back_map: BackMap,
    /// Sign conditions under which the transform and rewrites are valid (`b1 > 0`).
    pub conditions: Vec<String>,
}

impl LinearisedForm {
    /// Parameters still unknown after the linear solve and back-map: nonlinear plus unresolved.
    pub fn open_parameters(&self) -> usize {
        self.remaining_nonlinear.len() + self.back_map.unresolved.len()
    }
}

/// The response as an expression in analysis results: the variable after the predictors.
pub fn response_var(model: &Model) -> Expr {
    Expr::Var(model.vars.len())
}

/// Every linearised form the rules and cross-multiplication find, most useful
/// (fewest open parameters) first. Forms with no linear coefficient are dropped.
pub fn linearise(model: &Model) -> Vec<LinearisedForm> {
    let mut out = Vec::new();
    for spec in &transform_library().transforms {
        if spec.plateau {
            for a in plateau_candidates(&model.rhs, model.n_params()) {
                out.extend(apply_transform(model, spec, Some(a)));
            }
        } else {
            out.extend(apply_transform(model, spec, None));
        }
    }
    out.extend(cross_multiply(model));
    out.sort_by_key(|f| (f.open_parameters(), f.coefficients.len()));
    out
}

/// Parameters `a` with `f = a·h` and `h` free of `a` (outer factors: plateaus).
pub fn plateau_candidates(f: &Expr, n_params: usize) -> Vec<usize> {
    (0..n_params)
        .filter(|&a| match affine_in(f, &[a]) {
            Some((off, _)) => f.has_param(a) && algebra::is_zero(&off),
            None => false,
        })
        .collect()
}

/// Applies one transform; `plateau` names the plateau parameter for plateau transforms.
pub fn apply_transform(
    model: &Model,
    spec: &TransformSpec,
    plateau: Option<usize>,
) -> Option<LinearisedForm> {
    let np = model.n_params();
    let input = match plateau {
        Some(a) => {
            let (_, g) = affine_in(&model.rhs, &[a])?;
            simplify(g.first()?)
        }
        None => model.rhs.clone(),
    };
    let a_expr = plateau.map(Expr::Param).unwrap_or(Expr::Num(f64::NAN));
    let subst = |e: &Expr, with: &Expr| {
        e.map(&|n| match n {
            Expr::Var(0) => Some(with.clone()),
            Expr::Param(0) => Some(a_expr.clone()),
            _ => None,
        })
    };
    let target = simplify(&subst(&spec.target, &response_var(model)));
    let applied = simplify(&subst(&spec.apply, &input));
    let tr = transform_library();
    let sets: Vec<&[RewriteRule]> = spec
        .rule_sets
        .iter()
        .filter_map(|s| tr.rule_sets.get(s).map(|v| v.as_slice()))
        .collect();
    let mut budget = 10_000usize;
    let rewritten = rewrite(&applied, &sets, &tr.expand_arguments_of, &mut budget);
    let mut conditions = Vec::new();
    collect_log_conditions(&rewritten, model, &mut conditions);
    let expanded = poly::expand(&rewritten);
    let mut form = form_from_poly(&expanded, np, plateau)?;
    form.transform = spec.name.clone();
    form.target = target;
    form.conditions = conditions;
    Some(form)
}

/// Groups an expanded T(f) into offset + Σ φ_k·basis_k and solves the back-map.
fn form_from_poly(p: &Poly, np: usize, plateau: Option<usize>) -> Option<LinearisedForm> {
    let groups = p.group_by(&|a: &Atom| a.has_data());
    let mut nonlinear: Vec<usize> = plateau.into_iter().collect();
    for (m, _) in &groups {
        for (a, _) in m.values() {
            for q in algebra::params_in(&a.expr()) {
                if !nonlinear.contains(&q) {
                    nonlinear.push(q);
                }
            }
        }
    }
    nonlinear.sort_unstable();
    let mut offset = Expr::Num(0.0);
    let mut coefficients = Vec::new();
    for (m, c) in &groups {
        let basis = poly::mono_expr(m);
        let coef = c.to_expr();
        if algebra::params_in(&coef)
            .iter()
            .all(|q| nonlinear.contains(q))
        {
            offset = simplify::add(offset, simplify::mul(coef, basis));
        } else {
            coefficients.push(Coefficient {
                expr_in_params: coef,
                basis,
            });
        }
    }
    if coefficients.is_empty() {
        return None;
    }
    let exprs: Vec<Expr> = coefficients
        .iter()
        .map(|c| c.expr_in_params.clone())
        .collect();
    let back_map = solve_back_map(&exprs, np, &nonlinear);
    Some(LinearisedForm {
        transform: String::new(),
        plateau,
        target: Expr::Num(0.0),
        offset,
        coefficients,
        remaining_nonlinear: nonlinear,
        back_map,
        conditions: Vec::new(),
    })
}

/// Solves `φ_k = coefs[k]` for the parameters not in `known`, one unknown at a
/// time, simplest equation first (monomial equations c = a·b with a known give b = c/a).
pub fn solve_back_map(coefs: &[Expr], n_params: usize, known: &[usize]) -> BackMap {
    let mut solved: Vec<usize> = known.to_vec();
    let mut steps = Vec::new();
    let mut notes = Vec::new();
    let mut used = vec![false; coefs.len()];
    loop {
        let mut order: Vec<usize> = (0..coefs.len()).filter(|&k| !used[k]).collect();
        order.sort_by_key(|&k| coefs[k].size());
        let mut progress = false;
        for k in order {
            let unknown: Vec<usize> = algebra::params_in(&coefs[k])
                .into_iter()
                .filter(|q| !solved.contains(q))
                .collect();
            if unknown.len() != 1 {
                continue;
            }
            let p = unknown[0];
            let mut n = Vec::new();
            if let Some(e) = algebra::isolate(Expr::Param(n_params + k), &coefs[k], p, &mut n) {
                steps.push(BackStep {
                    param: p,
                    expr: simplify(&e),
                    from_coefficient: k,
                });
                notes.extend(n);
                solved.push(p);
                used[k] = true;
                progress = true;
                break;
            }
        }
        if !progress {
            break;
        }
    }
    let mut unresolved: Vec<usize> = coefs
        .iter()
        .flat_map(algebra::params_in)
        .filter(|q| !solved.contains(q))
        .collect();
    unresolved.sort_unstable();
    unresolved.dedup();
    notes.dedup();
    BackMap {
        n_params,
        steps,
        unresolved,
        notes,
    }
}

/// Rewrites bottom-up with the rule sets (first matching rule wins at a node,
/// and its result is rewritten again); sums inside `expand_fns` calls are
/// expanded and cancelled first. `budget` bounds the work.
pub fn rewrite(e: &Expr, sets: &[&[RewriteRule]], expand_fns: &[Func], budget: &mut usize) -> Expr {
    if *budget == 0 {
        return e.clone();
    }
    *budget -= 1;
    let e = match e {
        Expr::Num(_) | Expr::Var(_) | Expr::Param(_) => e.clone(),
        Expr::Neg(a) => simplify::neg(rewrite(a, sets, expand_fns, budget)),
        Expr::Bin(op, a, b) => simplify::bin(
            *op,
            rewrite(a, sets, expand_fns, budget),
            rewrite(b, sets, expand_fns, budget),
        ),
        Expr::Call(f, a) => {
            let mut a = rewrite(a, sets, expand_fns, budget);
            if expand_fns.contains(f) && algebra::sum_terms(&a).len() > 1 {
                a = poly::expand(&a).to_expr();
            }
            simplify::call(*f, a)
        }
    };
    for set in sets {
        for rule in set.iter() {
            let mut binds = vec![None; rule.vars.len()];
            if !pattern_match(&rule.from, &e, &mut binds) || !guards_hold(rule, &binds) {
                continue;
            }
            let out = simplify(&rule.to.map(&|n| match n {
                Expr::Param(i) => binds.get(*i).cloned().flatten(),
                _ => None,
            }));
            if out != e {
                return rewrite(&out, sets, expand_fns, budget);
            }
        }
    }
    e
}

fn pattern_match(pat: &Expr, e: &Expr, binds: &mut [Option<Expr>]) -> bool {
    match (pat, e) {
        (Expr::Param(i), _) => match binds.get_mut(*i) {
            Some(slot @ None) => {
                *slot = Some(e.clone());
                true
            }
            Some(Some(b)) => b == e,
            None => false,
        },
        (Expr::Num(v), Expr::Num(w)) => v == w,
        (Expr::Neg(a), Expr::Neg(b)) => pattern_match(a, b, binds),
        (Expr::Bin(o1, a1, b1), Expr::Bin(o2, a2, b2)) => {
            o1 == o2 && pattern_match(a1, a2, binds) && pattern_match(b1, b2, binds)
        }
        (Expr::Call(f, a), Expr::Call(g, b)) => f == g && pattern_match(a, b, binds),
        _ => false,
    }
}

fn guards_hold(rule: &RewriteRule, binds: &[Option<Expr>]) -> bool {
    rule.when.iter().all(|(i, g)| {
        let Some(Some(e)) = binds.get(*i) else {
            return false;
        };
        let num = if let Expr::Num(v) = e { Some(*v) } else { None };
        match g {
            Guard::Number => num.is_some(),
            Guard::PositiveNumber => num.is_some_and(|v| v > 0.0),
            Guard::NegativeNumber => num.is_some_and(|v| v < 0.0),
            Guard::EvenNumber => num.is_some_and(|v| v.fract() == 0.0 && (v as i64) % 2 == 0),
            Guard::FreeOfData => !e.has_any_var(),
        }
    })
}

/// Every `log(u)` with `u` not a positive number needs `u > 0`.
fn collect_log_conditions(e: &Expr, m: &Model, out: &mut Vec<String>) {
    let mut add = |u: &Expr| {
        if matches!(u, Expr::Num(v) if *v > 0.0) || matches!(u, Expr::Call(Func::Abs, _)) {
            return;
        }
        let s = format!("{} > 0", u.display(&m.params, &m.vars));
        if !out.contains(&s) {
            out.push(s);
        }
    };
    fn walk(e: &Expr, add: &mut dyn FnMut(&Expr)) {
        match e {
            Expr::Call(f, a) => {
                if facts(*f).needs_positive_argument() {
                    add(a);
                }
                walk(a, add);
            }
            Expr::Neg(a) => walk(a, add),
            Expr::Bin(_, a, b) => {
                walk(a, add);
                walk(b, add);
            }
            _ => {}
        }
    }
    walk(e, &mut add);
}

/// Cross-multiplies a rational model f = P/Q (design note §3): with one
/// coefficient of Q normalised to a number, `y·m₀ = Σ p_k·m_k − Σ q_k·(y·m_k)`
/// is linear in the coefficients p_k, q_k (monomials in the parameters), which
/// the back-map solves for the parameters. `None` when f is not a ratio of
/// polynomials in the data with a non-constant denominator.
pub fn cross_multiply(model: &Model) -> Option<LinearisedForm> {
    let (p, q) = poly::as_rational(&model.rhs)?;
    let np = model.n_params();
    let y = response_var(model);
    let is_data = |a: &Atom| a.has_data();
    let qg = q.group_by(&is_data);
    if qg.len() < 2 {
        return None;
    }
    // normalise: a numeric coefficient of Q if any, else a single-monomial one
    let pick = qg
        .iter()
        .find(|(_, c)| c.as_number().is_some_and(|v| v != 0.0))
        .or_else(|| qg.iter().find(|(_, c)| c.len() == 1))?;
    let norm = pick.1.inv()?;
    let (p, q) = (p.mul(&norm)?, q.mul(&norm)?);
    let lead_key = poly::mono_expr(&pick.0);
    let mut offset = Expr::Num(0.0);
    let mut coefficients = Vec::new();
    let mut push = |c: &Poly, basis: Expr| {
        let ce = c.to_expr();
        if ce.has_any_param() {
            coefficients.push(Coefficient {
                expr_in_params: ce,
                basis,
            });
        } else {
            offset = simplify::add(offset.clone(), simplify::mul(ce, basis));
        }
    };
    for (m, c) in p.group_by(&is_data) {
        push(&c, poly::mono_expr(&m));
    }
    let mut target = None;
    for (m, c) in q.group_by(&is_data) {
        let me = poly::mono_expr(&m);
        if me == lead_key {
            let v = c.as_number()?;
            target = Some(simplify::mul(Expr::Num(v), simplify::mul(y.clone(), me)));
            continue;
        }
        push(&c, simplify::neg(simplify::mul(y.clone(), me)));
    }
    if coefficients.is_empty() {
        return None;
    }
    let exprs: Vec<Expr> = coefficients
        .iter()
        .map(|c| c.expr_in_params.clone())
        .collect();
    let back_map = solve_back_map(&exprs, np, &[]);
    Some(LinearisedForm {
        transform: "cross_multiplied".into(),
        plateau: None,
        target: target?,
        offset,
        coefficients,
        remaining_nonlinear: Vec::new(),
        back_map,
        conditions: vec!["the denominator has no zero inside the data range".into()],
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    fn form<'a>(forms: &'a [LinearisedForm], name: &str) -> &'a LinearisedForm {
        forms
            .iter()
            .find(|f| f.transform == name)
            .unwrap_or_else(|| {
                panic!(
                    "no {name} form among {:?}",
                    forms.iter().map(|f| &f.transform).collect::<Vec<_>>()
                )
            })
    }

    /// Coefficients computed from `truth`, then back-mapped, recover `truth`;
    /// and target = offset + Σ φ·basis holds at sample x where T(f) is defined.
    fn check_round_trip(m: &Model, f: &LinearisedForm, truth: &[f64]) {
        let phi: Vec<f64> = f
            .coefficients
            .iter()
            .map(|c| c.expr_in_params.eval(truth, &[]))
            .collect();
        let known: Vec<f64> = (0..truth.len())
            .map(|i| {
                if f.remaining_nonlinear.contains(&i) {
                    truth[i]
                } else {
                    f64::NAN
                }
            })
            .collect();
        let got = f.back_map.recover(&phi, &known);
        assert!(
            f.back_map.unresolved.is_empty(),
            "unresolved {:?}",
            f.back_map.unresolved
        );
        for (g, t) in got.iter().zip(truth) {
            assert!(
                (g - t).abs() < 1e-9 * t.abs().max(1.0),
                "recovered {got:?}, truth {truth:?}"
            );
        }
        for x in [0.4, 1.3, 2.2] {
            let y = m.rhs.eval(truth, &[x]);
            let row = [x, y];
            let lhs = f.target.eval(truth, &row);
            let mut rhs = f.offset.eval(truth, &row);
            for (c, p) in f.coefficients.iter().zip(&phi) {
                rhs += p * c.basis.eval(truth, &row);
            }
            assert!(
                (lhs - rhs).abs() < 1e-9 * lhs.abs().max(1.0),
                "x={x}: {lhs} vs {rhs}"
            );
        }
    }

    #[test]
    fn power_law_under_log() {
        let m = model("b1*x^b2");
        let forms = linearise(&m);
        let f = form(&forms, "log");
        assert!(f.remaining_nonlinear.is_empty());
        assert_eq!(f.coefficients.len(), 2);
        assert!(
            f.conditions.iter().any(|c| c == "b1 > 0"),
            "{:?}",
            f.conditions
        );
        check_round_trip(&m, f, &[2.5, 0.7]);
        // the negated variant handles b1 < 0
        let g = form(&forms, "log_negated");
        check_round_trip(&m, g, &[-2.5, 0.7]);
    }

    #[test]
    fn exponential_over_line_under_reciprocal() {
        let m = model("exp(-b1*x)/(b2+b3*x)");
        let forms = linearise(&m);
        let f = form(&forms, "reciprocal");
        assert_eq!(f.remaining_nonlinear, vec![0]);
        assert_eq!(f.coefficients.len(), 2);
        // basis for b2 is exp(b1 x): at b1 = 0.3, x = 2 → e^0.6
        let b2 = f
            .coefficients
            .iter()
            .find(|c| c.expr_in_params == Expr::Param(1))
            .unwrap();
        assert!((b2.basis.eval(&[0.3, 0.0, 0.0], &[2.0]) - 0.6f64.exp()).abs() < 1e-12);
        check_round_trip(&m, f, &[0.3, 1.5, 0.8]);
    }

    #[test]
    fn gaussian_under_log_is_a_quadratic() {
        let m = model("a*exp(-((x-c)/w)^2)");
        let forms = linearise(&m);
        let f = form(&forms, "log");
        assert!(f.remaining_nonlinear.is_empty());
        assert_eq!(f.coefficients.len(), 3);
        check_round_trip(&m, f, &[3.0, 1.2, 0.7]);
        let m = model("(b1/b2)*exp(-0.5*((x-b3)/b2)^2)");
        let f = form(&linearise(&m), "log").clone();
        check_round_trip(&m, &f, &[3.0, 0.7, 1.2]);
    }

    #[test]
    fn log_of_exponential_with_shifted_reciprocal() {
        let m = model("b1*exp(b2/(x+b3))");
        let f = form(&linearise(&m), "log").clone();
        assert_eq!(f.remaining_nonlinear, vec![2]);
        assert_eq!(f.coefficients.len(), 2);
        check_round_trip(&m, &f, &[2.0, 1.5, 0.4]);
    }

    #[test]
    fn logistic_under_logit() {
        let m = model("a/(1+exp(-k*(x-c)))");
        let forms = linearise(&m);
        let f = form(&forms, "logit");
        assert_eq!(f.plateau, Some(0));
        assert_eq!(f.remaining_nonlinear, vec![0]);
        check_round_trip(&m, f, &[5.0, 0.5, 1.1]);
    }

    #[test]
    fn saturation_under_reciprocal() {
        // 1/y = 1/b1 + (b2/b1)/x
        let m = model("b1*x/(b2+x)");
        let f = form(&linearise(&m), "reciprocal").clone();
        assert!(f.remaining_nonlinear.is_empty());
        check_round_trip(&m, &f, &[4.0, 0.6]);
    }

    #[test]
    fn rational_quadratics_cross_multiply() {
        let m = model("(b1+b2*x+b3*x^2)/(1+b4*x+b5*x^2)");
        let f = cross_multiply(&m).unwrap();
        assert_eq!(f.coefficients.len(), 5);
        check_round_trip(&m, &f, &[1.0, 2.0, 0.5, 0.3, 0.1]);
        let m = model("(b1+b2*x+b3*x^2+b4*x^3)/(1+b5*x+b6*x^2+b7*x^3)");
        let f = cross_multiply(&m).unwrap();
        assert_eq!(f.coefficients.len(), 7);
        check_round_trip(&m, &f, &[1.0, 2.0, 0.5, 0.2, 0.3, 0.1, 0.05]);
    }

    #[test]
    fn rational_with_product_coefficients() {
        let m = model("b1*(x^2+x*b2)/(x^2+x*b3+b4)");
        let f = cross_multiply(&m).unwrap();
        let mut got: Vec<f64> = f
            .coefficients
            .iter()
            .map(|c| c.expr_in_params.eval(&[2.0, 3.0, 5.0, 7.0], &[]))
            .collect();
        got.sort_by(|a, b| a.partial_cmp(b).unwrap());
        // {b1, b1·b2, b3, b4} at (2, 3, 5, 7)
        assert_eq!(got, vec![2.0, 5.0, 6.0, 7.0]);
        check_round_trip(&m, &f, &[2.0, 3.0, 5.0, 7.0]);

        let m = model("b1*b2*x*((1+b2*x)^(-1))");
        let f = cross_multiply(&m).unwrap();
        assert_eq!(f.coefficients.len(), 2);
        check_round_trip(&m, &f, &[2.0, 0.4]);
    }

    #[test]
    fn not_rational_is_none() {
        assert!(cross_multiply(&model("b1*exp(-b2*x)")).is_none());
        assert!(cross_multiply(&model("b1 + b2*x")).is_none());
    }
}

#[cfg(test)]
mod serialise_tests {
    use super::*;

    #[test]
    fn forms_serialise_to_json() {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new("a*exp(-((x-c)/w)^2)", &cols, None).unwrap();
        let forms = linearise(&m);
        let s = serde_json::to_string_pretty(&forms[0]).unwrap();
        let m = Model::new("a/(1+exp(-k*(x-c)))", &cols, None).unwrap();
        let logit = serde_json::to_string(&linearise(&m)[0]).unwrap();
        assert!(logit.contains("\"transform\":\"logit\""), "{logit}");
        let lim = serde_json::to_string(&crate::symbolic::limits::limits(&m)).unwrap();
        assert!(lim.contains("\"direction\":\"pos_inf\""));
        let roles = serde_json::to_string(&crate::symbolic::roles::roles(&m)).unwrap();
        assert!(roles.contains("\"kind\":\"location\""));
        assert!(s.contains("\"coefficients\""));
    }
}
