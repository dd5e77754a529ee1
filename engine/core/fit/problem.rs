//! A model bound to a dataset as a least-squares problem: response (after the
//! left-hand transform) minus the compiled right-hand side, with its Jacobian.

use super::domain::domain_fault;
use super::trust::enorm;
use super::Residuals;
use crate::data::Dataset;
use crate::symbolic::diff::diff_param;
use crate::symbolic::simplify::{neg, simplify};
use crate::symbolic::tape::Tape;
use crate::symbolic::{Expr, Model};
use nalgebra::DMatrix;
use thiserror::Error;

/// Why a model and a dataset do not make a fittable problem.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ProblemError {
    #[error("{rows} usable rows are too few for {params} parameters: need at least {need}")]
    TooFewRows {
        rows: usize,
        params: usize,
        need: usize,
    },
    #[error("the left-hand side {lhs} is not finite at data row {row} (column '{response}' = {value}); check the data or the transform")]
    LhsNotFinite {
        lhs: String,
        row: usize,
        response: String,
        value: f64,
    },
    /// A data-only term with no value at a row, whatever the parameters.
    #[error("{term} is undefined at data row {row} ({cells}) whatever the parameters are; remove that row or change the formula")]
    TermUndefined {
        term: String,
        row: usize,
        cells: String,
    },
    #[error("column '{0}' is missing from the data")]
    MissingColumn(String),
    #[error("column '{column}' has {len} values but the response has {expected}")]
    ColumnLength {
        column: String,
        len: usize,
        expected: usize,
    },
    #[error("column '{column}' is not finite at row {row} (value {value})")]
    NotFinite {
        column: String,
        row: usize,
        value: f64,
    },
}

/// The least-squares problem r(p) = g(y) − f(x; p).
#[derive(Debug, Clone)]
pub struct Problem {
    pub model: Model,
    /// Response after the left-hand transform.
    pub y: Vec<f64>,
    /// Predictor columns in `model.vars` order.
    pub x: Vec<Vec<f64>>,
    /// Rows left out because a used cell was missing (NaN).
    pub dropped_rows: usize,
    /// For each kept row, its 0-based row in the data as given.
    pub row_index: Vec<usize>,
    /// ∂r/∂p_k = −∂f/∂p_k, simplified, one per parameter.
    pub jacobian_exprs: Vec<Expr>,
    /// Compiled [f].
    value_tape: Tape,
    /// Compiled [∂r/∂p_0, …].
    jacobian_tape: Tape,
}

impl Problem {
    /// Binds `model` to `data`.
    pub fn new(model: Model, data: &Dataset) -> Result<Problem, ProblemError> {
        let mut x = Vec::with_capacity(model.vars.len());
        for v in &model.vars {
            match data.column(v) {
                Some(c) => x.push(c.to_vec()),
                None => return Err(ProblemError::MissingColumn(v.clone())),
            }
        }
        let y = match data.column(&model.response) {
            Some(c) => c.to_vec(),
            None => return Err(ProblemError::MissingColumn(model.response.clone())),
        };
        Problem::from_columns(model, x, y)
    }

    /// Binds a model to in-memory columns (`x[j]` is `model.vars[j]`; `y` the raw response).
    pub fn from_columns(
        model: Model,
        x: Vec<Vec<f64>>,
        y: Vec<f64>,
    ) -> Result<Problem, ProblemError> {
        if x.len() < model.vars.len() {
            let name = model.vars.get(x.len()).cloned().unwrap_or_default();
            return Err(ProblemError::MissingColumn(name));
        }
        let n = y.len();
        for (j, c) in x.iter().enumerate().take(model.vars.len()) {
            if c.len() != n {
                return Err(ProblemError::ColumnLength {
                    column: model.vars[j].clone(),
                    len: c.len(),
                    expected: n,
                });
            }
        }
        let x_used = &x[..model.vars.len()];
        let lhs_text = model.response_text();

        let mut keep = Vec::with_capacity(n);
        let mut gy = Vec::with_capacity(n);
        let mut dropped = 0;
        for i in 0..n {
            let yi = y[i];
            if yi.is_nan() || x_used.iter().any(|c| c[i].is_nan()) {
                dropped += 1;
                continue;
            }
            for (j, c) in x_used.iter().enumerate() {
                if !c[i].is_finite() {
                    return Err(ProblemError::NotFinite {
                        column: model.vars[j].clone(),
                        row: i + 1,
                        value: c[i],
                    });
                }
            }
            let g = match &model.lhs {
                Some(l) => l.eval(&[], &[yi]),
                None => yi,
            };
            if !g.is_finite() {
                return Err(ProblemError::LhsNotFinite {
                    lhs: lhs_text,
                    row: i + 1,
                    response: model.response.clone(),
                    value: yi,
                });
            }
            keep.push(i);
            gy.push(g);
        }
        let np = model.n_params();
        if keep.len() < np + 1 {
            return Err(ProblemError::TooFewRows {
                rows: keep.len(),
                params: np,
                need: np + 1,
            });
        }
        let cols: Vec<&[f64]> = x_used.iter().map(|c| c.as_slice()).collect();
        if let Some(f) = domain_fault(&model.rhs, &cols, &keep) {
            let cells: Vec<String> = (0..model.vars.len())
                .filter(|&j| f.term.has_var(j))
                .map(|j| format!("column '{}' = {}", model.vars[j], cols[j][f.row]))
                .collect();
            return Err(ProblemError::TermUndefined {
                term: f.term.display(&model.params, &model.vars).to_string(),
                row: f.row + 1,
                cells: cells.join(", "),
            });
        }
        let xs: Vec<Vec<f64>> = x_used
            .iter()
            .map(|c| keep.iter().map(|&i| c[i]).collect())
            .collect();

        let f = simplify(&model.rhs);
        let jacobian_exprs: Vec<Expr> = (0..np).map(|k| neg(diff_param(&f, k))).collect();
        let value_tape = Tape::compile(std::slice::from_ref(&f));
        let jacobian_tape = Tape::compile(&jacobian_exprs);
        Ok(Problem {
            model,
            y: gy,
            x: xs,
            dropped_rows: dropped,
            row_index: keep,
            jacobian_exprs,
            value_tape,
            jacobian_tape,
        })
    }

