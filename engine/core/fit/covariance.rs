//! The parameter covariance matrix s²·(JᵀJ)⁻¹ of a finished fit (linearised
//! asymptotic theory, Bates & Watts 1988, §2.3), rebuilt from the summary's
//! standard errors and correlations so that it agrees with them exactly:
//! cov_ij = r_ij·se_i·se_j. [`super::stats`] computes both from the SVD of the
//! column-scaled Jacobian; this module does not form JᵀJ again.

use super::stats::FitSummary;

/// The covariance matrix in parameter order; entries are NaN where a standard
/// error or correlation is undefined (no degrees of freedom, a singular direction).
pub fn covariance_matrix(summary: &FitSummary) -> Vec<Vec<f64>> {
    let se: Vec<f64> = summary.parameters.iter().map(|p| p.std_error).collect();
    let p = se.len();
    (0..p)
        .map(|i| {
            (0..p)
                .map(|j| {
                    if i == j {
                        se[i] * se[i]
                    } else {
                        let r = summary
                            .correlation
                            .get(i)
                            .and_then(|row| row.get(j))
                            .copied()
                            .unwrap_or(f64::NAN);
                        r * se[i] * se[j]
                    }
                })
                .collect()
        })
        .collect()
}

/// gᵀ·C·g: the variance of a linear combination g of the parameters (the
/// delta method's quadratic form). NaN when any term used is undefined.
pub fn quadratic_form(cov: &[Vec<f64>], g: &[f64]) -> f64 {
    let mut v = 0.0;
    for (i, gi) in g.iter().enumerate() {
        for (j, gj) in g.iter().enumerate() {
            if *gi == 0.0 || *gj == 0.0 {
                continue;
            }
            v += gi * cov[i][j] * gj;
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::lm::{levenberg_marquardt, LmOptions};
    use crate::fit::problem::Problem;
    use crate::fit::stats::summarize;
    use crate::symbolic::Model;

    /// Straight line: the covariance equals s²·(XᵀX)⁻¹ written out in closed
    /// form (Draper & Smith 1998, Applied Regression Analysis, §1.4 and §5.2).
    #[test]
    fn line_covariance_is_s2_inverse_xtx() {
        let x = vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
        let y = vec![2.1, 3.9, 6.2, 7.8, 10.1, 12.2];
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new("a + b*x", &cols, None).unwrap();
        let pr = Problem::from_columns(m, vec![x.clone()], y).unwrap();
        let fit = levenberg_marquardt(&pr, &[0.0, 1.0], &LmOptions::default());
        let s = summarize(&pr.model.params, &fit);
        let c = covariance_matrix(&s);
        let n = x.len() as f64;
        let xbar = x.iter().sum::<f64>() / n;
        let sxx: f64 = x.iter().map(|v| (v - xbar).powi(2)).sum();
        let s2 = s.residual_sd.powi(2);
        let want = [
            [s2 * (1.0 / n + xbar * xbar / sxx), -s2 * xbar / sxx],
            [-s2 * xbar / sxx, s2 / sxx],
        ];
        for i in 0..2 {
            for j in 0..2 {
                assert!(
                    (c[i][j] - want[i][j]).abs() <= 1e-10 * want[i][j].abs(),
                    "{i},{j}: {} vs {}",
                    c[i][j],
                    want[i][j]
                );
            }
        }
        assert!((quadratic_form(&c, &[1.0, 0.0]) - c[0][0]).abs() < 1e-18);
    }
}
