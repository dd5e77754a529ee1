//! Checking given starting values, once for every edge: every parameter must
//! get exactly one finite value; mistakes are reported with the model's
//! parameter list. [`order_starts`] takes (name, value) pairs (the library and
//! the bindings); [`parse_starts`] reads the command line's `NAME=VALUE` text
//! into pairs and then checks them the same way.

use thiserror::Error;

/// What is wrong with the starting values given on the command line.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum StartError {
    /// No `--start` at all.
    #[error("no starting values given: give one for every parameter, e.g. --start {example}, or leave --start out to let foothold work them out (parameters: {params})")]
    NoneGiven { params: String, example: String },
    /// An item without `=`.
    #[error("--start '{item}' is not NAME=VALUE (parameters: {params})")]
    Malformed { item: String, params: String },
    /// A name that is not a parameter.
    #[error(
        "a starting value names '{name}', which is not a parameter of the model (parameters: {params})"
    )]
    Unknown { name: String, params: String },
    /// The same parameter twice.
    #[error("a starting value for '{name}' is given more than once (parameters: {params})")]
    Duplicate { name: String, params: String },
    /// A value that is not a finite number.
    #[error(
        "starting value {name}={text}: '{text}' is not a finite number (parameters: {params})"
    )]
    NotANumber {
        name: String,
        text: String,
        params: String,
    },
    /// Parameters left without a value.
    #[error("no starting value for {missing}; every parameter needs one (parameters: {params})")]
    Missing { missing: String, params: String },
}

/// Starting values in the order of `params`, from `NAME=VALUE` items (empty items ignored).
pub fn parse_starts(items: &[String], params: &[String]) -> Result<Vec<f64>, StartError> {
    let list = params.join(", ");
    let items: Vec<&str> = items
        .iter()
        .map(|s| s.trim())
        .filter(|s| !s.is_empty())
        .collect();
    if items.is_empty() {
        return Err(StartError::NoneGiven {
            params: list,
            example: params
                .iter()
                .map(|p| format!("{p}=1"))
                .collect::<Vec<_>>()
                .join(","),
        });
    }
    let mut pairs: Vec<(&str, f64)> = Vec::with_capacity(items.len());
    for item in items {
        let (name, text) = item.split_once('=').ok_or_else(|| StartError::Malformed {
            item: item.to_string(),
            params: list.clone(),
        })?;
        let (name, text) = (name.trim(), text.trim());
        if !params.iter().any(|p| p == name) {
            return Err(StartError::Unknown {
                name: name.to_string(),
                params: list,
            });
        }
        let v = text
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| StartError::NotANumber {
                name: name.to_string(),
                text: text.to_string(),
                params: list.clone(),
            })?;
        pairs.push((name, v));
    }
    order_starts(&pairs, params)
}

/// Starting values in the order of `params` from (name, value) pairs: each
/// parameter exactly once, every value finite.
pub fn order_starts(pairs: &[(&str, f64)], params: &[String]) -> Result<Vec<f64>, StartError> {
    let list = || params.join(", ");
    let mut values: Vec<Option<f64>> = vec![None; params.len()];
    for &(name, v) in pairs {
        let k = params
            .iter()
            .position(|p| p == name)
            .ok_or_else(|| StartError::Unknown {
                name: name.to_string(),
                params: list(),
            })?;
        if !v.is_finite() {
            return Err(StartError::NotANumber {
                name: name.to_string(),
                text: v.to_string(),
                params: list(),
            });
        }
        match values.get_mut(k) {
            Some(slot @ None) => *slot = Some(v),
            _ => {
                return Err(StartError::Duplicate {
                    name: name.to_string(),
                    params: list(),
                })
            }
        }
    }
    let missing: Vec<&str> = params
        .iter()
        .zip(&values)
        .filter(|(_, v)| v.is_none())
        .map(|(p, _)| p.as_str())
        .collect();
    if !missing.is_empty() {
        return Err(StartError::Missing {
            missing: missing.join(", "),
            params: list(),
        });
    }
    Ok(values.into_iter().flatten().collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn s(v: &[&str]) -> Vec<String> {
        v.iter().map(|x| x.to_string()).collect()
    }

    #[test]
    fn values_come_back_in_parameter_order() {
        let p = s(&["a", "b", "k"]);
        let v = parse_starts(&s(&["k = -0.5", "a=2e3", "", "b=+1"]), &p).unwrap();
        assert_eq!(v, vec![2000.0, 1.0, -0.5]);
    }

    #[test]
    fn every_mistake_lists_the_parameters() {
        let p = s(&["a", "k"]);
        let cases = [
            (vec![], "no starting values given"),
            (vec!["a"], "'a' is not NAME=VALUE"),
            (vec!["a=1", "q=2"], "names 'q', which is not a parameter"),
            (vec!["a=1", "a=2", "k=1"], "'a' is given more than once"),
            (vec!["a=one", "k=1"], "a=one: 'one' is not a finite number"),
            (vec!["a=nan", "k=1"], "'nan' is not a finite number"),
            (vec!["a=1"], "no starting value for k; every parameter"),
        ];
        for (items, want) in cases {
            let e = parse_starts(&s(&items), &p).unwrap_err().to_string();
            assert!(e.contains(want), "{items:?}: {e}");
            assert!(e.contains("(parameters: a, k)"), "{items:?}: {e}");
        }
        let e = parse_starts(&[], &p).unwrap_err().to_string();
        assert!(e.contains("--start a=1,k=1"), "{e}");
        let e = order_starts(&[("a", 1.0), ("k", f64::NAN)], &p).unwrap_err();
        assert!(
            e.to_string().contains("'NaN' is not a finite number"),
            "{e}"
        );
        assert_eq!(
            order_starts(&[("k", 2.0), ("a", 1.0)], &p),
            Ok(vec![1.0, 2.0])
        );
    }
}