    /// The response value when every row has the same one (a flat response:
    /// nothing to infer from, and standard errors that mean nothing).
    pub fn constant_response(&self) -> Option<f64> {
        let first = *self.y.first()?;
        self.y.iter().all(|&v| v == first).then_some(first)
    }

    /// The predictor columns as slices, in `model.vars` order.
    pub fn columns(&self) -> Vec<&[f64]> {
        self.x.iter().map(|c| c.as_slice()).collect()
    }

    /// Model values f(x; p) at every row.
    pub fn predict(&self, p: &[f64], out: &mut [f64]) {
        let cols = self.columns();
        self.value_tape.eval(p, &cols, &mut [out]);
    }

    /// Model values f(x; p) at other predictor columns (`x[j]` is `model.vars[j]`), e.g. a plotting grid.
    pub fn predict_at(&self, p: &[f64], x: &[&[f64]]) -> Vec<f64> {
        let n = x.first().map(|c| c.len()).unwrap_or(0);
        let mut out = vec![f64::NAN; n];
        self.value_tape.eval(p, x, &mut [&mut out[..]]);
        out
    }

    /// Evaluates arbitrary expressions over the problem's rows (variables index
    /// `model.vars`): one column per expression. Compiles them once for this call.
    pub fn eval_exprs(&self, exprs: &[Expr], p: &[f64]) -> Vec<Vec<f64>> {
        let tape = Tape::compile(exprs);
        tape.eval_columns(p, &self.columns(), self.y.len())
    }
}

impl Residuals for Problem {
    fn n_obs(&self) -> usize {
        self.y.len()
    }
    fn n_params(&self) -> usize {
        self.model.n_params()
    }
    fn residuals(&self, p: &[f64], r: &mut [f64]) {
        self.predict(p, r);
        for (ri, yi) in r.iter_mut().zip(&self.y) {
            *ri = yi - *ri;
        }
    }
    fn response_scale(&self) -> Option<f64> {
        Some(enorm(&self.y))
    }
    fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
        let (n, np) = (self.n_obs(), self.n_params());
        if j.nrows() != n || j.ncols() != np {
            *j = DMatrix::zeros(n, np);
        }
        if n == 0 {
            return;
        }
        // Column-major storage: column k is one contiguous run of n values.
        let mut cols: Vec<&mut [f64]> = j.as_mut_slice().chunks_mut(n).collect();
        self.jacobian_tape.eval(p, &self.columns(), &mut cols);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(text: &str, cols: &[&str]) -> Model {
        let c: Vec<String> = cols.iter().map(|s| s.to_string()).collect();
        Model::new(text, &c, None).unwrap()
    }

    fn data(cols: &[&str], values: Vec<Vec<f64>>) -> Dataset {
        Dataset {
            columns: cols.iter().map(|s| s.to_string()).collect(),
            values,
            source: "test".into(),
            skipped_rows: 0,
            text: Vec::new(),
        }
    }

