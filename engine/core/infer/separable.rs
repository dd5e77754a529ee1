//! Separable least squares (Golub & Pereyra 1973) as a start finder: the
//! nonlinear parameters are scanned on grids set by their roles (at most three
//! jointly), the linear ones solved exactly at every grid point; features fix
//! the centres, widths and periods of bump and oscillation terms first when
//! there are more nonlinear parameters than a joint scan can take; shape
//! exponents that only bend the curve start at their neutral value (design
//! note §6). The grid's best distinct minima are cleaned up by block-coordinate
//! rescans and a short fit of the reduced problem in the nonlinear parameters.

use super::draft::{num, rank, Draft};
use super::feature_seeds::{feature_seeds, Seed};
use super::limit_seeds::limit_seeds;
use super::projection::Projector;
use super::scales::{global_grid, local_grid, period_points, role_words, ParamScale};
use super::scan::{grid_scan, line_scan, points_per_dim, Dim};
use crate::features::DataFeatures;
use crate::fit::Residuals;
use crate::symbolic::roles::RoleKind;
use nalgebra::DMatrix;

/// Most grid minima carried into the clean-up.
const KEEP: usize = 4;
/// Iterations of the short reduced-problem fit.
const REFINE_ITERATIONS: usize = 40;

/// Candidate starts by separable least squares.
pub fn separable_starts(
    proj: &Projector,
    scales: &[ParamScale],
    features: &DataFeatures,
) -> Vec<Draft> {
    let model = &proj.problem.model;
    let np = model.n_params();
    let n = proj.n_rows().max(1);
    let nl: Vec<usize> = proj.sep.nonlinear.clone();
    let typical: Vec<f64> = scales.iter().map(|s| s.range.typical).collect();
    let names = &model.params;
    let linear_why = |why: &mut Vec<String>| {
        for &j in &proj.sep.linear {
            why[j] = format!(
                "{} enters linearly: solved exactly by least squares given the others",
                names[j]
            );
        }
    };
    if nl.is_empty() {
        let mut p = typical.clone();
        let ssr = proj.project(&mut p);
        let mut why = vec![String::new(); np];
        linear_why(&mut why);
        return vec![Draft {
            p,
            ssr,
            strategy: "linear least squares".into(),
            why,
        }];
    }
    // neutral shape exponents are held while the others are scanned
    let neutral: Vec<usize> = nl
        .iter()
        .copied()
        .filter(|&q| scales[q].neutral.is_some())
        .collect();
    let held_neutral: Vec<usize> = if neutral.len() < nl.len() {
        neutral
            .iter()
            .copied()
            .filter(|&q| neutral_keeps_others_alive(proj, &typical, q, &nl))
            .collect()
    } else {
        Vec::new()
    };
    // limits first, then the plain scan, then the features' assignments
    let mut seeds = limit_seeds(model, features, scales, &typical, &nl);
    seeds.push(Seed::default());
    seeds.extend(feature_seeds(model, features, scales, &typical, &nl));
    let budget = (400_000 / n).clamp(600, 8000);
    let mut drafts: Vec<Draft> = Vec::new();
    let n_seeded = seeds
        .iter()
        .filter(|s| !s.values.is_empty() && s.source == "features")
        .count();
    let seed_cap = if nl.len() - held_neutral.len() >= 2 {
        12
    } else {
        4
    };
    for seed in seeds.iter().take(seed_cap) {
        let mut base = typical.clone();
        for (q, v) in &seed.values {
            base[*q] = *v;
        }
        let fixed: Vec<usize> = seed.values.iter().map(|(q, _)| *q).collect();
        let mut free: Vec<usize> = nl
            .iter()
            .copied()
            .filter(|q| !held_neutral.contains(q) && !fixed.contains(q))
            .collect();
        free.sort_by_key(|&q| order_key(scales[q].kind));
        free.truncate(3);
        let k = free.len();
        let per = if seed.values.is_empty() {
            // features already place some candidates: the plain scan can be coarser
            points_per_dim(k, if n_seeded > 0 { budget / 2 } else { budget })
        } else {
            points_per_dim(k, budget / 6).min(50)
        };
        let dims: Vec<Dim> = free
            .iter()
            .map(|&q| {
                let m = if k == 1 && scales[q].kind == RoleKind::Period {
                    period_points(&scales[q], n, 600)
                } else {
                    per
                };
                Dim {
                    param: q,
                    values: global_grid(&scales[q], m),
                }
            })
            .collect();
        for gm in grid_scan(proj, &base, &dims, KEEP) {
            let mut why = vec![String::new(); np];
            linear_why(&mut why);
            for (q, s) in &seed.why {
                why[*q] = s.clone();
            }
            for d in &dims {
                why[d.param] = scan_sentence(names, scales, d, gm.p[d.param]);
            }
            for &q in &held_neutral {
                if let Some(nv) = &scales[q].neutral {
                    why[q] = nv.sentence.replace("{param}", &names[q]);
                }
            }
            for &q in &nl {
                if why[q].is_empty() {
                    why[q] = format!(
                        "{}: {} held at its typical value {} while the others were scanned",
                        names[q],
                        role_words(scales[q].kind),
                        num(gm.p[q])
                    );
                }
            }
            drafts.push(Draft {
                p: gm.p,
                ssr: gm.ssr,
                strategy: if seed.values.is_empty() {
                    "separable least squares".into()
                } else {
                    format!("{} + separable least squares", seed.source)
                },
                why,
            });
        }
    }
    let best = rank(drafts.clone(), KEEP);
    let movable: Vec<usize> = nl
        .iter()
        .copied()
        .filter(|q| !held_neutral.contains(q))
        .collect();
    for (rank_i, d) in best.into_iter().enumerate() {
        let mut p = d.p.clone();
        let mut why = d.why.clone();
        if nl.len() > 1 {
            let before = p.clone();
            for round in 0..2 {
                for &q in &movable {
                    let values = if scales[q].kind == RoleKind::Period && round == 0 && rank_i == 0
                    {
                        global_grid(&scales[q], period_points(&scales[q], n, 400))
                    } else if round == 0 && rank_i == 0 {
                        // the best candidate looks over each parameter's whole range once
                        let mut v = global_grid(&scales[q], 60);
                        v.extend(local_grid(&scales[q], p[q], 25, 4.0));
                        v
                    } else {
                        let ratio = if round == 0 { 4.0 } else { 1.5 };
                        local_grid(&scales[q], p[q], 25, ratio)
                    };
                    line_scan(proj, &mut p, q, &values);
                }
            }
            for &q in &movable {
                if !same(before[q], p[q]) {
                    why[q] = format!(
                        "{}; block-coordinate rescans (one parameter at a time, the others held) moved it to {}",
                        why[q],
                        num(p[q])
                    );
                }
            }
        }
        let ssr_scan = proj.project(&mut p);
        drafts.push(Draft {
            p: p.clone(),
            ssr: ssr_scan,
            strategy: format!("{} + rescans", d.strategy),
            why: why.clone(),
        });
        let (q1, s1) = proj.refine(&p, &movable, REFINE_ITERATIONS);
        let why1 = refined_why(&why, &p, &q1, &movable);
        drafts.push(Draft {
            p: q1.clone(),
            ssr: s1,
            strategy: format!("{} + reduced fit", d.strategy),
            why: why1.clone(),
        });
        if !held_neutral.is_empty() {
            let (q2, s2) = proj.refine(&q1, &nl, REFINE_ITERATIONS);
            let why2 = refined_why(&why1, &q1, &q2, &nl);
            drafts.push(Draft {
                p: q2,
                ssr: s2,
                strategy: format!("{} + reduced fit with shape exponents", d.strategy),
                why: why2,
            });
        }
    }
    drafts
}

