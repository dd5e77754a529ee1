//! `foothold models`: the model library as an aligned table (name, formula,
//! use), or in full as JSON, YAML or CSV.

use super::args::{Format, ModelsArgs};
use super::Outcome;
use crate::error::Error;
use crate::library::library;
use crate::report::formats::{aligned_table, csv_line, to_json, to_yaml, Align};
use serde::Serialize;
use std::io::Write;

#[derive(Serialize)]
struct ModelsDoc {
    models: &'static [crate::library::LibraryModel],
}

/// Runs `models`, printing to `out`.
pub fn run_models(args: &ModelsArgs, out: &mut dyn Write) -> Result<Outcome, Error> {
    let lib = library();
    let text = match args.format {
        Format::Table => {
            let rows: Vec<Vec<&str>> = lib
                .iter()
                .map(|m| vec![m.name.as_str(), m.formula.as_str(), m.usage.as_str()])
                .collect();
            let mut t = aligned_table(&["name", "formula", "use"], &[Align::Left; 3], &rows);
            t += "\nUse a name with --model NAME; the formulas are written in x: map it with --x COLUMN,\nand name the response with --y COLUMN. `foothold models --format yaml` lists the\nparameters' meanings and the sources.\n";
            t
        }
        Format::Json => to_json(&ModelsDoc { models: lib })
            .map_err(|e| Error::Usage(format!("cannot write JSON: {e}")))?,
        Format::Yaml => to_yaml(&ModelsDoc { models: lib })
            .map_err(|e| Error::Usage(format!("cannot write YAML: {e}")))?,
        Format::Csv => {
            let mut t = csv_line(&["name", "formula", "use", "parameters", "source"]);
            for m in lib {
                let params = m
                    .parameters
                    .iter()
                    .map(|p| p.name.as_str())
                    .collect::<Vec<_>>()
                    .join(" ");
                t += &csv_line(&[&m.name, &m.formula, &m.usage, &params, &m.source]);
            }
            t
        }
    };
    super::output::emit(&text, None, out)?;
    Ok(Outcome::Success)
}
