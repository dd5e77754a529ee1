//! Small dense linear least squares for the linear parameters of a separable
//! model: Householder QR with column pivoting (Businger & Golub 1965) on
//! unit-normalised columns, with numerical rank detection so that nearly
//! dependent basis functions (close rates, coinciding centres) give a minimum-
//! effort answer instead of huge cancelling coefficients.

/// The solution of `min ‖A·c − b‖`.
#[derive(Debug, Clone)]
pub struct LsqSolution {
    /// Coefficients (zero for columns dropped as dependent).
    pub coef: Vec<f64>,
    /// Residual sum of squares ‖A·c − b‖².
    pub ssr: f64,
    /// Numerical rank used.
    pub rank: usize,
}

/// Most columns [`lstsq_ssr`] handles with stack scratch (more go to [`lstsq`]).
const SMALL: usize = 8;

/// Relative size below which a pivot column counts as dependent on the earlier ones.
const RANK_TOL: f64 = 1e-11;

/// Solves `min ‖A·c − b‖` for column-major `a` (`n` rows, `m` columns).
/// `None` when an entry is not finite.
pub fn lstsq(a: &[f64], n: usize, m: usize, b: &[f64]) -> Option<LsqSolution> {
    if a.len() < n * m || b.len() < n {
        return None;
    }
    if !b[..n].iter().all(|v| v.is_finite()) || !a[..n * m].iter().all(|v| v.is_finite()) {
        return None;
    }
    let mut w = a[..n * m].to_vec();
    let mut r = b[..n].to_vec();
    // unit-normalise the columns; zero columns are dropped from the start
    let mut scale = vec![0.0; m];
    for j in 0..m {
        let col = &mut w[j * n..(j + 1) * n];
        let s = col.iter().map(|v| v * v).sum::<f64>().sqrt();
        if s > 0.0 && s.is_finite() {
            col.iter_mut().for_each(|v| *v /= s);
            scale[j] = s;
        }
    }
    let mut perm: Vec<usize> = (0..m).collect();
    let kmax = n.min(m);
    let mut rank = 0;
    let mut rdiag = vec![0.0; kmax];
    for k in 0..kmax {
        // pivot: the remaining column with the largest norm below row k
        let mut best = (k, -1.0);
        for j in k..m {
            let c = &w[j * n + k..(j + 1) * n];
            let s = c.iter().map(|v| v * v).sum::<f64>();
            if s > best.1 {
                best = (j, s);
            }
        }
        if best.1.sqrt() <= RANK_TOL {
            break;
        }
        if best.0 != k {
            for i in 0..n {
                w.swap(k * n + i, best.0 * n + i);
            }
            perm.swap(k, best.0);
            scale.swap(k, best.0);
        }
        // Householder reflection zeroing column k below the diagonal
        let col = &w[k * n + k..(k + 1) * n];
        let alpha = col.iter().map(|v| v * v).sum::<f64>().sqrt();
        let a0 = col[0];
        let beta = if a0 >= 0.0 { -alpha } else { alpha };
        let mut v: Vec<f64> = col.to_vec();
        v[0] -= beta;
        let vnorm2 = v.iter().map(|x| x * x).sum::<f64>();
        if vnorm2 > 0.0 {
            for j in (k + 1)..m {
                let c = &mut w[j * n + k..(j + 1) * n];
                let d = v.iter().zip(c.iter()).map(|(a, b)| a * b).sum::<f64>() * 2.0 / vnorm2;
                c.iter_mut().zip(&v).for_each(|(x, vi)| *x -= d * vi);
            }
            let c = &mut r[k..n];
            let d = v.iter().zip(c.iter()).map(|(a, b)| a * b).sum::<f64>() * 2.0 / vnorm2;
            c.iter_mut().zip(&v).for_each(|(x, vi)| *x -= d * vi);
        }
        rdiag[k] = beta;
        w[k * n + k] = beta;
        rank = k + 1;
    }
    // back substitution on the leading rank×rank triangle
    let mut c = vec![0.0; m];
    for k in (0..rank).rev() {
        let mut s = r[k];
        for j in (k + 1)..rank {
            s -= w[j * n + k] * c[j];
        }
        c[k] = s / rdiag[k];
    }
    let ssr = r[rank..n].iter().map(|v| v * v).sum::<f64>();
    let mut coef = vec![0.0; m];
    for k in 0..m {
        if scale[k] > 0.0 {
            coef[perm[k]] = c[k] / scale[k];
        }
    }
    if !coef.iter().all(|v| v.is_finite()) {
        return None;
    }
    Some(LsqSolution { coef, ssr, rank })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fits_a_line_exactly() {
        // y = 2 + 3x at x = 0..4
        let x: Vec<f64> = (0..5).map(|i| i as f64).collect();
        let mut a = vec![1.0; 5];
        a.extend(&x);
        let b: Vec<f64> = x.iter().map(|v| 2.0 + 3.0 * v).collect();
        let s = lstsq(&a, 5, 2, &b).unwrap();
        assert!((s.coef[0] - 2.0).abs() < 1e-12 && (s.coef[1] - 3.0).abs() < 1e-12);
        assert!(s.ssr < 1e-20);
        assert_eq!(s.rank, 2);
    }

    #[test]
    fn residual_of_an_inconsistent_system() {
        // mean of 1, 2, 3, 6 is 3; ssr = 4 + 1 + 0 + 9 = 14
        let s = lstsq(&[1.0; 4], 4, 1, &[1.0, 2.0, 3.0, 6.0]).unwrap();
        assert!((s.coef[0] - 3.0).abs() < 1e-12);
        assert!((s.ssr - 14.0).abs() < 1e-12);
    }

    #[test]
    fn dependent_columns_are_dropped() {
        let a = [1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 0.0, 1.0, 2.0];
        let s = lstsq(&a, 3, 3, &[1.0, 2.0, 3.0]).unwrap();
        assert_eq!(s.rank, 2);
        assert!(s.ssr < 1e-20);
        assert!(lstsq(&[f64::NAN, 1.0], 2, 1, &[1.0, 1.0]).is_none());
    }
}

