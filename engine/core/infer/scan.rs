//! Grid scans of the variable-projection functional over one to three
//! nonlinear parameters jointly (design note §1), the extraction of the grid's
//! distinct local minima, and block-coordinate rescans (one parameter at a
//! time, the others held and the linear ones re-solved) to clean up.

use super::projection::Projector;

/// One grid dimension: a parameter and the values it takes.
#[derive(Debug, Clone)]
pub struct Dim {
    /// Parameter index.
    pub param: usize,
    /// Values scanned.
    pub values: Vec<f64>,
}

/// A local minimum of a grid: full parameter vector (linear ones solved) and its ssr.
#[derive(Debug, Clone)]
pub struct GridMin {
    /// Parameters.
    pub p: Vec<f64>,
    /// Residual sum of squares.
    pub ssr: f64,
}

/// Scans the product grid of `dims` with the other parameters at `base`,
/// returning up to `keep` local minima (no axis neighbour lower), best first.
pub fn grid_scan(proj: &Projector, base: &[f64], dims: &[Dim], keep: usize) -> Vec<GridMin> {
    let sizes: Vec<usize> = dims.iter().map(|d| d.values.len()).collect();
    let total: usize = sizes.iter().product();
    if dims.is_empty() || total == 0 {
        let mut p = base.to_vec();
        let ssr = proj.project(&mut p);
        return vec![GridMin { p, ssr }];
    }
    let mut ssr = vec![f64::INFINITY; total];
    let mut p = base.to_vec();
    let mut idx = vec![0usize; dims.len()];
    for (flat, s) in ssr.iter_mut().enumerate() {
        let mut r = flat;
        for (k, d) in dims.iter().enumerate().rev() {
            idx[k] = r % sizes[k];
            r /= sizes[k];
            p[d.param] = d.values[idx[k]];
        }
        *s = proj.scan_ssr(&p);
    }
    // strides for neighbour lookup
    let mut stride = vec![1usize; dims.len()];
    for k in (0..dims.len().saturating_sub(1)).rev() {
        stride[k] = stride[k + 1] * sizes[k + 1];
    }
    let mut minima: Vec<(usize, f64)> = Vec::new();
    for (flat, &v) in ssr.iter().enumerate() {
        if !v.is_finite() {
            continue;
        }
        let mut is_min = true;
        for k in 0..dims.len() {
            let i = (flat / stride[k]) % sizes[k];
            if i > 0 && ssr[flat - stride[k]] < v {
                is_min = false;
                break;
            }
            if i + 1 < sizes[k] && ssr[flat + stride[k]] < v {
                is_min = false;
                break;
            }
        }
        if is_min {
            minima.push((flat, v));
        }
    }
    minima.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
    // a flat stretch (a term pushed out of the data) gives many equal "minima": keep one
    minima.dedup_by(|b, a| (a.1 - b.1).abs() <= 1e-9 * a.1.abs());
    minima
        .into_iter()
        .take(keep)
        .map(|(flat, _)| {
            let mut p = base.to_vec();
            let mut r = flat;
            for (k, d) in dims.iter().enumerate().rev() {
                p[d.param] = d.values[r % sizes[k]];
                r /= sizes[k];
            }
            let ssr = proj.project(&mut p);
            GridMin { p, ssr }
        })
        .collect()
}

/// Scans one parameter over `values` with everything else held; moves `p`
/// to the best value when it lowers the ssr. Returns the ssr at `p`.
pub fn line_scan(proj: &Projector, p: &mut [f64], param: usize, values: &[f64]) -> f64 {
    let mut best = p[param];
    let mut best_ssr = proj.scan_ssr(p);
    let mut q = p.to_vec();
    for &v in values {
        q[param] = v;
        let s = proj.scan_ssr(&q);
        if s < best_ssr {
            best_ssr = s;
            best = v;
        }
    }
    p[param] = best;
    proj.project(p)
}

/// Products of `sizes` up to `budget` grid points: the number of values per
/// dimension for a joint scan of `k` parameters.
pub fn points_per_dim(k: usize, budget: usize) -> usize {
    match k {
        0 => 1,
        1 => budget.clamp(20, 240),
        _ => {
            let r = (budget as f64).powf(1.0 / k as f64).floor() as usize;
            r.clamp(8, 60)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::problem::Problem;
    use crate::symbolic::Model;

    #[test]
    fn finds_the_rate_of_an_exponential() {
        let cols = vec!["x".to_string(), "y".to_string()];
        let m = Model::new("a*exp(-k*x)", &cols, None).unwrap();
        let x: Vec<f64> = (0..20).map(|i| i as f64 * 0.5).collect();
        let y: Vec<f64> = x.iter().map(|t| 3.0 * (-0.7 * t).exp()).collect();
        let pr = Problem::from_columns(m, vec![x], y).unwrap();
        let proj = Projector::new(&pr);
        let values: Vec<f64> = (0..100).map(|i| 0.01 * 1.1f64.powi(i)).collect();
        let mins = grid_scan(
            &proj,
            &[0.0, 1.0],
            &[Dim {
                param: 1,
                values: values.clone(),
            }],
            3,
        );
        let best = &mins[0];
        assert!((best.p[1] - 0.7).abs() < 0.05, "{:?}", best.p);
        // linear amplitude solved exactly for that rate
        let (p, ssr) = proj.refine(&best.p, &[1], 30);
        assert!(
            (p[1] - 0.7).abs() < 1e-6 && (p[0] - 3.0).abs() < 1e-5,
            "{p:?}"
        );
        assert!(ssr < 1e-12);
    }
}
