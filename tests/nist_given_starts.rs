//! External check of the local fitter: the NIST StRD nonlinear regression suite
//! (published standard), fitted from NIST's own Start 1 and Start 2.
//!
//! Acceptance (issue "engine core"): all 27 problems × 2 starts reach the certified
//! parameters with LRE ≥ 4, except at most two runs, and the mean LRE over the 54
//! runs is at least 9. For comparison, Mondragon & Borchers (2005), "A comparison of
//! nonlinear regression codes", Journal of Modern Applied Statistical Methods 4(1),
//! report averages of 2.3–6.8 for the codes they tested.

mod common;

use common::strd::{self, StrdProblem};
use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::symbolic::Model;

/// Fits one problem from the given start and returns the estimates.
fn fit_from(p: &StrdProblem, start: &[f64]) -> Vec<f64> {
    let model = Model::new(strd::formula(&p.name), &p.columns, Some("y")).expect("model");
    let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
    let problem = Problem::from_columns(model, x, p.column("y")).expect("problem");
    levenberg_marquardt(&problem, start, &LmOptions::default()).params
}

/// Adjusts for a published convention the engine need not share: the certified b1 of
/// the arctan model assumes a branch of arctan in (0, π); with the principal branch
/// (−π/2, π/2) the same optimum has b1 smaller by exactly 1 (arctan(u)/π differs by 1).
fn align_branch(name: &str, est: &mut [f64], cert: &[f64]) {
    if name == "Roszman1" && (est[0] + 1.0 - cert[0]).abs() < (est[0] - cert[0]).abs() {
        est[0] += 1.0;
    }
}

#[test]
fn nist_strd_from_published_starts() {
    if strd::strd_dir().is_none() {
        strd::announce_missing();
        return;
    }
    let mut lres = Vec::new();
    let mut failures = Vec::new();
    println!("{:<10} {:>8} {:>8}", "problem", "start 1", "start 2");
    for name in strd::PROBLEMS {
        let p = strd::load(name).unwrap_or_else(|| panic!("cannot read {}.dat", name));
        let mut row = Vec::new();
        for (k, start) in p.starts.iter().enumerate() {
            let mut est = fit_from(&p, start);
            align_branch(name, &mut est, &p.certified);
            let l = strd::min_lre(&est, &p.certified);
            if l < 4.0 {
                failures.push(format!("{} start {}", name, k + 1));
            }
            lres.push(l);
            row.push(l);
        }
        println!("{:<10} {:>8.2} {:>8.2}", name, row[0], row[1]);
    }
    let mean = lres.iter().sum::<f64>() / lres.len() as f64;
    println!(
        "NIST StRD from published starts: {}/{} runs with LRE >= 4, mean LRE {:.2}; failed: {:?}",
        lres.len() - failures.len(),
        lres.len(),
        mean,
        failures
    );
    assert_eq!(lres.len(), 54);
    assert!(
        failures.len() <= 2,
        "more than two runs below LRE 4: {:?}",
        failures
    );
    assert!(mean >= 9.0, "mean LRE {:.2} below 9", mean);
}
