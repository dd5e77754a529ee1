//! The variable-projection functional (Golub & Pereyra 1973): for a model
//! f = offset(θ) + Σ c_j·g_j(θ), the best linear parameters c for given
//! nonlinear θ come from one linear least-squares solve, so the residual sum of
//! squares becomes a function of θ alone. The offset and basis columns are
//! compiled once per model into one tape and evaluated column-wise.

use super::lsq::{lstsq, lstsq_ssr};
use crate::fit::lm::{levenberg_marquardt, LmOptions};
use crate::fit::problem::Problem;
use crate::fit::Residuals;
use crate::symbolic::linearity::{separate_model, Separable};
use crate::symbolic::Tape;
use nalgebra::DMatrix;

/// A problem prepared for separable least squares.
pub struct Projector<'a> {
    /// The original problem.
    pub problem: &'a Problem,
    /// The split of the model into linear and nonlinear parameters.
    pub sep: Separable,
    /// Compiled [offset, basis_0, basis_1, ...].
    tape: Tape,
    /// Rows.
    n: usize,
    /// The data columns, as the tape takes them.
    cols: Vec<&'a [f64]>,
    /// Scratch of [`Projector::scan_ssr`], reused across the grid points of a
    /// scan (a lock so the projector stays shareable; a busy lock means a fresh buffer).
    scan_buf: std::sync::Mutex<Vec<f64>>,
}

