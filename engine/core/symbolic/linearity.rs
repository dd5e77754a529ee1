//! Which parameters enter the model linearly: the largest set S such that
//! f = offset + Σ_{c∈S} c·g_c with every g_c and the offset free of S.
//! Those parameters can be solved by linear least squares for any values of
//! the others (variable projection, Golub & Pereyra 1973), so only the
//! nonlinear ones need a start.
//!
//! Decided structurally, without differentiation: a sum is affine in S when
//! its terms are; a product when at most one factor involves S; a quotient when
//! the denominator is free of S; functions and powers only when their
//! arguments are free of S. This is exact for the answers it gives (a returned
//! decomposition is an identity); it can miss linearity hidden by cancellation.

use super::algebra::{ser_expr, ser_exprs};
use super::expr::{BinOp, Expr};
use super::model::Model;
use super::simplify::{self, simplify};
use serde::Serialize;

/// Candidate sets are searched exhaustively up to this many individually linear parameters.
pub const MAX_EXHAUSTIVE: usize = 16;

/// The model split as `f = offset + Σ_j c_j·g_j` with `c_j = Param(linear[j])`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Separable {
    /// Parameters entering linearly (jointly), ascending.
    pub linear: Vec<usize>,
    /// The remaining parameters, ascending: only these need starting values.
    pub nonlinear: Vec<usize>,
    /// `g_j = ∂f/∂c_j`, free of every linear parameter; one per entry of `linear`.
    #[serde(serialize_with = "ser_exprs")]
    pub basis: Vec<Expr>,
    /// `f` with every linear parameter set to zero (free of the linear parameters).
    #[serde(serialize_with = "ser_expr")]
    pub offset: Expr,
}

impl Separable {
    /// Evaluates the model from its split form (for checks and for the column build
    /// of a variable-projection solve): `params` full-length, `vars` one row.
    pub fn eval(&self, params: &[f64], vars: &[f64]) -> f64 {
        let mut v = self.offset.eval(params, vars);
        for (j, &p) in self.linear.iter().enumerate() {
            if let (Some(g), Some(c)) = (self.basis.get(j), params.get(p)) {
                v += c * g.eval(params, vars);
            }
        }
        v
    }
}

/// Splits `f` (with `n_params` parameters) into its largest jointly linear set.
/// Ties in size go to the set of lowest parameter indices.
pub fn separate(f: &Expr, n_params: usize) -> Separable {
    let candidates: Vec<usize> = (0..n_params)
        .filter(|&p| f.has_param(p) && affine_in(f, &[p]).is_some())
        .collect();
    let best = if candidates.len() <= MAX_EXHAUSTIVE {
        exhaustive(f, &candidates)
    } else {
        greedy(f, &candidates)
    };
    let (offset, basis) = affine_in(f, &best).unwrap_or((f.clone(), Vec::new()));
    let nonlinear = (0..n_params).filter(|p| !best.contains(p)).collect();
    Separable {
        linear: best,
        nonlinear,
        basis: basis.iter().map(simplify).collect(),
        offset: simplify(&offset),
    }
}

/// [`separate`] on a bound model's right side.
pub fn separate_model(m: &Model) -> Separable {
    separate(&m.rhs, m.n_params())
}

fn exhaustive(f: &Expr, cand: &[usize]) -> Vec<usize> {
    let k = cand.len();
    // pairwise compatibility prunes most subsets before the full test
    let mut compat = vec![vec![true; k]; k];
    for i in 0..k {
        for j in (i + 1)..k {
            let ok = affine_in(f, &[cand[i], cand[j]]).is_some();
            compat[i][j] = ok;
            compat[j][i] = ok;
        }
    }
    for size in (1..=k).rev() {
        let mut idx: Vec<usize> = (0..size).collect();
        loop {
            let pairwise = idx
                .iter()
                .enumerate()
                .all(|(a, &i)| idx[a + 1..].iter().all(|&j| compat[i][j]));
            if pairwise {
                let set: Vec<usize> = idx.iter().map(|&i| cand[i]).collect();
                if affine_in(f, &set).is_some() {
                    return set;
                }
            }
            if !next_combination(&mut idx, k) {
                break;
            }
        }
    }
    Vec::new()
}

