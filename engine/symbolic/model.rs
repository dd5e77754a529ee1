//! Binds a parsed formula to a dataset's columns: names that are columns
//! become variables, the rest parameters; the response side is fixed.

use super::expr::Expr;
use super::parse::{parse_formula_for, ParseError, ParsedFormula};
use thiserror::Error;

/// Why a formula cannot be used as a model for a given set of columns.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ModelError {
    #[error(transparent)]
    Parse(#[from] ParseError),
    #[error("the formula has no parameters: every name in it ({names}) is a data column")]
    NoParameters { names: String },
    #[error("the response column '{0}' is not in the data (columns: {1})")]
    NoResponse(String, String),
    #[error("the left-hand side must use the response column; '{lhs}' names no data column")]
    LhsWithoutColumn { lhs: String },
    #[error("the left-hand side may use only one data column, found {0}")]
    LhsManyColumns(String),
    #[error("the left-hand side must not contain parameters ({0})")]
    LhsWithParameters(String),
    #[error("the response column '{0}' is also used as a predictor on the right-hand side")]
    ResponseAsPredictor(String),
    #[error("the model uses no data column: it would be a constant (names: {0})")]
    NoPredictor(String),
}

/// A model ready to fit: right side `f(vars; params)` and the response
/// `g(y)` (plain `y` when the formula has no left side).
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    /// The formula as the user wrote it.
    pub text: String,
    /// Parameter names; `Expr::Param(i)` is `params[i]`. In order of first
    /// appearance in the formula (see [`Model::bind`]), or in a library
    /// model's documented order ([`Model::with_param_order`]).
    pub params: Vec<String>,
    /// Predictor column names; `Expr::Var(i)` is `vars[i]`.
    pub vars: Vec<String>,
    /// The response column's name.
    pub response: String,
    /// Response transform: `Var(0)` here is the response column. `None` = plain response.
    pub lhs: Option<Expr>,
    /// The model's right side.
    pub rhs: Expr,
}

impl Model {
    /// The response as the fit sees it: the column name, or the left-hand
    /// side written out (`log(y)`) when the formula transforms it.
    pub fn response_text(&self) -> String {
        match &self.lhs {
            Some(l) => l
                .display(&[], std::slice::from_ref(&self.response))
                .to_string(),
            None => self.response.clone(),
        }
    }

    /// Parses `text` and binds it to `columns`. `response` names the response
    /// column when the formula has no left side (default `y`). A column named
    /// `e` or `pi` is that column, not the constant.
    pub fn new(
        text: &str,
        columns: &[String],
        response: Option<&str>,
    ) -> Result<Model, ModelError> {
        let parsed = parse_formula_for(text, columns)?;
        Model::bind(text, parsed, columns, response)
    }

