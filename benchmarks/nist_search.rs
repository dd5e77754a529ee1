//! Global search from nothing on the NIST StRD nonlinear regression suite
//! (NIST Statistical Reference Datasets, https://www.itl.nist.gov/div898/strd/):
//! (a) foothold as `fit` runs it with no starts — inference, the multistart
//! search over the inferred candidates, one final local fit from the best
//! proper minimum — against plain random multistart (random starts in a broad
//! box, magnitude log-uniform on [1e-3, 1e3], either sign) with the same
//! Levenberg–Marquardt options: (b) with the SAME number of local fits as (a),
//! (c) with four times as many. A problem is solved when the result has every
//! parameter within LRE ≥ 4 of the certified values (StRD methodology;
//! `strd::min_lre`). Problems run one after another; each search uses both
//! cores (rayon). Wall times are for the whole suite.
//!
//! Run: `cargo bench --bench nist_search` (optionally `-- <local fits per
//! problem>`, default 16, as in tests/nist_no_starts.rs; `fit` itself uses 64).
//! From a worktree the files are not at `../shared/nist-strd`: set
//! `FOOTHOLD_STRD_DIR=/work/shared/nist-strd`.

#[path = "../tests/common/strd.rs"]
mod strd;

use foothold::auto_start::starts_with_options;
use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::search::symmetry::{apply, group};
use foothold::search::{find_sign_flips, find_symmetries, SearchOptions};
use foothold::symbolic::Model;
use rayon::prelude::*;
use std::time::{Duration, Instant};

/// Best LRE over the mirror images of `est` under the model's symmetries: the
/// search reports minima in a canonical order of interchangeable terms and
/// with canonical signs, which need not be the certified ones.
fn lre_of(
    name: &str,
    est: &[f64],
    cert: &[f64],
    images: &[Vec<usize>],
    flips: &[Vec<usize>],
) -> f64 {
    let mut best: f64 = 0.0;
    for mask in 0..(1usize << flips.len().min(10)) {
        let mut signed = est.to_vec();
        for (k, set) in flips.iter().enumerate().take(10) {
            if mask >> k & 1 == 1 {
                for &i in set {
                    signed[i] = -signed[i];
                }
            }
        }
        for g in images {
            let mut e = apply(g, &signed);
            strd::align_branch(name, &mut e, cert);
            best = best.max(strd::min_lre(&e, cert));
        }
    }
    best
}

/// A start drawn from a broad box: magnitude log-uniform on [1e-3, 1e3], either sign.
fn random_start(n: usize, state: &mut u64) -> Vec<f64> {
    let mut next = || foothold::search::rng::splitmix64(state) as f64 / u64::MAX as f64;
    (0..n)
        .map(|_| {
            let m = 10f64.powf(-3.0 + 6.0 * next());
            if next() < 0.5 {
                -m
            } else {
                m
            }
        })
        .collect()
}

/// One method's result on one problem.
#[derive(Clone, Copy)]
struct Cell {
    lre: f64,
    time: Duration,
    fits: usize,
}

/// Plain random multistart: `n` random starts, each fitted, best ssr kept.
fn random_multistart(problem: &Problem, n: usize, np: usize, lm: &LmOptions) -> Option<Vec<f64>> {
    let mut state = 0x5EED_0000_0000_0001u64;
    let starts: Vec<Vec<f64>> = (0..n).map(|_| random_start(np, &mut state)).collect();
    starts
        .par_iter()
        .map(|s| levenberg_marquardt(problem, s, lm))
        .filter(|r| r.converged && r.ssr.is_finite())
        .map(|r| (r.ssr, r.params))
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, p)| p)
}

fn main() {
    let fits: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(16);
    if strd::require_dir().is_none() {
        return;
    }
    let lm = LmOptions::default();
    let mut rows: Vec<(&str, [Cell; 3])> = Vec::new();
    for name in strd::PROBLEMS {
        let Some(p) = strd::load(name) else {
            eprintln!("cannot read {name}.dat");
            continue;
        };
        let Ok(model) = Model::new(strd::formula(name), &p.columns, Some("y")) else {
            eprintln!("{name}: formula does not bind");
            continue;
        };
        let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
        let np = model.params.len();
        let images = group(&find_symmetries(&model), np);
        let flips = find_sign_flips(&model);
        let Ok(problem) = Problem::from_columns(model, x, p.column("y")) else {
            eprintln!("{name}: data do not make a problem");
            continue;
        };
        let score = |est: Option<Vec<f64>>| {
            est.map(|e| lre_of(name, &e, &p.certified, &images, &flips))
                .unwrap_or(0.0)
        };

        // (a) foothold, as `fit` with no starts.
        let t = Instant::now();
        let opts = SearchOptions {
            starts: fits,
            seed: 1,
            lm: lm.clone(),
            ..Default::default()
        };
        let (est, tried) = match starts_with_options(&problem, &opts) {
            Ok((start, (tried, _))) => (
                Some(levenberg_marquardt(&problem, &start, &lm).params),
                tried + 1,
            ),
            Err(e) => {
                eprintln!("{name}: {e}");
                (None, 0)
            }
        };
        let a = Cell {
            time: t.elapsed(),
            lre: score(est),
            fits: tried,
        };

        // (b), (c) plain random multistart with as many, and four times as many, local fits.
        let random = |n: usize| {
            let t = Instant::now();
            let est = random_multistart(&problem, n, np, &lm);
            Cell {
                time: t.elapsed(),
                lre: score(est),
                fits: n,
            }
        };
        let b = random(a.fits);
        let c = random(4 * a.fits);
        rows.push((name, [a, b, c]));
    }

    println!(
        "{:<10} {:>8} {:>9} {:>8} {:>9} {:>8} {:>9}",
        "problem", "(a) LRE", "(a) time", "(b) LRE", "(b) time", "(c) LRE", "(c) time"
    );
    for (name, cells) in &rows {
        print!("{name:<10}");
        for c in cells {
            let mark = if c.lre >= 4.0 { " " } else { "*" };
            print!(" {:>7.1}{mark} {:>8.3}s", c.lre, c.time.as_secs_f64());
        }
        println!();
    }
    println!("(* = not solved: LRE < 4)");
    let labels = [
        "(a) foothold: inference + search + final fit",
        "(b) random multistart, same local fits",
        "(c) random multistart, 4x the local fits",
    ];
    for (k, label) in labels.iter().enumerate() {
        let solved = rows.iter().filter(|r| r.1[k].lre >= 4.0).count();
        let fits: usize = rows.iter().map(|r| r.1[k].fits).sum();
        let wall: f64 = rows.iter().map(|r| r.1[k].time.as_secs_f64()).sum();
        let mean = rows.iter().map(|r| r.1[k].lre).sum::<f64>() / rows.len().max(1) as f64;
        println!(
            "{label:<45} solved {solved}/{}, mean LRE {mean:.2}, local fits {fits}, wall time {wall:.2}s",
            rows.len()
        );
    }
}
