//! The steps every command shares before fitting: read the table, resolve
//! and bind the model, keep the rows it can use, bind the problem, take the
//! starting values, and run Levenberg–Marquardt.

use super::args::InputArgs;
use super::model_arg::{bind_model, resolve_model, ModelSpec};
use super::starts::parse_starts;
use crate::auto_start::starts_for;
use crate::data::{is_column_spec, match_columns, read_table_noted, stack_columns};
use crate::data::{DataError, Dataset, DecimalMark, ReadNotes, ReadOptions};
use crate::error::Error;
use crate::fit::lm::{levenberg_marquardt, LmOptions, LmResult};
use crate::fit::problem::Problem;
use crate::fit::stats::{summarize, FitSummary};
use crate::report::fit_table::FitContext;
use crate::symbolic::Model;
use std::io::Write;
use std::time::Instant;

/// Name of the label column that `--wide-groups` makes (the `--by` column of the batch).
pub const WIDE_GROUP_LABEL: &str = "sample";

/// Applies the wide-layout options to a command's input before it runs:
/// `--y COLUMNS` (a list, range or pattern) moves to the reader, which pools
/// those columns into the response, and `--wide-groups` becomes `--by
/// sample`; `batch` says whether the command fits groups (fit, report).
pub fn layout_args(
    input: &InputArgs,
    by: Option<&String>,
    batch: bool,
) -> Result<(InputArgs, Option<String>), Error> {
    let mut input = input.clone();
    let mut by = by.cloned();
    if input.wide_groups.is_some() {
        if !batch {
            return Err(Error::Usage(
                "--wide-groups fits one curve per column; use it with fit or report".into(),
            ));
        }
        if by.is_some() {
            return Err(Error::Usage(
                "--wide-groups makes the groups (one per column); drop --by".into(),
            ));
        }
        if input.y.is_some() {
            return Err(Error::Usage(
                "--wide-groups: the wide columns hold the response; drop --y".into(),
            ));
        }
        by = Some(WIDE_GROUP_LABEL.to_string());
    }
    if input.y.as_deref().is_some_and(is_column_spec) {
        input.pooled_y = input.y.take();
    }
    Ok((input, by))
}

/// Reads the table named by the input arguments, in long form (wide columns
/// stacked, see [`layout_args`]), and reports how when verbose.
pub fn read_input(input: &InputArgs, verbose: bool, err: &mut dyn Write) -> Result<Dataset, Error> {
    let clock = Instant::now();
    let opts = ReadOptions {
        sheet: input.sheet.clone(),
        delimiter: input.delimiter,
        decimal: input.decimal,
        header_row: input.header_row,
        ..ReadOptions::default()
    };
    let (mut data, notes) = read_table_noted(&input.data, &opts)?;
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
        let _ = writeln!(err, "foothold: {}", layout_note(&notes));
    }
    let wide = match (&input.pooled_y, &input.wide_groups) {
        (Some(spec), _) => Some((spec, "--y", None)),
        (None, Some(spec)) => Some((spec, "--wide-groups", Some(WIDE_GROUP_LABEL))),
        (None, None) => None,
    };
    if let Some((spec, option, label)) = wide {
        let columns = match_columns(&data, spec, option)?;
        let value = response_name(input, &data, &columns);
        let stacked = stack_columns(&data, &columns, &value, label)?;
        if verbose {
            let _ = writeln!(
                err,
                "foothold: {option} {spec}: stacked {} into '{value}'{}: {} observations from {} rows ({} empty cell{} left out)",
                columns.join(", "),
                label.map(|l| format!(", one group per column ('{l}')")).unwrap_or_default(),
                stacked.data.n_rows(),
                stacked.rows_in,
                stacked.empty_cells,
                if stacked.empty_cells == 1 { "" } else { "s" }
            );
        }
        data = stacked.data;
        if data.n_rows() == 0 {
            return Err(DataError::NoCompleteRows {
                path: data.source.clone(),
                columns: columns.join(", "),
            }
            .into());
        }
    }
    Ok(data)
}

/// The `--verbose` line on how the table was laid out.
fn layout_note(notes: &ReadNotes) -> String {
    let mut parts = vec![format!("header on row {}", notes.header_row)];
    if !notes.title_rows.is_empty() {
        let rows: Vec<String> = notes.title_rows.iter().map(|r| r.to_string()).collect();
        parts.push(format!(
            "skipped {} title row{} above it ({})",
            rows.len(),
            if rows.len() == 1 { "" } else { "s" },
            rows.join(", ")
        ));
    }
    if let Some(sep) = &notes.separator {
        parts.push(format!("cells separated by {sep}"));
        parts.push(match notes.decimal {
            DecimalMark::Point => "decimal point".into(),
            DecimalMark::Comma => "decimal comma".into(),
        });
    }
    parts.join("; ")
}

/// The name of the pooled response: the formula's left-hand side when it
/// names one column not in the table (or among the stacked ones), else `y`.
fn response_name(input: &InputArgs, data: &Dataset, stacked: &[String]) -> String {
    let Ok(spec) = resolve_model(&input.model, input.x.as_deref(), &data.columns) else {
        return "y".into();
    };
    let Some(lhs) = &spec.parsed.lhs else {
        return "y".into();
    };
    let names: Vec<&String> = (0..spec.parsed.names.len())
        .filter(|&i| lhs.has_param(i))
        .map(|i| &spec.parsed.names[i])
        .filter(|n| !data.has_column(n) || stacked.contains(n))
        .collect();
    match names.as_slice() {
        [one] => one.to_string(),
        _ => "y".into(),
    }
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
