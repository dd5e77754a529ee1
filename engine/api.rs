//! The library surface: [`fit`], [`infer`] and [`rank`] on in-memory columns,
//! without files or a command line.
//!
//! ```
//! let t = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
//! let y: Vec<f64> = t.iter().map(|t: &f64| 8.0 * (-0.5 * t).exp()).collect();
//! let fit = foothold::api::fit(
//!     &[("t", &t), ("y", &y)],
//!     "y = a*exp(-k*t)",
//!     Some(&[("a", 5.0), ("k", 1.0)]),
//! )
//! .unwrap();
//! assert!((fit.parameters[1].estimate - 0.5).abs() < 1e-6); // k (order of first appearance: a, k)
//! ```

use crate::auto_start::{infer_and_search, starts_for};
use crate::cli::prepare::{bind_rows, run_fit};
use crate::data::Dataset;
use crate::error::Error;
use crate::fit::problem::Problem;
use crate::fit::stats::FitSummary;
use crate::infer::InferOptions;
use crate::symbolic::Model;

pub use crate::fit::stats::{FitSummary as Summary, ParamEstimate};
pub use crate::infer::{Inference, ParamStart};
pub use crate::search::{Minimum, SearchOptions, SearchOutcome};

/// Builds a dataset from named columns of equal length (NaN = missing cell).
fn dataset(columns: &[(&str, &[f64])]) -> Result<Dataset, Error> {
    let n = columns.first().map(|(_, c)| c.len()).unwrap_or(0);
    let mut names: Vec<String> = Vec::with_capacity(columns.len());
    for (name, c) in columns {
        if c.len() != n {
            return Err(Error::Usage(format!(
                "column '{name}' has {} values but the first column has {n}",
                c.len()
            )));
        }
        if names.iter().any(|m| m == name) {
            return Err(Error::Usage(format!("column '{name}' is given twice")));
        }
        names.push(name.to_string());
    }
    Ok(Dataset {
        columns: names,
        values: columns.iter().map(|(_, c)| c.to_vec()).collect(),
        source: "in-memory columns".into(),
        skipped_rows: 0,
        text: Vec::new(),
    })
}

/// Fits `formula` to in-memory columns by Levenberg–Marquardt.
///
/// - `columns`: (name, values) pairs of equal length; NaN marks a missing
///   cell, and rows missing a cell the model uses are left out.
/// - `formula`: `lhs = rhs` (the left side names the response) or a right
///   side alone (the response is the column `y`). Names that are columns are
///   variables; every other name is a parameter.
/// - `starts`: a starting value for every parameter by name; `None` asks
///   foothold to work them out (inference, then the multistart search with
///   its default budget, as the `fit` command does).
///
/// Returns the fit's summary: estimates with standard errors and intervals
/// (parameters in order of first appearance in the formula), sums of squares,
/// convergence and warnings. A fit that ran but did not converge is still
/// `Ok`; check `converged`.
pub fn fit(
    columns: &[(&str, &[f64])],
    formula: &str,
    starts: Option<&[(&str, f64)]>,
) -> Result<FitSummary, Error> {
    let problem = &problem(columns, formula)?;
    let start = match starts {
        None => starts_for(problem)?,
        Some(given) => ordered_starts(given, &problem.model.params)?,
    };
    Ok(run_fit(problem, &start).1)
}

/// The least-squares problem of `formula` on `columns` (see [`fit`] for both).
fn problem(columns: &[(&str, &[f64])], formula: &str) -> Result<Problem, Error> {
    let data = dataset(columns)?;
    let model = Model::new(formula, &data.columns, None)?;
    Ok(bind_rows(model, &data)?.problem)
}

/// Works out starting values for `formula` on in-memory `columns` (as
/// [`fit`]) from the model and the data alone, without fitting: the best
/// start with each parameter's derivation in words (`parameters`), the other
/// candidate starts, each parameter's natural range and the features found.
/// Values are in the model's parameter order (`start`): order of first
/// appearance in the formula.
pub fn infer(columns: &[(&str, &[f64])], formula: &str) -> Result<Inference, Error> {
    let problem = problem(columns, formula)?;
    crate::infer::infer(&problem, &InferOptions::default())
        .map_err(|e| Error::Usage(format!("cannot infer starting values: {e}")))
}

/// Ranks candidate starts for `formula` on in-memory `columns` (as [`fit`])
/// by the multistart search: inference's candidates and quasi-random points
/// around them, each refined by Levenberg–Marquardt, grouped into distinct
/// minima ranked by residual sum of squares, share of starts and iterations.
/// Each minimum carries the start that reached it (`start`), so it can seed
/// any other fitter. `options` sets the budget and seed
/// (`SearchOptions::default()`: 64 starts); the same seed gives the same result.
pub fn rank(
    columns: &[(&str, &[f64])],
    formula: &str,
    options: &SearchOptions,
) -> Result<SearchOutcome, Error> {
    let problem = problem(columns, formula)?;
    Ok(infer_and_search(&problem, options)?.1)
}

