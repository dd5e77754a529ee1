//! A candidate start in the making: full parameter vector, its residual sum of
//! squares on the original problem, the strategy that produced it and one
//! derivation sentence per parameter; ranking keeps the distinct best ones.

use crate::number_text::format_number;

/// A candidate start with how each value was obtained.
#[derive(Debug, Clone)]
pub struct Draft {
    /// Parameters (model order).
    pub p: Vec<f64>,
    /// Residual sum of squares of the original problem at `p`.
    pub ssr: f64,
    /// Strategy name.
    pub strategy: String,
    /// Derivation sentence per parameter (empty: filled later).
    pub why: Vec<String>,
}

/// True when two parameter vectors agree to a relative `tol` in every entry.
pub fn same_point(a: &[f64], b: &[f64], tol: f64) -> bool {
    a.iter().zip(b).all(|(x, y)| {
        let s = x.abs().max(y.abs());
        s == 0.0 || (x - y).abs() <= tol * s
    })
}

/// Sorts by ssr (non-finite last) and keeps at most `max` distinct drafts.
pub fn rank(mut drafts: Vec<Draft>, max: usize) -> Vec<Draft> {
    drafts.retain(|d| d.p.iter().all(|v| v.is_finite()));
    drafts.sort_by(|a, b| {
        a.ssr
            .total_cmp(&b.ssr)
            .then_with(|| a.strategy.cmp(&b.strategy))
    });
    let mut out: Vec<Draft> = Vec::new();
    for d in drafts {
        if out.len() >= max {
            break;
        }
        // the same point, or the same fit from a degenerate point, counts once
        if !out
            .iter()
            .any(|o| same_point(&o.p, &d.p, 1e-3) || (o.ssr - d.ssr).abs() <= 1e-10 * o.ssr.abs())
        {
            out.push(d);
        }
    }
    out
}

/// A number for a derivation sentence (5 significant digits).
pub fn num(v: f64) -> String {
    format_number(v, 5)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(p: Vec<f64>, ssr: f64) -> Draft {
        Draft {
            p,
            ssr,
            strategy: "t".into(),
            why: Vec::new(),
        }
    }

    #[test]
    fn ranking_sorts_and_merges_near_duplicates() {
        let r = rank(
            vec![
                d(vec![1.0, 2.0], 3.0),
                d(vec![1.0, 2.0000001], 1.0),
                d(vec![5.0, 2.0], 2.0),
                d(vec![f64::NAN, 2.0], 0.0),
            ],
            8,
        );
        assert_eq!(r.len(), 2);
        assert_eq!(r[0].ssr, 1.0);
        assert_eq!(r[1].p, vec![5.0, 2.0]);
    }
}
