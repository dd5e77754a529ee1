//! Global search from nothing on the NIST StRD nonlinear regression suite
//! (NIST Statistical Reference Datasets, https://www.itl.nist.gov/div898/strd/):
//! (a) foothold — inferred starts plus the multistart search — against
//! (b) plain random multistart — uniform / log-uniform random starts in a broad
//! box — with the same Levenberg–Marquardt options and the SAME number of local
//! fits. A problem is solved when the best minimum has every parameter within
//! LRE ≥ 4 of the certified values (StRD methodology; `strd::min_lre`).
//!
//! Run briefly: `cargo bench --bench nist_search` (optionally
//! `-- <local fits per problem>`, default 24). From a worktree the files are
//! not at `../shared/nist-strd`: set `FOOTHOLD_STRD_DIR=/work/shared/nist-strd`.

#[path = "../tests/common/strd.rs"]
mod strd;

use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::search::symmetry::{apply, group};
use foothold::search::{find_sign_flips, find_symmetries, search, ParamScale, SearchOptions};
use foothold::symbolic::Model;
use rayon::prelude::*;
use std::time::{Duration, Instant};

/// Starting-value inference for one problem: ranked candidate starts and each
/// parameter's natural scale.
///
/// The inferred candidates and each parameter's natural scale, as the `fit`
/// command uses them (`cli::auto_start`).
fn inferred_starts(problem: &Problem) -> (Vec<Vec<f64>>, Vec<ParamScale>, bool) {
    match foothold::infer::infer(problem, &Default::default()) {
        Ok(inf) => {
            let cands = inf.candidates.iter().map(|c| c.params.clone()).collect();
            let scales = inf
                .scales
                .iter()
                .zip(&inf.start)
                .map(|(r, s)| foothold::cli::auto_start::scale_from_range(r, *s))
                .collect();
            (cands, scales, true)
        }
        Err(_) => (Vec::new(), Vec::new(), false),
    }
}

/// The certified arctan model assumes a branch of arctan in (0, π): with the
/// principal branch the same optimum has b1 smaller by exactly 1 (see
/// tests/nist_given_starts.rs). Benchmarks may name reference problems; the engine may not.
fn align_branch(name: &str, est: &mut [f64], cert: &[f64]) {
    if name == "Roszman1" && (est[0] + 1.0 - cert[0]).abs() < (est[0] - cert[0]).abs() {
        est[0] += 1.0;
    }
}

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
            align_branch(name, &mut e, cert);
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

struct Row {
    name: &'static str,
    lre_a: f64,
    time_a: Duration,
    fits_a: usize,
    lre_b: f64,
    time_b: Duration,
    fits_b: usize,
}

fn main() {
    let fits: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(24);
    if strd::strd_dir().is_none() {
        strd::announce_missing();
        return;
    }
    let lm = LmOptions::default();
    let mut rows = Vec::new();
    let mut wired = true;
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
        let names = model.params.clone();
        let symmetries = find_symmetries(&model);
        let images = group(&symmetries, names.len());
        let flips = find_sign_flips(&model);
        let Ok(problem) = Problem::from_columns(model, x, p.column("y")) else {
            eprintln!("{name}: data do not make a problem");
            continue;
        };

        // (a) foothold: inference + search.
        let t = Instant::now();
        let (cands, scales, inferred) = inferred_starts(&problem);
        wired &= inferred;
        let opts = SearchOptions {
            starts: fits,
            seed: 1,
            lm: lm.clone(),
            sign_flips: flips.clone(),
            ..Default::default()
        };
        let out = search(&problem, &names, &cands, &scales, &symmetries, &opts);
        let time_a = t.elapsed();
        let lre_a = out
            .minima
            .first()
            .map(|m| lre_of(name, &m.params, &p.certified, &images, &flips))
            .unwrap_or(0.0);

        // (b) plain random multistart, same number of local fits.
        let t = Instant::now();
        let mut state = 0x5EED_0000_0000_0001u64;
        let starts: Vec<Vec<f64>> = (0..out.candidates_tried)
            .map(|_| random_start(names.len(), &mut state))
            .collect();
        let best = starts
            .par_iter()
            .map(|s| levenberg_marquardt(&problem, s, &lm))
            .filter(|r| r.converged && r.ssr.is_finite())
            .map(|r| (r.ssr, r.params))
            .min_by(|a, b| a.0.total_cmp(&b.0));
        let time_b = t.elapsed();
        let lre_b = best
            .map(|(_, e)| lre_of(name, &e, &p.certified, &images, &flips))
            .unwrap_or(0.0);
        rows.push(Row {
            name,
            lre_a,
            time_a,
            fits_a: out.candidates_tried,
            lre_b,
            time_b,
            fits_b: starts.len(),
        });
    }

    if !wired {
        println!(
            "NOTE: inference not wired yet (see inferred_starts): column (a) is the search alone."
        );
    }
    println!(
        "{:<10} {:>8} {:>10} {:>8} {:>10}",
        "problem", "(a) LRE", "(a) time", "(b) LRE", "(b) time"
    );
    for r in &rows {
        let ok = |l: f64| if l >= 4.0 { "" } else { "*" };
        println!(
            "{:<10} {:>7.1}{} {:>9.3}s {:>7.1}{} {:>9.3}s",
            r.name,
            r.lre_a,
            ok(r.lre_a),
            r.time_a.as_secs_f64(),
            r.lre_b,
            ok(r.lre_b),
            r.time_b.as_secs_f64()
        );
    }
    let solved = |f: &dyn Fn(&Row) -> f64| rows.iter().filter(|r| f(r) >= 4.0).count();
    let total = |f: &dyn Fn(&Row) -> Duration| rows.iter().map(f).sum::<Duration>().as_secs_f64();
    println!("(* = not solved: LRE < 4)");
    println!(
        "(a) foothold:        solved {}/{}, local fits {}, wall time {:.2}s",
        solved(&|r| r.lre_a),
        rows.len(),
        rows.iter().map(|r| r.fits_a).sum::<usize>(),
        total(&|r| r.time_a)
    );
    println!(
        "(b) random multistart: solved {}/{}, local fits {}, wall time {:.2}s",
        solved(&|r| r.lre_b),
        rows.len(),
        rows.iter().map(|r| r.fits_b).sum::<usize>(),
        total(&|r| r.time_b)
    );
}