/// Starting values in parameter order from (name, value) pairs.
fn ordered_starts(given: &[(&str, f64)], params: &[String]) -> Result<Vec<f64>, Error> {
    let list = params.join(", ");
    for (name, v) in given {
        if !params.iter().any(|p| p == name) {
            return Err(Error::Usage(format!(
                "starting value for '{name}', which is not a parameter (parameters: {list})"
            )));
        }
        if !v.is_finite() {
            return Err(Error::Usage(format!(
                "starting value {name} = {v} is not finite"
            )));
        }
    }
    params
        .iter()
        .map(|p| {
            let mut found = given.iter().filter(|(n, _)| n == p);
            match (found.next(), found.next()) {
                (Some((_, v)), None) => Ok(*v),
                (Some(_), Some(_)) => Err(Error::Usage(format!(
                    "more than one starting value for '{p}'"
                ))),
                (None, _) => Err(Error::Usage(format!(
                    "no starting value for '{p}' (parameters: {list})"
                ))),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fits_noise_free_columns_exactly() {
        // Invented: y = 3 + 2*exp(-0.4*t), no noise, so the estimates are exact.
        let t: Vec<f64> = (0..20).map(|i| i as f64 * 0.5).collect();
        let y: Vec<f64> = t.iter().map(|t| 3.0 + 2.0 * (-0.4 * t).exp()).collect();
        let s = fit(
            &[("t", &t), ("y", &y)],
            "c + a*exp(-k*t)",
            Some(&[("c", 1.0), ("a", 1.0), ("k", 1.0)]),
        )
        .unwrap();
        assert!(s.converged);
        let est: Vec<(&str, f64)> = s
            .parameters
            .iter()
            .map(|p| (p.name.as_str(), p.estimate))
            .collect();
        for (name, want) in [("a", 2.0), ("c", 3.0), ("k", 0.4)] {
            let got = est.iter().find(|(n, _)| *n == name).unwrap().1;
            assert!((got - want).abs() < 1e-8, "{name}: {got}");
        }
    }

    #[test]
    fn mistakes_are_errors_not_panics() {
        let x = [1.0, 2.0, 3.0];
        let y = [1.0, 2.0];
        assert!(fit(&[("x", &x), ("y", &y)], "a*x", Some(&[("a", 1.0)]))
            .unwrap_err()
            .to_string()
            .contains("has 2 values"));
        let y = [1.0, 2.0, 3.1];
        let e = fit(&[("x", &x), ("y", &y)], "a*x", Some(&[("b", 1.0)])).unwrap_err();
        assert!(e.to_string().contains("not a parameter"), "{e}");
        // Without starts, inference and the search supply them: a = Σxy/Σx² = 14.3/14.
        let s = fit(&[("x", &x), ("y", &y)], "a*x", None).unwrap();
        assert!((s.parameters[0].estimate - 14.3 / 14.0).abs() < 1e-9);
    }

    #[test]
    fn infers_and_ranks_noise_free_columns() {
        // Invented: y = 3 + 2*exp(-0.4*t), no noise.
        let t: Vec<f64> = (0..20).map(|i| i as f64 * 0.5).collect();
        let y: Vec<f64> = t.iter().map(|t| 3.0 + 2.0 * (-0.4 * t).exp()).collect();
        let cols: [(&str, &[f64]); 2] = [("t", &t), ("y", &y)];
        let inf = infer(&cols, "y = c + a*exp(-k*t)").unwrap();
        let names: Vec<&str> = inf.parameters.iter().map(|p| p.name.as_str()).collect();
        assert_eq!(names, ["c", "a", "k"], "order of first appearance");
        assert!(inf.parameters.iter().all(|p| !p.derivation.is_empty()));
        // Inference alone lands close: k within 5% of 0.4.
        assert!((inf.start[2] - 0.4).abs() < 0.02, "{:?}", inf.start);
        let opts = SearchOptions {
            starts: 12,
            ..SearchOptions::default()
        };
        let ranked = rank(&cols, "y = c + a*exp(-k*t)", &opts).unwrap();
        // a ceiling: exact data settle once further starts return to the inferred minimum
        assert!((4..=12).contains(&ranked.candidates_tried));
        let best = ranked.best().unwrap();
        assert_eq!(best.rank, 1);
        assert!((best.params[2] - 0.4).abs() < 1e-6, "{:?}", best.params);
        assert_eq!(best.start.len(), 3);
        // Same seed, same outcome.
        let again = rank(&cols, "y = c + a*exp(-k*t)", &opts).unwrap();
        assert_eq!(again.best().unwrap().params, best.params);
        // Bad input is an error, not a panic.
        assert!(infer(&cols, "y = c + a*exp(-k*").is_err());
    }
}
