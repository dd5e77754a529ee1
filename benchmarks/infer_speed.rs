//! Time of starting-value inference per NIST StRD problem (release build, one
//! core): target under 50 ms each. Plain `Instant` timing, best of a few runs.

#[path = "../tests/common/strd.rs"]
mod strd;

use foothold::fit::problem::Problem;
use foothold::infer::{infer, InferOptions};
use foothold::symbolic::Model;
use std::time::Instant;

fn main() {
    if strd::strd_dir().is_none() {
        strd::announce_missing();
        return;
    }
    let mut worst: (f64, &str) = (0.0, "");
    let mut total = 0.0;
    // FOOTHOLD_ONLY=<name> times one problem (for profiling).
    let only = std::env::var("FOOTHOLD_ONLY").ok();
    for name in strd::PROBLEMS {
        if only.as_deref().is_some_and(|o| o != name) {
            continue;
        }
        let Some(p) = strd::load(name) else {
            println!("{name}: cannot read");
            continue;
        };
        let model = Model::new(strd::formula(name), &p.columns, Some("y")).expect("model");
        let x: Vec<Vec<f64>> = model.vars.iter().map(|v| p.column(v)).collect();
        let pr = Problem::from_columns(model, x, p.column("y")).expect("problem");
        let mut best = f64::INFINITY;
        for _ in 0..3 {
            let t = Instant::now();
            let inf = infer(&pr, &InferOptions::default()).expect("inference");
            std::hint::black_box(&inf);
            best = best.min(t.elapsed().as_secs_f64() * 1e3);
        }
        total += best;
        if best > worst.0 {
            worst = (best, name);
        }
        println!("{name:<10} {best:>8.2} ms");
    }
    println!(
        "infer time per NIST problem: max {:.2} ms ({}), total {:.1} ms; target < 50 ms",
        worst.0, worst.1, total
    );
}
