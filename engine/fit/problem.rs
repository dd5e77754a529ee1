//! A model bound to a dataset as a least-squares problem: response (after the
//! left-hand transform) minus the compiled right-hand side, with its Jacobian.

use super::Residuals;
use crate::data::Dataset;
use crate::symbolic::Model;
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
    #[error("the left-hand side {lhs} is not finite at row {row} ({response} = {value}); check the data or the transform")]
    LhsNotFinite {
        lhs: String,
        row: usize,
        response: String,
        value: f64,
    },
    #[error("column '{0}' is missing from the data")]
    MissingColumn(String),
}

/// The least-squares problem r(p) = g(y) − f(x; p).
#[derive(Debug, Clone)]
pub struct Problem {
    pub model: Model,
    /// Response after the left-hand transform.
    pub y: Vec<f64>,
    /// Predictor columns in `model.vars` order.
    pub x: Vec<Vec<f64>>,
}

impl Problem {
    /// Binds `model` to `data`.
    pub fn new(model: Model, data: &Dataset) -> Result<Problem, ProblemError> {
        let _ = (model, data);
        todo!("STUB: owned by the symbolic-core work")
    }

    /// Binds a model to in-memory columns (`x[j]` is `model.vars[j]`; `y` the raw response).
    pub fn from_columns(
        model: Model,
        x: Vec<Vec<f64>>,
        y: Vec<f64>,
    ) -> Result<Problem, ProblemError> {
        let _ = (model, x, y);
        todo!("STUB: owned by the symbolic-core work")
    }

    /// Model values f(x; p) at every row.
    pub fn predict(&self, p: &[f64], out: &mut [f64]) {
        let _ = (p, out);
        todo!("STUB")
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
        let _ = (p, r);
        todo!("STUB")
    }
    fn jacobian(&self, p: &[f64], j: &mut DMatrix<f64>) {
        let _ = (p, j);
        todo!("STUB")
    }
}
