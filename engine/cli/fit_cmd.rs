//! `foothold fit`: read the data, bind the model, take the given starting
//! values, run Levenberg–Marquardt, and print the fit.

use super::args::{FitArgs, Format};
use super::input::{bind_model, build_problem, read_data};
use super::starts::parse_starts;
use super::Outcome;
use crate::error::Error;
use crate::fit::lm::{levenberg_marquardt, LmOptions};
use crate::fit::stats::summarize;
use crate::report::fit_json::fit_json;
use crate::report::fit_table::{fit_table, FitContext};
use std::io::Write;
use std::time::Instant;

/// Runs `fit`; the result goes to `out`, warnings and details to `err`.
pub fn run_fit(args: &FitArgs, out: &mut dyn Write, err: &mut dyn Write) -> Result<Outcome, Error> {
    let input = &args.input;
    let verbose = args.output.verbose;
    let clock = Instant::now();
    let data = read_data(input, verbose, err)?;
    let model = bind_model(input, &data)?;
    let start =
        parse_starts(&args.start, &model.params).map_err(|e| Error::Usage(e.to_string()))?;
    let ctx_model = model.text.clone();
    let ctx_response = model.response.clone();
    let bound = build_problem(model, &data, verbose, err)?;
    let problem = bound.problem;
    let data_warnings = bound.warnings;
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
        skipped_rows: bound.skipped_rows,
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
