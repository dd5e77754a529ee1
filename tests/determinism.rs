//! The same problem from the same start gives bit-identical results: across
//! repeated runs, and inside rayon pools of one and of two threads (several
//! fits at once sharing one `Problem`).

use foothold::fit::lm::{levenberg_marquardt, LmOptions, LmResult};
use foothold::fit::problem::Problem;
use foothold::symbolic::Model;
use rayon::prelude::*;

/// A logistic curve with a deterministic wobble standing in for noise
/// (invented data of our own).
fn logistic_problem() -> Problem {
    let cols = vec!["t".to_string(), "y".to_string()];
    let m = Model::new("a/(1 + exp(-b*(t - c)))", &cols, None).expect("formula binds");
    let t: Vec<f64> = (0..40).map(|i| 0.25 * f64::from(i)).collect();
    let y: Vec<f64> = t
        .iter()
        .enumerate()
        .map(|(i, t)| {
            8.0 / (1.0 + (-1.3 * (t - 4.0)).exp()) + 0.05 * ((i * 37 % 11) as f64 - 5.0) / 5.0
        })
        .collect();
    Problem::from_columns(m, vec![t], y).expect("problem builds")
}

const START: [f64; 3] = [1.0, 0.5, 2.0];

fn bits(r: &LmResult) -> (Vec<u64>, u64, Vec<u64>) {
    (
        r.params.iter().map(|v| v.to_bits()).collect(),
        r.ssr.to_bits(),
        r.residuals.iter().map(|v| v.to_bits()).collect(),
    )
}

fn run(p: &Problem) -> LmResult {
    levenberg_marquardt(p, &START, &LmOptions::default())
}

#[test]
fn repeated_runs_are_bit_identical() {
    let p = logistic_problem();
    let first = run(&p);
    assert!(first.converged, "{:?}", first.stop);
    // The fit is real, not a trivial stop at the start.
    assert!((first.params[0] - 8.0).abs() < 0.1, "{:?}", first.params);
    assert!((first.params[2] - 4.0).abs() < 0.1, "{:?}", first.params);
    for _ in 0..5 {
        let again = run(&p);
        assert_eq!(bits(&again), bits(&first));
        assert_eq!(again.iterations, first.iterations);
        assert_eq!(again.evaluations, first.evaluations);
        assert_eq!(again.stop, first.stop);
    }
    // A freshly built problem (new tapes) gives the same bits too.
    assert_eq!(bits(&run(&logistic_problem())), bits(&first));
}

#[test]
fn thread_pools_of_one_and_two_give_the_same_bits() {
    let p = logistic_problem();
    let reference = bits(&run(&p));
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        // One fit inside the pool.
        let inside = pool.install(|| run(&p));
        assert_eq!(bits(&inside), reference, "{threads} thread(s)");
        // Eight fits at once sharing the problem.
        let many: Vec<LmResult> =
            pool.install(|| (0..8).into_par_iter().map(|_| run(&p)).collect());
        for r in &many {
            assert_eq!(bits(r), reference, "{threads} thread(s), parallel fits");
        }
    }
}
