//! `foothold fit`: read the data, bind the model, take the given starting
//! values, run Levenberg–Marquardt, and print the fit.

use super::args::{FitArgs, Format};
use super::starts::parse_starts;
use super::Outcome;
use crate::data::{read_table, ReadOptions};
use crate::error::Error;
use crate::fit::lm::{levenberg_marquardt, LmOptions};
use crate::fit::problem::Problem;
use crate::fit::stats::summarize;
use crate::report::fit_json::fit_json;
use crate::report::fit_table::{fit_table, FitContext};
use crate::symbolic::Model;
use std::io::Write;
use std::time::Instant;

/// Runs `fit`; the result goes to `out`, warnings and details to `err`.
pub fn run_fit(args: &FitArgs, out: &mut dyn Write, err: &mut dyn Write) -> Result<Outcome, Error> {
    let input = &args.input;
    let verbose = args.output.verbose;
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
            ms(clock)
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
    let model = Model::new(&input.model, &data.columns, input.y.as_deref())?;
    if let Some(y) = &input.y {
        if model.lhs.is_some() && model.response != *y {
            return Err(Error::Usage(format!(
                "--y names '{y}' but the formula's left-hand side uses '{}'; drop --y or make them agree",
                model.response
            )));
        }
    }
    let start =
        parse_starts(&args.start, &model.params).map_err(|e| Error::Usage(e.to_string()))?;
    let mut needed: Vec<&str> = model.vars.iter().map(|s| s.as_str()).collect();
    needed.push(&model.response);
    let used = data.select(&needed)?;
    let mut data_warnings = Vec::new();
    if used.skipped_rows > 0 {
        data_warnings.push(format!(
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
    let ctx_model = model.text.clone();
    let ctx_response = model.response.clone();
    let problem = Problem::new(model, &used)?;
    let fit_clock = Instant::now();
    let result = levenberg_marquardt(&problem, &start, &LmOptions::default());
    let summary = summarize(&problem.model.params, &result);
    if verbose {
        let _ = writeln!(
            err,
            "foothold: stopped: {:?} after {} iterations, {} model evaluations, {:.1} ms (total {:.1} ms)",
            result.stop,
            result.iterations,
            result.evaluations,
            ms(fit_clock),
            ms(clock)
        );
    }
    let ctx = FitContext {
        model: ctx_model,
        data: data.source.clone(),
        response: ctx_response,
        skipped_rows: used.skipped_rows,
        warnings: data_warnings,
    };
    if !args.output.quiet {
        for w in ctx.warnings.iter().chain(&summary.warnings) {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    let text = match args.output.format {
        Format::Table => fit_table(&summary, &ctx),
        Format::Json => {
            fit_json(&summary, &ctx).map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
        }
    };
    let _ = out.write_all(text.as_bytes());
    if summary.converged {
        Ok(Outcome::Success)
    } else {
        Ok(Outcome::NotConverged(format!(
            "the fit did not converge (stop reason: {}, after {} iterations); try other starting values",
            summary.stop_reason, summary.iterations
        )))
    }
}

fn ms(since: Instant) -> f64 {
    since.elapsed().as_secs_f64() * 1e3
}
