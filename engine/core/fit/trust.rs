//! The linear algebra of one trust-region step: QR factorisation with column
//! pivoting, the damped least-squares solve, and the Levenberg parameter for a
//! given trust radius. These follow Moré (1978), "The Levenberg–Marquardt
//! algorithm: implementation and theory" (the MINPACK routines qrfac, qrsolv
//! and lmpar), written afresh on nalgebra matrices.

use nalgebra::DMatrix;

/// Euclidean norm that neither overflows nor underflows for finite inputs
/// (scaled by the largest magnitude, in the spirit of Blue 1978). NaN in, NaN out.
pub fn enorm(x: &[f64]) -> f64 {
    let mut big = 0.0f64;
    for &v in x {
        if v.is_nan() {
            return f64::NAN;
        }
        big = big.max(v.abs());
    }
    if big == 0.0 || !big.is_finite() {
        return big;
    }
    let mut s = 0.0;
    for &v in x {
        let t = v / big;
        s += t * t;
    }
    big * s.sqrt()
}

/// Norm of column `j` of `a` over rows `from..`.
fn col_norm(a: &DMatrix<f64>, j: usize, from: usize) -> f64 {
    let mut big = 0.0f64;
    let m = a.nrows();
    for i in from..m {
        let v = a[(i, j)];
        if v.is_nan() {
            return f64::NAN;
        }
        big = big.max(v.abs());
    }
    if big == 0.0 || !big.is_finite() {
        return big;
    }
    let mut s = 0.0;
    for i in from..m {
        let t = a[(i, j)] / big;
        s += t * t;
    }
    big * s.sqrt()
}

/// Result of [`qr_pivoted`]: R in the upper triangle of the matrix, the
/// Householder vectors below it, plus the pivot order and norms.
pub struct PivotedQr {
    /// `perm[j]` is the original column placed at position j.
    pub perm: Vec<usize>,
    /// Diagonal of R.
    pub rdiag: Vec<f64>,
    /// Norms of the original columns (by original index).
    pub col_norms: Vec<f64>,
}

/// Householder QR with column pivoting of the m×n matrix `a` (m ≥ n), in place
/// (Moré 1978, after Businger & Golub 1965). Column norms are downdated and
/// recomputed when cancellation makes the downdate unreliable.
pub fn qr_pivoted(a: &mut DMatrix<f64>) -> PivotedQr {
    let (m, n) = a.shape();
    let eps = f64::EPSILON;
    let col_norms: Vec<f64> = (0..n).map(|j| col_norm(a, j, 0)).collect();
    let mut rdiag = col_norms.clone();
    let mut wa = col_norms.clone();
    let mut perm: Vec<usize> = (0..n).collect();
    for j in 0..m.min(n) {
        // Bring the column of largest remaining norm into position j.
        let mut kmax = j;
        for k in j..n {
            if rdiag[k] > rdiag[kmax] {
                kmax = k;
            }
        }
        if kmax != j {
            a.swap_columns(j, kmax);
            rdiag[kmax] = rdiag[j];
            wa[kmax] = wa[j];
            perm.swap(j, kmax);
        }
        let mut ajnorm = col_norm(a, j, j);
        if ajnorm != 0.0 && ajnorm.is_finite() {
            if a[(j, j)] < 0.0 {
                ajnorm = -ajnorm;
            }
            for i in j..m {
                a[(i, j)] /= ajnorm;
            }
            a[(j, j)] += 1.0;
            let ajj = a[(j, j)];
            for k in (j + 1)..n {
                let mut sum = 0.0;
                for i in j..m {
                    sum += a[(i, j)] * a[(i, k)];
                }
                let temp = sum / ajj;
                for i in j..m {
                    a[(i, k)] -= temp * a[(i, j)];
                }
                if rdiag[k] != 0.0 {
                    let t = a[(j, k)] / rdiag[k];
                    rdiag[k] *= (1.0 - t * t).max(0.0).sqrt();
                    let ratio = rdiag[k] / wa[k];
                    if 0.05 * ratio * ratio <= eps {
                        rdiag[k] = col_norm(a, k, j + 1);
                        wa[k] = rdiag[k];
                    }
                }
            }
        }
        rdiag[j] = -ajnorm;
    }
    PivotedQr {
        perm,
        rdiag,
        col_norms,
    }
}

