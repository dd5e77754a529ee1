//! Ranking of minima: by sum of squares (values within 1e-9 relative count as
//! equal), then by the share of starts that reached them, then by median
//! iterations; a divergent minimum never ranks above a proper minimum whose sum
//! of squares is comparable (within 1 %).

use super::outcome::Minimum;
use std::cmp::Ordering;

/// Sums of squares within this relative difference are equal for ranking.
pub const SSR_TIE: f64 = 1e-9;
/// A proper minimum within this relative difference of a divergent one ranks above it.
pub const COMPARABLE: f64 = 1e-2;

fn ssr_key(s: f64) -> f64 {
    if s.is_nan() {
        f64::INFINITY
    } else {
        s
    }
}

/// Sorts `minima` best first and numbers them from 1.
pub fn rank(minima: &mut Vec<Minimum>) {
    let order = ranking(minima);
    let mut slots: Vec<Option<Minimum>> = minima.drain(..).map(Some).collect();
    for (k, &i) in order.iter().enumerate() {
        if let Some(mut m) = slots[i].take() {
            m.rank = k + 1;
            minima.push(m);
        }
    }
}

/// The ranking as a permutation: `ranking(m)[k]` is the index in `m` of the
/// minimum ranked k + 1.
pub fn ranking(minima: &[Minimum]) -> Vec<usize> {
    // Exact order by ssr first, then tie classes of consecutive near-equal sums.
    let mut idx: Vec<usize> = (0..minima.len()).collect();
    idx.sort_by(|&a, &b| {
        ssr_key(minima[a].ssr)
            .total_cmp(&ssr_key(minima[b].ssr))
            .then(a.cmp(&b))
    });
    let mut class = vec![0usize; idx.len()];
    let mut head = 0;
    for k in 1..idx.len() {
        let (h, s) = (ssr_key(minima[idx[head]].ssr), ssr_key(minima[idx[k]].ssr));
        let tied = s == h
            || (h.is_finite() && s.is_finite() && (s - h).abs() <= SSR_TIE * h.abs().max(s.abs()));
        if !tied {
            head = k;
        }
        class[k] = head;
    }
    let mut keyed: Vec<(usize, usize)> = class.into_iter().zip(idx).collect();
    keyed.sort_by(|&(ca, a), &(cb, b)| {
        let (ma, mb) = (&minima[a], &minima[b]);
        ca.cmp(&cb)
            .then_with(|| mb.share.total_cmp(&ma.share))
            .then_with(|| ma.iterations_median.total_cmp(&mb.iterations_median))
            .then_with(|| ssr_key(ma.ssr).total_cmp(&ssr_key(mb.ssr)))
            .then(a.cmp(&b))
    });
    let mut order: Vec<usize> = keyed.into_iter().map(|(_, i)| i).collect();

    // Demote each divergent minimum below the last comparable proper one.
    let comparable = |proper: f64, div: f64| {
        let (p, d) = (ssr_key(proper), ssr_key(div));
        p.is_finite() && (p <= d || (d.is_finite() && p - d <= COMPARABLE * d.abs()))
    };
    let proper = |i: usize| minima[i].divergent.is_empty();
    let mut k = 0;
    while k < order.len() {
        if !proper(order[k]) {
            let d = minima[order[k]].ssr;
            let target = (k + 1..order.len())
                .rev()
                .find(|&j| proper(order[j]) && comparable(minima[order[j]].ssr, d));
            if let Some(j) = target {
                let m = order.remove(k);
                order.insert(j, m);
                continue;
            }
        }
        k += 1;
    }
    order
}

/// Orders two sums of squares as the ranking does (near-equal ones compare equal).
pub fn compare_ssr(a: f64, b: f64) -> Ordering {
    let (a, b) = (ssr_key(a), ssr_key(b));
    if a == b || (a.is_finite() && b.is_finite() && (a - b).abs() <= SSR_TIE * a.abs().max(b.abs()))
    {
        Ordering::Equal
    } else {
        a.total_cmp(&b)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(ssr: f64, share: f64, it: f64, div: bool) -> Minimum {
        Minimum {
            rank: 0,
            params: vec![ssr],
            ssr,
            share,
            iterations_median: it,
            condition: 1.0,
            divergent: if div { vec![0] } else { vec![] },
            start: vec![],
            reached_by: 1,
            credited: 0,
            valley: None,
        }
    }

    #[test]
    fn order_by_ssr_then_share_then_iterations() {
        let mut v = vec![
            m(2.0, 0.9, 5.0, false),
            m(1.0, 0.1, 9.0, false),
            m(1.0 + 1e-12, 0.5, 9.0, false),
        ];
        rank(&mut v);
        assert_eq!(
            v.iter().map(|x| x.share).collect::<Vec<_>>(),
            vec![0.5, 0.1, 0.9]
        );
        assert_eq!(v.iter().map(|x| x.rank).collect::<Vec<_>>(), vec![1, 2, 3]);
        let mut w = vec![m(1.0, 0.5, 9.0, false), m(1.0, 0.5, 4.0, false)];
        rank(&mut w);
        assert_eq!(w[0].iterations_median, 4.0);
        assert_eq!(compare_ssr(1.0, 1.0 + 1e-12), Ordering::Equal);
        assert_eq!(compare_ssr(1.0, f64::NAN), Ordering::Less);
    }

    #[test]
    fn divergent_minimum_yields_to_comparable_proper_one() {
        // Divergent slightly lower (0.5 %): the proper one goes first.
        let mut v = vec![
            m(1.0, 0.5, 5.0, true),
            m(1.005, 0.2, 5.0, false),
            m(3.0, 0.3, 5.0, false),
        ];
        rank(&mut v);
        assert_eq!(v[0].ssr, 1.005);
        assert!(!v[1].divergent.is_empty());
        assert_eq!(v[2].ssr, 3.0);
        // Divergent much lower: it stays first, as the finding it is.
        let mut w = vec![m(3.0, 0.5, 5.0, false), m(1.0, 0.5, 5.0, true)];
        rank(&mut w);
        assert_eq!(w[0].ssr, 1.0);
        // Several divergent ones all yield.
        let mut u = vec![
            m(1.0, 0.5, 5.0, true),
            m(1.001, 0.5, 5.0, true),
            m(1.002, 0.1, 5.0, false),
        ];
        rank(&mut u);
        assert!(u[0].divergent.is_empty());
        assert_eq!(u.iter().map(|x| x.rank).collect::<Vec<_>>(), vec![1, 2, 3]);
    }
}
