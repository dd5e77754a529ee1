//! Compiled tape versus tree walking (`Expr::eval` per row) for model values
//! and full Jacobians. Plain `Instant` timing; run with
//! `cargo bench --bench eval_tape` (optional argument: largest row count).

use foothold::symbolic::{diff_param, Expr, Model, Tape};
use std::hint::black_box;
use std::time::{Duration, Instant};

/// Runs `f` repeatedly for at least `budget`, returns seconds per run.
fn time_it(budget: Duration, mut f: impl FnMut()) -> f64 {
    let start = Instant::now();
    let mut runs = 0u32;
    while runs == 0 || start.elapsed() < budget {
        f();
        runs += 1;
    }
    start.elapsed().as_secs_f64() / runs as f64
}

fn tree_eval(outputs: &[Expr], params: &[f64], x: &[f64], out: &mut [Vec<f64>]) {
    for (i, &xi) in x.iter().enumerate() {
        let row = [xi];
        for (k, e) in outputs.iter().enumerate() {
            out[k][i] = e.eval(params, &row);
        }
    }
}

fn bench(label: &str, formula: &str, params: &[f64], max_rows: usize) {
    let cols = vec!["x".to_string(), "y".to_string()];
    let model = match Model::new(formula, &cols, None) {
        Ok(m) => m,
        Err(e) => {
            eprintln!("{label}: {e}");
            return;
        }
    };
    let mut with_jac = vec![model.rhs.clone()];
    with_jac.extend((0..model.n_params()).map(|p| diff_param(&model.rhs, p)));
    let sets: [(&str, Vec<Expr>); 2] = [
        ("value", vec![model.rhs.clone()]),
        ("value+jacobian", with_jac),
    ];
    println!(
        "{label}: f = {}  ({} parameters)",
        model.rhs_text(),
        model.n_params()
    );
    for (what, outputs) in &sets {
        let t0 = Instant::now();
        let tape = Tape::compile(outputs);
        let compile = t0.elapsed();
        let tree_nodes: usize = outputs.iter().map(|e| e.size()).sum();
        println!(
            "  {what}: {} outputs, {} tree nodes -> {} column + {} scalar instructions (compiled in {:.1?})",
            outputs.len(),
            tree_nodes,
            tape.n_column_instructions(),
            tape.n_scalar_instructions(),
            compile
        );
        let mut n = 10_000;
        while n <= max_rows {
            let x: Vec<f64> = (0..n).map(|i| 0.5 + 10.0 * i as f64 / n as f64).collect();
            let mut out_tree = vec![vec![0.0; n]; outputs.len()];
            let mut out_tape = vec![vec![0.0; n]; outputs.len()];
            let budget = Duration::from_millis(300);
            let t_tree = time_it(budget, || {
                tree_eval(outputs, black_box(params), black_box(&x), &mut out_tree);
                black_box(&out_tree);
            });
            let t_tape = time_it(budget, || {
                let mut refs: Vec<&mut [f64]> =
                    out_tape.iter_mut().map(|o| o.as_mut_slice()).collect();
                tape.eval(black_box(params), &[black_box(&x)], &mut refs);
                black_box(&out_tape);
            });
            let same = out_tree
                .iter()
                .zip(&out_tape)
                .all(|(a, b)| a.iter().zip(b).all(|(u, v)| u.to_bits() == v.to_bits()));
            println!(
                "    {:>9} rows: tree {:>12.0} rows/s, tape {:>12.0} rows/s, speed-up {:>5.1}x{}",
                n,
                n as f64 / t_tree,
                n as f64 / t_tape,
                t_tree / t_tape,
                if same { "" } else { "  (RESULTS DIFFER)" }
            );
            n *= 10;
        }
    }
}

fn main() {
    let max_rows = std::env::args()
        .skip(1)
        .find_map(|a| a.parse::<usize>().ok())
        .unwrap_or(1_000_000);
    bench(
        "three exponentials",
        "b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x)",
        &[3.0, 0.2, 1.5, 1.1, 0.7, 4.0],
        max_rows,
    );
    bench(
        "rational",
        "(a0 + a1*x + a2*x^2 + a3*x^3)/(1 + c1*x + c2*x^2 + c3*x^3)",
        &[1.0, 0.5, -0.2, 0.01, 0.3, 0.05, 0.001],
        max_rows,
    );
}