/// Solves min ‖[R; D]·Pᵀx − [qtb; 0]‖ for diagonal D by Givens rotations
/// (Moré 1978, qrsolv). `r` holds R in its upper n×n triangle on entry; on
/// return its strict lower triangle holds Sᵀ, where Sᵀ S = Pᵀ(RᵀR + D²)P, and
/// `sdiag` holds the diagonal of S. The upper triangle and diagonal of R are kept.
pub fn damped_solve(
    r: &mut DMatrix<f64>,
    perm: &[usize],
    diag: &[f64],
    qtb: &[f64],
    x: &mut [f64],
    sdiag: &mut [f64],
) {
    let n = perm.len();
    let mut wa = vec![0.0; n];
    for j in 0..n {
        for i in j..n {
            r[(i, j)] = r[(j, i)];
        }
        x[j] = r[(j, j)];
        wa[j] = qtb[j];
    }
    for j in 0..n {
        let l = perm[j];
        if diag[l] != 0.0 {
            for s in sdiag.iter_mut().skip(j) {
                *s = 0.0;
            }
            sdiag[j] = diag[l];
            let mut qtbpj = 0.0;
            for k in j..n {
                if sdiag[k] == 0.0 {
                    continue;
                }
                let (sin, cos);
                if r[(k, k)].abs() < sdiag[k].abs() {
                    let cotan = r[(k, k)] / sdiag[k];
                    sin = 0.5 / (0.25 + 0.25 * cotan * cotan).sqrt();
                    cos = sin * cotan;
                } else {
                    let tan = sdiag[k] / r[(k, k)];
                    cos = 0.5 / (0.25 + 0.25 * tan * tan).sqrt();
                    sin = cos * tan;
                }
                r[(k, k)] = cos * r[(k, k)] + sin * sdiag[k];
                let temp = cos * wa[k] + sin * qtbpj;
                qtbpj = -sin * wa[k] + cos * qtbpj;
                wa[k] = temp;
                for i in (k + 1)..n {
                    let temp = cos * r[(i, k)] + sin * sdiag[i];
                    sdiag[i] = -sin * r[(i, k)] + cos * sdiag[i];
                    r[(i, k)] = temp;
                }
            }
        }
        sdiag[j] = r[(j, j)];
        r[(j, j)] = x[j];
    }
    // Back-substitution; a singular S gives a least-squares solution.
    let mut nsing = n;
    for j in 0..n {
        if sdiag[j] == 0.0 && nsing == n {
            nsing = j;
        }
        if nsing < n {
            wa[j] = 0.0;
        }
    }
    for j in (0..nsing).rev() {
        let mut sum = 0.0;
        for i in (j + 1)..nsing {
            sum += r[(i, j)] * wa[i];
        }
        wa[j] = (wa[j] - sum) / sdiag[j];
    }
    for j in 0..n {
        x[perm[j]] = wa[j];
    }
}

