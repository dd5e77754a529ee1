//! Reading `--model` and `--x`: a library model by name or a formula, with
//! the variable `x` renamed to a data column through the parsed tree (never
//! by editing the text), then bound to the data's columns. A misspelt
//! library name gets the nearest names as a hint; a data column named `e` or
//! `pi` is that column in a formula, with a note that it hides the constant.

use crate::data::Dataset;
use crate::error::Error;
use crate::library::{self, LibraryModel, LIBRARY_X};
use crate::symbolic::model::ModelError;
use crate::symbolic::parse::{parse_formula, parse_formula_for, ParsedFormula, CONSTANTS};
use crate::symbolic::Model;

/// A resolved `--model`: the formula text to show, its parsed trees, and the
/// library entry it came from, if any.
#[derive(Debug, Clone)]
pub struct ModelSpec {
    /// The formula as used (library formulas and `--x` renames rebuilt from the tree).
    pub text: String,
    /// The parsed formula, names already renamed.
    pub parsed: ParsedFormula,
    /// The library model named by `--model`, if it was a name.
    pub library: Option<&'static LibraryModel>,
    /// Notes for the user (warnings), e.g. a column that hides a constant.
    pub notes: Vec<String>,
}

/// Levenshtein distance between two strings, in characters (Wagner and
/// Fischer 1974, one row of the table kept).
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let next = (row[j + 1] + 1)
                .min(row[j] + 1)
                .min(diagonal + usize::from(ca != cb));
            diagonal = row[j + 1];
            row[j + 1] = next;
        }
    }
    row[b.len()]
}

/// True for text that reads as a name rather than a formula: letters,
/// digits, `-` and `_` only, starting with a letter (no operators, spaces or
/// parentheses).
fn looks_like_name(text: &str) -> bool {
    text.starts_with(|c: char| c.is_alphabetic())
        && text
            .chars()
            .all(|c| c.is_alphanumeric() || c == '-' || c == '_')
}

/// The library names nearest to `name` (case, `_` and `-` aside), when
/// within max(2, a quarter of its length) edits; empty when none is that close.
pub fn nearest_library_names(name: &str) -> Vec<&'static str> {
    let wanted: String = name.to_lowercase().replace('_', "-");
    let limit = 2.max(wanted.chars().count() / 4);
    let scored: Vec<(usize, &'static str)> = library::library()
        .iter()
        .map(|m| (edit_distance(&wanted, &m.name), m.name.as_str()))
        .filter(|(d, _)| *d <= limit)
        .collect();
    let best = scored.iter().map(|(d, _)| *d).min();
    scored
        .into_iter()
        .filter(|(d, _)| Some(*d) == best)
        .map(|(_, n)| n)
        .collect()
}

/// The notes for names of a user's formula that are columns hiding a constant.
fn constant_notes(parsed: &ParsedFormula) -> Vec<String> {
    CONSTANTS
        .iter()
        .filter(|(name, _, _)| parsed.names.iter().any(|n| n == name))
        .map(|(name, value, spelled)| {
            format!(
                "'{name}' in the formula is the data column '{name}', not the constant {name} = {value:.6}…: \
                 a column's name comes first; write {spelled} for the constant"
            )
        })
        .collect()
}

/// Rebuilds formula text from parsed trees (`Param(i)` is `names[i]`).
fn formula_text(parsed: &ParsedFormula) -> String {
    let rhs = parsed.rhs.display(&parsed.names, &[]).to_string();
    match &parsed.lhs {
        Some(l) => format!("{} = {rhs}", l.display(&parsed.names, &[])),
        None => rhs,
    }
}

/// Resolves `--model` (a library name or a formula) for a table with these
/// `columns` and applies `--x COLUMN`, which renames the formula's variable
/// `x` to the column. In a formula (not a library model), a column named
/// `e` or `pi` is that column, with a note.
pub fn resolve_model(model: &str, x: Option<&str>, columns: &[String]) -> Result<ModelSpec, Error> {
    let name = model.trim();
    let lib = library::find(name);
    let source = lib.map(|m| m.formula.as_str()).unwrap_or(model);
    if lib.is_none() && looks_like_name(name) {
        let near = nearest_library_names(name);
        let hint = if near.is_empty() {
            String::new()
        } else {
            format!(" (did you mean {}?)", near.join(", "))
        };
        if !near.is_empty() {
            return Err(Error::Usage(format!(
                "'{name}' is not a model in the library{hint}; `foothold models` lists them"
            )));
        }
        if library::is_kebab_case(name) && name.contains('-') {
            return Err(Error::Usage(format!(
                "'{name}' is not a model in the library; `foothold models` lists them. \
                 To subtract names in a formula, put spaces around '-', e.g. 'a - b'"
            )));
        }
    }
    let mut parsed = match lib {
        Some(_) => parse_formula(source),
        None => parse_formula_for(source, columns),
    }
    .map_err(ModelError::from)?;
    let notes = if lib.is_none() {
        constant_notes(&parsed)
    } else {
        Vec::new()
    };
    let mut rebuilt = lib.is_some();
    if let Some(col) = x {
        let Some(k) = parsed.names.iter().position(|n| n == LIBRARY_X) else {
            return Err(Error::Usage(format!(
                "--x {col} names the column for the variable 'x', but the model has no 'x' (names: {})",
                parsed.names.join(", ")
            )));
        };
        if col != LIBRARY_X {
            if parsed.names.iter().any(|n| n == col) {
                return Err(Error::Usage(format!(
                    "--x {col}: the model already uses the name '{col}'; choose another column or rename the parameter"
                )));
            }
            parsed.names[k] = col.to_string();
            rebuilt = true;
        }
    }
    let text = if rebuilt {
        formula_text(&parsed)
    } else {
        model.to_string()
    };
    Ok(ModelSpec {
        text,
        parsed,
        library: lib,
        notes,
    })
}