impl<'a> Projector<'a> {
    /// Splits the model and compiles its offset and basis columns once.
    pub fn new(problem: &'a Problem) -> Projector<'a> {
        let sep = separate_model(&problem.model);
        let mut outs = vec![sep.offset.clone()];
        outs.extend(sep.basis.iter().cloned());
        let tape = Tape::compile(&outs);
        Projector {
            problem,
            sep,
            tape,
            n: problem.y.len(),
            cols: problem.columns(),
            scan_buf: std::sync::Mutex::new(Vec::new()),
        }
    }

    /// Evaluates the offset and the basis columns at the nonlinear values in
    /// `p` into one buffer (offset, then the m columns, each n long) and turns
    /// the offset into the target y − offset of the linear solve, in place.
    fn target_and_basis(&self, p: &[f64]) -> Vec<f64> {
        let mut buf = Vec::new();
        self.target_and_basis_into(p, &mut buf);
        buf
    }

    /// [`Projector::target_and_basis`] into `buf` (resized; old values overwritten).
    fn target_and_basis_into(&self, p: &[f64], buf: &mut Vec<f64>) {
        let n = self.n;
        buf.resize(n * (self.sep.linear.len() + 1), 0.0);
        {
            let mut outs: Vec<&mut [f64]> = buf.chunks_mut(n.max(1)).collect();
            self.tape.eval(p, &self.cols, &mut outs);
        }
        for (o, y) in buf[..n].iter_mut().zip(&self.problem.y) {
            *o = y - *o;
        }
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.n
    }

    /// Solves the linear parameters for the nonlinear values held in `p`
    /// (written into `p`) and returns the residual sum of squares (∞ when the
    /// model is not finite there).
    pub fn project(&self, p: &mut [f64]) -> f64 {
        match self.solve(p) {
            Some((coef, ssr)) => {
                for (k, &j) in self.sep.linear.iter().enumerate() {
                    if let (Some(slot), Some(c)) = (p.get_mut(j), coef.get(k)) {
                        *slot = *c;
                    }
                }
                ssr
            }
            None => f64::INFINITY,
        }
    }

    /// The projected residuals y − offset − G·c at the nonlinear values in `p`
    /// (false when the model is not finite there).
    pub fn residuals_into(&self, p: &[f64], r: &mut [f64]) -> bool {
        let (n, m) = (self.n, self.sep.linear.len());
        let buf = self.target_and_basis(p);
        let (b, g) = buf.split_at(n);
        let coef = if m == 0 {
            Vec::new()
        } else {
            match lstsq(g, n, m, b) {
                Some(s) => s.coef,
                None => return false,
            }
        };
        for (i, ri) in r.iter_mut().enumerate().take(n) {
            let mut v = b[i];
            for (j, c) in coef.iter().enumerate() {
                v -= c * g[j * n + i];
            }
            *ri = v;
        }
        r.iter().all(|v| v.is_finite())
    }

    /// The linear coefficients and the residual sum of squares, without writing.
    pub fn solve(&self, p: &[f64]) -> Option<(Vec<f64>, f64)> {
        let (n, m) = (self.n, self.sep.linear.len());
        let buf = self.target_and_basis(p);
        let (b, g) = buf.split_at(n);
        if m == 0 {
            let ssr: f64 = b.iter().map(|v| v * v).sum();
            return ssr.is_finite().then_some((Vec::new(), ssr));
        }
        let s = lstsq(g, n, m, b)?;
        s.ssr.is_finite().then_some((s.coef, s.ssr))
    }

    /// The projected residual sum of squares only (cheap path for ranking grid
    /// points; ∞ when the model is not finite there).
    pub fn scan_ssr(&self, p: &[f64]) -> f64 {
        let (n, m) = (self.n, self.sep.linear.len());
        let mut own = Vec::new();
        let mut guard = self.scan_buf.try_lock();
        let buf: &mut Vec<f64> = match guard.as_mut() {
            Ok(g) => g,
            Err(_) => &mut own,
        };
        self.target_and_basis_into(p, buf);
        let (b, g) = buf.split_at(n);
        let s = if m == 0 {
            Some(b.iter().map(|v| v * v).sum::<f64>())
        } else {
            lstsq_ssr(g, n, m, b)
        };
        match s {
            Some(v) if v.is_finite() => v,
            _ => f64::INFINITY,
        }
    }

    /// Residual sum of squares of the original problem at `p` as given.
    pub fn ssr_at(&self, p: &[f64]) -> f64 {
        let mut r = vec![0.0; self.n];
        self.problem.residuals(p, &mut r);
        let s: f64 = r.iter().map(|v| v * v).sum();
        if s.is_finite() {
            s
        } else {
            f64::INFINITY
        }
    }

    /// A short Levenberg–Marquardt run on the reduced problem in the parameters
    /// `free` (nonlinear ones), the linear parameters re-solved at every
    /// evaluation. Returns the full projected vector and its ssr.
    pub fn refine(&self, start: &[f64], free: &[usize], iterations: usize) -> (Vec<f64>, f64) {
        let mut base = start.to_vec();
        let s0 = self.project(&mut base);
        if free.is_empty() || !s0.is_finite() {
            return (base, s0);
        }
        let red = Reduced {
            proj: self,
            free: free.to_vec(),
            base: base.clone(),
        };
        let theta: Vec<f64> = free.iter().map(|&i| base[i]).collect();
        let opts = LmOptions {
            ftol: 1e-10,
            xtol: 1e-10,
            gtol: 1e-12,
            max_iterations: iterations,
            max_evaluations: iterations * 4 + 10,
            polish_steps: 0,
            ..LmOptions::default()
        };
        let res = levenberg_marquardt(&red, &theta, &opts);
        let mut p = base.clone();
        for (k, &i) in free.iter().enumerate() {
            if let Some(v) = res.params.get(k) {
                p[i] = *v;
            }
        }
        let s = self.project(&mut p);
        if s.is_finite() && s <= s0 {
            (p, s)
        } else {
            (base, s0)
        }
    }
}

/// The reduced (variable-projection) residual function of some nonlinear
/// parameters, with a forward-difference Jacobian.
struct Reduced<'p, 'a> {
    proj: &'p Projector<'a>,
    free: Vec<usize>,
    base: Vec<f64>,
}

impl Reduced<'_, '_> {
    fn full(&self, theta: &[f64]) -> Vec<f64> {
        let mut p = self.base.clone();
        for (k, &i) in self.free.iter().enumerate() {
            if let Some(v) = theta.get(k) {
                p[i] = *v;
            }
        }
        p
    }
}

impl Residuals for Reduced<'_, '_> {
    fn n_obs(&self) -> usize {
        self.proj.n
    }
    fn n_params(&self) -> usize {
        self.free.len()
    }
    fn residuals(&self, theta: &[f64], r: &mut [f64]) {
        let p = self.full(theta);
        if !self.proj.residuals_into(&p, r) {
            r.fill(f64::NAN);
        }
    }
    fn jacobian(&self, theta: &[f64], j: &mut DMatrix<f64>) {
        let (n, k) = (self.n_obs(), self.n_params());
        if j.nrows() != n || j.ncols() != k {
            *j = DMatrix::zeros(n, k);
        }
        let mut r0 = vec![0.0; n];
        self.residuals(theta, &mut r0);
        let mut r1 = vec![0.0; n];
        let mut t = theta.to_vec();
        for c in 0..k {
            let h = 1e-7 * theta[c].abs().max(1e-10);
            t[c] = theta[c] + h;
            self.residuals(&t, &mut r1);
            t[c] = theta[c];
            for i in 0..n {
                j[(i, c)] = (r1[i] - r0[i]) / h;
            }
        }
    }
}
