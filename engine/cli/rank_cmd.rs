//! `foothold rank`: inference, then the multistart search; prints the distinct
//! minima ranked by convergence, each with the start that reached it, so that a
//! chosen start can be plugged into any other fitter.

use super::args::{Format, RankArgs};
use super::prepare::{bind_input, read_input};
use super::provenance::Run;
use super::Outcome;
use crate::auto_start::infer_and_search;
use crate::error::Error;
use crate::report::fit_table::format_number;
use crate::report::formats::csv_number;
use crate::search::{SearchOptions, SearchOutcome};
use serde::Serialize;
use std::io::Write;

/// One parameter of a ranked candidate.
#[derive(Debug, Serialize)]
pub struct RankedParam {
    pub name: String,
    pub start: Option<f64>,
    pub estimate: Option<f64>,
}

/// One ranked minimum as documented in `docs/schema/rank.schema.json`.
#[derive(Debug, Serialize)]
pub struct RankedCandidate {
    pub rank: usize,
    pub parameters: Vec<RankedParam>,
    pub ssr: Option<f64>,
    pub share: Option<f64>,
    /// Median iterations, rounded to a whole number.
    pub iterations: Option<u64>,
    pub divergent: Vec<String>,
    /// Why this minimum ranks below one with a higher sum of squares (a
    /// minimum running to infinity ranks below proper minima within 1 % of
    /// its sum of squares, `search::rank`); `null` when it is not demoted.
    pub demoted: Option<String>,
    /// Set when several minima of equal cost on one flat valley are reported
    /// as this one entry.
    pub flat_valley: Option<FlatValley>,
}

/// A flat valley in the ranked list: how many minima lie on it and which
/// parameters change along it.
#[derive(Debug, Serialize)]
pub struct FlatValley {
    pub minima: usize,
    pub direction: Vec<String>,
    pub ssr_low: Option<f64>,
    pub ssr_high: Option<f64>,
}

/// The flat-valley note as tables print it.
pub fn valley_note(v: &FlatValley) -> String {
    let g = |x: Option<f64>| x.map(|x| format_number(x, 7)).unwrap_or_else(|| "n/a".into());
    format!(
        "flat valley: {} minima of equal cost (ssr {} to {}) along a direction moving {}; \
         reported once, at its lowest point",
        v.minima,
        g(v.ssr_low),
        g(v.ssr_high),
        if v.direction.is_empty() {
            "no parameter measurably".to_string()
        } else {
            v.direction.join(", ")
        }
    )
}

/// Ranks of the proper minima placed above minimum `k` although their sums of
/// squares are higher: non-empty only for a demoted divergent minimum.
fn demoted_below(outcome: &SearchOutcome, k: usize) -> Vec<usize> {
    let m = &outcome.minima[k];
    if m.divergent.is_empty() || !m.ssr.is_finite() {
        return Vec::new();
    }
    outcome.minima[..k]
        .iter()
        .filter(|o| o.divergent.is_empty() && o.ssr > m.ssr)
        .map(|o| o.rank)
        .collect()
}

