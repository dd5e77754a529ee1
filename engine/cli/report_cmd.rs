//! `foothold report`: fit the model and write one self-contained HTML page
//! (data, features, starting values, ranking, estimates, plots, caution);
//! `--by` hands over to the batch page.

use super::args::ReportArgs;
use super::batch_report::run_batch_report;
use super::output::{emit, write_plots};
use super::prepare::{bind_input, read_input, run_fit, starting_values, starts_given};
use super::provenance::Run;
use super::rank_cmd::{ranked, search_options};
use super::Outcome;
use crate::auto_start::{best_start, infer_and_search};
use crate::error::Error;
use crate::features::detect;
use crate::fit::problem::Problem;
use crate::report::assemble::{fit_sheet, report_input, survey_panels, ReportParts};
use crate::report::fit_table::{format_number, SIGNIFICANT};
use crate::report::html::{render_report, MinimumRow, StartingValueRow};
use crate::search::SearchOptions;
use std::io::Write;

/// Today's date (UTC) as YYYY-MM-DD, or the date of `SOURCE_DATE_EPOCH` when
/// set, for reproducible pages.
pub fn report_date() -> String {
    let secs = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs() as i64)
                .unwrap_or(0)
        });
    let (y, m, d) = civil_from_days(secs.div_euclid(86_400));
    format!("{y:04}-{m:02}-{d:02}")
}

/// Gregorian date of a day count since 1970-01-01 (Hinnant 2013, "chrono-compatible
/// low-level date algorithms", civil_from_days).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// Minima listed in the report's ranking.
const REPORT_MINIMA: usize = 10;

/// The start a fit uses, one row per parameter saying how it was earned, and
/// the ranked minima of the search.
type SearchedStarts = (Vec<f64>, Vec<StartingValueRow>, Vec<MinimumRow>);

/// Starts found by inference and the multistart search ([`SearchedStarts`]).
fn searched_starts(problem: &Problem, opts: &SearchOptions) -> Result<SearchedStarts, Error> {
    let (inf, outcome) = infer_and_search(problem, opts)?;
    let (start, rank) = best_start(&inf, &outcome);
    let names = &problem.model.params;
    let rows = names
        .iter()
        .enumerate()
        .map(|(i, name)| {
            let inferred = inf.parameters.iter().find(|p| &p.name == name);
            let how = inferred
                .map(|p| {
                    format!(
                        "inferred {} — {}",
                        format_number(p.start, SIGNIFICANT),
                        p.derivation
                    )
                })
                .unwrap_or_else(|| "no inferred value".into());
            let derivation = match rank {
                Some(r) => format!(
                    "{how}; then the multistart search ({} starts): minimum ranked {r} of {}",
                    outcome.candidates_tried,
                    outcome.minima.len()
                ),
                None => format!(
                    "{how}; the multistart search ({} starts) found no proper minimum, so the inferred value is used",
                    outcome.candidates_tried
                ),
            };
            StartingValueRow {
                parameter: name.clone(),
                value: start.get(i).copied().unwrap_or(f64::NAN),
                derivation,
            }
        })
        .collect();
    // The same ranked list `rank` prints, as rows of the page.
    let minima = ranked(names, &outcome, REPORT_MINIMA)
        .into_iter()
        .map(|c| {
            let point = c
                .parameters
                .iter()
                .map(|p| {
                    let v = p.estimate.unwrap_or(f64::NAN);
                    format!("{} = {}", p.name, format_number(v, SIGNIFICANT))
                })
                .collect::<Vec<_>>()
                .join(", ");
            MinimumRow {
                rank: c.rank,
                ssr: c.ssr.unwrap_or(f64::NAN),
                share: c.share.unwrap_or(f64::NAN),
                iterations: c.iterations.map_or(0, |v| v as usize),
                parameters: if c.divergent.is_empty() {
                    point
                } else {
                    format!(
                        "{point} (at a boundary or running to infinity: {})",
                        c.divergent.join(", ")
                    )
                },
            }
        })
        .collect();
    Ok((start, rows, minima))
}

/// Runs `report`; the page goes to `--out` (atomically) or to `out`.
pub fn run_report(
    args: &ReportArgs,
    run: &Run,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let data = read_input(&args.input, false, err)?;
    if args.search.by.is_some() {
        return run_batch_report(args, run, &data, out, err);
    }
    let (spec, bound) = bind_input(&args.input, &data)?;
    let problem = &bound.problem;
    let given = starts_given(&args.start);
    let (start, starts, minima) = if given {
        let start = starting_values(&args.start, problem)?;
        let rows = problem
            .model
            .params
            .iter()
            .zip(&start)
            .map(|(p, v)| StartingValueRow {
                parameter: p.clone(),
                value: *v,
                derivation: "given on the command line (--start)".into(),
            })
            .collect();
        (start, rows, Vec::new())
    } else {
        searched_starts(problem, &search_options(&args.search.budget))?
    };
    let run = match given {
        true => run.clone(),
        false => run.searched(&search_options(&args.search.budget)),
    };
    let (result, summary) = run_fit(problem, &start);
    let x = problem.x.first().map(Vec::as_slice).unwrap_or(&[]);
    let features = detect(x, &problem.y);
    let file = std::path::Path::new(&data.source)
        .file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_else(|| data.source.clone());
    let title = match spec.library {
        Some(m) => format!("Fit of the {} model to {file}", m.name),
        None => format!("Fit to {file}"),
    };
    let mut warnings = Vec::new();
    if !summary.converged {
        warnings.push(format!(
            "The fit did not converge (stop reason: {}); the estimates are where it stopped.",
            summary.stop_reason
        ));
    }
    let parts = ReportParts {
        title,
        date: report_date(),
        context: &bound.context,
        rows_read: data.n_rows(),
        problem,
        features: &features,
        starts,
        minima,
        summary: &summary,
        warnings,
    };
    let page = run.add_to_page(render_report(&report_input(&parts)));
    if let Some(dir) = &args.plots {
        let x_name = problem.model.vars.first().cloned().unwrap_or_default();
        let panels = survey_panels(&features, &x_name, &bound.context.response);
        let sheet = fit_sheet(
            problem,
            &start,
            &result.params,
            &format!("Fit of {}", bound.context.model),
        );
        write_plots(dir, &panels, &sheet)?;
    }
    if !args.quiet {
        for w in bound.context.warnings.iter().chain(&summary.warnings) {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    emit(&page, args.out.as_deref(), out)?;
    if summary.converged {
        Ok(Outcome::Success)
    } else {
        Ok(Outcome::NotConverged(format!(
            "the fit did not converge (stop reason: {}); the report shows where it stopped",
            summary.stop_reason
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_from_day_counts() {
        // 1970-01-01 is day 0; 2000-03-01 is day 11017; 2024-02-29 is day 19782 (from memory).
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(19_782), (2024, 2, 29));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
    }
}
