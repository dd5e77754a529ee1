//! Polynomial expansion: an expression as a sum of numeric multiples of
//! monomials in atoms (data variables, parameters, and opaque subexpressions
//! such as `exp(b1*x)` or `log(b1)`), with integer (also negative) exponents.
//! Used to group a model into coefficient × basis terms and to write a model
//! as a ratio of polynomials for cross-multiplication.

use super::algebra::key;
use super::expr::{BinOp, Expr};
use super::simplify;
use std::collections::BTreeMap;

/// Expansions larger than this many terms are kept as opaque atoms instead.
pub const MAX_TERMS: usize = 512;
/// Largest integer power multiplied out.
pub const MAX_POWER: i32 = 12;

/// A factor of a monomial.
#[derive(Debug, Clone, PartialEq)]
pub enum Atom {
    /// Data variable `Var(i)`.
    Var(usize),
    /// Parameter `Param(i)`.
    Param(usize),
    /// A subexpression kept whole (function call, non-integer power, sum in a denominator).
    Opaque(Expr),
}

impl Atom {
    /// The atom as an expression.
    pub fn expr(&self) -> Expr {
        match self {
            Atom::Var(i) => Expr::Var(*i),
            Atom::Param(i) => Expr::Param(*i),
            Atom::Opaque(e) => e.clone(),
        }
    }

    /// True when the atom involves any data variable.
    pub fn has_data(&self) -> bool {
        match self {
            Atom::Var(_) => true,
            Atom::Param(_) => false,
            Atom::Opaque(e) => e.has_any_var(),
        }
    }

    fn key(&self) -> String {
        match self {
            Atom::Var(i) => format!("v{:06}", i),
            Atom::Param(i) => format!("p{:06}", i),
            Atom::Opaque(e) => format!("z{}", key(e)),
        }
    }
}

/// A monomial: atoms with non-zero integer exponents, keyed for canonical order.
pub type Monomial = BTreeMap<String, (Atom, i32)>;

/// A sum of `coefficient × monomial` terms keyed by the monomial.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Poly {
    /// Terms by monomial key; coefficients are never zero.
    pub terms: BTreeMap<String, (f64, Monomial)>,
}

fn mono_key(m: &Monomial) -> String {
    m.iter()
        .map(|(k, (_, e))| format!("{}^{}", k, e))
        .collect::<Vec<_>>()
        .join("*")
}

impl Poly {
    /// The constant polynomial `c`.
    pub fn constant(c: f64) -> Poly {
        let mut p = Poly::default();
        p.push(c, Monomial::new());
        p
    }

    /// A single atom.
    pub fn atom(a: Atom) -> Poly {
        let mut m = Monomial::new();
        m.insert(a.key(), (a, 1));
        let mut p = Poly::default();
        p.push(1.0, m);
        p
    }

    fn push(&mut self, c: f64, m: Monomial) {
        if c == 0.0 {
            return;
        }
        let k = mono_key(&m);
        let cancelled = match self.terms.get_mut(&k) {
            Some(t) => {
                let before = t.0.abs().max(c.abs());
                t.0 += c;
                t.0.abs() <= 1e-13 * before
            }
            None => {
                self.terms.insert(k.clone(), (c, m));
                false
            }
        };
        if cancelled {
            self.terms.remove(&k);
        }
    }

    /// Number of terms.
    pub fn len(&self) -> usize {
        self.terms.len()
    }

    /// True for the zero polynomial.
    pub fn is_empty(&self) -> bool {
        self.terms.is_empty()
    }

    /// A canonical text key (equal polynomials have equal keys).
    pub fn key(&self) -> String {
        self.terms
            .iter()
            .map(|(k, (c, _))| format!("{:e}:{}", c, k))
            .collect::<Vec<_>>()
            .join("+")
    }

    /// `self + s·other`.
    pub fn add_scaled(&self, other: &Poly, s: f64) -> Poly {
        let mut out = self.clone();
        for (c, m) in other.terms.values() {
            out.push(s * c, m.clone());
        }
        out.clean();
        out
    }

    fn clean(&mut self) {
        self.terms.retain(|_, (c, _)| c.abs() > 1e-300);
    }

