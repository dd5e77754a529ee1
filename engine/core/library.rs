//! The model library: models of the trade by name (`rules/models.yaml`,
//! embedded), each with its formula in `x`, its use, the meaning of every
//! parameter and the published source of the form. Parsed and checked once.

use crate::symbolic::parse::parse_formula;
use serde::{Deserialize, Serialize};
use std::sync::OnceLock;
use thiserror::Error;

/// The embedded `rules/models.yaml`.
pub const MODELS_YAML: &str = include_str!("../../rules/models.yaml");

/// The name of the independent variable in every library formula.
pub const LIBRARY_X: &str = "x";

/// Why the model library cannot be used.
#[derive(Debug, Error)]
pub enum LibraryError {
    #[error("model library: {0}")]
    Yaml(#[from] serde_yaml_ng::Error),
    #[error("model library, model '{model}': {message}")]
    Invalid { model: String, message: String },
}

/// One parameter of a library model and what it means.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ParameterMeaning {
    /// The parameter's name in the formula.
    pub name: String,
    /// What the parameter stands for.
    pub meaning: String,
    /// A hint at its units ("as the response", "1/x", "none").
    pub units: String,
}

/// A model of the trade.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LibraryModel {
    /// Our own descriptive kebab-case name, used with `--model NAME`.
    pub name: String,
    /// Right-hand side in the formula language, independent variable `x`.
    pub formula: String,
    /// One line on where the model is used.
    #[serde(rename = "use")]
    pub usage: String,
    /// Every parameter of the formula with its meaning, in the file's order.
    pub parameters: Vec<ParameterMeaning>,
    /// Published origin of the form, or "common practice".
    pub source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct LibraryFile {
    models: Vec<LibraryModel>,
}

/// The embedded library, parsed and checked once. The file is checked by
/// tests, so a failure here is a build defect, not a user error.
pub fn library() -> &'static [LibraryModel] {
    static LIBRARY: OnceLock<Vec<LibraryModel>> = OnceLock::new();
    LIBRARY.get_or_init(|| {
        parse_library(MODELS_YAML)
            .unwrap_or_else(|e| panic!("embedded model library is invalid: {e}"))
    })
}

/// The library model with this name, if any.
pub fn find(name: &str) -> Option<&'static LibraryModel> {
    library().iter().find(|m| m.name == name)
}

/// True for a non-empty lowercase kebab-case name (`logistic-4`, `decay-to-floor`).
pub fn is_kebab_case(name: &str) -> bool {
    !name.is_empty()
        && name.split('-').all(|part| {
            !part.is_empty()
                && part
                    .chars()
                    .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit())
        })
        && name.starts_with(|c: char| c.is_ascii_lowercase())
}

