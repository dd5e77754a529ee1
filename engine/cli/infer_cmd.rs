//! `foothold infer`: starting values for every parameter, printed as a table,
//! JSON, YAML or CSV (`parameters: [{name, start, derivation}]`, see
//! docs/schema/infer.schema.json). The values come from the automatic hook.

use super::args::{Format, InferArgs};
use super::auto_start::starts_for;
use super::prepare::{bind_rows, model_for, read_input};
use super::Outcome;
use crate::error::Error;
use crate::report::fit_table::{format_number, SIGNIFICANT};
use crate::report::formats::{aligned_table, csv_line, csv_number, to_json, to_yaml, Align};
use serde::Serialize;
use std::io::Write;

/// One starting value and how it was obtained.
#[derive(Debug, Clone, Serialize)]
pub struct StartJson {
    pub name: String,
    pub start: Option<f64>,
    pub derivation: String,
}

/// The `infer` document.
#[derive(Debug, Clone, Serialize)]
pub struct InferDoc {
    pub model: String,
    pub data: String,
    pub response: String,
    pub parameters: Vec<StartJson>,
}

/// Renders the starting values in the chosen format.
pub fn render_starts(doc: &InferDoc, format: Format) -> Result<String, Error> {
    Ok(match format {
        Format::Json => {
            to_json(doc).map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?
        }
        Format::Yaml => {
            to_yaml(doc).map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?
        }
        Format::Csv => {
            let mut t = csv_line(&["name", "start", "derivation"]);
            for p in &doc.parameters {
                t += &csv_line(&[
                    p.name.clone(),
                    p.start.map(csv_number).unwrap_or_default(),
                    p.derivation.clone(),
                ]);
            }
            t
        }
        Format::Table => {
            let rows: Vec<Vec<String>> = doc
                .parameters
                .iter()
                .map(|p| {
                    vec![
                        p.name.clone(),
                        p.start
                            .map_or("n/a".into(), |v| format_number(v, SIGNIFICANT)),
                        p.derivation.clone(),
                    ]
                })
                .collect();
            format!(
                "model      {}\ndata       {}\nresponse   {}\n\n",
                doc.model, doc.data, doc.response
            ) + &aligned_table(
                &["parameter", "start", "how it was found"],
                &[Align::Left, Align::Right, Align::Left],
                &rows,
            )
        }
    })
}

/// Runs `infer`.
pub fn run_infer(
    args: &InferArgs,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> Result<Outcome, Error> {
    let data = read_input(&args.input, args.output.verbose, err)?;
    let (_, model) = model_for(&args.input, &data)?;
    let bound = bind_rows(model, &data)?;
    let start = starts_for(&bound.problem)?;
    let doc = InferDoc {
        model: bound.context.model.clone(),
        data: bound.context.data.clone(),
        response: bound.context.response.clone(),
        parameters: bound
            .problem
            .model
            .params
            .iter()
            .zip(&start)
            .map(|(n, v)| StartJson {
                name: n.clone(),
                start: v.is_finite().then_some(*v),
                // LEAD: each parameter's derivation from inference.
                derivation: String::new(),
            })
            .collect(),
    };
    let _ = out.write_all(render_starts(&doc, args.output.format)?.as_bytes());
    Ok(Outcome::Success)
}