/// Binds a resolved model to the data's columns with the response `y`
/// (`--y`, default `y` when the formula has no left-hand side). A library
/// model lists its parameters in the library's documented order, a written
/// formula in order of first appearance. A library parameter that happens
/// to share a column's name is refused, since it would silently become a
/// variable.
pub fn bind_model(spec: &ModelSpec, data: &Dataset, y: Option<&str>) -> Result<Model, Error> {
    if let Some(m) = spec.library {
        if let Some(p) = m.parameters.iter().find(|p| data.has_column(&p.name)) {
            return Err(Error::Usage(format!(
                "library model '{}' has a parameter '{}', which is also a column of {}; rename the column or write the formula out",
                m.name, p.name, data.source
            )));
        }
    }
    let model = Model::bind(&spec.text, spec.parsed.clone(), &data.columns, y)?;
    Ok(match spec.library {
        Some(m) => {
            let order: Vec<&str> = m.parameters.iter().map(|p| p.name.as_str()).collect();
            model.with_param_order(&order)
        }
        None => model,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn data(cols: &[&str]) -> Dataset {
        Dataset {
            columns: cols.iter().map(|s| s.to_string()).collect(),
            values: vec![vec![1.0]; cols.len()],
            source: "d.csv".into(),
            skipped_rows: 0,
            text: Vec::new(),
        }
    }

    #[test]
    fn library_names_and_x_renames_go_through_the_tree() {
        let s = resolve_model("michaelis-menten", Some("substrate"), &[]).unwrap();
        assert_eq!(s.text, "vmax*substrate/(km + substrate)");
        assert!(s.library.is_some());
        let m = bind_model(&s, &data(&["substrate", "rate"]), Some("rate")).unwrap();
        assert_eq!(m.vars, vec!["substrate"]);
        assert_eq!(m.params, vec!["vmax", "km"]);
        assert_eq!(m.response, "rate");
        // A library model comes in the library's documented order, whatever
        // the formula's own order.
        let s = resolve_model("logistic-4", Some("log_dose"), &[]).unwrap();
        let m = bind_model(&s, &data(&["log_dose", "y"]), None).unwrap();
        assert_eq!(m.params, vec!["baseline", "full_effect", "x_half", "slope"]);
        // A name containing x is not touched: only the variable x is renamed.
        let s = resolve_model("y = xa*exp(-k*x) + x2", Some("t"), &[]).unwrap();
        assert_eq!(s.text, "y = xa*exp(-k*t) + x2");
        // Without --x a formula keeps the user's text exactly.
        let s = resolve_model("y = a*exp(-k*x)", None, &[]).unwrap();
        assert_eq!(s.text, "y = a*exp(-k*x)");
        assert!(s.library.is_none());
    }

    #[test]
    fn mistakes_are_reported() {
        let e = resolve_model("a*exp(-k*t)", Some("minutes"), &[])
            .unwrap_err()
            .to_string();
        assert!(e.contains("has no 'x'"), "{e}");
        let e = resolve_model("a*x + k", Some("k"), &[]).unwrap_err().to_string();
        assert!(e.contains("already uses the name 'k'"), "{e}");
        let e = resolve_model("exp-decai", None, &[]).unwrap_err().to_string();
        assert!(e.contains("foothold models"), "{e}");
        let s = resolve_model("exp-decay", None, &[]).unwrap();
        let e = bind_model(&s, &data(&["x", "y", "k"]), None)
            .unwrap_err()
            .to_string();
        assert!(e.contains("parameter 'k'"), "{e}");
    }

    #[test]
    fn misspelt_names_get_the_nearest_library_names() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(nearest_library_names("michaelis_menten"), vec!["michaelis-menten"]);
        assert_eq!(nearest_library_names("Logistic3"), vec!["logistic-3"]);
        assert!(nearest_library_names("a").is_empty());
        let e = resolve_model("michaelis_menten", None, &[]).unwrap_err().to_string();
        assert!(e.contains("did you mean michaelis-menten?"), "{e}");
        // A name near no library name is read as a formula (and refused when bound).
        assert!(resolve_model("rate", None, &[]).is_ok());
    }

    #[test]
    fn a_column_named_e_is_the_column_with_a_note() {
        let cols: Vec<String> = ["x", "e"].iter().map(|s| s.to_string()).collect();
        let s = resolve_model("e = a*x^b", None, &cols).unwrap();
        assert_eq!(s.notes.len(), 1);
        assert!(s.notes[0].contains("'e' in the formula is the data column 'e'"), "{:?}", s.notes);
        let m = bind_model(&s, &data(&["x", "e"]), None).unwrap();
        assert_eq!(m.response, "e");
        // The constant where no column has the name: no note.
        let s = resolve_model("y = a*e^(b*x)", None, &cols[..1]).unwrap();
        assert!(s.notes.is_empty());
    }
}
