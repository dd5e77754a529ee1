//! The steps every command shares before fitting: read the table, resolve
//! and bind the model, keep the rows it can use, bind the problem, take the
//! starting values, and run Levenberg–Marquardt.

use super::args::InputArgs;
use super::model_arg::{bind_model, resolve_model, ModelSpec};
use super::starts::parse_starts;
use crate::auto_start::starts_for;
use crate::data::{read_table, Dataset, ReadOptions};
use crate::error::Error;
use crate::fit::lm::{levenberg_marquardt, LmOptions, LmResult};
use crate::fit::problem::Problem;
use crate::fit::stats::{summarize, FitSummary};
use crate::report::fit_table::FitContext;
use crate::symbolic::Model;
use std::io::Write;
use std::time::Instant;

/// Reads the table named by the input arguments (and reports it when verbose).
pub fn read_input(input: &InputArgs, verbose: bool, err: &mut dyn Write) -> Result<Dataset, Error> {
    let clock = Instant::now();
    let opts = ReadOptions {
        sheet: input.sheet.clone(),
        ..ReadOptions::default()
    };
    let data = read_table(&input.data, &opts)?;
    if verbose {
        let _ = writeln!(
            err,
            "foothold: read {} rows x {} columns ({}) from {} in {:.1} ms",
            data.n_rows(),
            data.columns.len(),
            data.column_list(),
            data.source,
            clock.elapsed().as_secs_f64() * 1e3
        );
    }
    Ok(data)
}

/// Checks that `--x`/`--y`-style options name columns of the data.
fn check_column(data: &Dataset, option: &str, name: &str) -> Result<(), Error> {
    if data.has_column(name) {
        Ok(())
    } else {
        Err(Error::Usage(format!(
            "{option} names column '{name}', which is not in {} (columns: {})",
            data.source,
            data.column_list()
        )))
    }
}

/// Resolves `--model`/`--x`/`--y` against the data's columns.
pub fn model_for(input: &InputArgs, data: &Dataset) -> Result<(ModelSpec, Model), Error> {
    if let Some(y) = &input.y {
        check_column(data, "--y", y)?;
    }
    if let Some(x) = &input.x {
        check_column(data, "--x", x)?;
    }
    let spec = resolve_model(&input.model, input.x.as_deref(), &data.columns)?;
    let model = bind_model(&spec, data, input.y.as_deref())?;
    if let Some(y) = &input.y {
        if model.lhs.is_some() && model.response != *y {
            return Err(Error::Usage(format!(
                "--y names '{y}' but the formula's left-hand side uses '{}'; drop --y or make them agree",
                model.response
            )));
        }
    }
    Ok((spec, model))
}

/// Resolves the model of the input arguments and binds it to the rows it can
/// use ([`model_for`], then [`bind_rows`]); the model's notes (a column that
/// hides a constant) join the data's warnings.
pub fn bind_input(input: &InputArgs, data: &Dataset) -> Result<(ModelSpec, Bound), Error> {
    let (spec, model) = model_for(input, data)?;
    let mut bound = bind_rows(model, data)?;
    bound.context.warnings.extend(spec.notes.iter().cloned());
    Ok((spec, bound))
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
    parse_starts(items, &problem.model.params).map_err(|e| Error::Usage(e.to_string()))
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
