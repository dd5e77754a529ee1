//! Acceptance of starting-value inference on the NIST StRD nonlinear regression
//! suite (published standard): for each of the 27 problems, `infer` alone gives a
//! start, and Levenberg–Marquardt with default options from that start must reach
//! the certified values with LRE ≥ 4 (the StRD methodology, McCullough 1998).
//! Target: 27/27.

mod common;

use common::strd::{self, StrdProblem};
use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::infer::{infer, InferOptions};
use foothold::symbolic::Model;
use std::time::Instant;

/// The count of problems reached (all 27, the target), asserted below.
const REQUIRED: usize = 27;

fn problem_of(p: &StrdProblem) -> Problem {
    let model = Model::new(strd::formula(&p.name), &p.columns, Some("y")).expect("model");
    let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
    Problem::from_columns(model, x, p.column("y")).expect("problem")
}

#[test]
fn nist_strd_from_inferred_starts() {
    if strd::require_dir().is_none() {
        return;
    }
    let mut solved = 0;
    let mut lres = Vec::new();
    let mut failed = Vec::new();
    println!(
        "{:<10} {:>6} {:>8}  strategy of the start",
        "problem", "LRE", "ms"
    );
    for name in strd::PROBLEMS {
        let p = strd::load(name).unwrap_or_else(|| panic!("cannot read {}.dat", name));
        let pr = problem_of(&p);
        let clock = Instant::now();
        let inf = infer(&pr, &InferOptions::default()).expect("inference");
        let ms = clock.elapsed().as_secs_f64() * 1e3;
        let res = levenberg_marquardt(&pr, &inf.start, &LmOptions::default());
        let mut est = res.params.clone();
        strd::align_branch(name, &mut est, &p.certified);
        let l = strd::min_lre(&est, &p.certified);
        if l >= 4.0 {
            solved += 1;
        } else {
            failed.push(name);
        }
        lres.push(l);
        let strategy = inf
            .candidates
            .first()
            .map(|c| c.strategy.clone())
            .unwrap_or_default();
        println!("{:<10} {:>6.2} {:>8.1}  {}", name, l, ms, strategy);
        if l < 4.0 {
            println!("           start {:?}", inf.start);
            println!("           cert  {:?}", p.certified);
        }
    }
    let mean = lres.iter().sum::<f64>() / lres.len() as f64;
    println!(
        "NIST StRD from inferred starts: {}/27 reach LRE >= 4 (target 27), mean LRE {:.2}; failed: {:?}",
        solved, mean, failed
    );
    assert!(
        solved >= REQUIRED,
        "only {solved} of 27 problems reached LRE 4 from the inferred start"
    );
}
