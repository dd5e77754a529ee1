//! `foothold fit`: read the data, bind the model, take the starting values
//! (given, or from the automatic hook), run Levenberg–Marquardt, and print
//! the fit as a table, JSON, YAML or CSV; `--by` hands over to the batch.

use super::args::{FitArgs, Format};
use super::batch::run_batch;
use super::output::{emit, write_plots};
use super::provenance::{Run, WithRun};
use super::prepare::{bind_input, read_input, run_fit as lm_fit, starting_values_searched};
use super::Outcome;
use crate::error::Error;
use crate::features::detect;
use crate::report::assemble::{fit_sheet, survey_panels};
use crate::report::fit_json::fit_document;
use crate::report::fit_table::fit_table;
use crate::report::formats::{fit_csv, to_json, to_yaml};
use std::io::Write;
use std::time::Instant;

/// Runs `fit`; the result goes to `out` (or `--out`), warnings and details to `err`.
pub fn run_fit(
    args: &FitArgs,
    run: &Run,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let input = &args.input;
    let verbose = args.output.verbose;
    let clock = Instant::now();
    let data = read_input(input, verbose, err)?;
    if args.by.is_some() {
        if args.plots.is_some() {
            return Err(Error::Usage(
                "--plots draws one curve; it cannot be combined with --by".into(),
            ));
        }
        return run_batch(args, run, &data, out, err);
    }
    let (_, mut bound) = bind_input(input, &data)?;
    let model = &bound.problem.model;
    if verbose {
        let _ = writeln!(
            err,
            "foothold: model parameters: {}; predictors: {}; response: {}",
            model.params.join(", "),
            model.vars.join(", "),
            model.response
        );
    }
    let search_clock = Instant::now();
    let options = super::rank_cmd::search_options(&args.search);
    let (start, searched) = starting_values_searched(&args.start, &bound.problem, &options)?;
    let run = match searched {
        Some(_) => run.searched(&options),
        None => run.clone(),
    };
    if let (true, Some((tried, minima))) = (verbose, searched) {
        let opts = super::rank_cmd::search_options(&args.search);
        let why = if tried >= opts.starts {
            "every start tried"
        } else if opts.time_limit.is_some() {
            "stopped early (settled, or the time limit)"
        } else {
            crate::search::SearchStop::Settled.words()
        };
        let _ = writeln!(
            err,
            "foothold: starting values inferred; search: {tried} starts tried of at most {}, {minima} distinct minima, {:.1} ms; stopped: {why}",
            opts.starts,
            search_clock.elapsed().as_secs_f64() * 1e3
        );
    }
    bound.context.search = searched;
    let problem = &bound.problem;
    let fit_clock = Instant::now();
    let (result, summary) = lm_fit(problem, &start);
    if verbose {
        let _ = writeln!(
            err,
            "foothold: stopped: {} after {} iterations, {} model evaluations, {:.1} ms (total {:.1} ms)",
            summary.stop_reason,
            result.iterations,
            result.evaluations,
            fit_clock.elapsed().as_secs_f64() * 1e3,
            clock.elapsed().as_secs_f64() * 1e3
        );
    }
    let ctx = &bound.context;
    if !args.output.quiet {
        for w in ctx.warnings.iter().chain(&summary.warnings) {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    let doc = || WithRun {
        doc: fit_document(&summary, ctx),
        run: &run,
    };
    let text = match args.output.format {
        Format::Table => fit_table(&summary, ctx),
        Format::Json => {
            to_json(&doc()).map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
        }
        Format::Yaml => {
            to_yaml(&doc()).map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?
        }
        Format::Csv => fit_csv(&summary),
    };
    if let Some(dir) = &args.plots {
        let x = problem.x.first().map(Vec::as_slice).unwrap_or(&[]);
        let features = detect(x, &problem.y);
        let x_name = problem.model.vars.first().cloned().unwrap_or_default();
        let panels = survey_panels(&features, &x_name, &ctx.response);
        let sheet = fit_sheet(
            problem,
            &start,
            &result.params,
            &format!("Fit of {}", ctx.model),
        );
        write_plots(dir, &panels, &sheet)?;
    }
    emit(&text, args.out.as_deref(), out)?;
    if summary.converged {
        Ok(Outcome::Success)
    } else {
        Ok(Outcome::NotConverged(format!(
            "the fit did not converge (stop reason: {}, after {} iterations); try other starting values",
            summary.stop_reason, summary.iterations
        )))
    }
}