    /// The product, or `None` beyond [`MAX_TERMS`].
    pub fn mul(&self, other: &Poly) -> Option<Poly> {
        if self.len() * other.len() > MAX_TERMS {
            return None;
        }
        let mut out = Poly::default();
        for (c1, m1) in self.terms.values() {
            for (c2, m2) in other.terms.values() {
                out.push(c1 * c2, mono_mul(m1, m2, 1));
            }
        }
        out.clean();
        Some(out)
    }

    /// A single term's inverse (`None` unless exactly one term).
    pub fn inv(&self) -> Option<Poly> {
        if self.len() != 1 {
            return None;
        }
        let (c, m) = self.terms.values().next()?;
        let mut mi = Monomial::new();
        for (k, (a, e)) in m {
            mi.insert(k.clone(), (a.clone(), -e));
        }
        let mut p = Poly::default();
        p.push(1.0 / c, mi);
        Some(p)
    }

    /// `self^n` for a small integer `n` (negative only for a single term).
    pub fn powi(&self, n: i32) -> Option<Poly> {
        if n < 0 {
            return self.inv()?.powi(-n);
        }
        if n > MAX_POWER {
            return None;
        }
        let mut out = Poly::constant(1.0);
        for _ in 0..n {
            out = out.mul(self)?;
        }
        Some(out)
    }

    /// True when some atom is opaque.
    pub fn has_opaque(&self) -> bool {
        self.terms
            .values()
            .any(|(_, m)| m.values().any(|(a, _)| matches!(a, Atom::Opaque(_))))
    }

    /// The polynomial as a single number when it is one.
    pub fn as_number(&self) -> Option<f64> {
        match self.len() {
            0 => Some(0.0),
            1 => {
                let (c, m) = self.terms.values().next()?;
                if m.is_empty() {
                    Some(*c)
                } else {
                    None
                }
            }
            _ => None,
        }
    }

    /// Back to an expression (tidy; denominators collected per term).
    pub fn to_expr(&self) -> Expr {
        let mut acc: Option<Expr> = None;
        for (c, m) in self.terms.values() {
            let t = term_expr(*c, m);
            acc = Some(match acc {
                None => t,
                Some(a) => simplify::add(a, t),
            });
        }
        acc.unwrap_or(Expr::Num(0.0))
    }

    /// Splits every term into the part whose atoms satisfy `is_basis` and the rest,
    /// and groups by the basis part: `Σ_k coef_k · basis_k`, in key order.
    pub fn group_by(&self, is_basis: &dyn Fn(&Atom) -> bool) -> Vec<(Monomial, Poly)> {
        let mut groups: BTreeMap<String, (Monomial, Poly)> = BTreeMap::new();
        for (c, m) in self.terms.values() {
            let mut basis = Monomial::new();
            let mut rest = Monomial::new();
            for (k, (a, e)) in m {
                if is_basis(a) {
                    basis.insert(k.clone(), (a.clone(), *e));
                } else {
                    rest.insert(k.clone(), (a.clone(), *e));
                }
            }
            let g = groups
                .entry(mono_key(&basis))
                .or_insert_with(|| (basis.clone(), Poly::default()));
            g.1.push(*c, rest);
        }
        groups
            .into_values()
            .filter(|(_, p)| !p.is_empty())
            .collect()
    }
}

/// `m1 · m2^s`.
pub fn mono_mul(m1: &Monomial, m2: &Monomial, s: i32) -> Monomial {
    let mut out = m1.clone();
    for (k, (a, e)) in m2 {
        let entry = out.entry(k.clone()).or_insert_with(|| (a.clone(), 0));
        entry.1 += s * e;
        if entry.1 == 0 {
            out.remove(k);
        }
    }
    out
}

/// A monomial as an expression, numerator over denominator.
pub fn mono_expr(m: &Monomial) -> Expr {
    term_expr(1.0, m)
}

fn term_expr(c: f64, m: &Monomial) -> Expr {
    let mut num = Expr::Num(c.abs());
    let mut den = Expr::Num(1.0);
    for (a, e) in m.values() {
        let f = simplify::pow(a.expr(), Expr::Num(e.abs() as f64));
        if *e > 0 {
            num = simplify::mul(num, f);
        } else {
            den = simplify::mul(den, f);
        }
    }
    let t = simplify::div(num, den);
    if c < 0.0 {
        simplify::neg(t)
    } else {
        t
    }
}

