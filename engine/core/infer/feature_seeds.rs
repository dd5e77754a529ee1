//! Values read off the data's features for the parameters of bump and
//! oscillation terms (design note §4): peaks and shoulders give the centres
//! and half-widths of bump terms, the periodogram (Lomb 1976; Scargle 1982)
//! the periods of oscillation terms. Each seed fixes some nonlinear
//! parameters so that the rest fit within a low-dimensional scan.

use super::draft::num;
use super::roots::solve_for;
use super::scales::ParamScale;
use crate::features::{DataFeatures, XAxis, YTransform};
use crate::symbolic::terms::{terms, BumpKind, Shape};
use crate::symbolic::{Expr, Model};

/// Some parameters fixed from features, with the evidence.
#[derive(Debug, Clone, Default)]
pub struct Seed {
    /// (parameter, value).
    pub values: Vec<(usize, f64)>,
    /// (parameter, derivation sentence).
    pub why: Vec<(usize, String)>,
    /// Where the values came from ("features", "limits").
    pub source: &'static str,
}

/// A feature that can place a bump: centre, half width at half maximum (if measured), prominence.
#[derive(Debug, Clone)]
struct BumpFeature {
    centre: f64,
    hwhm: Option<f64>,
    prominence: f64,
    text: String,
}

/// Most seeds returned.
const MAX_SEEDS: usize = 24;