/// A neutral value is usable only when the model still depends on every other
/// nonlinear parameter there (an exponent 1 − 1/v at v = 1 would flatten a term).
fn neutral_keeps_others_alive(proj: &Projector, typical: &[f64], q: usize, nl: &[usize]) -> bool {
    let mut p = typical.to_vec();
    if !proj.project(&mut p).is_finite() {
        return true;
    }
    let pr = proj.problem;
    let mut j = DMatrix::zeros(pr.n_obs(), pr.n_params());
    pr.jacobian(&p, &mut j);
    let norms: Vec<f64> = (0..pr.n_params())
        .map(|c| j.column(c).norm() * p[c].abs().max(1e-300))
        .collect();
    let top = norms
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    nl.iter()
        .filter(|&&o| o != q)
        .all(|&o| norms[o].is_nan() || norms[o] > 1e-9 * top)
}

fn same(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

fn refined_why(why: &[String], from: &[f64], to: &[f64], params: &[usize]) -> Vec<String> {
    let mut w = why.to_vec();
    for &q in params {
        if !same(from[q], to[q]) {
            w[q] = format!(
                "{}; a short fit of the reduced (variable-projection) problem, linear parameters re-solved at every step, took it to {}",
                w[q],
                num(to[q])
            );
        }
    }
    w
}

/// Scan order: the parameters whose grids matter most go first.
fn order_key(k: RoleKind) -> usize {
    match k {
        RoleKind::Rate => 0,
        RoleKind::Period => 1,
        RoleKind::Location => 2,
        RoleKind::InverseScale => 3,
        RoleKind::Width => 4,
        RoleKind::Exponent => 5,
        _ => 6,
    }
}

fn scan_sentence(names: &[String], scales: &[ParamScale], d: &Dim, at: f64) -> String {
    let s = &scales[d.param];
    let r = &s.range;
    let spacing = if s.kind == RoleKind::Location {
        "dense over the data, log-spaced offsets beyond both ends".to_string()
    } else if r.log {
        format!(
            "log-spaced{}",
            if r.sign_free { ", both signs" } else { "" }
        )
    } else {
        "evenly spaced".to_string()
    };
    let (lo, hi) = d
        .values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        });
    let (lo, hi) = if r.log && r.sign_free {
        (r.lo, r.hi)
    } else {
        (lo, hi)
    };
    format!(
        "{}: {}; scanned {}…{} ({} values, {}); least residual sum of squares at {}",
        names[d.param],
        role_words(s.kind),
        num(lo),
        num(hi),
        d.values.len(),
        spacing,
        num(at)
    )
}