/// Expands `e`; parts that are not polynomial become opaque atoms (whose own
/// insides are expanded, so equal subexpressions get equal atoms).
pub fn expand(e: &Expr) -> Poly {
    match e {
        Expr::Num(v) => Poly::constant(*v),
        Expr::Var(i) => Poly::atom(Atom::Var(*i)),
        Expr::Param(i) => Poly::atom(Atom::Param(*i)),
        Expr::Neg(a) => Poly::default().add_scaled(&expand(a), -1.0),
        Expr::Bin(BinOp::Add, a, b) => expand(a).add_scaled(&expand(b), 1.0),
        Expr::Bin(BinOp::Sub, a, b) => expand(a).add_scaled(&expand(b), -1.0),
        Expr::Bin(BinOp::Mul, a, b) => {
            let (pa, pb) = (expand(a), expand(b));
            pa.mul(&pb)
                .unwrap_or_else(|| opaque(simplify::mul(pa.to_expr(), pb.to_expr())))
        }
        Expr::Bin(BinOp::Div, a, b) => {
            let (pa, pb) = (expand(a), expand(b));
            let inv = match pb.inv() {
                Some(i) => i,
                None => {
                    let mut m = Monomial::new();
                    let at = Atom::Opaque(pb.to_expr());
                    m.insert(at.key(), (at, -1));
                    let mut p = Poly::default();
                    p.push(1.0, m);
                    p
                }
            };
            pa.mul(&inv)
                .unwrap_or_else(|| opaque(simplify::div(pa.to_expr(), pb.to_expr())))
        }
        Expr::Bin(BinOp::Pow, a, b) => {
            let pa = expand(a);
            if let Expr::Num(n) = **b {
                if n.fract() == 0.0 && n.abs() <= MAX_POWER as f64 {
                    let n = n as i32;
                    if let Some(p) = pa.powi(n) {
                        return p;
                    }
                    // a sum to a negative power: opaque base with that exponent
                    let mut m = Monomial::new();
                    let at = Atom::Opaque(pa.to_expr());
                    m.insert(at.key(), (at, n));
                    let mut p = Poly::default();
                    p.push(1.0, m);
                    return p;
                }
            }
            opaque(simplify::pow(pa.to_expr(), expand(b).to_expr()))
        }
        Expr::Call(f, a) => opaque(simplify::call(*f, expand(a).to_expr())),
    }
}

/// An opaque atom, or a number when the expression has neither data nor parameters.
fn opaque(e: Expr) -> Poly {
    if !e.has_any_var() && !e.has_any_param() {
        let v = e.eval(&[], &[]);
        if v.is_finite() {
            return Poly::constant(v);
        }
    }
    match e {
        Expr::Var(i) => Poly::atom(Atom::Var(i)),
        Expr::Param(i) => Poly::atom(Atom::Param(i)),
        e => Poly::atom(Atom::Opaque(e)),
    }
}

/// Writes `e` as `P/Q` with `P`, `Q` polynomials in data variables and
/// parameters only (Laurent monomials allowed); `None` when a function call or
/// a non-integer power stands in the way. Common monomial factors are cancelled.
pub fn as_rational(e: &Expr) -> Option<(Poly, Poly)> {
    let (p, q) = rational(e)?;
    if let Some(qi) = q.inv() {
        return Some((p.mul(&qi)?, Poly::constant(1.0)));
    }
    // cancel the monomial content common to every term of P and Q
    let mut content: Option<Monomial> = None;
    for (_, m) in p.terms.values().chain(q.terms.values()) {
        content = Some(match content {
            None => m.clone(),
            Some(c) => {
                let mut out = Monomial::new();
                for (k, (a, e)) in &c {
                    if let Some((_, f)) = m.get(k) {
                        let g = if *e > 0 && *f > 0 {
                            (*e).min(*f)
                        } else if *e < 0 && *f < 0 {
                            (*e).max(*f)
                        } else {
                            0
                        };
                        if g != 0 {
                            out.insert(k.clone(), (a.clone(), g));
                        }
                    }
                }
                out
            }
        });
    }
    let content = content.unwrap_or_default();
    if content.is_empty() {
        return Some((p, q));
    }
    let mut ci = Poly::default();
    ci.push(1.0, mono_mul(&Monomial::new(), &content, -1));
    Some((p.mul(&ci)?, q.mul(&ci)?))
}