/// Advances `idx` (strictly increasing, values < k) to the next combination.
fn next_combination(idx: &mut [usize], k: usize) -> bool {
    let size = idx.len();
    for i in (0..size).rev() {
        if idx[i] < k - size + i {
            idx[i] += 1;
            for j in (i + 1)..size {
                idx[j] = idx[j - 1] + 1;
            }
            return true;
        }
    }
    false
}

fn greedy(f: &Expr, cand: &[usize]) -> Vec<usize> {
    let mut set = Vec::new();
    for &p in cand {
        set.push(p);
        if affine_in(f, &set).is_none() {
            set.pop();
        }
    }
    set
}

/// Writes `f = offset + Σ_j set[j]·g_j` with `offset`, `g_j` free of `set`,
/// or `None` when the structure does not show `f` affine in `set` jointly.
pub fn affine_in(f: &Expr, set: &[usize]) -> Option<(Expr, Vec<Expr>)> {
    let touches = |e: &Expr| set.iter().any(|&p| e.has_param(p));
    let zero = || vec![Expr::Num(0.0); set.len()];
    if !touches(f) {
        return Some((f.clone(), zero()));
    }
    match f {
        Expr::Param(p) => {
            let mut co = zero();
            let j = set.iter().position(|q| q == p)?;
            co[j] = Expr::Num(1.0);
            Some((Expr::Num(0.0), co))
        }
        Expr::Neg(a) => {
            let (o, c) = affine_in(a, set)?;
            Some((simplify::neg(o), c.into_iter().map(simplify::neg).collect()))
        }
        Expr::Bin(op @ (BinOp::Add | BinOp::Sub), a, b) => {
            let (oa, ca) = affine_in(a, set)?;
            let (ob, cb) = affine_in(b, set)?;
            let combine = |x: Expr, y: Expr| simplify::bin(*op, x, y);
            let co = ca.into_iter().zip(cb).map(|(x, y)| combine(x, y)).collect();
            Some((combine(oa, ob), co))
        }
        Expr::Bin(BinOp::Mul, a, b) => {
            let (inner, outer, left) = match (touches(a), touches(b)) {
                (true, false) => (a, b, true),
                (false, true) => (b, a, false),
                _ => return None,
            };
            let (o, c) = affine_in(inner, set)?;
            let scale = |x: Expr| {
                if left {
                    simplify::mul(x, (**outer).clone())
                } else {
                    simplify::mul((**outer).clone(), x)
                }
            };
            Some((scale(o), c.into_iter().map(scale).collect()))
        }
        Expr::Bin(BinOp::Div, a, b) => {
            if touches(b) {
                return None;
            }
            let (o, c) = affine_in(a, set)?;
            let d = |x: Expr| simplify::div(x, (**b).clone());
            Some((d(o), c.into_iter().map(d).collect()))
        }
        Expr::Bin(BinOp::Pow, a, b) => match **b {
            Expr::Num(1.0) => affine_in(a, set),
            _ => None,
        },
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(s: &str) -> Model {
        let cols = vec!["x".to_string(), "y".to_string()];
        Model::new(s, &cols, None).unwrap()
    }

    fn names(m: &Model, idx: &[usize]) -> Vec<String> {
        idx.iter().map(|&i| m.params[i].clone()).collect()
    }

    /// Checks the split reproduces the model at a few points.
    fn check_identity(m: &Model, s: &Separable) {
        let n = m.n_params();
        for k in 0..3 {
            let ps: Vec<f64> = (0..n).map(|i| 0.3 + 0.21 * (i + k) as f64).collect();
            let x = [0.7 + 0.9 * k as f64];
            let a = m.rhs.eval(&ps, &x);
            let b = s.eval(&ps, &x);
            assert!((a - b).abs() < 1e-12 * a.abs().max(1.0), "{} vs {}", a, b);
        }
    }

    #[test]
    fn saturation_amplitude_is_linear() {
        let m = model("b1*(1-exp(-b2*x))");
        let s = separate_model(&m);
        assert_eq!(names(&m, &s.linear), ["b1"]);
        // g = 1 - exp(-b2 x) at b2 = 0.5, x = 2: 1 - e^-1
        let g = s.basis[0].eval(&[0.0, 0.5], &[2.0]);
        assert!((g - (1.0 - (-1.0f64).exp())).abs() < 1e-15);
        check_identity(&m, &s);
    }

    #[test]
    fn exponential_sums() {
        let m = model("b1 + b2*exp(-x*b4) + b3*exp(-x*b5)");
        let s = separate_model(&m);
        assert_eq!(names(&m, &s.linear), ["b1", "b2", "b3"]);
        assert_eq!(names(&m, &s.nonlinear), ["b4", "b5"]);
        // g_b1 = 1, g_b2 = exp(-x b4) at x=1.5, b4=0.4 (parameters b1, b2,
        // b4, b3, b5 in order of first appearance)
        assert_eq!(s.basis[0].eval(&[0.0; 5], &[1.5]), 1.0);
        let g = s.basis[1].eval(&[0.0, 0.0, 0.4, 0.0, 0.0], &[1.5]);
        assert!((g - (-0.6f64).exp()).abs() < 1e-15);
        check_identity(&m, &s);

        let m = model("b1*exp(-b2*x)+b3*exp(-b4*x)+b5*exp(-b6*x)");
        let s = separate_model(&m);
        assert_eq!(names(&m, &s.linear), ["b1", "b3", "b5"]);
        check_identity(&m, &s);
    }

    #[test]
    fn line_plus_arctangent() {
        let m = model("b1 - b2*x - atan(b3/(x-b4))/pi");
        let s = separate_model(&m);
        assert_eq!(names(&m, &s.linear), ["b1", "b2"]);
        // g_b2 = -x
        assert_eq!(s.basis[1].eval(&[0.0; 4], &[3.0]), -3.0);
        check_identity(&m, &s);
    }

    #[test]
    fn product_of_two_parameters_gives_one() {
        let m = model("a*b*x");
        let s = separate_model(&m);
        assert_eq!(s.linear.len(), 1);
        assert_eq!(s.nonlinear.len(), 1);
        check_identity(&m, &s);
    }

    #[test]
    fn sinusoids_with_unknown_periods() {
        let m = model(
            "b1 + b2*cos(2*pi*x/12) + b3*sin(2*pi*x/12) + b5*cos(2*pi*x/b4) + b6*sin(2*pi*x/b4) \
             + b8*cos(2*pi*x/b7) + b9*sin(2*pi*x/b7)",
        );
        let s = separate_model(&m);
        assert_eq!(
            names(&m, &s.linear),
            ["b1", "b2", "b3", "b5", "b6", "b8", "b9"]
        );
        assert_eq!(names(&m, &s.nonlinear), ["b4", "b7"]);
        check_identity(&m, &s);
    }

    #[test]
    fn gaussian_height() {
        let m = model("(b1/b2)*exp(-0.5*((x-b3)/b2)^2)");
        let s = separate_model(&m);
        assert_eq!(names(&m, &s.linear), ["b1"]);
        // g = exp(-0.5((x-b3)/b2)^2)/b2 at x=1, b2=2, b3=0 → exp(-1/8)/2
        let g = s.basis[0].eval(&[0.0, 2.0, 0.0], &[1.0]);
        assert!((g - (-0.125f64).exp() / 2.0).abs() < 1e-15);
        check_identity(&m, &s);
    }

    #[test]
    fn nothing_linear() {
        let m = model("exp(a*x)");
        let s = separate_model(&m);
        assert!(s.linear.is_empty());
        assert_eq!(s.nonlinear, [0]);
    }
}