    /// Binds an already parsed formula. Parameters are listed in order of
    /// first appearance in the formula's text (`vmax*x/(km + x)` gives vmax,
    /// km; `b1 + b10*x + b2*x^2` gives b1, b10, b2). Two names cannot first
    /// appear at the same place, so no tie can arise; natural order (b2
    /// before b10) would break one.
    pub fn bind(
        text: &str,
        parsed: ParsedFormula,
        columns: &[String],
        response: Option<&str>,
    ) -> Result<Model, ModelError> {
        let is_col = |n: &str| columns.iter().any(|c| c == n);
        let lhs_names: Vec<usize> = match &parsed.lhs {
            Some(l) => (0..parsed.names.len())
                .filter(|&i| l.has_param(i))
                .collect(),
            None => Vec::new(),
        };
        let response = if parsed.lhs.is_some() {
            let cols: Vec<&String> = lhs_names
                .iter()
                .map(|&i| &parsed.names[i])
                .filter(|n| is_col(n))
                .collect();
            let params: Vec<&String> = lhs_names
                .iter()
                .map(|&i| &parsed.names[i])
                .filter(|n| !is_col(n))
                .collect();
            if !params.is_empty() {
                if cols.is_empty() && params.len() == 1 {
                    return Err(ModelError::LhsWithoutColumn {
                        lhs: params[0].clone(),
                    });
                }
                return Err(ModelError::LhsWithParameters(join(&params)));
            }
            match cols.len() {
                0 => {
                    return Err(ModelError::LhsWithoutColumn {
                        lhs: "(a constant)".into(),
                    })
                }
                1 => cols[0].clone(),
                _ => return Err(ModelError::LhsManyColumns(join(&cols))),
            }
        } else {
            let r = response.unwrap_or("y").to_string();
            if !is_col(&r) {
                return Err(ModelError::NoResponse(r, columns.join(", ")));
            }
            r
        };

        let rhs_uses = |i: usize| parsed.rhs.has_param(i);
        let mut params: Vec<String> = Vec::new();
        let mut vars: Vec<String> = Vec::new();
        for (i, n) in parsed.names.iter().enumerate() {
            if !rhs_uses(i) {
                continue;
            }
            if *n == response {
                return Err(ModelError::ResponseAsPredictor(n.clone()));
            }
            if is_col(n) {
                vars.push(n.clone());
            } else {
                params.push(n.clone());
            }
        }
        if params.is_empty() {
            return Err(ModelError::NoParameters {
                names: join(&vars.iter().collect::<Vec<_>>()),
            });
        }
        if vars.is_empty() {
            return Err(ModelError::NoPredictor(join(
                &params.iter().collect::<Vec<_>>(),
            )));
        }
        // `parsed.names` holds each name at its first appearance, left to
        // right, so `params` is already in order of first appearance; the
        // stable sort keeps it and orders only equal positions naturally.
        let first_at = |n: &String| parsed.names.iter().position(|m| m == n);
        params.sort_by(|a, b| {
            first_at(a)
                .cmp(&first_at(b))
                .then_with(|| natural_cmp(a, b))
        });
        let rename = |e: &Expr| -> Option<Expr> {
            if let Expr::Param(i) = e {
                let n = &parsed.names[*i];
                if let Some(j) = params.iter().position(|p| p == n) {
                    return Some(Expr::Param(j));
                }
                if let Some(j) = vars.iter().position(|v| v == n) {
                    return Some(Expr::Var(j));
                }
                if *n == response {
                    return Some(Expr::Var(0));
                }
            }
            None
        };
        let rhs = parsed.rhs.map(&rename);
        let lhs = parsed.lhs.as_ref().map(|l| l.map(&rename));
        Ok(Model {
            text: text.to_string(),
            params,
            vars,
            response,
            lhs,
            rhs,
        })
    }

    /// The same model with its parameters listed in `order` (a library
    /// model's documented order): the names in `order` first, as listed,
    /// then any others in their present order; `Expr::Param` indices are
    /// renumbered to match, so the model computes the same values.
    pub fn with_param_order(mut self, order: &[&str]) -> Model {
        let mut params: Vec<String> = order
            .iter()
            .filter(|n| self.params.iter().any(|p| p == *n))
            .map(|n| n.to_string())
            .collect();
        params.dedup();
        for p in &self.params {
            if !params.contains(p) {
                params.push(p.clone());
            }
        }
        let new_index: Vec<usize> = self
            .params
            .iter()
            .map(|p| params.iter().position(|q| q == p).unwrap_or(0))
            .collect();
        let renumber = |e: &Expr| match e {
            Expr::Param(i) => new_index.get(*i).map(|&j| Expr::Param(j)),
            _ => None,
        };
        self.rhs = self.rhs.map(&renumber);
        self.lhs = self.lhs.as_ref().map(|l| l.map(&renumber));
        self.params = params;
        self
    }

    /// Number of parameters.
    pub fn n_params(&self) -> usize {
        self.params.len()
    }

    /// Index of a parameter by name.
    pub fn param_index(&self, name: &str) -> Option<usize> {
        self.params.iter().position(|p| p == name)
    }

    /// The right side as text with the model's names.
    pub fn rhs_text(&self) -> String {
        self.rhs.display(&self.params, &self.vars).to_string()
    }
}

fn join(v: &[&String]) -> String {
    v.iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", ")
}

