//! Fitting a model to in-memory columns with the library API.
//!
//! Invented scenario: a batch of dough proving in a warm room; its height (mm)
//! rises towards a ceiling. The saturation model h = hmax*(1 - exp(-k*t)) is
//! fitted from rough starting values; then foothold works out starting values
//! itself (`infer`) and ranks the minima of a multistart search (`rank`).
//!
//! Run with `cargo run --example fit_columns`.

fn main() {
    let minutes = [
        0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 75.0, 90.0, 105.0, 120.0,
    ];
    let height = [
        0.4, 11.8, 20.1, 27.5, 32.0, 36.4, 39.1, 42.3, 44.0, 45.6, 46.2,
    ];
    let result = foothold::api::fit(
        &[("minutes", &minutes), ("height", &height)],
        "height = hmax*(1 - exp(-k*minutes))",
        Some(&[("hmax", 40.0), ("k", 0.05)]),
    );
    match result {
        Ok(fit) => {
            println!("converged: {}", fit.converged);
            for p in &fit.parameters {
                println!(
                    "{:>5} = {:.5} (standard error {:.5}, 95% interval {:.5} to {:.5})",
                    p.name, p.estimate, p.std_error, p.ci_low, p.ci_high
                );
            }
            println!("residual sum of squares: {:.5}", fit.ssr);
        }
        Err(e) => {
            eprintln!("fit_columns: {e}");
            std::process::exit(2);
        }
    }

    let columns: [(&str, &[f64]); 2] = [("minutes", &minutes), ("height", &height)];
    let model = "height = hmax*(1 - exp(-k*minutes))";
    match foothold::api::infer(&columns, model) {
        Ok(inf) => {
            println!("\nstarting values worked out by foothold:");
            for p in &inf.parameters {
                println!("{:>5} = {:.5}: {}", p.name, p.start, p.derivation);
            }
        }
        Err(e) => eprintln!("fit_columns: {e}"),
    }
    let options = foothold::api::SearchOptions {
        starts: 16,
        ..Default::default()
    };
    match foothold::api::rank(&columns, model, &options) {
        Ok(outcome) => {
            println!(
                "\n{} starts tried, {} distinct minima; the best:",
                outcome.candidates_tried,
                outcome.minima.len()
            );
            if let Some(m) = outcome.best() {
                println!(
                    "ssr {:.5}, reached by {:.0}% of starts, from start {:?}",
                    m.ssr,
                    100.0 * m.share,
                    m.start
                );
            }
        }
        Err(e) => eprintln!("fit_columns: {e}"),
    }
}
