//! One long curve: inference and a fit with no starts on 10^4, 10^5 and 10^6
//! rows of an invented saturation curve y = a·(1 − e^(−k·x)) + c with noise
//! (release build). Each size runs in a fresh child process so its peak memory
//! (VmHWM) is its own. Targets (issue 13): infer < 0.05 s at 10^4, < 0.3 s at
//! 10^5, < 2 s at 10^6; fit < 4 s and memory < 400 MB at 10^6.
//! `cargo bench --bench big_curve [-- N...]` (sizes default to the three above).

#[path = "common/measure.rs"]
mod measure;

use foothold::auto_start::starts_for;
use foothold::cli::prepare::run_fit;
use foothold::fit::problem::Problem;
use foothold::infer::{infer, InferOptions};
use foothold::symbolic::Model;
use measure::{cpu_seconds, exponent, peak_mb, Rng};
use std::process::Command;
use std::time::Instant;

const FORMULA: &str = "y = a*(1-exp(-k*x)) + c";

/// The invented curve: a = 5, k = 0.7, c = 1, x uniform on [0, 10], noise sd 0.1.
fn problem(n: usize) -> Problem {
    let mut r = Rng::new(0xB16_C0FFEE ^ n as u64);
    let x: Vec<f64> = (0..n).map(|_| 10.0 * r.uniform()).collect();
    let y: Vec<f64> = x
        .iter()
        .map(|t| 5.0 * (1.0 - (-0.7 * t).exp()) + 1.0 + 0.1 * r.normal())
        .collect();
    let cols = vec!["x".to_string(), "y".to_string()];
    let model = Model::new(FORMULA, &cols, None).expect("model");
    Problem::from_columns(model, vec![x], y).expect("problem")
}

/// Child: time one size and print "n infer_wall infer_cpu fit_wall fit_cpu peak_mb k".
fn child(n: usize) {
    let pr = problem(n);
    let (c0, t0) = (cpu_seconds(), Instant::now());
    let inf = infer(&pr, &InferOptions::default()).expect("inference");
    let (infer_wall, infer_cpu) = (t0.elapsed().as_secs_f64(), cpu_seconds() - c0);
    std::hint::black_box(&inf);
    let (c1, t1) = (cpu_seconds(), Instant::now());
    let start = starts_for(&pr).expect("starts");
    let (res, _) = run_fit(&pr, &start);
    let (fit_wall, fit_cpu) = (t1.elapsed().as_secs_f64(), cpu_seconds() - c1);
    println!(
        "{n} {infer_wall} {infer_cpu} {fit_wall} {fit_cpu} {} {}",
        peak_mb(),
        res.params[pr.model.params.iter().position(|p| p == "k").unwrap_or(0)]
    );
}

fn main() {
    if let Some(n) = std::env::var("FOOTHOLD_BIG_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
    {
        child(n);
        return;
    }
    let mut sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    if sizes.is_empty() {
        sizes = vec![10_000, 100_000, 1_000_000];
    }
    let exe = std::env::current_exe().expect("own path");
    println!(
        "{:>9}  {:>10} {:>10}  {:>10} {:>10}  {:>8}  {:>8}",
        "rows", "infer s", "infer cpu", "fit s", "fit cpu", "peak MB", "k"
    );
    let mut rows: Vec<(f64, f64, f64)> = Vec::new();
    for n in sizes {
        let out = Command::new(&exe)
            .env("FOOTHOLD_BIG_ROWS", n.to_string())
            .output()
            .expect("child run");
        let text = String::from_utf8_lossy(&out.stdout);
        let v: Vec<f64> = text
            .split_whitespace()
            .filter_map(|s| s.parse().ok())
            .collect();
        if v.len() < 7 {
            println!(
                "{n}: child failed: {}",
                String::from_utf8_lossy(&out.stderr)
            );
            continue;
        }
        println!(
            "{:>9}  {:>10.4} {:>10.2}  {:>10.4} {:>10.2}  {:>8.1}  {:>8.5}",
            n, v[1], v[2], v[3], v[4], v[5], v[6]
        );
        rows.push((v[0], v[1], v[3]));
    }
    for w in rows.windows(2) {
        let (a, b) = (w[0], w[1]);
        println!(
            "growth {:.0} -> {:.0} rows: infer n^{:.2}, fit n^{:.2}",
            a.0,
            b.0,
            exponent(a.0, a.1, b.0, b.1),
            exponent(a.0, a.2, b.0, b.2)
        );
    }
    println!(
        "targets: infer < 0.05 s (1e4), < 0.3 s (1e5), < 2 s (1e6); fit < 4 s and < 400 MB (1e6)"
    );
}