fn rational(e: &Expr) -> Option<(Poly, Poly)> {
    let one = Poly::constant(1.0);
    Some(match e {
        Expr::Num(v) => (Poly::constant(*v), one),
        Expr::Var(i) => (Poly::atom(Atom::Var(*i)), one),
        Expr::Param(i) => (Poly::atom(Atom::Param(*i)), one),
        Expr::Neg(a) => {
            let (p, q) = rational(a)?;
            (Poly::default().add_scaled(&p, -1.0), q)
        }
        Expr::Bin(op @ (BinOp::Add | BinOp::Sub), a, b) => {
            let s = if *op == BinOp::Add { 1.0 } else { -1.0 };
            let (p1, q1) = rational(a)?;
            let (p2, q2) = rational(b)?;
            if q1.key() == q2.key() {
                (p1.add_scaled(&p2, s), q1)
            } else if let Some(i2) = q2.inv() {
                // q2 a single term: P1/Q1 ± P2·q2⁻¹ keeps Q1
                (p1.add_scaled(&p2.mul(&i2)?.mul(&q1)?, s), q1)
            } else if let Some(i1) = q1.inv() {
                (p1.mul(&i1)?.mul(&q2)?.add_scaled(&p2, s), q2)
            } else {
                (p1.mul(&q2)?.add_scaled(&p2.mul(&q1)?, s), q1.mul(&q2)?)
            }
        }
        Expr::Bin(BinOp::Mul, a, b) => {
            let (p1, q1) = rational(a)?;
            let (p2, q2) = rational(b)?;
            (p1.mul(&p2)?, q1.mul(&q2)?)
        }
        Expr::Bin(BinOp::Div, a, b) => {
            let (p1, q1) = rational(a)?;
            let (p2, q2) = rational(b)?;
            (p1.mul(&q2)?, q1.mul(&p2)?)
        }
        Expr::Bin(BinOp::Pow, a, b) => {
            let n = match **b {
                Expr::Num(n) if n.fract() == 0.0 && n.abs() <= MAX_POWER as f64 => n as i32,
                _ => return None,
            };
            let (p, q) = rational(a)?;
            if n >= 0 {
                (p.powi(n)?, q.powi(n)?)
            } else {
                (q.powi(-n)?, p.powi(-n)?)
            }
        }
        Expr::Call(..) => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::symbolic::parse::parse_formula;

    fn p(s: &str) -> Expr {
        parse_formula(s).unwrap().rhs
    }

    #[test]
    fn expands_and_cancels() {
        // (a+x)^2 - x^2 = a^2 + 2ax: two terms
        let e = expand(&p("(a+x)^2 - x^2"));
        assert_eq!(e.len(), 2);
        let v = e.to_expr().eval(&[1.5, 2.0], &[]); // a = p0, x = p1 here
        assert!((v - (1.5f64 * 1.5 + 2.0 * 1.5 * 2.0)).abs() < 1e-12);
    }

    #[test]
    fn groups_by_data_monomial() {
        // a*(x - c)^2 = a x^2 - 2ac x + a c^2 → three groups in x
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = crate::symbolic::Model::new("a*(x-c)^2", &cols, None).unwrap();
        let g = expand(&m.rhs).group_by(&|a| a.has_data());
        assert_eq!(g.len(), 3);
        let (a, c) = (2.0, 3.0);
        for (mono, coef) in &g {
            let deg: i32 = mono.values().map(|(_, e)| *e).sum();
            let want = match deg {
                0 => a * c * c,
                1 => -2.0 * a * c,
                _ => a,
            };
            assert!((coef.to_expr().eval(&[a, c], &[]) - want).abs() < 1e-12);
        }
    }

    #[test]
    fn rational_form_cancels_content() {
        // a*x/(x + a*x^2) = a/(1 + a x)
        let (pn, q) = as_rational(&p("a*x/(x + a*x^2)")).unwrap();
        assert_eq!(pn.len(), 1);
        assert_eq!(q.len(), 2);
        assert!(as_rational(&p("exp(a*x)")).is_none());
    }
}
