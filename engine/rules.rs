//! Declarative knowledge loaded from `rules/` (YAML): the dominance order of
//! growth components, response transforms with their rewrite rules, neutral values
//! and scan scales. The default files are embedded so the binary works from
//! anywhere; they are parsed and checked once, on first use.
//!
//! This module is plain data: it depends on nothing else in the engine.
//! Formulas in the files stay text here and are read into expressions by
//! `symbolic::transform_rules`; how each built-in function behaves is a
//! function fact (`symbolic::functions`), not a rule file.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::sync::OnceLock;
use thiserror::Error;

/// The embedded `rules/limits.yaml`.
pub const LIMITS_YAML: &str = include_str!("../rules/limits.yaml");
/// The embedded `rules/transforms.yaml`.
pub const TRANSFORMS_YAML: &str = include_str!("../rules/transforms.yaml");
/// The embedded `rules/neutral.yaml`.
pub const NEUTRAL_YAML: &str = include_str!("../rules/neutral.yaml");

/// Why a rule file cannot be used.
#[derive(Debug, Error)]
pub enum RulesError {
    #[error("rule file {file}: {source}")]
    Yaml {
        file: &'static str,
        source: serde_yaml_ng::Error,
    },
    #[error("rule file {file}: {message}")]
    Invalid { file: &'static str, message: String },
}

/// All rules, parsed and checked.
#[derive(Debug, Clone)]
pub struct Rules {
    /// The dominance order of growth components.
    pub limits: LimitRules,
    /// Response transforms and rewrite rules.
    pub transforms: TransformRules,
    /// Neutral values and scan scales.
    pub neutral: NeutralRules,
}

/// The default rules, parsed once. The embedded files are checked by tests, so a
/// failure here is a build defect, not a user error.
pub fn rules() -> &'static Rules {
    static RULES: OnceLock<Rules> = OnceLock::new();
    RULES.get_or_init(|| {
        parse_rules(LIMITS_YAML, TRANSFORMS_YAML, NEUTRAL_YAML)
            .unwrap_or_else(|e| panic!("embedded rule files are invalid: {e}"))
    })
}

/// Parses and checks the three rule files.
pub fn parse_rules(limits: &str, transforms: &str, neutral: &str) -> Result<Rules, RulesError> {
    Ok(Rules {
        limits: parse_limits(limits)?,
        transforms: parse_transforms(transforms)?,
        neutral: serde_yaml_ng::from_str(neutral).map_err(|source| RulesError::Yaml {
            file: "neutral.yaml",
            source,
        })?,
    })
}

// ---------------------------------------------------------------- limits

/// A growth component, in the order of `dominance`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Component {
    Exp,
    Power,
    Log,
    Const,
}

/// Rules of `limits.yaml`: the order in which growth components dominate.
/// (How each function behaves is a function fact: `symbolic::functions`.)
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LimitRules {
    /// Components in decreasing dominance.
    pub dominance: Vec<Component>,
}

fn parse_limits(text: &str) -> Result<LimitRules, RulesError> {
    const FILE: &str = "limits.yaml";
    let raw: LimitRules =
        serde_yaml_ng::from_str(text).map_err(|source| RulesError::Yaml { file: FILE, source })?;
    for c in [
        Component::Exp,
        Component::Power,
        Component::Log,
        Component::Const,
    ] {
        if raw.dominance.iter().filter(|d| **d == c).count() != 1 {
            return Err(RulesError::Invalid {
                file: FILE,
                message: format!("dominance must name {c:?} exactly once"),
            });
        }
    }
    Ok(raw)
}

// ---------------------------------------------------------------- transforms

/// A restriction on what a pattern variable may match.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Guard {
    Number,
    PositiveNumber,
    NegativeNumber,
    EvenNumber,
    FreeOfData,
}

/// One rewrite rule as written: a pattern and its replacement in the model
/// language, with restrictions on the pattern variables.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RuleText {
    /// Pattern; every name in it is a pattern variable.
    pub from: String,
    /// Replacement, in the pattern's names.
    pub to: String,
    /// Restrictions by variable name.
    #[serde(default)]
    pub when: BTreeMap<String, Guard>,
}