/// Orders names so that embedded numbers compare by value: b2 < b10.
pub fn natural_cmp(a: &str, b: &str) -> std::cmp::Ordering {
    fn split(s: &str) -> Vec<(String, Option<u64>)> {
        let mut out = Vec::new();
        let mut cur = String::new();
        let mut digits = false;
        for c in s.chars() {
            if c.is_ascii_digit() != digits && !cur.is_empty() {
                let n = if digits { cur.parse().ok() } else { None };
                out.push((std::mem::take(&mut cur), n));
            }
            digits = c.is_ascii_digit();
            cur.push(c);
        }
        if !cur.is_empty() {
            let n = if digits { cur.parse().ok() } else { None };
            out.push((cur, n));
        }
        out
    }
    let (sa, sb) = (split(a), split(b));
    for (x, y) in sa.iter().zip(sb.iter()) {
        let o = match (x.1, y.1) {
            (Some(p), Some(q)) => p.cmp(&q).then_with(|| x.0.cmp(&y.0)),
            _ => x.0.cmp(&y.0),
        };
        if o != std::cmp::Ordering::Equal {
            return o;
        }
    }
    sa.len().cmp(&sb.len())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cols(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn binds_columns_and_parameters() {
        let m = Model::new("b1 + b10*x + b2*x^2", &cols(&["x", "y"]), None).unwrap();
        // Order of first appearance, not natural or alphabetical order.
        assert_eq!(m.params, vec!["b1", "b10", "b2"]);
        assert_eq!(m.vars, vec!["x"]);
        assert_eq!(m.response, "y");
        assert_eq!(
            m.rhs.eval(&[1.0, 3.0, 2.0], &[2.0]),
            1.0 + 3.0 * 2.0 + 2.0 * 4.0
        );
        let m = Model::new("vmax*x/(km + x)", &cols(&["x", "y"]), None).unwrap();
        assert_eq!(m.params, vec!["vmax", "km"]);
        // A name used again later keeps its first place; a left-hand side
        // and columns take no place among the parameters.
        let m = Model::new(
            "log(y) = top - (top - low)*exp(-k*x)",
            &cols(&["x", "y"]),
            None,
        )
        .unwrap();
        assert_eq!(m.params, vec!["top", "low", "k"]);
    }

    #[test]
    fn a_documented_order_renumbers_the_parameters() {
        let m = Model::new(
            "bottom + (top - bottom)/(1 + exp(slope*(mid - x)))",
            &cols(&["x", "y"]),
            None,
        )
        .unwrap();
        assert_eq!(m.params, vec!["bottom", "top", "slope", "mid"]);
        let at = |m: &Model, x: f64, named: &[(&str, f64)]| {
            let p: Vec<f64> = m
                .params
                .iter()
                .map(|n| named.iter().find(|(k, _)| k == n).unwrap().1)
                .collect();
            m.rhs.eval(&p, &[x])
        };
        let truth = [("bottom", 2.0), ("top", 9.0), ("slope", 1.7), ("mid", 0.4)];
        let before = at(&m, 1.1, &truth);
        let r = m.with_param_order(&["bottom", "top", "mid", "slope"]);
        assert_eq!(r.params, vec!["bottom", "top", "mid", "slope"]);
        assert_eq!(at(&r, 1.1, &truth), before);
        // Names not listed follow in their present order; unknown ones are ignored.
        let r = r.with_param_order(&["slope", "nothing"]);
        assert_eq!(r.params, vec!["slope", "bottom", "top", "mid"]);
        assert_eq!(at(&r, 1.1, &truth), before);
    }

    #[test]
    fn left_side_names_the_response() {
        let m = Model::new(
            "log(y) = b1 - b2*x1*exp(-b3*x2)",
            &cols(&["y", "x1", "x2"]),
            None,
        )
        .unwrap();
        assert_eq!(m.response, "y");
        assert_eq!(m.vars, vec!["x1", "x2"]);
        assert_eq!(m.lhs.as_ref().unwrap().eval(&[], &[1.0]), 0.0);
    }

    #[test]
    fn refuses_bad_bindings() {
        let c = cols(&["x", "y"]);
        assert!(matches!(
            Model::new("x*2", &c, None),
            Err(ModelError::NoParameters { .. })
        ));
        assert!(matches!(
            Model::new("a*y", &c, None),
            Err(ModelError::ResponseAsPredictor(_))
        ));
        assert!(matches!(
            Model::new("a*x", &c, Some("z")),
            Err(ModelError::NoResponse(..))
        ));
        assert!(matches!(
            Model::new("a", &c, None),
            Err(ModelError::NoPredictor(_))
        ));
        assert!(matches!(
            Model::new("log(q) = a*x", &c, None),
            Err(ModelError::LhsWithoutColumn { .. })
        ));
        assert!(matches!(
            Model::new("y*a = b*x", &c, None),
            Err(ModelError::LhsWithParameters(_))
        ));
    }
}
