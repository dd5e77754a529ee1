//! `foothold fit --by COLUMN`: one curve per group of rows sharing a value of
//! a column (text labels such as `A1` or numbers), fitted in parallel (rayon), with a progress bar on a
//! terminal (indicatif), or with `--verbose` a progress line every few
//! seconds when stderr is not a terminal. A failing group never stops the
//! others; every group gets one summary row, in order of first appearance.
//! The group column carries the `--by` column's name in every format.

use super::args::{FitArgs, Format, InputArgs};
use super::output::emit;
use super::prepare::{bind_rows, model_for, run_fit, starting_values_searched, starts_given};
use super::provenance::Run;
use super::rank_cmd::search_options;
use super::Outcome;
use crate::data::Dataset;
use crate::error::Error;
use crate::fit::problem::Problem;
use crate::report::fit_table::{format_number, SIGNIFICANT};
use crate::report::formats::{
    aligned_table, csv_line, csv_number, identifiable_cell, to_json, to_yaml, Align,
};
use crate::search::SearchOptions;
use crate::symbolic::Model;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use serde::ser::{SerializeMap, Serializer};
use serde::Serialize;
use std::io::{IsTerminal, Write};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

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
    /// Whether the group's data determine the parameter (`None`: undefined
    /// or not fitted); see `fit::stats::identifiability`.
    pub identifiable: Option<bool>,
}

/// The summary row of one group (written with [`KeyedRow`], which names the
/// group's field after the `--by` column).
#[derive(Debug, Clone)]
pub struct GroupRow {
    /// The group's value of the `--by` column, as text.
    pub group: String,
    pub status: GroupStatus,
    /// The group's rows with every cell the model uses: the rows its fit
    /// used, or would have used when it failed.
    pub n_obs: usize,
    pub iterations: usize,
    pub ssr: Option<f64>,
    pub parameters: Vec<GroupParameter>,
    /// Why the group failed or did not converge; empty otherwise.
    pub message: String,
}

/// The whole batch result (JSON and YAML output).
#[derive(Debug, Clone)]
pub struct BatchDoc {
    pub model: String,
    pub data: String,
    pub response: String,
    /// The `--by` column: also the name of each group's first field.
    pub by: String,
    pub groups: Vec<GroupRow>,
    pub warnings: Vec<String>,
}

/// A group's row as written in JSON and YAML: its first field is named after
/// the `--by` column (`"compound": "KX-101"`), as the table's and CSV's
/// first column are.
pub struct KeyedRow<'a> {
    /// The `--by` column's name.
    pub by: &'a str,
    /// The row.
    pub row: &'a GroupRow,
}

impl Serialize for KeyedRow<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let r = self.row;
        let mut m = s.serialize_map(Some(7))?;
        m.serialize_entry(self.by, &r.group)?;
        m.serialize_entry("status", &r.status)?;
        m.serialize_entry("n_obs", &r.n_obs)?;
        m.serialize_entry("iterations", &r.iterations)?;
        m.serialize_entry("ssr", &r.ssr)?;
        m.serialize_entry("parameters", &r.parameters)?;
        m.serialize_entry("message", &r.message)?;
        m.end()
    }
}

/// The batch document in the order JSON and YAML write it.
#[derive(Serialize)]
struct BatchOut<'a> {
    model: &'a str,
    data: &'a str,
    response: &'a str,
    by: &'a str,
    groups: Vec<KeyedRow<'a>>,
    warnings: &'a [String],
    run: &'a Run,
}

impl BatchDoc {
    /// The document as JSON and YAML write it, with the run that produced it.
    fn out<'a>(&'a self, run: &'a Run) -> BatchOut<'a> {
        BatchOut {
            model: &self.model,
            data: &self.data,
            response: &self.response,
            by: &self.by,
            groups: self
                .groups
                .iter()
                .map(|row| KeyedRow { by: &self.by, row })
                .collect(),
            warnings: &self.warnings,
            run,
        }
    }
}