/// Seeds for the model's bump and oscillation terms from the features of the
/// first predictor. `typical` holds every parameter's typical value.
pub fn feature_seeds(
    model: &Model,
    features: &DataFeatures,
    scales: &[ParamScale],
    typical: &[f64],
    nonlinear: &[usize],
) -> Vec<Seed> {
    let ts = terms(model, 0);
    let Some(view) = features.view(XAxis::Linear, YTransform::Identity) else {
        return Vec::new();
    };
    let f = &view.features;
    // bump terms whose centre and width involve nonlinear parameters
    struct BumpTerm {
        kind: BumpKind,
        centre: Expr,
        width: Expr,
        cp: Option<usize>,
        wp: Option<usize>,
    }
    let mut bumps = Vec::new();
    let mut oscill: Vec<(Expr, usize)> = Vec::new();
    for t in &ts {
        match &t.shape {
            Shape::Bump {
                bump,
                centre,
                width,
                centre_params,
                width_params,
            } => {
                let pick = |ps: &[usize], other: &[usize]| {
                    ps.iter()
                        .copied()
                        .find(|q| nonlinear.contains(q) && !other.contains(q))
                        .or_else(|| ps.iter().copied().find(|q| nonlinear.contains(q)))
                };
                let cp = pick(centre_params, width_params);
                let wp = pick(width_params, &cp.into_iter().collect::<Vec<_>>())
                    .filter(|q| Some(*q) != cp);
                bumps.push(BumpTerm {
                    kind: *bump,
                    centre: centre.clone(),
                    width: width.clone(),
                    cp,
                    wp,
                });
            }
            Shape::Oscillation {
                period,
                period_params,
                ..
            } => {
                if let Some(q) = period_params
                    .iter()
                    .copied()
                    .find(|q| nonlinear.contains(q))
                {
                    if !oscill.iter().any(|(_, r)| *r == q) {
                        oscill.push((period.clone(), q));
                    }
                }
            }
            _ => {}
        }
    }
    let mut seeds: Vec<Seed> = Vec::new();
    // ---- bumps: peaks, troughs and shoulders, most prominent first
    if !bumps.is_empty() {
        let mut feats: Vec<BumpFeature> = Vec::new();
        for pk in &f.peaks.peaks {
            feats.push(BumpFeature {
                centre: pk.centre,
                hwhm: pk.hwhm,
                prominence: pk.prominence.abs(),
                text: format!("peak of y at x ≈ {}", num(pk.centre)),
            });
        }
        for pk in &f.peaks.troughs {
            feats.push(BumpFeature {
                centre: pk.centre,
                hwhm: pk.hwhm,
                prominence: pk.prominence.abs(),
                text: format!("trough of y at x ≈ {}", num(pk.centre)),
            });
        }
        feats.sort_by(|a, b| b.prominence.total_cmp(&a.prominence));
        let mut shoulders: Vec<BumpFeature> = f
            .peaks
            .peak_shoulders
            .iter()
            .chain(&f.peaks.trough_shoulders)
            .map(|s| BumpFeature {
                centre: s.position,
                hwhm: None,
                prominence: s.height.abs(),
                text: format!("shoulder of y at x ≈ {}", num(s.position)),
            })
            .collect();
        shoulders.sort_by(|a, b| b.prominence.total_cmp(&a.prominence));
        feats.truncate(bumps.len() + 1);
        feats.extend(shoulders.into_iter().take(2));
        let host_hwhm = feats.iter().find_map(|b| b.hwhm);
        // assignments of features to bump terms (ordered, distinct), first ones first
        let k = bumps.len().min(feats.len());
        let mut assignments: Vec<Vec<BumpFeature>> = Vec::new();
        let mut perms = Vec::new();
        permutations(feats.len(), k, &mut Vec::new(), &mut perms, 12);
        for a in perms {
            assignments.push(a.iter().map(|&i| feats[i].clone()).collect());
        }
        // an asymmetric peak hides a second component on its wider side (peak
        // resolution by the practitioner's eye): split it in two
        if bumps.len() >= 2 {
            let all: Vec<&crate::features::Peak> =
                f.peaks.peaks.iter().chain(&f.peaks.troughs).collect();
            for pk in all {
                let (Some(l), Some(r)) = (pk.hwhm_left, pk.hwhm_right) else {
                    continue;
                };
                let (narrow, wide) = (l.min(r), l.max(r));
                if !(wide > 1.5 * narrow && narrow > 0.0) {
                    continue;
                }
                let dir = if r > l { 1.0 } else { -1.0 };
                let delta = wide - narrow;
                for (c1, c2) in [
                    (pk.centre, pk.centre + dir * delta),
                    (pk.centre - 0.5 * dir * delta, pk.centre + 0.5 * dir * delta),
                ] {
                    let mk = |c: f64, part: &str| {
                        BumpFeature {
                        centre: c,
                        hwhm: Some(narrow),
                        prominence: pk.prominence.abs(),
                        text: format!(
                            "{part} component of the asymmetric peak at x ≈ {} (half widths {} and {}) placed at x ≈ {}",
                            num(pk.centre),
                            num(l),
                            num(r),
                            num(c)
                        ),
                    }
                    };
                    let (a, b) = (mk(c1, "main"), mk(c2, "second"));
                    assignments.push(vec![a.clone(), b.clone()]);
                    assignments.push(vec![b, a]);
                }
            }
        }
        for a in assignments {
            let mut s = Seed {
                source: "features",
                ..Seed::default()
            };
            for (bi, ft) in a.iter().enumerate() {
                let Some(b) = bumps.get(bi) else { break };
                if let Some(cp) = b.cp {
                    if let Some(v) = solve_for(&b.centre, cp, ft.centre, typical, &scales[cp]) {
                        s.values.push((cp, v));
                        s.why.push((
                            cp,
                            format!("centre of the bump term = {} ⇒ {}", ft.text, num(v)),
                        ));
                    }
                }
                let hw = ft.hwhm.or(host_hwhm.map(|h| 0.5 * h));
                if let (Some(wp), Some(h)) = (b.wp, hw) {
                    // width expression is σ for Gaussian terms (HWHM = σ·√(2 ln 2)), the HWHM for Lorentzians
                    let (target, how) = match b.kind {
                        BumpKind::Gaussian => (
                            h / (2.0 * std::f64::consts::LN_2).sqrt(),
                            "half width at half maximum = σ·√(2 ln 2)",
                        ),
                        BumpKind::Lorentzian => (h, "half width at half maximum"),
                    };
                    let mut probe = typical.to_vec();
                    for (q, v) in &s.values {
                        probe[*q] = *v;
                    }
                    if let Some(v) = solve_for(&b.width, wp, target, &probe, &scales[wp]) {
                        s.values.push((wp, v));
                        s.why.push((
                            wp,
                            format!(
                                "width of the bump term from the {} (≈ {}; {how}) ⇒ {}",
                                ft.text,
                                num(h),
                                num(v)
                            ),
                        ));
                    }
                }
            }
            if !s.values.is_empty() {
                seeds.push(s);
            }
        }
    }
    // ---- oscillations: dominant periods
    if !oscill.is_empty() && !f.periods.is_empty() {
        let periods: Vec<f64> = f.periods.iter().take(5).map(|p| p.period).collect();
        let k = oscill.len().min(periods.len());
        let mut assignments = Vec::new();
        permutations(periods.len(), k, &mut Vec::new(), &mut assignments, 24);
        let base_seeds = if seeds.is_empty() {
            vec![Seed {
                source: "features",
                ..Seed::default()
            }]
        } else {
            seeds.clone()
        };
        let mut out = Vec::new();
        for b in &base_seeds {
            for a in &assignments {
                let mut s = b.clone();
                for (oi, &pi) in a.iter().enumerate() {
                    let (expr, q) = (&oscill[oi].0, oscill[oi].1);
                    if let Some(v) = solve_for(expr, q, periods[pi], typical, &scales[q]) {
                        s.values.push((q, v));
                        s.why.push((
                            q,
                            format!(
                                "period of the oscillating term = dominant period {} of the periodogram ⇒ {}",
                                num(periods[pi]),
                                num(v)
                            ),
                        ));
                    }
                }
                if !s.values.is_empty() {
                    out.push(s);
                }
            }
        }
        seeds = out;
    }
    seeds.truncate(MAX_SEEDS);
    seeds
}

/// Ordered selections of `k` distinct items out of `n` (at most `cap`).
fn permutations(n: usize, k: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>, cap: usize) {
    if out.len() >= cap {
        return;
    }
    if cur.len() == k {
        out.push(cur.clone());
        return;
    }
    for i in 0..n {
        if !cur.contains(&i) {
            cur.push(i);
            permutations(n, k, cur, out, cap);
            cur.pop();
        }
    }
}
