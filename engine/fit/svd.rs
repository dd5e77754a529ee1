//! A singular value decomposition of a column-scaled matrix that never panics.
//!
//! Data-driven Jacobians can be finite yet huge (1e225 from `x^100`), so the
//! naive column norm overflows, the column stays unscaled and nalgebra's SVD
//! then overflows to NaN and panics while sorting. Here every column is scaled
//! to unit length with an overflow-free norm (its largest magnitude first, in
//! the spirit of Blue 1978), the input is checked to be finite, the unordered
//! decomposition is used (no sort, no panic) and a result holding NaN or ∞ is
//! refused: callers get `None` and treat it as a rejected step or an undefined
//! statistic.

use nalgebra::DMatrix;

/// The SVD J_s = U·Σ·Vᵀ of J with unit columns, J = J_s·diag(scale).
pub struct ScaledSvd {
    /// Column scales: the norm of each column of J (1 for a zero column).
    pub scale: Vec<f64>,
    /// Singular values, unordered, all finite.
    pub singular: Vec<f64>,
    /// U (rows of J × min(rows, cols)) when asked for.
    pub u: Option<DMatrix<f64>>,
    /// Vᵀ (min(rows, cols) × cols).
    pub v_t: DMatrix<f64>,
}

impl ScaledSvd {
    /// Largest singular value (0 when there is none).
    pub fn max(&self) -> f64 {
        self.singular.iter().cloned().fold(0.0, f64::max)
    }
}

/// Norm of a column without overflow or underflow for finite entries: the
/// largest magnitude times the norm of the column divided by it. When even
/// that overflows (entries near 1.8e308 in many rows) the largest magnitude is
/// returned, which still brings every scaled entry into [−1, 1].
pub fn safe_column_norm(col: &[f64]) -> f64 {
    let big = col.iter().fold(0.0f64, |b, v| b.max(v.abs()));
    if big == 0.0 || !big.is_finite() {
        return big;
    }
    let s: f64 = col.iter().map(|v| (v / big) * (v / big)).sum();
    let n = big * s.sqrt();
    if n.is_finite() {
        n
    } else {
        big
    }
}

/// Scales the columns of `j` to unit length and decomposes it, padding with
/// zero rows to at least `min_rows` rows. `None` for an empty or non-finite
/// matrix, a decomposition that did not converge within `max_iter` sweeps, or
/// one whose output is not finite.
pub fn scaled_svd(
    j: &DMatrix<f64>,
    min_rows: usize,
    compute_u: bool,
    max_iter: usize,
) -> Option<ScaledSvd> {
    let (n, p) = j.shape();
    let rows = n.max(min_rows);
    if rows == 0 || p == 0 || j.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let mut js = DMatrix::zeros(rows, p);
    let mut scale = vec![1.0; p];
    for k in 0..p {
        let s = safe_column_norm(j.column(k).as_slice());
        if s > 0.0 && s.is_finite() {
            scale[k] = s;
        }
        for i in 0..n {
            js[(i, k)] = j[(i, k)] / scale[k];
        }
    }
    let svd = nalgebra::SVD::try_new_unordered(js, compute_u, true, f64::EPSILON, max_iter)?;
    let singular: Vec<f64> = svd.singular_values.iter().cloned().collect();
    let v_t = svd.v_t?;
    let finite = |m: &DMatrix<f64>| m.iter().all(|v| v.is_finite());
    if singular.iter().any(|v| !v.is_finite()) || !finite(&v_t) {
        return None;
    }
    if let Some(u) = &svd.u {
        if !finite(u) {
            return None;
        }
    }
    Some(ScaledSvd {
        scale,
        singular,
        u: svd.u,
        v_t,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Regression (issue 10): a finite Jacobian with a column near 1e225 made
    /// the plain column norm overflow and nalgebra's SVD panic on NaN.
    #[test]
    fn huge_finite_column_decomposes() {
        let mut j = DMatrix::from_element(9, 3, 1.0);
        for i in 0..9 {
            j[(i, 1)] = 1e225 * (i as f64 + 1.0);
            j[(i, 2)] = 1e-300 * i as f64;
        }
        let s = scaled_svd(&j, 0, true, 500).expect("decomposes");
        assert!(s.singular.iter().all(|v| v.is_finite()));
        assert!((s.max() - 2f64.sqrt()).abs() < 0.5, "{:?}", s.singular);
        assert!(s.scale[1] > 1e225);
    }

    #[test]
    fn non_finite_or_empty_is_refused() {
        let mut j = DMatrix::from_element(3, 2, 1.0);
        j[(1, 1)] = f64::NAN;
        assert!(scaled_svd(&j, 0, false, 100).is_none());
        assert!(scaled_svd(&DMatrix::zeros(0, 2), 0, false, 100).is_none());
        assert!(scaled_svd(&DMatrix::zeros(2, 0), 0, false, 100).is_none());
    }

    #[test]
    fn column_norm_does_not_overflow() {
        let v = [1e300, 1e300, 1e300];
        assert!((safe_column_norm(&v) / (3f64.sqrt() * 1e300) - 1.0).abs() < 1e-15);
        let v = [f64::MAX, f64::MAX];
        assert_eq!(safe_column_norm(&v), f64::MAX);
    }
}