/// Residual sum of squares of `min ‖A·c − b‖` by the normal equations of the
/// unit-scaled columns (Cholesky), the cheap path for ranking grid points;
/// falls back to [`lstsq`] when the columns are nearly dependent (a Cholesky
/// pivot below 1e−5, i.e. a condition number beyond ~1e5), where squaring the
/// condition number would cost too many digits.
pub fn lstsq_ssr(a: &[f64], n: usize, m: usize, b: &[f64]) -> Option<f64> {
    if a.len() < n * m || b.len() < n {
        return None;
    }
    if m > SMALL {
        return lstsq(a, n, m, b).map(|s| s.ssr);
    }
    // fixed-size scratch on the stack: no allocation per grid point
    let col = |j: usize| &a[j * n..(j + 1) * n];
    let mut scale = [0.0; SMALL];
    for (j, sc) in scale.iter_mut().enumerate().take(m) {
        let s = col(j).iter().map(|v| v * v).sum::<f64>().sqrt();
        if !s.is_finite() {
            return None;
        }
        *sc = s;
    }
    if scale[..m].contains(&0.0) || !b[..n].iter().all(|v| v.is_finite()) {
        return lstsq(a, n, m, b).map(|s| s.ssr);
    }
    // Gram matrix and right side of the scaled problem
    let mut g = [0.0; SMALL * SMALL];
    let mut rhs = [0.0; SMALL];
    for i in 0..m {
        for j in 0..=i {
            let d = col(i).iter().zip(col(j)).map(|(x, y)| x * y).sum::<f64>();
            g[i * m + j] = d / (scale[i] * scale[j]);
        }
        rhs[i] = col(i).iter().zip(&b[..n]).map(|(x, y)| x * y).sum::<f64>() / scale[i];
    }
    // Cholesky G = L·Lᵀ in place (lower triangle)
    for j in 0..m {
        let mut d = g[j * m + j];
        for k in 0..j {
            d -= g[j * m + k] * g[j * m + k];
        }
        if d.is_nan() || d <= 1e-10 {
            return lstsq(a, n, m, b).map(|s| s.ssr);
        }
        let l = d.sqrt();
        g[j * m + j] = l;
        for i in (j + 1)..m {
            let mut s = g[i * m + j];
            for k in 0..j {
                s -= g[i * m + k] * g[j * m + k];
            }
            g[i * m + j] = s / l;
        }
    }
    // forward then back substitution
    let mut z = rhs;
    for i in 0..m {
        for k in 0..i {
            z[i] -= g[i * m + k] * z[k];
        }
        z[i] /= g[i * m + i];
    }
    for i in (0..m).rev() {
        for k in (i + 1)..m {
            z[i] -= g[k * m + i] * z[k];
        }
        z[i] /= g[i * m + i];
    }
    // explicit residual (no cancellation for nearly exact fits)
    for j in 0..m {
        z[j] /= scale[j];
    }
    let mut ssr = 0.0;
    for (r, &br) in b[..n].iter().enumerate() {
        let mut f = br;
        for (j, zj) in z.iter().enumerate().take(m) {
            f -= a[j * n + r] * zj;
        }
        ssr += f * f;
    }
    ssr.is_finite().then_some(ssr)
}

#[cfg(test)]
mod fast_tests {
    use super::*;

    #[test]
    fn normal_equations_agree_with_qr() {
        let x: Vec<f64> = (0..9).map(|i| i as f64 * 0.3).collect();
        let mut a = vec![1.0; 9];
        a.extend(x.iter().map(|t| (-t).exp()));
        a.extend(x.iter().copied());
        let b: Vec<f64> = x.iter().map(|t| t.sin() + 0.3).collect();
        let q = lstsq(&a, 9, 3, &b).unwrap().ssr;
        let f = lstsq_ssr(&a, 9, 3, &b).unwrap();
        assert!((q - f).abs() <= 1e-10 * q.max(1e-300), "{q} vs {f}");
    }
}