/// Parses a library file and checks every entry: unique kebab-case names, a
/// formula that parses with no left-hand side and uses `x`, and exactly the
/// formula's parameters listed, each with a meaning and a units hint.
pub fn parse_library(text: &str) -> Result<Vec<LibraryModel>, LibraryError> {
    let file: LibraryFile = serde_yaml_ng::from_str(text)?;
    let mut seen: Vec<&str> = Vec::new();
    for m in &file.models {
        let bad = |message: String| LibraryError::Invalid {
            model: m.name.clone(),
            message,
        };
        if !is_kebab_case(&m.name) {
            return Err(bad("the name is not lowercase kebab-case".into()));
        }
        if seen.contains(&m.name.as_str()) {
            return Err(bad("the name is used twice".into()));
        }
        seen.push(&m.name);
        if m.usage.trim().is_empty() || m.source.trim().is_empty() {
            return Err(bad("'use' and 'source' must not be empty".into()));
        }
        let parsed = parse_formula(&m.formula).map_err(|e| bad(e.to_string()))?;
        if parsed.lhs.is_some() {
            return Err(bad("the formula must be a right-hand side only".into()));
        }
        if !parsed.names.iter().any(|n| n == LIBRARY_X) {
            return Err(bad(format!("the formula does not use '{LIBRARY_X}'")));
        }
        let mut in_formula: Vec<&str> = parsed
            .names
            .iter()
            .map(String::as_str)
            .filter(|n| *n != LIBRARY_X)
            .collect();
        let mut listed: Vec<&str> = m.parameters.iter().map(|p| p.name.as_str()).collect();
        in_formula.sort_unstable();
        listed.sort_unstable();
        if in_formula != listed {
            return Err(bad(format!(
                "the parameters listed ({}) are not those of the formula ({})",
                listed.join(", "),
                in_formula.join(", ")
            )));
        }
        if let Some(p) = m
            .parameters
            .iter()
            .find(|p| p.meaning.trim().is_empty() || p.units.trim().is_empty())
        {
            return Err(bad(format!(
                "parameter '{}' needs a meaning and units",
                p.name
            )));
        }
    }
    Ok(file.models)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_library_entry_is_complete_and_parses() {
        let lib = parse_library(MODELS_YAML).unwrap();
        assert!(lib.len() >= 20, "only {} models", lib.len());
        for m in &lib {
            assert!(is_kebab_case(&m.name), "{}", m.name);
            let parsed = parse_formula(&m.formula).unwrap();
            assert!(parsed.names.iter().any(|n| n == "x"), "{}", m.name);
            assert!(!m.parameters.is_empty(), "{}", m.name);
            for p in &m.parameters {
                assert!(!p.meaning.trim().is_empty(), "{}: {}", m.name, p.name);
            }
        }
        let mut names: Vec<&str> = lib.iter().map(|m| m.name.as_str()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), lib.len(), "names must be unique");
        assert_eq!(library().len(), lib.len());
    }

    #[test]
    fn library_formulas_evaluate_to_the_textbook_values() {
        // Michaelis–Menten at x = km gives vmax/2 (common practice).
        let m = find("michaelis-menten").unwrap();
        let model =
            crate::symbolic::Model::new(&m.formula, &["x".into(), "y".into()], None).unwrap();
        let (vmax, km) = (42.0, 1.5);
        let p: Vec<f64> = model
            .params
            .iter()
            .map(|n| if n == "vmax" { vmax } else { km })
            .collect();
        assert!((model.rhs.eval(&p, &[km]) - vmax / 2.0).abs() < 1e-12);
        // The four-parameter logistic at x = x_half is half-way between
        // baseline and full_effect.
        let m = find("logistic-4").unwrap();
        let model =
            crate::symbolic::Model::new(&m.formula, &["x".into(), "y".into()], None).unwrap();
        let p: Vec<f64> = model
            .params
            .iter()
            .map(|n| match n.as_str() {
                "baseline" => 2.0,
                "full_effect" => 10.0,
                "x_half" => 0.5,
                _ => 3.0,
            })
            .collect();
        assert!((model.rhs.eval(&p, &[0.5]) - 6.0).abs() < 1e-12);
        // The three-parameter logistic is half its plateau at x_half; the
        // Gompertz curve is plateau*exp(-shift) at x = 0; the Weibull growth
        // curve starts at plateau - rise (all common practice).
        let value = |name: &str, at: &[(&str, f64)], x: f64| {
            let m = find(name).unwrap();
            let model =
                crate::symbolic::Model::new(&m.formula, &["x".into(), "y".into()], None).unwrap();
            let p: Vec<f64> = model
                .params
                .iter()
                .map(|n| at.iter().find(|(k, _)| k == n).unwrap().1)
                .collect();
            model.rhs.eval(&p, &[x])
        };
        let l3 = [("plateau", 80.0), ("x_half", 1.5), ("rate", 2.0)];
        assert!((value("logistic-3", &l3, 1.5) - 40.0).abs() < 1e-12);
        let g = [("plateau", 50.0), ("shift", 3.0), ("rate", 0.7)];
        assert!((value("gompertz", &g, 0.0) - 50.0 * (-3.0f64).exp()).abs() < 1e-12);
        let w = [
            ("plateau", 9.0),
            ("rise", 7.0),
            ("scale", 2.0),
            ("shape", 3.0),
        ];
        assert!((value("weibull-growth", &w, 0.0) - 2.0).abs() < 1e-12);
        // Both dose-response curves start at baseline and are half-way at
        // x_half (log dose) or ec50 (dose).
        let ll = [
            ("baseline", 4.0),
            ("full_effect", 90.0),
            ("ec50", 2.5),
            ("slope", 1.8),
        ];
        assert!((value("log-logistic-4", &ll, 0.0) - 4.0).abs() < 1e-12);
        assert!((value("log-logistic-4", &ll, 2.5) - 47.0).abs() < 1e-12);
        let l4 = [
            ("baseline", 4.0),
            ("full_effect", 90.0),
            ("x_half", 0.4),
            ("slope", 1.8),
        ];
        assert!((value("logistic-4", &l4, -40.0) - 4.0).abs() < 1e-12);
        // The Richards curve is steepest at x_inflection (central differences).
        let r = [
            ("plateau", 10.0),
            ("x_inflection", 4.0),
            ("rate", 1.3),
            ("nu", 0.4),
        ];
        let slope =
            |x: f64| (value("richards", &r, x + 1e-4) - value("richards", &r, x - 1e-4)) / 2e-4;
        assert!(slope(4.0) > slope(3.9) && slope(4.0) > slope(4.1));
        assert!(find("no-such-model").is_none());
    }

    #[test]
    fn bad_entries_are_refused() {
        let entry = |name: &str, formula: &str, params: &str| {
            format!(
                "models:\n  - name: {name}\n    formula: \"{formula}\"\n    use: \"u\"\n    parameters: {params}\n    source: \"s\"\n"
            )
        };
        let ok = "[{name: a, meaning: m, units: u}]";
        assert!(parse_library(&entry("good-one", "a*x", ok)).is_ok());
        for (text, want) in [
            (entry("Bad_Name", "a*x", ok), "kebab-case"),
            (
                entry(
                    "no-x",
                    "a*t",
                    "[{name: a, meaning: m, units: u}, {name: t, meaning: m, units: u}]",
                ),
                "does not use 'x'",
            ),
            (
                entry("missing", "a*x + b", ok),
                "are not those of the formula",
            ),
            (entry("unparsable", "a*(x", ok), "unbalanced"),
            (
                entry("no-meaning", "a*x", "[{name: a, meaning: '', units: u}]"),
                "needs a meaning",
            ),
        ] {
            let e = parse_library(&text).unwrap_err().to_string();
            assert!(e.contains(want), "{e}");
        }
        let twice = entry("same", "a*x", ok) + &entry("same", "a*x", ok).replace("models:\n", "");
        assert!(parse_library(&twice)
            .unwrap_err()
            .to_string()
            .contains("used twice"));
    }
}
