//! Reading `--model` and `--x`: a library model by name or a formula, with
//! the variable `x` renamed to a data column through the parsed tree (never
//! by editing the text), then bound to the data's columns.

use foothold::data::Dataset;
use foothold::error::Error;
use foothold::library::{self, LibraryModel, LIBRARY_X};
use foothold::symbolic::model::ModelError;
use foothold::symbolic::parse::{parse_formula, ParsedFormula};
use foothold::symbolic::Model;

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
}

/// Rebuilds formula text from parsed trees (`Param(i)` is `names[i]`).
fn formula_text(parsed: &ParsedFormula) -> String {
    let rhs = parsed.rhs.display(&parsed.names, &[]).to_string();
    match &parsed.lhs {
        Some(l) => format!("{} = {rhs}", l.display(&parsed.names, &[])),
        None => rhs,
    }
}

/// Resolves `--model` (a library name or a formula) and applies `--x COLUMN`,
/// which renames the formula's variable `x` to the column.
pub fn resolve_model(model: &str, x: Option<&str>) -> Result<ModelSpec, Error> {
    let name = model.trim();
    let lib = library::find(name);
    let source = lib.map(|m| m.formula.as_str()).unwrap_or(model);
    if lib.is_none() && library::is_kebab_case(name) && name.contains('-') {
        let near: Vec<&str> = library::library()
            .iter()
            .map(|m| m.name.as_str())
            .filter(|n| n.get(..3).is_some() && name.starts_with(&n[..3]))
            .collect();
        let hint = if near.is_empty() {
            String::new()
        } else {
            format!(" (did you mean {}?)", near.join(", "))
        };
        return Err(Error::Usage(format!(
            "'{name}' is not a model in the library{hint}; `foothold models` lists them. \
             To subtract names in a formula, put spaces around '-', e.g. 'a - b'"
        )));
    }
    let mut parsed = parse_formula(source).map_err(ModelError::from)?;
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
        let s = resolve_model("michaelis-menten", Some("substrate")).unwrap();
        assert_eq!(s.text, "vmax*substrate/(km + substrate)");
        assert!(s.library.is_some());
        let m = bind_model(&s, &data(&["substrate", "rate"]), Some("rate")).unwrap();
        assert_eq!(m.vars, vec!["substrate"]);
        assert_eq!(m.params, vec!["vmax", "km"]);
        assert_eq!(m.response, "rate");
        // A library model comes in the library's documented order, whatever
        // the formula's own order.
        let s = resolve_model("logistic-4", Some("log_dose")).unwrap();
        let m = bind_model(&s, &data(&["log_dose", "y"]), None).unwrap();
        assert_eq!(m.params, vec!["baseline", "full_effect", "x_half", "slope"]);
        // A name containing x is not touched: only the variable x is renamed.
        let s = resolve_model("y = xa*exp(-k*x) + x2", Some("t")).unwrap();
        assert_eq!(s.text, "y = xa*exp(-k*t) + x2");
        // Without --x a formula keeps the user's text exactly.
        let s = resolve_model("y = a*exp(-k*x)", None).unwrap();
        assert_eq!(s.text, "y = a*exp(-k*x)");
        assert!(s.library.is_none());
    }

    #[test]
    fn mistakes_are_reported() {
        let e = resolve_model("a*exp(-k*t)", Some("minutes"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("has no 'x'"), "{e}");
        let e = resolve_model("a*x + k", Some("k")).unwrap_err().to_string();
        assert!(e.contains("already uses the name 'k'"), "{e}");
        let e = resolve_model("exp-decai", None).unwrap_err().to_string();
        assert!(e.contains("foothold models"), "{e}");
        let s = resolve_model("exp-decay", None).unwrap();
        let e = bind_model(&s, &data(&["x", "y", "k"]), None)
            .unwrap_err()
            .to_string();
        assert!(e.contains("parameter 'k'"), "{e}");
    }
}
