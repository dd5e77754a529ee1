//! Compiles expressions to a flat instruction tape evaluated column-wise over
//! whole data columns: the fast path for model values and Jacobians.

use super::expr::Expr;

/// A compiled set of expressions sharing common subexpressions.
#[derive(Debug, Clone)]
pub struct Tape {
    outputs: Vec<Expr>, // STUB: owned by the symbolic-core work
}

impl Tape {
    /// Compiles `outputs` into one tape.
    pub fn compile(outputs: &[Expr]) -> Tape {
        Tape { outputs: outputs.to_vec() }
    }

    /// Number of outputs.
    pub fn n_outputs(&self) -> usize {
        self.outputs.len()
    }

    /// Evaluates every output over all rows: `vars[j]` is column j (all the same
    /// length n), `out[k]` (length n) receives output k.
    pub fn eval(&self, params: &[f64], vars: &[&[f64]], out: &mut [&mut [f64]]) {
        let n = out.first().map(|o| o.len()).unwrap_or(0);
        let mut row = vec![0.0; vars.len()];
        for i in 0..n {
            for (j, v) in vars.iter().enumerate() {
                row[j] = v[i];
            }
            for (k, e) in self.outputs.iter().enumerate() {
                out[k][i] = e.eval(params, &row);
            }
        }
    }
}
