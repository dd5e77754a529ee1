//! `foothold infer`: read the data, bind the model, work out starting values
//! from the model and the data, and print each with its derivation.

use super::args::{Format, InferArgs};
use super::prepare::{bind_input, read_input};
use super::provenance::{Run, WithRun};
use super::Outcome;
use crate::error::Error;
use crate::features::shape::Direction;
use crate::features::{XAxis, YTransform};
use crate::infer::{infer, InferOptions, Inference};
use crate::report::fit_table::format_number;
use crate::report::formats::csv_number;
use serde::Serialize;
use std::io::Write;
use std::time::Instant;

/// Runs `infer`; the result goes to `out`, warnings and details to `err`.
pub fn run_infer(
    args: &InferArgs,
    run: &Run,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let input = &args.input;
    let verbose = args.output.verbose;
    let data = read_input(input, verbose, err)?;
    let (_, bound) = bind_input(input, &data)?;
    let clock = Instant::now();
    let inf =
        infer(&bound.problem, &InferOptions::default()).map_err(|e| Error::Usage(e.to_string()))?;
    if verbose {
        let _ = writeln!(
            err,
            "foothold: inference took {:.1} ms; {} candidates",
            clock.elapsed().as_secs_f64() * 1e3,
            inf.candidates.len()
        );
    }
    if !args.output.quiet {
        for w in &bound.context.warnings {
            let _ = writeln!(err, "foothold: warning: {w}");
        }
    }
    let text = match args.output.format {
        Format::Table => infer_table(&inf, &bound.problem.model.text, &bound.context.data),
        Format::Json => infer_json(
            &inf,
            &bound.problem.model.text,
            &bound.context.data,
            &bound.context.response,
            run,
        )
        .map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?,
        Format::Yaml => {
            let json = infer_json(
                &inf,
                &bound.problem.model.text,
                &bound.context.data,
                &bound.context.response,
                run,
            )
            .map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?;
            let value: serde_json::Value = serde_json::from_str(&json)
                .map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?;
            serde_yaml_ng::to_string(&value)
                .map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?
        }
        Format::Csv => infer_csv(&inf),
    };
    super::output::emit(&text, None, out)?;
    Ok(Outcome::Success)
}

/// One row per parameter: name, start (full precision; empty when not finite), derivation.
pub fn infer_csv(inf: &Inference) -> String {
    let mut s = String::from("name,start,derivation\n");
    for p in &inf.parameters {
        let v = csv_number(p.start);
        s.push_str(&format!(
            "{},{},\"{}\"\n",
            p.name,
            v,
            p.derivation.replace('"', "\"\"")
        ));
    }
    s
}

/// A curve's direction in plain words, as the table prints it.
fn direction_words(d: Direction) -> &'static str {
    match d {
        Direction::Increasing => "increasing",
        Direction::Decreasing => "decreasing",
        Direction::NotMonotone => "rises and falls",
        Direction::Flat => "flat",
    }
}

fn fmt(v: f64) -> String {
    format_number(v, 7)
}

/// The inference as a plain-text table: parameters, then candidates and features.
pub fn infer_table(inf: &Inference, model: &str, source: &str) -> String {
    let mut s = String::new();
    s.push_str(&format!("Starting values for {model}\nData: {source}\n\n"));
    let wn = inf
        .parameters
        .iter()
        .map(|p| p.name.chars().count())
        .max()
        .unwrap_or(0)
        .max("parameter".len());
    let starts: Vec<String> = inf.parameters.iter().map(|p| fmt(p.start)).collect();
    let ws = starts
        .iter()
        .map(|t| t.len())
        .max()
        .unwrap_or(0)
        .max("start".len());
    s.push_str(&format!(
        "{:<wn$}  {:>ws$}  derivation\n",
        "parameter", "start"
    ));
    for (p, st) in inf.parameters.iter().zip(&starts) {
        s.push_str(&format!("{:<wn$}  {:>ws$}  {}\n", p.name, st, p.derivation));
    }
    s.push_str("\nCandidates (residual sum of squares, strategy):\n");
    for (i, c) in inf.candidates.iter().enumerate() {
        s.push_str(&format!("  {}. {}  {}\n", i + 1, fmt(c.ssr), c.strategy));
    }
    s.push_str("\nFeatures of the data:\n");
    s.push_str(&format!(
        "  noise sd ≈ {} (relative {})\n",
        fmt(inf.features.noise),
        fmt(inf.features.relative_noise)
    ));
    if let Some(v) = inf.features.view(XAxis::Linear, YTransform::Identity) {
        let f = &v.features;
        if let Some(m) = &f.monotonicity {
            s.push_str(&format!("  shape: {}\n", direction_words(m.direction)));
        }
        for (label, p) in [("low end", &f.low_plateau), ("high end", &f.high_plateau)] {
            if let Some(p) = p {
                s.push_str(&format!(
                    "  {label}: level {} ({})\n",
                    fmt(p.level),
                    if p.reached {
                        "plateau reached"
                    } else {
                        "still changing"
                    }
                ));
            }
        }
        for pk in &f.peaks.peaks {
            s.push_str(&format!(
                "  peak at x ≈ {}, height {}{}\n",
                fmt(pk.centre),
                fmt(pk.height),
                pk.hwhm
                    .map(|h| format!(", half width {}", fmt(h)))
                    .unwrap_or_default()
            ));
        }
        for pd in f.periods.iter().filter(|p| p.false_alarm < 0.01).take(3) {
            s.push_str(&format!(
                "  period ≈ {} (power ratio {})\n",
                fmt(pd.period),
                format_number(pd.power_ratio, 3)
            ));
        }
    }
    for n in &inf.notes {
        s.push_str(&format!("Note: {n}\n"));
    }
    s
}

#[derive(Serialize)]
struct ParamOut<'a> {
    name: &'a str,
    start: f64,
    derivation: &'a str,
}

#[derive(Serialize)]
struct InferOut<'a> {
    model: &'a str,
    data: &'a str,
    response: &'a str,
    parameters: Vec<ParamOut<'a>>,
    features: &'a crate::features::DataFeatures,
    candidates: &'a [crate::infer::Candidate],
    scales: &'a [crate::infer::ScanRange],
    notes: &'a [String],
}

/// The inference as JSON (non-finite numbers become `null`), with the model,
/// the data source, the response column and the run, as
/// docs/schema/infer.schema.json says.
pub fn infer_json(
    inf: &Inference,
    model: &str,
    source: &str,
    response: &str,
    run: &Run,
) -> Result<String, serde_json::Error> {
    let doc = InferOut {
        model,
        data: source,
        response,
        parameters: inf
            .parameters
            .iter()
            .map(|p| ParamOut {
                name: &p.name,
                start: p.start,
                derivation: &p.derivation,
            })
            .collect(),
        features: &inf.features,
        candidates: &inf.candidates,
        scales: &inf.scales,
        notes: &inf.notes,
    };
    let mut s = serde_json::to_string_pretty(&WithRun { doc, run })?;
    s.push('\n');
    Ok(s)
}
