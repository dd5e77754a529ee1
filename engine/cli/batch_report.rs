//! `foothold report --by COLUMN`: fit every group (as `fit --by`) and write
//! one self-contained HTML page for the batch: summary table, an overlay of
//! every group's data and fitted curve, a grid of per-group panels, warnings
//! and the caution. A failing group shows as failed; it never stops the page.

use super::args::ReportArgs;
use super::batch::{batch_groups, fit_groups, unfinished_summary, GroupFit, GroupStatus};
use super::model_arg::resolve_model;
use super::output::emit;
use super::prepare::starts_given;
use super::provenance::Run;
use super::report_cmd::report_date;
use super::Outcome;
use crate::data::Dataset;
use crate::error::Error;
use crate::report::assemble::fit_sheet;
use crate::report::batch_html::{render_batch_report, BatchGroupRow, BatchReportInput};
use crate::report::html::formula_with_response;
use crate::report::plot::{
    common_y_range, group_grid_svg, group_panel, overlay_svg, GroupSeries, Overlay,
    MAX_OVERLAY_GROUPS,
};
use crate::symbolic::Model;
use std::io::Write;

/// Most groups drawn as separate panels (failed groups first); the table shows them all.
pub const MAX_PANELS: usize = 48;

/// Order of the panels: failed groups first, then those that did not
/// converge, then the rest, each in order of first appearance.
fn panel_rank(status: GroupStatus) -> u8 {
    match status {
        GroupStatus::Failed => 0,
        GroupStatus::NotConverged => 1,
        GroupStatus::Converged => 2,
    }
}

/// The points and fitted curve of one group for the plots.
fn series(fit: &GroupFit, model: &Model, data: &Dataset, rows: &[usize]) -> GroupSeries {
    let note = match fit.row.status {
        GroupStatus::Converged => String::new(),
        GroupStatus::NotConverged => "not converged".into(),
        GroupStatus::Failed => "failed".into(),
    };
    let (points, curve) = match &fit.problem {
        Some(problem) => {
            let x = problem.x.first().cloned().unwrap_or_default();
            let points = x.iter().copied().zip(problem.y.iter().copied()).collect();
            let curve = if fit.estimates.len() == model.params.len() {
                fit_sheet(problem, &[], &fit.estimates, "").fitted_curve
            } else {
                Vec::new()
            };
            (points, curve)
        }
        // Not bound (e.g. too few rows): the raw cells, when the response is untransformed.
        None => {
            let xs = model.vars.first().and_then(|v| data.column(v));
            let ys = data.column(&model.response);
            let points = match (xs, ys, &model.lhs) {
                (Some(xs), Some(ys), None) => rows
                    .iter()
                    .filter_map(|&i| Some((*xs.get(i)?, *ys.get(i)?)))
                    .filter(|(x, y)| x.is_finite() && y.is_finite())
                    .collect(),
                _ => Vec::new(),
            };
            (points, Vec::new())
        }
    };
    GroupSeries {
        label: fit.row.group.clone(),
        note,
        points,
        curve,
    }
}

