//! The rules of `rules/transforms.yaml` read into expressions: response
//! transforms and the rewrite rules that bring a transformed model into a sum
//! of coefficient × basis terms. The rule file is loaded as plain text by
//! `crate::rules`; this module parses its formulas, so the dependency runs one
//! way only (symbolic → rules). Read and checked once, on first use.

use super::expr::{Expr, Func};
use super::parse::parse_formula;
use crate::rules::{rules, Guard, RulesError, TransformRules};
use std::collections::BTreeMap;
use std::sync::OnceLock;

/// The rule file these expressions come from, as named in errors.
const FILE: &str = "transforms.yaml";

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

/// Transforms and rewrite rules as expressions.
#[derive(Debug, Clone)]
pub struct TransformLibrary {
    /// Transforms, in order.
    pub transforms: Vec<TransformSpec>,
    /// Functions whose sum arguments are expanded before rewriting.
    pub expand_arguments_of: Vec<Func>,
    /// Rule sets by name.
    pub rule_sets: BTreeMap<String, Vec<RewriteRule>>,
}

/// The default transforms, read once. The embedded rule file is checked by
/// tests, so a failure here is a build defect, not a user error.
pub fn transform_library() -> &'static TransformLibrary {
    static LIBRARY: OnceLock<TransformLibrary> = OnceLock::new();
    LIBRARY.get_or_init(|| {
        read_transform_rules(&rules().transforms)
            .unwrap_or_else(|e| panic!("embedded rule files are invalid: {e}"))
    })
}

/// Parses a formula whose names must come from `allowed`; `Param(i)` = `allowed[i]`.
fn formula(text: &str, allowed: &[&str]) -> Result<Expr, RulesError> {
    let bad = |message: String| RulesError::Invalid {
        file: FILE,
        message,
    };
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

/// Reads the formulas of `transforms.yaml` (as loaded by `crate::rules`) into expressions.
pub fn read_transform_rules(raw: &TransformRules) -> Result<TransformLibrary, RulesError> {
    let bad = |message: String| RulesError::Invalid {
        file: FILE,
        message,
    };
    let mut rule_sets = BTreeMap::new();
    for (set, rules) in &raw.rule_sets {
        let mut out = Vec::new();
        for r in rules {
            let parsed = parse_formula(&r.from).map_err(|e| bad(e.to_string()))?;
            let vars = parsed.names.clone();
            let names: Vec<&str> = vars.iter().map(|s| s.as_str()).collect();
            let to = formula(&r.to, &names)?;
            let mut when = Vec::new();
            for (v, g) in &r.when {
                let i = names
                    .iter()
                    .position(|n| n == v)
                    .ok_or_else(|| bad(format!("rule '{}': 'when' names unknown '{v}'", r.from)))?;
                when.push((i, *g));
            }
            out.push(RewriteRule {
                from: parsed.rhs,
                to,
                vars,
                when,
            });
        }
        rule_sets.insert(set.clone(), out);
    }
    let mut transforms = Vec::new();
    for t in &raw.transforms {
        // first name (y, f or h) becomes Var(0), the plateau A becomes Param(0)
        let to_var = |e: Expr| -> Expr {
            e.map(&|n| match n {
                Expr::Param(0) => Some(Expr::Var(0)),
                Expr::Param(1) => Some(Expr::Param(0)),
                _ => None,
            })
        };
        let input = if t.plateau { "h" } else { "f" };
        let target = to_var(formula(&t.target, &["y", "A"])?);
        let apply = to_var(formula(&t.apply, &[input, "A"])?);
        transforms.push(TransformSpec {
            name: t.name.clone(),
            plateau: t.plateau,
            target,
            apply,
            rule_sets: t.rules.clone(),
        });
    }
    let mut expand_arguments_of = Vec::new();
    for n in &raw.expand_arguments_of {
        expand_arguments_of
            .push(Func::from_name(n).ok_or_else(|| bad(format!("unknown function '{n}'")))?);
    }
    Ok(TransformLibrary {
        transforms,
        expand_arguments_of,
        rule_sets,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rules::{parse_rules, LIMITS_YAML, NEUTRAL_YAML, TRANSFORMS_YAML};

    fn read(transforms: &str) -> Result<TransformLibrary, RulesError> {
        let r = parse_rules(LIMITS_YAML, transforms, NEUTRAL_YAML).unwrap();
        read_transform_rules(&r.transforms)
    }

    #[test]
    fn the_embedded_transforms_read() {
        let lib = read(TRANSFORMS_YAML).unwrap();
        let log = lib.transforms.iter().find(|t| t.name == "log").unwrap();
        // log(y) with the response as Var(0)
        assert_eq!(log.target, Expr::call(Func::Log, Expr::Var(0)));
        assert_eq!(lib.expand_arguments_of, vec![Func::Log]);
        assert!(lib.rule_sets["log"].iter().all(|r| !r.vars.is_empty()));
    }

    #[test]
    fn bad_formulas_are_errors() {
        let bad = TRANSFORMS_YAML.replace("apply: \"log(f)\"", "apply: \"log(g)\"");
        assert!(matches!(read(&bad), Err(RulesError::Invalid { .. })));
        let bad =
            TRANSFORMS_YAML.replace("expand_arguments_of: [log]", "expand_arguments_of: [lg]");
        assert!(matches!(read(&bad), Err(RulesError::Invalid { .. })));
        let bad =
            TRANSFORMS_YAML.replace("when: {u: negative_number}", "when: {w: negative_number}");
        assert!(matches!(read(&bad), Err(RulesError::Invalid { .. })));
    }
}
