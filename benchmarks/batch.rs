//! A batch of short curves as `fit --by` meets them: 1,000 and 10,000 invented
//! four-parameter logistic curves of 24 rows each, fitted with no starts
//! (inference and the adaptive multistart) and from given rough starts, on 1
//! and 2 threads (release build). Prints curves per second, CPU ms per curve,
//! how many fits converged to the best minimum known for the curve, and the
//! ratio no-starts / with-starts. Targets (issue 13): ≤ 1 ms CPU per curve
//! with no starts, ratio ≤ 8×.
//! `cargo bench --bench batch [-- N...]` (curve counts default to 1000 10000).

#[path = "common/measure.rs"]
mod measure;

use foothold::auto_start::starts_and_counts;
use foothold::cli::prepare::run_fit;
use foothold::fit::problem::Problem;
use foothold::symbolic::Model;
use measure::{cpu_seconds, Rng};
use rayon::prelude::*;
use std::time::Instant;

const FORMULA: &str = "y = bottom + (top - bottom)/(1 + exp(slope*(mid - x)))";

/// Curve `i`: 12 log-doses from −3 to 3, two replicates; bottom ≈ 5,
/// top ≈ 100, mid in [−1, 1], slope in [0.8, 2.5], noise sd 2 (invented).
fn curve(i: usize) -> (Problem, Vec<f64>) {
    let mut r = Rng::new(0x5EED_0000 + i as u64);
    let bottom = 5.0 + 3.0 * r.uniform();
    let top = 90.0 + 20.0 * r.uniform();
    let mid = -1.0 + 2.0 * r.uniform();
    let slope = 0.8 + 1.7 * r.uniform();
    let mut x = Vec::with_capacity(24);
    let mut y = Vec::with_capacity(24);
    for k in 0..24 {
        let t = -3.0 + 6.0 * (k / 2) as f64 / 11.0;
        x.push(t);
        y.push(bottom + (top - bottom) / (1.0 + (slope * (mid - t)).exp()) + 2.0 * r.normal());
    }
    let cols = vec!["x".to_string(), "y".to_string()];
    let model = Model::new(FORMULA, &cols, None).expect("model");
    let order = model.params.clone();
    let pr = Problem::from_columns(model, vec![x], y).expect("problem");
    // rough starts a person would type: the plate's usual bottom/top, mid 0, slope 1
    let given: Vec<f64> = order
        .iter()
        .map(|p| match p.as_str() {
            "bottom" => 0.0,
            "top" => 100.0,
            "mid" => 0.0,
            _ => 1.0,
        })
        .collect();
    (pr, given)
}

/// Fits every curve on `threads` threads; (wall s, cpu s, ssr per curve,
/// converged count, local fits of the search per curve).
fn run(
    curves: &[(Problem, Vec<f64>)],
    threads: usize,
    given: bool,
) -> (f64, f64, Vec<f64>, usize, f64) {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("pool");
    let (c0, t0) = (cpu_seconds(), Instant::now());
    let out: Vec<(f64, bool, usize)> = pool.install(|| {
        curves
            .par_iter()
            .map(|(pr, g)| {
                let (start, tried) = if given {
                    (g.clone(), 0)
                } else {
                    match starts_and_counts(pr) {
                        Ok((s, (tried, _))) => (s, tried),
                        Err(_) => return (f64::INFINITY, false, 0),
                    }
                };
                let (res, _) = run_fit(pr, &start);
                (res.ssr, res.converged, tried)
            })
            .collect()
    });
    let (wall, cpu) = (t0.elapsed().as_secs_f64(), cpu_seconds() - c0);
    let conv = out.iter().filter(|o| o.1).count();
    let tried = out.iter().map(|o| o.2).sum::<usize>() as f64 / curves.len().max(1) as f64;
    (
        wall,
        cpu,
        out.into_iter().map(|o| o.0).collect(),
        conv,
        tried,
    )
}

fn main() {
    let mut counts: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    if counts.is_empty() {
        counts = vec![1000, 10_000];
    }
    println!(
        "{:>7} {:>8} {:>7}  {:>9} {:>12} {:>11} {:>10}",
        "curves", "starts", "threads", "wall s", "curves/s", "cpu ms/crv", "at best"
    );
    for &m in &counts {
        let curves: Vec<(Problem, Vec<f64>)> = (0..m).map(curve).collect();
        for threads in [1, 2] {
            let (w0, c0, s0, k0, fits) = run(&curves, threads, false);
            let (w1, c1, s1, k1, _) = run(&curves, threads, true);
            // "at best": converged to within 1e-6 (relative) of the lower ssr of the two ways
            let best: Vec<f64> = s0.iter().zip(&s1).map(|(a, b)| a.min(*b)).collect();
            let at = |s: &[f64]| {
                s.iter()
                    .zip(&best)
                    .filter(|(a, b)| **a <= **b * (1.0 + 1e-6))
                    .count()
            };
            for (label, w, c, s, k) in [("none", w0, c0, &s0, k0), ("given", w1, c1, &s1, k1)] {
                println!(
                    "{:>7} {:>8} {:>7}  {:>9.3} {:>12.0} {:>11.3} {:>10}",
                    m,
                    label,
                    threads,
                    w,
                    m as f64 / w,
                    1e3 * c / m as f64,
                    format!("{}/{m} ({k} conv.)", at(s))
                );
            }
            println!(
                "{:>7} no starts: {fits:.1} local fits of the search per curve",
                m
            );
            println!(
                "{:>7} ratio no-starts / with-starts ({} thread{}): wall {:.1}x, cpu {:.1}x",
                m,
                threads,
                if threads > 1 { "s" } else { "" },
                w0 / w1,
                c0 / c1
            );
        }
    }
    println!("targets: no starts <= 1 ms CPU per curve with the same success; ratio <= 8x");
}
