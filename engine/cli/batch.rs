//! `foothold fit --by COLUMN`: one curve per group of rows sharing a value of
//! a column (text labels such as `A1` or numbers), fitted in parallel (rayon), with a progress bar on a
//! terminal (indicatif). A failing group never stops the others; every group
//! gets one summary row, in order of first appearance.

use super::args::{FitArgs, Format, InputArgs};
use super::output::emit;
use super::prepare::{bind_rows, model_for, run_fit, starting_values_searched};
use super::rank_cmd::search_options;
use super::Outcome;
use crate::data::Dataset;
use crate::error::Error;
use crate::fit::problem::Problem;
use crate::report::fit_table::{format_number, SIGNIFICANT};
use crate::report::formats::{aligned_table, csv_line, csv_number, to_json, to_yaml, Align};
use crate::search::SearchOptions;
use crate::symbolic::Model;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use serde::Serialize;
use std::io::{IsTerminal, Write};

/// How one group's fit ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GroupStatus {
    /// The fit converged.
    Converged,
    /// The fit ran but did not converge.
    NotConverged,
    /// The group could not be fitted (too few rows, bad starts, ...).
    Failed,
}

impl GroupStatus {
    /// The status as written in outputs.
    pub fn as_str(self) -> &'static str {
        match self {
            GroupStatus::Converged => "converged",
            GroupStatus::NotConverged => "not_converged",
            GroupStatus::Failed => "failed",
        }
    }
}

/// One parameter of one group: estimate and standard error (`None` when not finite or not fitted).
#[derive(Debug, Clone, Serialize)]
pub struct GroupParameter {
    pub name: String,
    pub estimate: Option<f64>,
    pub std_error: Option<f64>,
}

/// The summary row of one group.
#[derive(Debug, Clone, Serialize)]
pub struct GroupRow {
    /// The group's value of the `--by` column, as text.
    pub group: String,
    pub status: GroupStatus,
    /// Rows used in this group's fit (0 when it failed before fitting).
    pub n_obs: usize,
    pub iterations: usize,
    pub ssr: Option<f64>,
    pub parameters: Vec<GroupParameter>,
    /// Why the group failed or did not converge; empty otherwise.
    pub message: String,
}

