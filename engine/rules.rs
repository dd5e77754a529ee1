//! Declarative knowledge loaded from `rules/` (YAML): the dominance order of
//! growth components, response transforms with their rewrite rules, neutral values
//! and scan scales. The default files are embedded so the binary works from
//! anywhere; they are parsed and checked once, on first use.

use crate::symbolic::expr::{Expr, Func};
use crate::symbolic::parse::parse_formula;
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

/// Parses a formula whose names must come from `allowed`; `Param(i)` = `allowed[i]`.
fn formula(text: &str, allowed: &[&str], file: &'static str) -> Result<Expr, RulesError> {
    let bad = |message: String| RulesError::Invalid { file, message };
    let parsed = parse_formula(text).map_err(|e| bad(e.to_string()))?;
    if parsed.lhs.is_some() {
        return Err(bad(format!("'{text}': no '=' expected")));
    }
    let mut map = Vec::new();
    for n in &parsed.names {
        match allowed.iter().position(|a| a == n) {
            Some(i) => map.push(i),
            None => return Err(bad(format!("'{text}': unexpected name '{n}'"))),
        }
    }
    Ok(parsed.rhs.map(&|e| match e {
        Expr::Param(i) => map.get(*i).map(|&j| Expr::Param(j)),
        _ => None,
    }))
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

/// One rewrite rule: `Param(i)` in `from`/`to` is pattern variable `vars[i]`.
#[derive(Debug, Clone, PartialEq)]
pub struct RewriteRule {
    /// Pattern.
    pub from: Expr,
    /// Replacement.
    pub to: Expr,
    /// Pattern variable names.
    pub vars: Vec<String>,
    /// Restrictions by variable index.
    pub when: Vec<(usize, Guard)>,
}

/// A response transform: `target` uses `Var(0)` = response, `apply` uses
/// `Var(0)` = model (or model over plateau); `Param(0)` is the plateau `A`.
#[derive(Debug, Clone, PartialEq)]
pub struct TransformSpec {
    /// Name, as reported.
    pub name: String,
    /// True when the transform needs a plateau parameter.
    pub plateau: bool,
    /// T(response).
    pub target: Expr,
    /// T(model).
    pub apply: Expr,
    /// Rule sets to rewrite with.
    pub rule_sets: Vec<String>,
}

/// Rules of `transforms.yaml`.
#[derive(Debug, Clone)]
pub struct TransformRules {
    /// Transforms, in order.
    pub transforms: Vec<TransformSpec>,
    /// Functions whose sum arguments are expanded before rewriting.
    pub expand_arguments_of: Vec<Func>,
    /// Rule sets by name.
    pub rule_sets: BTreeMap<String, Vec<RewriteRule>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTransform {
    name: String,
    #[serde(default)]
    plateau: bool,
    target: String,
    apply: String,
    rules: Vec<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRule {
    from: String,
    to: String,
    #[serde(default)]
    when: BTreeMap<String, Guard>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTransforms {
    transforms: Vec<RawTransform>,
    expand_arguments_of: Vec<String>,
    rule_sets: BTreeMap<String, Vec<RawRule>>,
}

fn parse_transforms(text: &str) -> Result<TransformRules, RulesError> {
    const FILE: &str = "transforms.yaml";
    let bad = |message: String| RulesError::Invalid {
        file: FILE,
        message,
    };
    let raw: RawTransforms =
        serde_yaml_ng::from_str(text).map_err(|source| RulesError::Yaml { file: FILE, source })?;
    let mut rule_sets = BTreeMap::new();
    for (set, rules) in raw.rule_sets {
        let mut out = Vec::new();
        for r in rules {
            let parsed = parse_formula(&r.from).map_err(|e| bad(e.to_string()))?;
            let vars = parsed.names.clone();
            let names: Vec<&str> = vars.iter().map(|s| s.as_str()).collect();
            let to = formula(&r.to, &names, FILE)?;
            let mut when = Vec::new();
            for (v, g) in r.when {
                let i = names
                    .iter()
                    .position(|n| *n == v)
                    .ok_or_else(|| bad(format!("rule '{}': 'when' names unknown '{v}'", r.from)))?;
                when.push((i, g));
            }
            out.push(RewriteRule {
                from: parsed.rhs,
                to,
                vars,
                when,
            });
        }
        rule_sets.insert(set, out);
    }
    let mut transforms = Vec::new();
    for t in raw.transforms {
        for s in &t.rules {
            if !rule_sets.contains_key(s) {
                return Err(bad(format!(
                    "transform '{}' names unknown rule set '{s}'",
                    t.name
                )));
            }
        }
        // first name (y, f or h) becomes Var(0), the plateau A becomes Param(0)
        let to_var = |e: Expr| -> Expr {
            e.map(&|n| match n {
                Expr::Param(0) => Some(Expr::Var(0)),
                Expr::Param(1) => Some(Expr::Param(0)),
                _ => None,
            })
        };
        let input = if t.plateau { "h" } else { "f" };
        let target = to_var(formula(&t.target, &["y", "A"], FILE)?);
        let apply = to_var(formula(&t.apply, &[input, "A"], FILE)?);
        transforms.push(TransformSpec {
            name: t.name,
            plateau: t.plateau,
            target,
            apply,
            rule_sets: t.rules,
        });
    }
    let mut expand_arguments_of = Vec::new();
    for n in raw.expand_arguments_of {
        expand_arguments_of
            .push(Func::from_name(&n).ok_or_else(|| bad(format!("unknown function '{n}'")))?);
    }
    Ok(TransformRules {
        transforms,
        expand_arguments_of,
        rule_sets,
    })
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
                    .any(|t| t.rule_sets.contains(set)),
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