/// The demotion note of minimum `k`, if it was demoted.
fn demotion_note(outcome: &SearchOutcome, k: usize) -> Option<String> {
    let above = demoted_below(outcome, k);
    if above.is_empty() {
        return None;
    }
    let list: Vec<String> = above.iter().map(|r| r.to_string()).collect();
    Some(format!(
        "ranked below rank {} despite a lower sum of squares: it runs to infinity, and a \
         proper minimum within {} % of its sum of squares ranks above it",
        list.join(", "),
        crate::search::rank::COMPARABLE * 100.0
    ))
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// The search options a command line asks for (defaults otherwise).
pub fn search_options(args: &super::args::SearchBudget) -> SearchOptions {
    let mut o = SearchOptions::default();
    if let Some(n) = args.starts {
        o.starts = n.max(1);
    }
    if let Some(s) = args.seed {
        o.seed = s;
    }
    if let Some(t) = args.time_limit.filter(|t| t.is_finite() && *t > 0.0) {
        o.time_limit = Some(std::time::Duration::from_secs_f64(t));
    }
    o
}

/// The ranked minima in the documented shape.
pub fn ranked(names: &[String], outcome: &SearchOutcome, top: usize) -> Vec<RankedCandidate> {
    outcome
        .minima
        .iter()
        .enumerate()
        .take(top)
        .map(|(k, m)| RankedCandidate {
            rank: m.rank,
            parameters: names
                .iter()
                .enumerate()
                .map(|(i, n)| RankedParam {
                    name: n.clone(),
                    start: m.start.get(i).copied().and_then(finite),
                    estimate: m.params.get(i).copied().and_then(finite),
                })
                .collect(),
            ssr: finite(m.ssr),
            share: finite(m.share),
            iterations: finite(m.iterations_median).map(|v| v.round().max(0.0) as u64),
            divergent: m
                .divergent
                .iter()
                .filter_map(|&i| names.get(i).cloned())
                .collect(),
            demoted: demotion_note(outcome, k),
            flat_valley: m.valley.as_ref().map(|v| FlatValley {
                minima: v.minima,
                direction: v
                    .direction
                    .iter()
                    .filter_map(|&i| names.get(i).cloned())
                    .collect(),
                ssr_low: finite(v.ssr_low),
                ssr_high: finite(v.ssr_high),
            }),
        })
        .collect()
}

/// A share (0..1) as a percentage with one decimal, e.g. "37.5 %".
pub fn percent(share: f64) -> String {
    format!("{:.1} %", 100.0 * share)
}

/// Runs `rank`.
pub fn run_rank(
    args: &RankArgs,
    run: &Run,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    if args.search.by.is_some() {
        return Err(Error::Usage(
            "rank --by is not supported; rank one curve at a time".into(),
        ));
    }
    let verbose = args.output.verbose;
    let data = read_input(&args.input, verbose, err)?;
    let (_, bound) = bind_input(&args.input, &data)?;
    if !args.output.quiet {
        for w in &bound.context.warnings {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    let search_clock = std::time::Instant::now();
    let options = search_options(&args.search.budget);
    let (_, outcome) = infer_and_search(&bound.problem, &options)?;
    let run = run.searched(&options);
    if verbose {
        let _ = writeln!(
            err,
            "foothold: search: {} starts tried, {} distinct minima; stopped: {}; {:.1} ms",
            outcome.candidates_tried,
            outcome.minima.len(),
            outcome.stop.words(),
            search_clock.elapsed().as_secs_f64() * 1e3
        );
    }
    let names = &bound.problem.model.params;
    let list = ranked(names, &outcome, args.top.unwrap_or(5).max(1));
    // One document for JSON and YAML, as docs/schema/rank.schema.json says.
    let doc = || {
        serde_json::json!({
            "model": bound.problem.model.text,
            "data": bound.context.data,
            "response": bound.context.response,
            "candidates_tried": outcome.candidates_tried,
            "search_stop": outcome.stop,
            "minima_found": outcome.minima.len(),
            "candidates": list,
            "run": run,
        })
    };
    let text = match args.output.format {
        Format::Json => {
            serde_json::to_string_pretty(&doc())
                .map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
                + "\n"
        }
        Format::Yaml => serde_yaml_ng::to_string(&doc())
            .map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?,
        Format::Csv => {
            let mut s = String::from("rank,parameter,start,estimate,ssr,share,iterations\n");
            for c in &list {
                for p in &c.parameters {
                    let f = |v: Option<f64>| v.map(csv_number).unwrap_or_default();
                    s.push_str(&format!(
                        "{},{},{},{},{},{},{}\n",
                        c.rank,
                        p.name,
                        f(p.start),
                        f(p.estimate),
                        f(c.ssr),
                        f(c.share),
                        c.iterations.map(|i| i.to_string()).unwrap_or_default()
                    ));
                }
            }
            s
        }
        Format::Table => {
            let mut s = format!(
                "model   {}\nsearch  {} local fits, {} distinct minima; stopped: {}\n",
                bound.problem.model.text,
                outcome.candidates_tried,
                outcome.minima.len(),
                outcome.stop.words()
            );
            for c in &list {
                let g = |v: Option<f64>| {
                    v.map(|x| format_number(x, 7))
                        .unwrap_or_else(|| "n/a".into())
                };
                s.push_str(&format!(
                    "\nrank {}  ssr {}  share {}  median iterations {}{}\n",
                    c.rank,
                    g(c.ssr),
                    c.share
                        .map(percent)
                        .unwrap_or_else(|| "n/a".into()),
                    c.iterations
                        .map(|i| i.to_string())
                        .unwrap_or_else(|| "n/a".into()),
                    if c.divergent.is_empty() {
                        String::new()
                    } else {
                        format!("  runs to infinity: {}", c.divergent.join(", "))
                    }
                ));
                if let Some(d) = &c.demoted {
                    s.push_str(&format!("  note: {d}\n"));
                }
                if let Some(v) = &c.flat_valley {
                    s.push_str(&format!("  note: {}\n", valley_note(v)));
                }
                let w = c
                    .parameters
                    .iter()
                    .map(|p| p.name.len())
                    .max()
                    .unwrap_or(0)
                    .max(9);
                s.push_str(&format!(
                    "  {:<w$}  {:>14}  {:>14}\n",
                    "parameter", "start", "estimate"
                ));
                for p in &c.parameters {
                    s.push_str(&format!(
                        "  {:<w$}  {:>14}  {:>14}\n",
                        p.name,
                        g(p.start),
                        g(p.estimate)
                    ));
                }
            }
            s
        }
    };
    super::output::emit(&text, None, out)?;
    Ok(if outcome.minima.iter().any(|m| m.divergent.is_empty()) {
        Outcome::Success
    } else {
        Outcome::NotConverged("no proper minimum found: every minimum runs to infinity".into())
    })
}