/// The whole batch result (JSON and YAML output).
#[derive(Debug, Clone, Serialize)]
pub struct BatchDoc {
    pub model: String,
    pub data: String,
    pub response: String,
    pub by: String,
    pub groups: Vec<GroupRow>,
    pub warnings: Vec<String>,
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// Group keys in order of first appearance and, for each, its row indices;
/// rows with an empty group cell are counted apart. One pass with a hash map
/// from the key's bits to its group (−0 and +0 are one key): O(rows).
pub fn groups_of(column: &[f64]) -> (Vec<(f64, Vec<usize>)>, usize) {
    let mut groups: Vec<(f64, Vec<usize>)> = Vec::new();
    let mut index: std::collections::HashMap<u64, usize> = std::collections::HashMap::new();
    let mut missing = 0;
    for (i, &v) in column.iter().enumerate() {
        if v.is_nan() {
            missing += 1;
            continue;
        }
        let key = if v == 0.0 { 0.0f64 } else { v };
        match index.entry(key.to_bits()) {
            std::collections::hash_map::Entry::Occupied(e) => groups[*e.get()].1.push(i),
            std::collections::hash_map::Entry::Vacant(e) => {
                e.insert(groups.len());
                groups.push((v, vec![i]));
            }
        }
    }
    (groups, missing)
}

/// One group: its label and the indices of its rows.
pub type Group = (String, Vec<usize>);

/// The groups of the `--by` column `by`: labels in order of first appearance
/// with their row indices, and the count of rows with an empty group cell.
/// Text columns group by their text; numeric columns by value, printed as numbers.
pub fn group_rows(data: &Dataset, by: &str) -> Option<(Vec<Group>, usize)> {
    if let Some(t) = data.text_column(by) {
        let mut groups: Vec<(String, Vec<usize>)> =
            t.labels.iter().map(|l| (l.clone(), Vec::new())).collect();
        let mut missing = 0;
        for i in 0..t.len() {
            match t.label_index(i) {
                Some(k) => groups[k].1.push(i),
                None => missing += 1,
            }
        }
        // Labels are in order of first appearance, so none is left empty.
        groups.retain(|(_, rows)| !rows.is_empty());
        return Some((groups, missing));
    }
    let (groups, missing) = groups_of(data.column(by)?);
    Some((
        groups
            .into_iter()
            .map(|(k, rows)| (format!("{k}"), rows))
            .collect(),
        missing,
    ))
}

/// The rows `rows` of `data`'s numeric columns, as a dataset labelled with the group.
pub fn subset(data: &Dataset, rows: &[usize], label: &str) -> Dataset {
    let numeric: Vec<usize> = (0..data.columns.len())
        .filter(|&j| data.text_column(&data.columns[j]).is_none())
        .collect();
    Dataset {
        columns: numeric.iter().map(|&j| data.columns[j].clone()).collect(),
        values: numeric
            .iter()
            .map(|&j| {
                let c = &data.values[j];
                rows.iter().filter_map(|&i| c.get(i).copied()).collect()
            })
            .collect(),
        text: Vec::new(),
        source: label.to_string(),
        skipped_rows: 0,
    }
}

/// One group's fit: the summary row, and the bound problem and estimates
/// (for plots) when the group got that far.
#[derive(Debug, Clone)]
pub struct GroupFit {
    /// The summary row.
    pub row: GroupRow,
    /// The group's rows bound to the model; `None` when binding failed.
    pub problem: Option<Problem>,
    /// The estimates; empty when the group was not fitted.
    pub estimates: Vec<f64>,
}

/// Fits one group; every error becomes a failed row.
fn fit_group(
    start: &[String],
    search: &SearchOptions,
    model: &Model,
    data: &Dataset,
    key: String,
) -> GroupFit {
    let names = &model.params;
    let failed = |message: String| GroupRow {
        group: key.clone(),
        status: GroupStatus::Failed,
        n_obs: 0,
        iterations: 0,
        ssr: None,
        parameters: names
            .iter()
            .map(|n| GroupParameter {
                name: n.clone(),
                estimate: None,
                std_error: None,
            })
            .collect(),
        message,
    };
    let bound = match bind_rows(model.clone(), data) {
        Ok(b) => b,
        Err(e) => {
            return GroupFit {
                row: failed(e.to_string()),
                problem: None,
                estimates: Vec::new(),
            }
        }
    };
    let start = match starting_values_searched(start, &bound.problem, search) {
        Ok((s, _)) => s,
        Err(e) => {
            return GroupFit {
                row: failed(e.to_string()),
                problem: Some(bound.problem),
                estimates: Vec::new(),
            }
        }
    };
    let (result, s) = run_fit(&bound.problem, &start);
    let status = if s.converged {
        GroupStatus::Converged
    } else {
        GroupStatus::NotConverged
    };
    let mut notes: Vec<String> = bound.context.warnings.clone();
    if !s.converged {
        notes.insert(
            0,
            format!("did not converge (stop reason: {})", s.stop_reason),
        );
    }
    notes.extend(s.warnings.iter().cloned());
    let row = GroupRow {
        group: key,
        status,
        n_obs: s.n_obs,
        iterations: s.iterations,
        ssr: finite(s.ssr),
        parameters: s
            .parameters
            .iter()
            .map(|p| GroupParameter {
                name: p.name.clone(),
                estimate: finite(p.estimate),
                std_error: finite(p.std_error),
            })
            .collect(),
        message: notes.join("; "),
    };
    GroupFit {
        row,
        problem: Some(bound.problem),
        estimates: result.params,
    }
}

/// Fits every group in parallel (rayon), in the order given, with a progress
/// bar on a terminal unless `quiet`.
pub fn fit_groups(
    start: &[String],
    search: &SearchOptions,
    model: &Model,
    data: &Dataset,
    groups: &[Group],
    by: &str,
    quiet: bool,
) -> Vec<GroupFit> {
    let show = !quiet && std::io::stderr().is_terminal();
    let bar = if show {
        let b =
            ProgressBar::with_draw_target(Some(groups.len() as u64), ProgressDrawTarget::stderr());
        if let Ok(style) =
            ProgressStyle::with_template("fitting {bar:30} {pos}/{len} groups ({elapsed})")
        {
            b.set_style(style);
        }
        b
    } else {
        ProgressBar::hidden()
    };
    let fits: Vec<GroupFit> = groups
        .par_iter()
        .map(|(key, idx)| {
            let label = format!("{} [{by} = {key}]", data.source);
            let fit = fit_group(
                start,
                search,
                model,
                &subset(data, idx, &label),
                key.clone(),
            );
            bar.inc(1);
            fit
        })
        .collect();
    bar.finish_and_clear();
    fits
}

/// Checks the `--by` column and the model against the data and splits the
/// rows into groups: (model, groups in order of first appearance, warnings).
pub fn batch_groups(
    input: &InputArgs,
    data: &Dataset,
    by: &str,
) -> Result<(Model, Vec<Group>, Vec<String>), Error> {
    if !data.has_column(by) {
        return Err(Error::Usage(format!(
            "--by names column '{by}', which is not in {} (columns: {})",
            data.source,
            data.column_list()
        )));
    }
    let (_, model) = model_for(input, data)?;
    if model.vars.iter().any(|v| v == by) || model.response == by {
        return Err(Error::Usage(format!(
            "--by {by}: the model uses '{by}' itself; group by another column"
        )));
    }
    // A cell that is not a number in a column the model uses stops the batch once.
    let mut used: Vec<&str> = model.vars.iter().map(String::as_str).collect();
    used.push(&model.response);
    data.check_numeric(&used)?;
    let (groups, missing) = group_rows(data, by).unwrap_or_default();
    if groups.is_empty() {
        return Err(Error::Usage(format!("--by {by}: the column has no values")));
    }
    let mut warnings = Vec::new();
    if missing > 0 {
        warnings.push(format!(
            "skipped {missing} row{} with an empty '{by}' cell",
            if missing == 1 { "" } else { "s" }
        ));
    }
    Ok((model, groups, warnings))
}

/// Runs the grouped fit of `fit --by`.
pub fn run_batch(
    args: &FitArgs,
    data: &Dataset,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let by = args.by.clone().unwrap_or_default();
    let (model, groups, warnings) = batch_groups(&args.input, data, &by)?;
    let clock = std::time::Instant::now();
    let rows: Vec<GroupRow> = fit_groups(
        &args.start,
        &search_options(&args.search),
        &model,
        data,
        &groups,
        &by,
        args.output.quiet,
    )
    .into_iter()
    .map(|f| f.row)
    .collect();
    if args.output.verbose {
        let count = |s: GroupStatus| rows.iter().filter(|r| r.status == s).count();
        let _ = writeln!(
            err,
            "foothold: batch: {} groups by {by}: {} converged, {} not converged, {} failed; {:.1} ms",
            rows.len(),
            count(GroupStatus::Converged),
            count(GroupStatus::NotConverged),
            count(GroupStatus::Failed),
            clock.elapsed().as_secs_f64() * 1e3
        );
    }
    if !args.output.quiet {
        for w in &warnings {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
        for r in rows.iter().filter(|r| r.status != GroupStatus::Converged) {
            let _ = writeln!(
                err,
                "foothold: warning: group {by} = {}: {}: {}",
                r.group,
                r.status.as_str(),
                r.message
            );
        }
    }
    let doc = BatchDoc {
        model: model.text.clone(),
        data: data.source.clone(),
        response: model.response.clone(),
        by: by.clone(),
        groups: rows,
        warnings,
    };
    let text = match args.output.format {
        Format::Table => batch_table(&doc, &model.params),
        Format::Csv => batch_csv(&doc, &model.params),
        Format::Json => {
            to_json(&doc).map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
        }
        Format::Yaml => {
            to_yaml(&doc).map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?
        }
    };
    emit(&text, args.out.as_deref(), out)?;
    let bad: Vec<&str> = doc
        .groups
        .iter()
        .filter(|r| r.status != GroupStatus::Converged)
        .map(|r| r.group.as_str())
        .collect();
    if bad.is_empty() {
        Ok(Outcome::Success)
    } else {
        Ok(Outcome::NotConverged(format!(
            "{} of {} groups did not converge ({by} = {})",
            bad.len(),
            doc.groups.len(),
            bad.join(", ")
        )))
    }
}

/// CSV header of the batch summary for these parameters.
pub fn batch_csv_header(params: &[String]) -> Vec<String> {
    let mut h: Vec<String> = ["group", "status", "n_obs", "iterations", "ssr"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    for p in params {
        h.push(format!("{p}_estimate"));
        h.push(format!("{p}_std_error"));
    }
    h.push("message".into());
    h
}

fn opt_csv(v: Option<f64>) -> String {
    v.map(csv_number).unwrap_or_default()
}

/// The batch summary as CSV: a header, then one row per group.
pub fn batch_csv(doc: &BatchDoc, params: &[String]) -> String {
    let mut out = csv_line(&batch_csv_header(params));
    for r in &doc.groups {
        let mut cells = vec![
            r.group.clone(),
            r.status.as_str().to_string(),
            r.n_obs.to_string(),
            r.iterations.to_string(),
            opt_csv(r.ssr),
        ];
        for p in &r.parameters {
            cells.push(opt_csv(p.estimate));
            cells.push(opt_csv(p.std_error));
        }
        cells.push(r.message.clone());
        out += &csv_line(&cells);
    }
    out
}

/// The batch summary as an aligned table (messages listed below it).
pub fn batch_table(doc: &BatchDoc, params: &[String]) -> String {
    let mut headers: Vec<String> = vec![
        doc.by.clone(),
        "status".into(),
        "rows".into(),
        "iterations".into(),
        "ssr".into(),
    ];
    for p in params {
        headers.push(p.clone());
        headers.push(format!("se({p})"));
    }
    let mut align = vec![Align::Left, Align::Left];
    align.resize(headers.len(), Align::Right);
    let num = |v: Option<f64>| v.map_or("n/a".to_string(), |v| format_number(v, SIGNIFICANT));
    let rows: Vec<Vec<String>> = doc
        .groups
        .iter()
        .map(|r| {
            let mut c = vec![
                r.group.clone(),
                r.status.as_str().to_string(),
                r.n_obs.to_string(),
                r.iterations.to_string(),
                num(r.ssr),
            ];
            for p in &r.parameters {
                c.push(num(p.estimate));
                c.push(num(p.std_error));
            }
            c
        })
        .collect();
    let heads: Vec<&str> = headers.iter().map(String::as_str).collect();
    let mut out = format!(
        "model      {}\ndata       {}\nresponse   {}\ngroups     {} by {}\n\n",
        doc.model,
        doc.data,
        doc.response,
        doc.groups.len(),
        doc.by
    );
    out += &aligned_table(&heads, &align, &rows);
    let notes: Vec<String> = doc
        .groups
        .iter()
        .filter(|r| !r.message.is_empty())
        .map(|r| format!("  - {} = {}: {}", doc.by, r.group, r.message))
        .chain(doc.warnings.iter().map(|w| format!("  - {w}")))
        .collect();
    if !notes.is_empty() {
        out += "\nnotes\n";
        out += &(notes.join("\n") + "\n");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn groups_keep_the_order_of_first_appearance() {
        let (g, missing) = groups_of(&[3.0, 1.0, 3.0, f64::NAN, 2.5, 1.0]);
        assert_eq!(missing, 1);
        let keys: Vec<f64> = g.iter().map(|(k, _)| *k).collect();
        assert_eq!(keys, vec![3.0, 1.0, 2.5]);
        assert_eq!(g[0].1, vec![0, 2]);
        assert_eq!(g[1].1, vec![1, 5]);
        assert_eq!(format!("{}", 3.0_f64), "3");
    }

    #[test]
    fn numeric_groups_hash_each_value_once() {
        // −0 and +0 are one group, as `==` says; 50,000 distinct ids stay in order.
        let (g, _) = groups_of(&[0.0, -0.0, 1.0]);
        assert_eq!(g.len(), 2);
        assert_eq!(g[0].1, vec![0, 1]);
        let col: Vec<f64> = (0..100_000).map(|i| ((i % 50_000) * 7 % 50_000) as f64).collect();
        let (g, missing) = groups_of(&col);
        assert_eq!((g.len(), missing), (50_000, 0));
        assert_eq!(g[1].0, 7.0);
        assert_eq!(g[1].1, vec![1, 50_001]);
    }

    #[test]
    fn text_labels_group_in_order_of_first_appearance() {
        let d = crate::data::parse_delimited(
            "well,x,y\nB12,1,2\nA1,2,3\n,3,4\nB12,4,5\nPC-3,5,6\n",
            "p.csv",
        )
        .unwrap();
        let (g, missing) = group_rows(&d, "well").unwrap();
        assert_eq!(missing, 1);
        let keys: Vec<&str> = g.iter().map(|(k, _)| k.as_str()).collect();
        assert_eq!(keys, vec!["B12", "A1", "PC-3"]);
        assert_eq!(g[0].1, vec![0, 3]);
        let s = subset(&d, &g[0].1, "p.csv [well = B12]");
        assert_eq!(s.columns, vec!["x", "y"], "the text column is left out");
        assert_eq!(s.values, vec![vec![1.0, 4.0], vec![2.0, 5.0]]);
        // Numeric group columns print as before.
        let (g, _) = group_rows(&d, "x").unwrap();
        assert_eq!(g[0].0, "1");
        assert!(group_rows(&d, "none").is_none());
    }
}
