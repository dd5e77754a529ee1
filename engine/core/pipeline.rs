//! The pipeline every edge shares (the command line, the library API, the
//! bindings): bind a model to the rows it can use, assign starting values
//! (given, checked once by [`crate::starts`], or inferred and searched), and
//! run Levenberg–Marquardt. Edges read data and render results; the steps in
//! between live here, so each edge is a thin layer over one engine.

use crate::auto_start::starts_for;
use crate::data::Dataset;
use crate::error::Error;
use crate::fit::lm::{levenberg_marquardt, LmOptions, LmResult};
use crate::fit::problem::Problem;
use crate::fit::stats::{summarize, FitSummary};
use crate::starts::parse_starts;
use crate::symbolic::Model;

/// What the fit was of, for the heading of a report.
#[derive(Debug, Clone, Default)]
pub struct FitContext {
    /// The model formula as given.
    pub model: String,
    /// Where the data came from.
    pub data: String,
    /// The response column.
    pub response: String,
    /// Rows dropped because a needed cell was empty.
    pub skipped_rows: usize,
    /// Warnings from reading the data (fit warnings live in the summary).
    pub warnings: Vec<String>,
    /// When the starts were found by the multistart search: (local fits tried, distinct minima).
    pub search: Option<(usize, usize)>,
}

/// A model bound to the rows it can use, with the report's context.
#[derive(Debug, Clone)]
pub struct Bound {
    /// The least-squares problem.
    pub problem: Problem,
    /// Model text, data source, response and data warnings.
    pub context: FitContext,
}

/// A warning when every response value is the same ([`Problem::constant_response`]):
/// a fit then has nothing to explain, and its standard errors say nothing.
fn constant_response_warning(problem: &Problem, response: &str) -> Option<String> {
    let rows = problem.y.len();
    let value = problem.constant_response().filter(|_| rows >= 2)?;
    Some(format!(
        "the response '{response}' is constant ({value} in all {rows} rows): the fit has nothing to explain and its standard errors mean nothing"
    ))
}

/// Keeps the rows with every needed cell present and binds the problem.
pub fn bind_rows(model: Model, data: &Dataset) -> Result<Bound, Error> {
    let mut needed: Vec<&str> = model.vars.iter().map(|s| s.as_str()).collect();
    needed.push(&model.response);
    let used = data.select(&needed)?;
    let mut warnings = Vec::new();
    if used.skipped_rows > 0 {
        warnings.push(format!(
            "skipped {} row{} with an empty cell in {}",
            used.skipped_rows,
            if used.skipped_rows == 1 { "" } else { "s" },
            needed.join(", ")
        ));
    }
    let mut context = FitContext {
        model: model.text.clone(),
        data: data.source.clone(),
        response: model.response.clone(),
        skipped_rows: used.skipped_rows,
        warnings,
        search: None,
    };
    // Bound to the whole table (the problem drops the same incomplete rows
    // itself) so that a row named in an error is the row of the data as given.
    let problem = Problem::new(model, data)?;
    if let Some(w) = constant_response_warning(&problem, &context.response) {
        context.warnings.push(w);
    }
    Ok(Bound { problem, context })
}

/// True when `--start` holds at least one item (empty items do not count).
pub fn starts_given(items: &[String]) -> bool {
    items.iter().any(|s| !s.trim().is_empty())
}

/// The starting values: the `--start` items when given, else the automatic hook.
pub fn starting_values(items: &[String], problem: &Problem) -> Result<Vec<f64>, Error> {
    if !starts_given(items) {
        return starts_for(problem);
    }
    Ok(parse_starts(items, &problem.model.params)?)
}

/// Starting values and, when the search ran, (local fits tried, distinct minima found).
pub type StartsSearched = (Vec<f64>, Option<(usize, usize)>);

/// As [`starting_values`] with the search's budget and seed from `opts`,
/// also saying how the search went when it ran: (local fits tried, distinct
/// minima found).
pub fn starting_values_searched(
    items: &[String],
    problem: &Problem,
    opts: &crate::search::SearchOptions,
) -> Result<StartsSearched, Error> {
    if !starts_given(items) {
        let (start, counts) = crate::auto_start::starts_with_options(problem, opts)?;
        return Ok((start, Some(counts)));
    }
    Ok((starting_values(items, problem)?, None))
}

/// Runs Levenberg–Marquardt from `start` and summarises the result.
pub fn run_fit(problem: &Problem, start: &[f64]) -> (LmResult, FitSummary) {
    let result = levenberg_marquardt(problem, start, &LmOptions::default());
    let summary = summarize(&problem.model.params, &result);
    (result, summary)
}