/// Runs `report --by`: the batch page goes to `--out` (atomically) or to `out`.
pub fn run_batch_report(
    args: &ReportArgs,
    run: &Run,
    data: &Dataset,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let by = args.search.by.clone().unwrap_or_default();
    if args.plots.is_some() {
        return Err(Error::Usage(
            "--plots draws one curve; it cannot be combined with --by (the page holds the batch plots)"
                .into(),
        ));
    }
    let (model, groups, mut warnings) = batch_groups(&args.input, data, &by)?;
    let fits = fit_groups(
        &args.start,
        &super::rank_cmd::search_options(&args.search.budget),
        &model,
        data,
        &groups,
        &by,
        args.quiet,
        false,
    );

    let x_name = model.vars.first().cloned().unwrap_or_default();
    let y_label = model.response_text();
    let all: Vec<GroupSeries> = fits
        .iter()
        .zip(&groups)
        .map(|(f, (_, rows))| series(f, &model, data, rows))
        .collect();
    let overlay = Overlay {
        title: format!("{y_label} against {x_name}, one curve per {by}"),
        x_label: x_name.clone(),
        y_label: y_label.clone(),
        groups: all.clone(),
    };
    // Past twelve groups one chart gets crowded: the panels below replace it.
    let (overlay_svg_text, overlay_note) = if all.len() > MAX_OVERLAY_GROUPS {
        (
            String::new(),
            format!(
                "{} groups are too many to tell apart on one chart (at most {MAX_OVERLAY_GROUPS}); \
                 each group has its own panel below, all on a common y scale.",
                all.len()
            ),
        )
    } else {
        (overlay_svg(&overlay), String::new())
    };
    let mut order: Vec<usize> = (0..fits.len()).collect();
    order.sort_by_key(|&i| panel_rank(fits[i].row.status));
    let y_range = common_y_range(&all);
    let panels: Vec<_> = order
        .iter()
        .take(MAX_PANELS)
        .map(|&i| {
            let mut p = group_panel(&all[i], &x_name, &y_label);
            p.y_range = y_range;
            p
        })
        .collect();
    let failed_first = if order.iter().any(|&i| fits[i].row.status != GroupStatus::Converged) {
        " Groups that failed or did not converge come first."
    } else {
        ""
    };
    let grid_caption = if all.len() > MAX_PANELS {
        format!(
            "Each group's data and fitted curve on a common y scale: {MAX_PANELS} of {} groups (all are in the table above).{failed_first}",
            all.len()
        )
    } else {
        format!("Each group's data and fitted curve on its own panel, all on a common y scale.{failed_first}")
    };

    let rows: Vec<BatchGroupRow> = fits
        .iter()
        .map(|f| BatchGroupRow {
            group: f.row.group.clone(),
            status: f.row.status.as_str().to_string(),
            n_obs: f.row.n_obs,
            estimates: f
                .row
                .parameters
                .iter()
                .map(|p| (p.estimate, p.std_error))
                .collect(),
            ssr: f.row.ssr,
            message: f.row.message.clone(),
        })
        .collect();
    let unfinished = unfinished_summary(
        fits.iter().map(|f| (f.row.group.as_str(), f.row.status)),
        &by,
    );
    if let Some(u) = &unfinished {
        warnings.push(format!("{u}; see the notes under the table"));
    }
    let file = std::path::Path::new(&data.source)
        .file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_else(|| data.source.clone());
    let title = match resolve_model(&args.input.model, args.input.x.as_deref(), &data.columns)
        .ok()
        .and_then(|s| s.library)
    {
        Some(m) => format!(
            "Batch fit of the {} model to {file}, one curve per {by}",
            m.name
        ),
        None => format!("Batch fit to {file}, one curve per {by}"),
    };
    let used: usize = fits
        .iter()
        .filter(|f| f.row.status != GroupStatus::Failed)
        .map(|f| f.row.n_obs)
        .sum();
    let mut columns = model
        .vars
        .iter()
        .map(|v| format!("{v} (predictor)"))
        .collect::<Vec<_>>();
    columns.push(format!("{} (response)", model.response));
    columns.push(format!("{by} (groups)"));
    let data_facts = vec![
        ("File".to_string(), data.source.clone()),
        ("Rows read".to_string(), data.n_rows().to_string()),
        ("Groups".to_string(), fits.len().to_string()),
        ("Rows used in fits".to_string(), used.to_string()),
        ("Columns used".to_string(), columns.join(", ")),
        (
            "Starting values".to_string(),
            if starts_given(&args.start) {
                "given on the command line (--start), the same for every group".to_string()
            } else {
                "worked out for each group by inference and the multistart search".to_string()
            },
        ),
    ];
    let input = BatchReportInput {
        title,
        date: report_date(),
        model: formula_with_response(&model.text, &model.response_text()),
        data_facts,
        by: by.clone(),
        parameters: model.params.clone(),
        groups: rows,
        overlay_svg: overlay_svg_text,
        overlay_note,
        grid_svg: group_grid_svg(&panels),
        grid_caption,
        warnings: warnings.clone(),
    };
    let run = match starts_given(&args.start) {
        true => run.clone(),
        false => run.searched(&super::rank_cmd::search_options(&args.search.budget)),
    };
    let page = run.add_to_page(render_batch_report(&input));
    if !args.quiet {
        for w in &warnings {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    emit(&page, args.out.as_deref(), out)?;
    Ok(match unfinished {
        Some(u) => Outcome::NotConverged(format!("{u}; the report shows them")),
        None => Outcome::Success,
    })
}
