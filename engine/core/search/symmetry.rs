//! Interchangeable parameters: permutations that leave the model's right side
//! unchanged (e.g. swapping (a1, k1) with (a2, k2) in a sum of two exponentials),
//! found numerically, and the canonical ordering that makes swapped copies of
//! one minimum compare equal.
//!
//! A permutation `perm` acts on a point as `σ(p)[i] = p[perm[i]]`.

use super::rng::Rng;
use crate::symbolic::{BinOp, Expr, Model};
use std::cmp::Ordering;

/// Random test points at which a candidate permutation must leave f unchanged.
const TEST_POINTS: usize = 8;
/// Relative agreement required at every test point.
const AGREE: f64 = 1e-9;
/// Most parameters for which all swaps of two pairs are tried.
const PAIR_OF_PAIRS_MAX: usize = 12;
/// Largest symmetry group enumerated for canonical ordering.
const GROUP_MAX: usize = 5040;

/// Random test points and the model's values there, for deciding numerically
/// whether a change of the parameters leaves `model.rhs` unchanged.
struct Probe<'a> {
    model: &'a Model,
    points: Vec<(Vec<f64>, Vec<f64>)>,
    base: Vec<f64>,
}

impl<'a> Probe<'a> {
    /// Draws the points from `seed`; `None` when the model is finite at too few of them.
    fn new(model: &'a Model, seed: u64) -> Option<Probe<'a>> {
        let (n, nv) = (model.n_params(), model.vars.len());
        let mut rng = Rng::new(seed);
        let points: Vec<(Vec<f64>, Vec<f64>)> = (0..TEST_POINTS)
            .map(|_| {
                let p = (0..n).map(|_| 0.4 + 1.2 * rng.uniform()).collect();
                let x = (0..nv).map(|_| 0.3 + 1.6 * rng.uniform()).collect();
                (p, x)
            })
            .collect();
        let base: Vec<f64> = points.iter().map(|(p, x)| model.rhs.eval(p, x)).collect();
        if base.iter().filter(|v| v.is_finite()).count() < TEST_POINTS / 2 {
            return None;
        }
        Some(Probe {
            model,
            points,
            base,
        })
    }

    /// True when the model takes the same values (finite or not alike) at the
    /// changed parameters `change(p)` of every test point.
    fn unchanged(&self, change: impl Fn(&[f64]) -> Vec<f64>) -> bool {
        self.points.iter().zip(&self.base).all(|((p, x), &f0)| {
            let f1 = self.model.rhs.eval(&change(p), x);
            match (f0.is_finite(), f1.is_finite()) {
                (true, true) => {
                    (f0 - f1).abs() <= AGREE * (f0.abs() + f1.abs()) + f64::MIN_POSITIVE
                }
                (false, false) => true,
                _ => false,
            }
        })
    }
}

/// Parameter permutations that leave `model.rhs` unchanged, tested by
/// evaluating the expression at random parameter and variable values.
/// Tried: every transposition of two parameters; swaps of the parameters of
/// two additive terms with equally many parameters (matched in order of first
/// appearance); and, for up to 12 parameters, every simultaneous swap of two
/// pairs. Each permutation is returned once, in a fixed order.
pub fn find_symmetries(model: &Model) -> Vec<Vec<usize>> {
    let n = model.n_params();
    let Some(probe) = Probe::new(model, 0x5EED_5A5E) else {
        return Vec::new();
    };
    let leaves_unchanged = |perm: &[usize]| probe.unchanged(|p| apply(perm, p));

    let mut tried: Vec<Vec<usize>> = Vec::new();
    let mut push = |perm: Vec<usize>| {
        if !is_identity(&perm) && !tried.contains(&perm) {
            tried.push(perm);
        }
    };
    for i in 0..n {
        for j in i + 1..n {
            push(swap_pairs(n, &[(i, j)]));
        }
    }
    let terms = additive_terms(&model.rhs);
    let blocks: Vec<Vec<usize>> = terms.iter().map(|t| params_in_order(t)).collect();
    for a in 0..blocks.len() {
        for b in a + 1..blocks.len() {
            let (u, v) = (&blocks[a], &blocks[b]);
            if u.len() == v.len() && !u.is_empty() && u.iter().all(|k| !v.contains(k)) {
                let pairs: Vec<(usize, usize)> = u.iter().copied().zip(v.iter().copied()).collect();
                push(swap_pairs(n, &pairs));
            }
        }
    }
    if n <= PAIR_OF_PAIRS_MAX {
        let pairs: Vec<(usize, usize)> = (0..n)
            .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
            .collect();
        for (k, &(a, b)) in pairs.iter().enumerate() {
            for &(c, d) in &pairs[k + 1..] {
                if a == c || a == d || b == c || b == d {
                    continue;
                }
                push(swap_pairs(n, &[(a, c), (b, d)]));
                push(swap_pairs(n, &[(a, d), (b, c)]));
            }
        }
    }
    tried.into_iter().filter(|p| leaves_unchanged(p)).collect()
}

/// Parameter sets whose simultaneous change of sign leaves `model.rhs`
/// unchanged (e.g. a width that enters only squared, or an amplitude and a
/// width in a ratio), tested numerically as in [`find_symmetries`]. Tried:
/// every single parameter, then every pair of parameters not already flippable
/// alone. Each set is sorted; sets come in a fixed order.
pub fn find_sign_flips(model: &Model) -> Vec<Vec<usize>> {
    let n = model.n_params();
    let Some(probe) = Probe::new(model, 0x5167_F11B) else {
        return Vec::new();
    };
    let unchanged = |set: &[usize]| {
        probe.unchanged(|p| {
            let mut q = p.to_vec();
            for &k in set {
                q[k] = -q[k];
            }
            q
        })
    };
    let singles: Vec<usize> = (0..n).filter(|&i| unchanged(&[i])).collect();
    let mut out: Vec<Vec<usize>> = singles.iter().map(|&i| vec![i]).collect();
    for i in 0..n {
        for j in i + 1..n {
            if !singles.contains(&i) && !singles.contains(&j) && unchanged(&[i, j]) {
                out.push(vec![i, j]);
            }
        }
    }
    out
}

/// Swaps of two parameters that leave `model.rhs` unchanged only together
/// with a change of sign of a third, e.g. (baseline, full_effect, slope) in
/// `baseline + (full_effect - baseline)/(1 + exp(slope*(x_half - x)))`: the
/// same curve is read from either end. Tested numerically as in [`find_symmetries`], for
/// every pair that is not interchangeable by itself and every third
/// parameter that cannot change sign by itself. Returned as (permutation,
/// parameter whose sign changes), in a fixed order.
pub fn find_signed_swaps(model: &Model) -> Vec<(Vec<usize>, usize)> {
    let n = model.n_params();
    let Some(probe) = Probe::new(model, 0x51_65_ED_5A) else {
        return Vec::new();
    };
    // Parameters whose change of sign alone leaves the model unchanged, once each.
    let flips_alone: Vec<bool> = (0..n)
        .map(|k| {
            probe.unchanged(|p| {
                let mut q = p.to_vec();
                q[k] = -q[k];
                q
            })
        })
        .collect();
    let mut out = Vec::new();
    for i in 0..n {
        for j in i + 1..n {
            let perm = swap_pairs(n, &[(i, j)]);
            if probe.unchanged(|p| apply(&perm, p)) {
                continue;
            }
            for k in (0..n).filter(|&k| k != i && k != j && !flips_alone[k]) {
                let together = probe.unchanged(|p| {
                    let mut q = apply(&perm, p);
                    q[k] = -q[k];
                    q
                });
                if together {
                    out.push((perm.clone(), k));
                }
            }
        }
    }
    out
}

/// The symmetries of a model as the search uses them: interchangeable
/// parameters and sign changes that leave the model unchanged.
#[derive(Debug, Clone, Default)]
pub struct Symmetries {
    /// The permutation group ([`group`]), identity first; empty means none.
    pub group: Vec<Vec<usize>>,
    /// Sign-change sets ([`find_sign_flips`]).
    pub sign_flips: Vec<Vec<usize>>,
    /// Swaps that need a change of sign ([`find_signed_swaps`]).
    pub signed_swaps: Vec<(Vec<usize>, usize)>,
}

impl Symmetries {
    /// One representative of all mirror images of `p`: first each sign-change
    /// set is turned so that its first parameter is not negative (sets applied
    /// in order), then each signed swap is applied where its sign-changing
    /// parameter is negative, then the lexicographically smallest permutation
    /// is taken. Returns it with the permutation used (`out[i] = ±p[perm[i]]`).
    pub fn canonical_with(&self, p: &[f64]) -> (Vec<f64>, Vec<usize>) {
        let mut q = p.to_vec();
        for set in &self.sign_flips {
            if set.iter().all(|&k| k < q.len()) && set.first().is_some_and(|&k| q[k] < 0.0) {
                for &k in set {
                    q[k] = -q[k];
                }
            }
        }
        let mut moved: Vec<usize> = (0..q.len()).collect();
        for (perm, k) in &self.signed_swaps {
            if perm.len() == q.len() && is_permutation(perm) && q.get(*k).is_some_and(|v| *v < 0.0)
            {
                q = apply(perm, &q);
                q[*k] = -q[*k];
                moved = apply_index(perm, &moved);
            }
        }
        let (out, g) = canonical_with(&self.group, &q);
        (out, apply_index(&g, &moved))
    }
}

/// σ applied to a list of indices: `idx[perm[i]]` in place i.
fn apply_index(perm: &[usize], idx: &[usize]) -> Vec<usize> {
    perm.iter()
        .map(|&k| idx.get(k).copied().unwrap_or(k))
        .collect()
}

/// σ(p): the point with `p[perm[i]]` in place i.
pub fn apply(perm: &[usize], p: &[f64]) -> Vec<f64> {
    perm.iter()
        .map(|&k| p.get(k).copied().unwrap_or(f64::NAN))
        .collect()
}

/// The transpositions `i ↔ perm[i]` (`i < perm[i]`) that make up an involution.
pub fn transpositions(perm: &[usize]) -> Vec<(usize, usize)> {
    perm.iter()
        .enumerate()
        .filter(|&(i, &j)| i < j && perm.get(j) == Some(&i))
        .map(|(i, &j)| (i, j))
        .collect()
}

/// True when `perm` is a permutation of 0..n for `n = perm.len()`.
pub fn is_permutation(perm: &[usize]) -> bool {
    let mut seen = vec![false; perm.len()];
    perm.iter()
        .all(|&k| k < seen.len() && !std::mem::replace(&mut seen[k], true))
}

fn is_identity(perm: &[usize]) -> bool {
    perm.iter().enumerate().all(|(i, &k)| i == k)
}

/// The permutation of 0..n swapping each listed pair.
fn swap_pairs(n: usize, pairs: &[(usize, usize)]) -> Vec<usize> {
    let mut perm: Vec<usize> = (0..n).collect();
    for &(a, b) in pairs {
        perm.swap(a, b);
    }
    perm
}

/// The terms of a top-level sum (signs dropped: they do not change which
/// parameters a term holds).
fn additive_terms(e: &Expr) -> Vec<&Expr> {
    match e {
        Expr::Bin(BinOp::Add | BinOp::Sub, a, b) => {
            let mut v = additive_terms(a);
            v.extend(additive_terms(b));
            v
        }
        Expr::Neg(a) => additive_terms(a),
        _ => vec![e],
    }
}

/// Parameters of `e` in order of first appearance, left to right.
fn params_in_order(e: &Expr) -> Vec<usize> {
    fn walk(e: &Expr, out: &mut Vec<usize>) {
        match e {
            Expr::Param(k) => {
                if !out.contains(k) {
                    out.push(*k)
                }
            }
            Expr::Num(_) | Expr::Var(_) => {}
            Expr::Neg(a) | Expr::Call(_, a) => walk(a, out),
            Expr::Bin(_, a, b) => {
                walk(a, out);
                walk(b, out);
            }
        }
    }
    let mut out = Vec::new();
    walk(e, &mut out);
    out
}

/// The group generated by `generators` (permutations of 0..n; others are
/// ignored), identity first, enumerated breadth-first up to 5040 elements.
pub fn group(generators: &[Vec<usize>], n: usize) -> Vec<Vec<usize>> {
    let gens: Vec<&Vec<usize>> = generators
        .iter()
        .filter(|g| g.len() == n && is_permutation(g))
        .collect();
    let mut out: Vec<Vec<usize>> = vec![(0..n).collect()];
    let mut i = 0;
    while i < out.len() && out.len() < GROUP_MAX {
        for g in &gens {
            // (h ∘ g)(p) = h(g(p)): index map composed.
            let h: Vec<usize> = g.iter().map(|&k| out[i][k]).collect();
            if !out.contains(&h) {
                out.push(h);
                if out.len() >= GROUP_MAX {
                    break;
                }
            }
        }
        i += 1;
    }
    out
}

/// The lexicographically smallest image of `p` under `group` (values compared
/// in parameter order by `f64::total_cmp`): one representative for all
/// swapped copies of a point.
pub fn canonical(group: &[Vec<usize>], p: &[f64]) -> Vec<f64> {
    canonical_with(group, p).0
}

/// [`canonical`] together with the permutation that produced it.
pub fn canonical_with(group: &[Vec<usize>], p: &[f64]) -> (Vec<f64>, Vec<usize>) {
    let mut best = p.to_vec();
    let mut perm: Vec<usize> = (0..p.len()).collect();
    for g in group.iter().filter(|g| g.len() == p.len()).skip(1) {
        let q = apply(g, p);
        if lex_cmp(&q, &best) == Ordering::Less {
            best = q;
            perm = g.clone();
        }
    }
    (best, perm)
}

fn lex_cmp(a: &[f64], b: &[f64]) -> Ordering {
    for (x, y) in a.iter().zip(b) {
        match x.total_cmp(y) {
            Ordering::Equal => continue,
            o => return o,
        }
    }
    Ordering::Equal
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(text: &str, cols: &[&str]) -> Model {
        let c: Vec<String> = cols.iter().map(|s| s.to_string()).collect();
        Model::new(text, &c, None).unwrap()
    }

    #[test]
    fn swapped_exponential_terms() {
        // params in order of first appearance: a1, k1, a2, k2
        let m = model("a1*exp(-k1*x) + a2*exp(-k2*x)", &["x", "y"]);
        let s = find_symmetries(&m);
        assert_eq!(s, vec![vec![2, 3, 0, 1]]);
        assert_eq!(transpositions(&s[0]), vec![(0, 2), (1, 3)]);
    }

    #[test]
    fn three_bumps_and_plain_products() {
        let m = model(
            "c + h1*exp(-(x-m1)^2/w1^2) + h2*exp(-(x-m2)^2/w2^2) + h3*exp(-(x-m3)^2/w3^2)",
            &["x", "y"],
        );
        let s = find_symmetries(&m);
        // Three block swaps of (h, m, w) triples, nothing else.
        assert_eq!(s.len(), 3, "{s:?}");
        let g = group(&s, m.n_params());
        assert_eq!(g.len(), 6);
        // A product a*b*x: the two factors are interchangeable.
        let p = model("a*b*x", &["x", "y"]);
        assert_eq!(find_symmetries(&p), vec![vec![1, 0]]);
        // No symmetry in a saturation curve.
        let q = model("a*x/(b+x)", &["x", "y"]);
        assert!(find_symmetries(&q).is_empty());
    }

    #[test]
    fn sign_changes_that_leave_the_model_unchanged() {
        // params: a, m, w, c. The width enters squared; a/w (with w squared
        // elsewhere) makes (a, w) flip together only when w appears linearly.
        let m = model("a*exp(-(x-m)^2/w^2) + c", &["x", "y"]);
        assert_eq!(find_sign_flips(&m), vec![vec![2]]);
        let r = model("(a/b)*exp(-0.5*((x-c)/b)^2)", &["x", "y"]);
        assert_eq!(find_sign_flips(&r), vec![vec![0, 1]]);
        assert!(find_sign_flips(&model("a*exp(-k*x)", &["x", "y"])).is_empty());
        let s = Symmetries {
            group: vec![],
            sign_flips: vec![vec![0, 1]],
            ..Default::default()
        };
        assert_eq!(
            s.canonical_with(&[-1.5, -4.0, 450.0]).0,
            vec![1.5, 4.0, 450.0]
        );
        assert_eq!(
            s.canonical_with(&[1.5, -4.0, 450.0]).0,
            vec![1.5, -4.0, 450.0]
        );
    }

    #[test]
    fn canonical_merges_swapped_copies() {
        let g = group(&[vec![1, 0, 3, 2]], 4);
        assert_eq!(g.len(), 2);
        let p = [5.0, 2.0, 0.1, 1.3];
        let q = apply(&g[1], &p);
        assert_eq!(q, vec![2.0, 5.0, 1.3, 0.1]);
        assert_eq!(canonical(&g, &p), canonical(&g, &q));
        assert_eq!(canonical(&g, &p), vec![2.0, 5.0, 1.3, 0.1]);
        assert!(!is_permutation(&[0, 0]));
        assert_eq!(group(&[vec![0, 0]], 2).len(), 1);
    }

    #[test]
    fn a_swap_with_a_change_of_sign_is_found_and_made_canonical() {
        // Both ends of a logistic step: (bottom, top, slope) -> (top, bottom, -slope).
        let m = model(
            "bottom + (top - bottom)/(1 + exp(slope*(mid - x)))",
            &["x", "y"],
        );
        let names = &m.params;
        let at = |n: &str| names.iter().position(|p| p == n).unwrap();
        let (b, t, s) = (at("bottom"), at("top"), at("slope"));
        let found = find_signed_swaps(&m);
        assert_eq!(found.len(), 1, "{found:?}");
        let (perm, k) = &found[0];
        assert_eq!(*k, s);
        assert_eq!((perm[b], perm[t]), (t, b));
        // Not a pure swap, and nothing for a model without the mirror.
        assert!(find_symmetries(&m).is_empty());
        assert!(find_signed_swaps(&model("a*exp(-k*x) + c", &["x", "y"])).is_empty());
        // The mirror image with a negative slope is turned round.
        let sym = Symmetries {
            signed_swaps: found.clone(),
            ..Default::default()
        };
        let mut p = vec![0.0; 4];
        p[b] = 95.0;
        p[t] = 5.0;
        p[at("mid")] = 1.2;
        p[s] = -2.5;
        let (q, moved) = sym.canonical_with(&p);
        assert_eq!((q[b], q[t], q[s]), (5.0, 95.0, 2.5));
        assert_eq!((moved[b], moved[t]), (t, b));
        // Already canonical: unchanged.
        assert_eq!(sym.canonical_with(&q).0, q);
    }
}
