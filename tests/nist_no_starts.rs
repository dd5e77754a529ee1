//! External check of the whole job with no starting values given: inference plus the
//! multistart search on the 27 NIST StRD nonlinear regression problems (published
//! standard), done as `foothold fit` does it: the search's best proper minimum is
//! the start of one final local fit. Acceptance (issue "multistart search"):
//! LRE ≥ 4 on 27/27 and a mean LRE of at least 9.4.

mod common;

use common::strd;
use foothold::auto_start::starts_with_options;
use foothold::fit::lm::{levenberg_marquardt, LmOptions};
use foothold::fit::problem::Problem;
use foothold::search::SearchOptions;
use foothold::symbolic::Model;

#[test]
fn nist_strd_with_no_starts_given() {
    if strd::require_dir().is_none() {
        return;
    }
    let mut lres = Vec::new();
    let mut fits = 0;
    for name in strd::PROBLEMS {
        let p = strd::load(name).unwrap_or_else(|| panic!("cannot read {}.dat", name));
        let model = Model::new(strd::formula(name), &p.columns, Some("y")).expect("model");
        let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
        let problem = Problem::from_columns(model, x, p.column("y")).expect("problem");
        let opts = SearchOptions {
            starts: 16,
            ..SearchOptions::default()
        };
        let (start, (tried, _)) = starts_with_options(&problem, &opts).expect("search");
        fits += tried;
        let fit = levenberg_marquardt(&problem, &start, &LmOptions::default());
        let mut est = fit.params.clone();
        strd::align_branch(name, &mut est, &p.certified);
        let l = if est.len() == p.certified.len() {
            strd::min_lre(&est, &p.certified)
        } else {
            0.0
        };
        println!("{:<10} LRE {:>6.2}  local fits {}", name, l, tried);
        lres.push(l);
    }
    let solved = lres.iter().filter(|l| **l >= 4.0).count();
    let mean = lres.iter().sum::<f64>() / lres.len() as f64;
    println!(
        "NIST StRD with no starts: {}/27 solved (LRE >= 4), mean LRE {:.2}, {} local fits",
        solved, mean, fits
    );
    assert_eq!(solved, 27, "target 27/27");
    assert!(mean >= 9.4, "mean LRE {:.2} below 9.4", mean);
}