// NaN-aware on purpose: `!(x > 0.0)` is also true for NaN, which must take
// the same branch as a non-positive value (clippy's partial_cmp form hides that).
#[allow(clippy::neg_cmp_op_on_partial_ord)]
/// Finds the Levenberg parameter λ ≥ 0 such that the damped step x solving
/// (JᵀJ + λD²)x = −Jᵀr has ‖Dx‖ within 10% of `delta`, or λ = 0 when the
/// Gauss–Newton step already lies inside (Moré 1978, lmpar: safeguarded
/// Newton iteration on φ(λ) = ‖Dx(λ)‖ − Δ). Returns λ and writes to `x` the
/// solution of the damped system for +`qtb`; the caller negates it for the step.
/// On return `r` and `sdiag` hold the factor S as described in [`damped_solve`].
#[allow(clippy::too_many_arguments)]
pub fn levenberg_parameter(
    r: &mut DMatrix<f64>,
    perm: &[usize],
    diag: &[f64],
    qtb: &[f64],
    delta: f64,
    par_in: f64,
    x: &mut [f64],
    sdiag: &mut [f64],
) -> f64 {
    let n = perm.len();
    let dwarf = f64::MIN_POSITIVE;
    let mut par = par_in;

    // Gauss–Newton direction (least-squares if R is singular).
    let mut nsing = n;
    let mut wa1 = qtb.to_vec();
    for j in 0..n {
        if r[(j, j)] == 0.0 && nsing == n {
            nsing = j;
        }
        if nsing < n {
            wa1[j] = 0.0;
        }
    }
    for j in (0..nsing).rev() {
        wa1[j] /= r[(j, j)];
        let temp = wa1[j];
        for i in 0..j {
            wa1[i] -= r[(i, j)] * temp;
        }
    }
    for j in 0..n {
        x[perm[j]] = wa1[j];
    }

    let mut wa2: Vec<f64> = (0..n).map(|j| diag[j] * x[j]).collect();
    let mut dxnorm = enorm(&wa2);
    let mut fp = dxnorm - delta;
    if !(fp > 0.1 * delta) {
        // Gauss–Newton step is acceptable (or not finite: the caller rejects it).
        return 0.0;
    }

    // Lower bound parl for the zero of φ (only when R has full rank).
    let mut parl = 0.0;
    if nsing >= n {
        for j in 0..n {
            let l = perm[j];
            wa1[j] = diag[l] * (wa2[l] / dxnorm);
        }
        for j in 0..n {
            let mut sum = 0.0;
            for i in 0..j {
                sum += r[(i, j)] * wa1[i];
            }
            wa1[j] = (wa1[j] - sum) / r[(j, j)];
        }
        let temp = enorm(&wa1);
        parl = ((fp / delta) / temp) / temp;
        if !parl.is_finite() {
            parl = 0.0;
        }
    }

    // Upper bound paru.
    for j in 0..n {
        let mut sum = 0.0;
        for i in 0..=j {
            sum += r[(i, j)] * qtb[i];
        }
        let l = perm[j];
        wa1[j] = sum / diag[l];
    }
    let gnorm = enorm(&wa1);
    let mut paru = gnorm / delta;
    if paru == 0.0 {
        paru = dwarf / delta.min(0.1);
    }

    par = par.max(parl).min(paru);
    if par == 0.0 {
        par = gnorm / dxnorm;
    }

    let mut iter = 0;
    loop {
        iter += 1;
        if par == 0.0 {
            par = dwarf.max(0.001 * paru);
        }
        let sp = par.sqrt();
        let wdiag: Vec<f64> = diag.iter().map(|d| sp * d).collect();
        damped_solve(r, perm, &wdiag, qtb, x, sdiag);
        for j in 0..n {
            wa2[j] = diag[j] * x[j];
        }
        dxnorm = enorm(&wa2);
        let prev = fp;
        fp = dxnorm - delta;
        if !fp.is_finite()
            || fp.abs() <= 0.1 * delta
            || (parl == 0.0 && fp <= prev && prev < 0.0)
            || iter == 10
        {
            break;
        }
        // Newton correction.
        for j in 0..n {
            let l = perm[j];
            wa1[j] = diag[l] * (wa2[l] / dxnorm);
        }
        for j in 0..n {
            wa1[j] /= sdiag[j];
            let temp = wa1[j];
            for i in (j + 1)..n {
                wa1[i] -= r[(i, j)] * temp;
            }
        }
        let temp = enorm(&wa1);
        let parc = ((fp / delta) / temp) / temp;
        if fp > 0.0 {
            parl = parl.max(par);
        }
        if fp < 0.0 {
            paru = paru.min(par);
        }
        par = parl.max(par + parc);
        if !par.is_finite() {
            break;
        }
    }
    par
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn enorm_is_safe_for_huge_and_tiny() {
        assert_eq!(enorm(&[3.0, 4.0]), 5.0);
        let big = enorm(&[3e200, 4e200]);
        assert!((big / 5e200 - 1.0).abs() < 1e-15);
        let tiny = enorm(&[3e-200, 4e-200]);
        assert!((tiny / 5e-200 - 1.0).abs() < 1e-15);
        assert!(enorm(&[1.0, f64::NAN]).is_nan());
    }

    #[test]
    fn pivoted_qr_reproduces_the_matrix() {
        let a0 = DMatrix::from_row_slice(
            4,
            3,
            &[1.0, 2.0, 10.0, 3.0, 4.0, 0.5, 5.0, 6.0, -2.0, 7.0, 8.0, 1.0],
        );
        let mut a = a0.clone();
        let qr = qr_pivoted(&mut a);
        // |R| diagonal is non-increasing under pivoting, and ‖R e_j‖ = ‖A e_perm(j)‖.
        for j in 0..3 {
            let mut s = 0.0;
            for i in 0..j {
                s += a[(i, j)] * a[(i, j)];
            }
            s += qr.rdiag[j] * qr.rdiag[j];
            let want = qr.col_norms[qr.perm[j]];
            assert!((s.sqrt() - want).abs() < 1e-12 * want);
        }
        assert!(qr.rdiag[0].abs() >= qr.rdiag[1].abs());
        assert!(qr.rdiag[1].abs() >= qr.rdiag[2].abs());
    }
}