    #[test]
    fn residuals_and_jacobian_of_an_exponential() {
        let m = model("a*exp(-b*x)", &["x", "y"]);
        let d = data(&["x", "y"], vec![vec![0.0, 1.0, 2.0], vec![5.0, 3.0, 2.0]]);
        let pr = Problem::new(m, &d).unwrap();
        let p = [4.0, 0.5];
        let mut r = vec![0.0; 3];
        pr.residuals(&p, &mut r);
        assert_eq!(r[0], 5.0 - 4.0);
        assert!((r[2] - (2.0 - 4.0 * (-1.0f64).exp())).abs() < 1e-15);
        let mut j = DMatrix::zeros(0, 0);
        pr.jacobian(&p, &mut j);
        assert_eq!((j.nrows(), j.ncols()), (3, 2));
        // ∂r/∂a = −exp(−b x); ∂r/∂b = a x exp(−b x)
        assert!((j[(1, 0)] + (-0.5f64).exp()).abs() < 1e-15);
        assert!((j[(2, 1)] - 4.0 * 2.0 * (-1.0f64).exp()).abs() < 1e-14);
    }

    #[test]
    fn left_side_transforms_the_response() {
        let m = model("log(y) = a + b*x", &["x", "y"]);
        let pr =
            Problem::from_columns(m, vec![vec![0.0, 1.0, 2.0]], vec![1.0, 10.0, 100.0]).unwrap();
        assert_eq!(pr.y[0], 0.0);
        assert!((pr.y[2] - 100f64.ln()).abs() < 1e-15);
    }

    #[test]
    fn missing_cells_are_dropped_and_counted() {
        let m = model("a + b*x", &["x", "y"]);
        let pr = Problem::from_columns(
            m,
            vec![vec![0.0, f64::NAN, 2.0, 3.0, 5.0]],
            vec![1.0, 2.0, f64::NAN, 4.0, 6.0],
        )
        .unwrap();
        assert_eq!(pr.dropped_rows, 2);
        assert_eq!(pr.row_index, vec![0, 3, 4]);
        assert_eq!(pr.x[0], vec![0.0, 3.0, 5.0]);
        assert_eq!(pr.y, vec![1.0, 4.0, 6.0]);
        // n_params + 1 usable rows are needed: 3 rows for 3 parameters are refused.
        let m = model("a + b*x + c*x^2", &["x", "y"]);
        let e =
            Problem::from_columns(m, vec![vec![0.0, 1.0, 2.0]], vec![1.0, 2.0, 3.0]).unwrap_err();
        assert_eq!(
            e,
            ProblemError::TooFewRows {
                rows: 3,
                params: 3,
                need: 4
            }
        );
    }

    #[test]
    fn errors_name_the_row_and_column() {
        let m = model("log(y) = a + b*x", &["x", "y"]);
        let e = Problem::from_columns(m, vec![vec![0.0, 1.0, 2.0, 3.0]], vec![1.0, 2.0, -3.0, 4.0])
            .unwrap_err();
        match e {
            ProblemError::LhsNotFinite {
                row,
                value,
                ref lhs,
                ..
            } => {
                assert_eq!((row, value), (3, -3.0));
                assert_eq!(lhs, "log(y)");
            }
            other => panic!("unexpected {other:?}"),
        }
        // log(x) at x = 0 has no value for any a, b: refused with the data row
        // (rows with a missing cell count, so the number matches the table).
        let m = model("a*log(x) + b", &["x", "y"]);
        let e = Problem::from_columns(
            m,
            vec![vec![1.0, f64::NAN, 2.0, 0.0, 3.0, 4.0]],
            vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        )
        .unwrap_err();
        assert_eq!(
            e,
            ProblemError::TermUndefined {
                term: "log(x)".into(),
                row: 4,
                cells: "column 'x' = 0".into()
            }
        );
        let m = model("a + b*x", &["x", "y"]);
        let d = data(&["y"], vec![vec![1.0, 2.0, 3.0]]);
        assert_eq!(
            Problem::new(m, &d).unwrap_err(),
            ProblemError::MissingColumn("x".into())
        );
    }

    #[test]
    fn eval_exprs_and_predict_at() {
        let m = model("a + b*x", &["x", "y"]);
        let pr = Problem::from_columns(m, vec![vec![1.0, 2.0, 3.0]], vec![1.0, 2.0, 3.0]).unwrap();
        let cols = pr.eval_exprs(
            &[Expr::Var(0), Expr::mul(Expr::Param(1), Expr::Var(0))],
            &[0.0, 2.0],
        );
        assert_eq!(cols, vec![vec![1.0, 2.0, 3.0], vec![2.0, 4.0, 6.0]]);
        let grid = [10.0, 20.0];
        assert_eq!(pr.predict_at(&[1.0, 0.5], &[&grid]), vec![6.0, 11.0]);
    }
}
