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
use foothold::fit::stats::summarize;
use foothold::symbolic::Model;

/// Fits one problem from the given start: estimates, standard errors, ssr.
fn fit_from(p: &StrdProblem, start: &[f64]) -> (Vec<f64>, Vec<f64>, f64) {
    let model = Model::new(strd::formula(&p.name), &p.columns, Some("y")).expect("model");
    let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
    let names = model.params.clone();
    let problem = Problem::from_columns(model, x, p.column("y")).expect("problem");
    let res = levenberg_marquardt(&problem, start, &LmOptions::default());
    let se = summarize(&names, &res)
        .parameters
        .iter()
        .map(|e| e.std_error)
        .collect();
    (res.params, se, res.ssr)
}

#[test]
fn nist_strd_from_published_starts() {
    if strd::require_dir().is_none() {
        return;
    }
    let mut lres = Vec::new();
    let mut failures = Vec::new();
    let mut worst_se: f64 = 11.0;
    let mut worst_ssr: f64 = 11.0;
    println!(
        "{:<10} {:>8} {:>8}  (LRE of the estimates; then of ssr and standard errors)",
        "problem", "start 1", "start 2"
    );
    for name in strd::PROBLEMS {
        let p = strd::load(name).unwrap_or_else(|| panic!("cannot read {}.dat", name));
        let mut row = Vec::new();
        let (mut ssr_lre, mut se_lre) = (11.0_f64, 11.0_f64);
        for (k, start) in p.starts.iter().enumerate() {
            let (mut est, se, ssr) = fit_from(&p, start);
            strd::align_branch(name, &mut est, &p.certified);
            ssr_lre = ssr_lre.min(strd::lre(ssr, p.certified_ssr));
            se_lre = se_lre.min(strd::min_lre(&se, &p.certified_sd));
            let l = strd::min_lre(&est, &p.certified);
            if l < 4.0 {
                failures.push(format!("{} start {}", name, k + 1));
            }
            lres.push(l);
            row.push(l);
        }
        // The exact-fit problem's certified residuals, and so its standard errors, are
        // rounding noise (NIST notes Lanczos1 is generated data fitted to 1e-13): printed only.
        if name != "Lanczos1" {
            worst_se = worst_se.min(se_lre);
            worst_ssr = worst_ssr.min(ssr_lre);
        }
        println!(
            "{:<10} {:>8.2} {:>8.2}  (ssr {:.2}, se {:.2})",
            name, row[0], row[1], ssr_lre, se_lre
        );
    }
    println!(
        "worst LRE of the residual sum of squares {:.2}, of the standard errors {:.2}",
        worst_ssr, worst_se
    );
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
    // Certified residual sums of squares and standard deviations (NIST StRD) must agree too.
    assert!(
        worst_ssr >= 6.0,
        "a residual sum of squares agrees to fewer than 6 digits"
    );
    assert!(
        worst_se >= 6.0,
        "a standard error agrees with NIST to fewer than 6 digits"
    );
}

#[test]
fn strd_reader_reads_a_minimal_file() {
    let text = "header\n  b1 =   1   2   3.5E+00  1E-01\n  b2 = 4 5 6 7\n\
                Residual Sum of Squares:  1.25E+00\nData:   y   x\n  1.0  2.0\n  3.0  4.0\n";
    let f = strd::parse("t", text).expect("parses");
    assert_eq!(f.starts, [vec![1.0, 4.0], vec![2.0, 5.0]]);
    assert_eq!(f.certified, vec![3.5, 6.0]);
    assert_eq!(f.certified_sd, vec![0.1, 7.0]);
    assert_eq!(f.certified_ssr, 1.25);
    assert_eq!(f.values, vec![vec![1.0, 3.0], vec![2.0, 4.0]]);
}

#[test]
fn lre_is_capped_and_minimised() {
    assert_eq!(strd::lre(1.0, 1.0), 11.0);
    assert!((strd::lre(1.001, 1.0) - 3.0).abs() < 1e-9);
    assert_eq!(strd::min_lre(&[5.0, 1.0], &[1.0, 1.0]), 0.0);
    assert_eq!(strd::lre(f64::NAN, 1.0), 0.0);
}