/// A response transform as written.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TransformText {
    /// Name, as reported.
    pub name: String,
    /// True when the transform needs a plateau parameter `A`.
    #[serde(default)]
    pub plateau: bool,
    /// T(response), a formula in `y` (and `A`).
    pub target: String,
    /// T(model), a formula in `f` (or `h` = model over plateau, and `A`).
    pub apply: String,
    /// Rule sets to rewrite with, in order of preference.
    pub rules: Vec<String>,
}

/// Rules of `transforms.yaml` as written. Their formulas are read into
/// expressions on the symbolic side (`symbolic::transform_rules`), so that this
/// module stays plain data and depends on nothing else in the engine.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TransformRules {
    /// Transforms, in order.
    pub transforms: Vec<TransformText>,
    /// Names of functions whose sum arguments are expanded before rewriting.
    pub expand_arguments_of: Vec<String>,
    /// Rule sets by name.
    pub rule_sets: BTreeMap<String, Vec<RuleText>>,
}

fn parse_transforms(text: &str) -> Result<TransformRules, RulesError> {
    const FILE: &str = "transforms.yaml";
    let raw: TransformRules =
        serde_yaml_ng::from_str(text).map_err(|source| RulesError::Yaml { file: FILE, source })?;
    for t in &raw.transforms {
        for s in &t.rules {
            if !raw.rule_sets.contains_key(s) {
                return Err(RulesError::Invalid {
                    file: FILE,
                    message: format!("transform '{}' names unknown rule set '{s}'", t.name),
                });
            }
        }
    }
    Ok(raw)
}

// ---------------------------------------------------------------- neutral values and scales

/// A neutral starting value and the sentence the derivation prints.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct NeutralValue {
    /// The value.
    pub value: f64,
    /// Derivation sentence; `{param}` is replaced by the parameter's name.
    pub sentence: String,
}

/// The data scale a scan range multiplies.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RelativeTo {
    XRange,
    YRange,
    InverseX,
    None,
}

/// A scan range for one role.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ScaleRule {
    /// Data scale the range multiplies.
    pub relative_to: RelativeTo,
    /// Low end (times the scale).
    pub low: f64,
    /// High end (times the scale).
    pub high: f64,
    /// Scan log-spaced.
    pub log_spaced: bool,
    /// Scan the mirrored negative range too.
    pub both_signs: bool,
}

/// Rules of `neutral.yaml`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NeutralRules {
    /// Neutral values by shape-role name.
    pub neutral: BTreeMap<String, NeutralValue>,
    /// Scan scales by role name.
    pub scales: BTreeMap<String, ScaleRule>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_rule_file_parses_and_is_complete() {
        let r = parse_rules(LIMITS_YAML, TRANSFORMS_YAML, NEUTRAL_YAML).unwrap();
        assert_eq!(r.limits.dominance.len(), 4);
        // every rule set is used by some transform
        for set in r.transforms.rule_sets.keys() {
            assert!(
                r.transforms
                    .transforms
                    .iter()
                    .any(|t| t.rules.contains(set)),
                "rule set {set} unused"
            );
        }
        assert!(r.transforms.transforms.iter().any(|t| t.name == "log"));
        assert!(r.neutral.neutral.contains_key("bending_exponent"));
    }

    #[test]
    fn bad_files_are_errors() {
        let bad = LIMITS_YAML.replace("[exp, power, log, const]", "[exp, power, log, log]");
        assert!(matches!(
            parse_rules(&bad, TRANSFORMS_YAML, NEUTRAL_YAML),
            Err(RulesError::Invalid { .. })
        ));
        assert!(matches!(
            parse_rules("dominance: [", TRANSFORMS_YAML, NEUTRAL_YAML),
            Err(RulesError::Yaml { .. })
        ));
        let bad = TRANSFORMS_YAML.replace("rules: [log]", "rules: [nonesuch]");
        assert!(parse_rules(LIMITS_YAML, &bad, NEUTRAL_YAML).is_err());
    }
}
