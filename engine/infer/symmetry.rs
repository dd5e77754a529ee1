//! Exchangeable terms: when the model is unchanged by swapping whole groups of
//! parameters (the terms of a sum of exponentials, two bumps, two sinusoids),
//! the same fit has several labellings. Candidates are put in one canonical
//! labelling so that duplicates merge and the answer is reproducible: the
//! exchangeable blocks are ordered slowest first — locations left to right,
//! rates from smallest to largest, periods and x-scales from longest to
//! shortest (a convention of our own).

use super::scales::ParamScale;
use crate::symbolic::algebra;
use crate::symbolic::roles::RoleKind;
use crate::symbolic::simplify;
use crate::symbolic::{Expr, Model};

/// A class of mutually exchangeable parameter blocks.
#[derive(Debug, Clone, PartialEq)]
pub struct Exchange {
    /// The blocks: corresponding parameters at the same positions.
    pub blocks: Vec<Vec<usize>>,
    /// Position within a block of the parameter that orders the blocks.
    pub key: usize,
    /// Order by decreasing |key| instead of increasing key.
    pub descending: bool,
    /// Compare magnitudes rather than signed values.
    pub magnitude: bool,
}

/// Finds the exchangeable blocks of the model's additive terms.
pub fn exchangeable(model: &Model, scales: &[ParamScale]) -> Vec<Exchange> {
    let terms = algebra::sum_terms(&model.rhs);
    // components: terms linked by shared parameters
    let mut comps: Vec<(Vec<usize>, Vec<Expr>)> = Vec::new();
    for t in terms {
        let ps = algebra::params_in(&t);
        if ps.is_empty() {
            continue;
        }
        let mut merged = (ps, vec![t]);
        let mut rest = Vec::new();
        for c in comps {
            if c.0.iter().any(|q| merged.0.contains(q)) {
                merged.0.extend(c.0);
                merged.1.extend(c.1);
            } else {
                rest.push(c);
            }
        }
        merged.0.sort_unstable();
        merged.0.dedup();
        rest.push(merged);
        comps = rest;
    }
    comps.sort_by(|a, b| a.0.cmp(&b.0));
    let sum = |ts: &[Expr]| {
        ts.iter()
            .cloned()
            .reduce(simplify::add)
            .unwrap_or(Expr::Num(0.0))
    };
    let mut used = vec![false; comps.len()];
    let mut out = Vec::new();
    for i in 0..comps.len() {
        if used[i] {
            continue;
        }
        let mut blocks = vec![comps[i].0.clone()];
        let ea = sum(&comps[i].1);
        for j in (i + 1)..comps.len() {
            if used[j]
                || comps[j].0.len() != comps[i].0.len()
                || comps[j].1.len() != comps[i].1.len()
            {
                continue;
            }
            let (pa, pb) = (&comps[i].0, &comps[j].0);
            let mapped = ea.map(&|e| match e {
                Expr::Param(q) => pa.iter().position(|x| x == q).map(|k| Expr::Param(pb[k])),
                _ => None,
            });
            if algebra::is_zero(&simplify::sub(mapped, sum(&comps[j].1))) {
                blocks.push(pb.clone());
                used[j] = true;
            }
        }
        if blocks.len() < 2 {
            continue;
        }
        let first = &blocks[0];
        let pick = |kinds: &[RoleKind]| {
            first
                .iter()
                .position(|&q| scales.get(q).is_some_and(|s| kinds.contains(&s.kind)))
        };
        let choice = pick(&[RoleKind::Location])
            .map(|k| (k, false, false))
            .or_else(|| pick(&[RoleKind::Rate]).map(|k| (k, false, true)))
            .or_else(|| pick(&[RoleKind::Period, RoleKind::InverseScale]).map(|k| (k, true, true)));
        if let Some((key, descending, magnitude)) = choice {
            out.push(Exchange {
                blocks,
                key,
                descending,
                magnitude,
            });
        }
    }
    out
}

/// Relabels `p` (and the per-parameter sentences) into the canonical order.
pub fn canonical(ex: &[Exchange], names: &[String], p: &mut [f64], why: &mut [String]) {
    for e in ex {
        let keyval = |b: &Vec<usize>| {
            let v = p.get(b[e.key]).copied().unwrap_or(f64::NAN);
            let v = if e.magnitude { v.abs() } else { v };
            if e.descending {
                -v
            } else {
                v
            }
        };
        let mut order: Vec<usize> = (0..e.blocks.len()).collect();
        order.sort_by(|&a, &b| keyval(&e.blocks[a]).total_cmp(&keyval(&e.blocks[b])));
        if order.iter().enumerate().all(|(i, &o)| i == o) {
            continue;
        }
        let old_p: Vec<f64> = p.to_vec();
        let old_w: Vec<String> = why.to_vec();
        // rename map: old parameter → new parameter
        let mut rename: Vec<(usize, usize)> = Vec::new();
        for (slot, &src) in order.iter().enumerate() {
            for (k, &to) in e.blocks[slot].iter().enumerate() {
                let from = e.blocks[src][k];
                rename.push((from, to));
            }
        }
        for &(from, to) in &rename {
            if let (Some(v), Some(slot)) = (old_p.get(from), p.get_mut(to)) {
                *slot = *v;
            }
            if let (Some(w), Some(slot)) = (old_w.get(from), why.get_mut(to)) {
                *slot = rename_words(w, names, &rename);
            }
        }
    }
}

/// Replaces whole-word parameter names in a sentence (simultaneously).
fn rename_words(s: &str, names: &[String], rename: &[(usize, usize)]) -> String {
    let mut out = String::new();
    let mut word = String::new();
    let flush = |word: &mut String, out: &mut String| {
        if !word.is_empty() {
            let rep = rename
                .iter()
                .find(|(f, _)| names.get(*f).is_some_and(|n| n == word))
                .and_then(|(_, t)| names.get(*t));
            out.push_str(rep.map(|r| r.as_str()).unwrap_or(word));
            word.clear();
        }
    };
    for c in s.chars() {
        if c.is_alphanumeric() || c == '_' {
            word.push(c);
        } else {
            flush(&mut word, &mut out);
            out.push(c);
        }
    }
    flush(&mut word, &mut out);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::problem::Problem;
    use crate::infer::scales::param_scales;
    use crate::symbolic::roles::roles;

    #[test]
    fn sums_of_exponentials_are_ordered_by_rate() {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new("a1*exp(-k1*x) + a2*exp(-k2*x) + c", &cols, None).unwrap();
        let x: Vec<f64> = (0..10).map(|i| i as f64).collect();
        let pr = Problem::from_columns(m.clone(), vec![x.clone()], x).unwrap();
        let sc = param_scales(&pr, &roles(&m));
        let ex = exchangeable(&m, &sc);
        assert_eq!(ex.len(), 1);
        // params: a1, a2, c, k1, k2
        let mut p = vec![1.0, 2.0, 0.5, 3.0, 0.1];
        let mut why: Vec<String> = ["a1 from x", "a2 from y", "c", "k1: rate", "k2: rate"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        canonical(&ex, &m.params, &mut p, &mut why);
        assert_eq!(p, vec![2.0, 1.0, 0.5, 0.1, 3.0]);
        assert_eq!(why[0], "a1 from y");
        assert_eq!(why[3], "k1: rate");
    }
}
