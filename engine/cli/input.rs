//! Reading the data and binding the model, shared by the subcommands that take
//! DATA --model FORMULA [--y COLUMN] [--sheet SHEET].

use super::args::InputArgs;
use crate::data::{read_table, Dataset, ReadOptions};
use crate::error::Error;
use crate::fit::problem::Problem;
use crate::symbolic::Model;
use std::io::Write;
use std::time::Instant;

/// The model bound to the rows it uses, with what was left out.
pub struct Bound {
    /// The least-squares problem.
    pub problem: Problem,
    /// Where the data came from.
    pub source: String,
    /// Rows skipped for an empty cell in a used column.
    pub skipped_rows: usize,
    /// Warnings about the data.
    pub warnings: Vec<String>,
}

/// Reads the table named by `input` (and checks that `--y` names a column).
pub fn read_data(input: &InputArgs, verbose: bool, err: &mut dyn Write) -> Result<Dataset, Error> {
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
    if let Some(y) = &input.y {
        if !data.has_column(y) {
            return Err(Error::Usage(format!(
                "--y names column '{y}', which is not in {} (columns: {})",
                data.source,
                data.column_list()
            )));
        }
    }
    Ok(data)
}

/// Parses the formula against the table's columns (and checks `--y` against its left side).
pub fn bind_model(input: &InputArgs, data: &Dataset) -> Result<Model, Error> {
    let model = Model::new(&input.model, &data.columns, input.y.as_deref())?;
    if let Some(y) = &input.y {
        if model.lhs.is_some() && model.response != *y {
            return Err(Error::Usage(format!(
                "--y names '{y}' but the formula's left-hand side uses '{}'; drop --y or make them agree",
                model.response
            )));
        }
    }
    Ok(model)
}

/// Selects the used columns and binds the model to them as a least-squares problem.
pub fn build_problem(
    model: Model,
    data: &Dataset,
    verbose: bool,
    err: &mut dyn Write,
) -> Result<Bound, Error> {
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
    if verbose {
        let _ = writeln!(
            err,
            "foothold: model parameters: {}; predictors: {}; response: {}",
            model.params.join(", "),
            model.vars.join(", "),
            model.response
        );
    }
    let skipped_rows = used.skipped_rows;
    let problem = Problem::new(model, &used)?;
    Ok(Bound {
        problem,
        source: data.source.clone(),
        skipped_rows,
        warnings,
    })
}