/// Names the batch summary uses for its own columns (table, CSV, JSON): a
/// `--by` column with one of these names would be ambiguous.
fn summary_names(params: &[String]) -> Vec<String> {
    let mut names: Vec<String> = [
        "status", "rows", "n_obs", "iterations", "ssr", "parameters", "message",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    for p in params {
        names.push(p.clone());
        names.push(format!("se({p})"));
        names.push(format!("{p}_estimate"));
        names.push(format!("{p}_std_error"));
        names.push(format!("{p}_identifiable"));
    }
    names
}

/// One line saying which groups failed and which did not converge, e.g.
/// `2 of 6 groups failed (compound = A, B) and 1 did not converge (compound = C)`;
/// `None` when every group converged.
pub fn unfinished_summary<'a>(
    groups: impl IntoIterator<Item = (&'a str, GroupStatus)>,
    by: &str,
) -> Option<String> {
    let (mut failed, mut stalled, mut total) = (Vec::new(), Vec::new(), 0);
    for (label, status) in groups {
        total += 1;
        match status {
            GroupStatus::Failed => failed.push(label),
            GroupStatus::NotConverged => stalled.push(label),
            GroupStatus::Converged => {}
        }
    }
    let parts: Vec<String> = [(failed, "failed"), (stalled, "did not converge")]
        .into_iter()
        .filter(|(v, _)| !v.is_empty())
        .map(|(v, what)| format!("{} {what} ({by} = {})", v.len(), v.join(", ")))
        .collect();
    let (first, rest) = parts.split_first()?;
    let (count, tail) = first.split_once(' ').unwrap_or((first, ""));
    let mut line = format!("{count} of {total} groups {tail}");
    for r in rest {
        line += &format!(" and {r}");
    }
    Some(line)
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

/// Rows of `data` with a finite value in every column the model uses.
fn complete_rows(model: &Model, data: &Dataset) -> usize {
    let columns: Vec<&[f64]> = model
        .vars
        .iter()
        .chain(std::iter::once(&model.response))
        .filter_map(|c| data.column(c))
        .collect();
    (0..data.n_rows())
        .filter(|&i| columns.iter().all(|c| c.get(i).is_some_and(|v| v.is_finite())))
        .count()
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
        n_obs: complete_rows(model, data),
        iterations: 0,
        ssr: None,
        parameters: names
            .iter()
            .map(|n| GroupParameter {
                name: n.clone(),
                estimate: None,
                std_error: None,
                identifiable: None,
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
                identifiable: p.identifiable,
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

/// Interval between progress lines: 5 s, or `FOOTHOLD_PROGRESS_INTERVAL_MS`
/// (a knob for tests, see DEVELOPERS.md).
fn progress_interval() -> Duration {
    std::env::var("FOOTHOLD_PROGRESS_INTERVAL_MS")
        .ok()
        .and_then(|v| v.trim().parse::<u64>().ok())
        .filter(|&ms| ms > 0)
        .map_or(Duration::from_secs(5), Duration::from_millis)
}

/// A duration to the second, in words a reader takes in at a glance:
/// `42 s`, `3 min 05 s`, `2 h 07 min`.
fn rough_duration(secs: f64) -> String {
    let s = secs.max(0.0).round() as u64;
    match s {
        0..=59 => format!("{s} s"),
        60..=3599 => format!("{} min {:02} s", s / 60, s % 60),
        _ => format!("{} h {:02} min", s / 3600, (s % 3600) / 60),
    }
}

/// One progress line: `foothold: progress: 37/480 groups, 12.3 groups/s,
/// about 35 s left` (rate = groups done / time since the start; time left =
/// groups to do / rate).
pub fn progress_line(done: usize, total: usize, elapsed: Duration) -> String {
    let secs = elapsed.as_secs_f64();
    let rate = if secs > 0.0 { done as f64 / secs } else { 0.0 };
    let remaining = total.saturating_sub(done) as f64 / rate;
    let left = if done == 0 || rate <= 0.0 {
        "time left unknown".to_string()
    } else if remaining < 0.5 {
        "less than a second left".to_string()
    } else {
        format!("about {} left", rough_duration(remaining))
    };
    format!("foothold: progress: {done}/{total} groups, {rate:.1} groups/s, {left}")
}

/// Prints a progress line to stderr every `interval` until `stop` is closed.
fn progress_lines(done: &AtomicUsize, total: usize, interval: Duration, stop: mpsc::Receiver<()>) {
    let clock = Instant::now();
    while let Err(mpsc::RecvTimeoutError::Timeout) = stop.recv_timeout(interval) {
        let line = progress_line(done.load(Ordering::Relaxed), total, clock.elapsed());
        let _ = writeln!(std::io::stderr(), "{line}");
    }
}

/// Fits every group in parallel (rayon), in the order given. Progress on
/// stderr: a bar on a terminal unless `quiet`; with `verbose` and stderr not
/// a terminal (a log file), a line every few seconds ([`progress_line`]).
#[allow(clippy::too_many_arguments)]
pub fn fit_groups(
    start: &[String],
    search: &SearchOptions,
    model: &Model,
    data: &Dataset,
    groups: &[Group],
    by: &str,
    quiet: bool,
    verbose: bool,
) -> Vec<GroupFit> {
    let terminal = std::io::stderr().is_terminal();
    let show = !quiet && terminal;
    let lines = verbose && !quiet && !terminal;
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
    let done = AtomicUsize::new(0);
    let fits: Vec<GroupFit> = std::thread::scope(|scope| {
        let (stop, stopped) = mpsc::channel::<()>();
        if lines {
            let done = &done;
            let interval = progress_interval();
            scope.spawn(move || progress_lines(done, groups.len(), interval, stopped));
        }
        let fits = groups
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
                done.fetch_add(1, Ordering::Relaxed);
                bar.inc(1);
                fit
            })
            .collect();
        drop(stop);
        fits
    });
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
    let (spec, model) = model_for(input, data)?;
    if model.vars.iter().any(|v| v == by) || model.response == by {
        return Err(Error::Usage(format!(
            "--by {by}: the model uses '{by}' itself; group by another column"
        )));
    }
    if summary_names(&model.params).iter().any(|n| n == by) {
        return Err(Error::Usage(format!(
            "--by {by}: the batch summary names its group column after the --by column, \
             and '{by}' is already one of its own columns; rename the column in the data"
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
    let mut warnings = spec.notes;
    if groups.len() > 1 && groups.iter().all(|(_, rows)| rows.len() == 1) {
        warnings.push(format!(
            "--by {by} makes {} groups of one row each: almost certainly not the column that names the groups (each fit has one point)",
            groups.len()
        ));
    }
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
    run: &Run,
    data: &Dataset,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let by = args.by.clone().unwrap_or_default();
    let (model, groups, warnings) = batch_groups(&args.input, data, &by)?;
    let clock = std::time::Instant::now();
    let options = search_options(&args.search);
    let run = match starts_given(&args.start) {
        true => run.clone(),
        false => run.searched(&options),
    };
    let rows: Vec<GroupRow> = fit_groups(
        &args.start,
        &options,
        &model,
        data,
        &groups,
        &by,
        args.output.quiet,
        args.output.verbose,
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
            to_json(&doc.out(&run)).map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
        }
        Format::Yaml => {
            to_yaml(&doc.out(&run)).map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?
        }
    };
    emit(&text, args.out.as_deref(), out)?;
    let unfinished = unfinished_summary(
        doc.groups.iter().map(|r| (r.group.as_str(), r.status)),
        &by,
    );
    Ok(unfinished.map_or(Outcome::Success, Outcome::NotConverged))
}

/// Mark beside an estimate the group's data do not determine, in the table.
const NOT_IDENTIFIABLE_MARK: &str = " (n.i.)";

/// CSV header of the batch summary for these parameters; the first column
/// is named after the `--by` column.
pub fn batch_csv_header(by: &str, params: &[String]) -> Vec<String> {
    let mut h: Vec<String> = [by, "status", "n_obs", "iterations", "ssr"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    for p in params {
        h.push(format!("{p}_estimate"));
        h.push(format!("{p}_std_error"));
    }
    for p in params {
        h.push(format!("{p}_identifiable"));
    }
    h.push("message".into());
    h
}

fn opt_csv(v: Option<f64>) -> String {
    v.map(csv_number).unwrap_or_default()
}

/// The batch summary as CSV: a header, then one row per group.
pub fn batch_csv(doc: &BatchDoc, params: &[String]) -> String {
    let mut out = csv_line(&batch_csv_header(&doc.by, params));
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
        for p in &r.parameters {
            cells.push(identifiable_cell(p.identifiable));
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
                let mark = if p.identifiable == Some(false) {
                    NOT_IDENTIFIABLE_MARK
                } else {
                    ""
                };
                c.push(num(p.estimate) + mark);
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
    let marked = doc
        .groups
        .iter()
        .flat_map(|r| &r.parameters)
        .any(|p| p.identifiable == Some(false));
    if marked {
        out += &format!(
            "\n{} not identifiable from that group's data (see notes)\n",
            NOT_IDENTIFIABLE_MARK.trim()
        );
    }
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
    fn progress_lines_say_done_rate_and_time_left() {
        let secs = Duration::from_secs;
        assert_eq!(
            progress_line(0, 480, secs(5)),
            "foothold: progress: 0/480 groups, 0.0 groups/s, time left unknown"
        );
        assert_eq!(
            progress_line(60, 480, secs(5)),
            "foothold: progress: 60/480 groups, 12.0 groups/s, about 35 s left"
        );
        assert_eq!(
            progress_line(10, 4810, secs(5)),
            "foothold: progress: 10/4810 groups, 2.0 groups/s, about 40 min 00 s left"
        );
        assert_eq!(
            progress_line(1, 10_001, secs(1)),
            "foothold: progress: 1/10001 groups, 1.0 groups/s, about 2 h 46 min left"
        );
        assert!(progress_line(480, 480, secs(9)).ends_with("less than a second left"));
    }

    #[test]
    fn unfinished_groups_are_told_apart() {
        use GroupStatus::*;
        let g = [("A", Failed), ("B", Converged), ("C", NotConverged), ("D", Failed)];
        assert_eq!(
            unfinished_summary(g, "well").unwrap(),
            "2 of 4 groups failed (well = A, D) and 1 did not converge (well = C)"
        );
        assert_eq!(
            unfinished_summary([("A", NotConverged), ("B", Converged)], "w").unwrap(),
            "1 of 2 groups did not converge (w = A)"
        );
        assert_eq!(unfinished_summary([("A", Converged)], "w"), None);
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
