//! Small robust statistics: median, median absolute deviation, ranks and
//! Spearman's rank correlation.

/// Median of a slice (NaN-free input assumed); None when empty.
pub fn median(v: &[f64]) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    // Selection, not a full sort (Hoare's quickselect, as the standard library does it).
    let mut s = v.to_vec();
    let n = s.len();
    let (below, &mut upper, _) = s.select_nth_unstable_by(n / 2, |a, b| a.total_cmp(b));
    Some(if n % 2 == 1 {
        upper
    } else {
        let lower = below.iter().copied().max_by(|a, b| a.total_cmp(b))?;
        0.5 * (lower + upper)
    })
}

/// Robust standard deviation: 1.4826 × median absolute deviation about the median
/// (Hampel 1974); consistent for Gaussian noise.
pub fn mad_sigma(v: &[f64]) -> Option<f64> {
    let m = median(v)?;
    let dev: Vec<f64> = v.iter().map(|x| (x - m).abs()).collect();
    median(&dev).map(|d| 1.4826 * d)
}

/// Ranks 1..n with ties given their average rank.
pub fn ranks(v: &[f64]) -> Vec<f64> {
    let n = v.len();
    let mut idx: Vec<usize> = (0..n).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]));
    let mut r = vec![0.0; n];
    let mut i = 0;
    while i < n {
        let mut j = i;
        while j + 1 < n && v[idx[j + 1]] == v[idx[i]] {
            j += 1;
        }
        let avg = (i + j) as f64 / 2.0 + 1.0;
        for &k in &idx[i..=j] {
            r[k] = avg;
        }
        i = j + 1;
    }
    r
}

/// Spearman's rank correlation (Spearman 1904) as the Pearson correlation of ranks;
/// 0 when either variable is constant or fewer than 2 points.
pub fn spearman(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len().min(y.len());
    if n < 2 {
        return 0.0;
    }
    let rx = ranks(&x[..n]);
    let ry = ranks(&y[..n]);
    let mx = rx.iter().sum::<f64>() / n as f64;
    let my = ry.iter().sum::<f64>() / n as f64;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let (a, b) = (rx[i] - mx, ry[i] - my);
        sxy += a * b;
        sxx += a * a;
        syy += b * b;
    }
    if sxx <= 0.0 || syy <= 0.0 {
        0.0
    } else {
        sxy / (sxx * syy).sqrt()
    }
}

/// Robust straight line (slope, intercept) by Theil (1950) and Sen (1968): the
/// median of pairwise slopes, and the median of y − slope·x. At most 400 evenly
/// strided points are used so the cost stays bounded. None for < 2 distinct x.
pub fn theil_sen(x: &[f64], y: &[f64]) -> Option<(f64, f64)> {
    let n = x.len().min(y.len());
    let step = n.div_ceil(400).max(1);
    let idx: Vec<usize> = (0..n).step_by(step).collect();
    let mut slopes = Vec::with_capacity(idx.len() * idx.len() / 2);
    for (a, &i) in idx.iter().enumerate() {
        for &j in &idx[a + 1..] {
            let dx = x[j] - x[i];
            if dx != 0.0 {
                slopes.push((y[j] - y[i]) / dx);
            }
        }
    }
    let slope = median(&slopes)?;
    let res: Vec<f64> = (0..n).map(|i| y[i] - slope * x[i]).collect();
    Some((slope, median(&res)?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_mad_spearman() {
        assert_eq!(median(&[3.0, 1.0, 2.0, 10.0]), Some(2.5));
        assert_eq!(median(&[]), None);
        // deviations from 2: 1,1,0,0,98 -> median 1
        assert!((mad_sigma(&[1.0, 3.0, 2.0, 2.0, 100.0]).unwrap() - 1.4826).abs() < 1e-12);
        assert_eq!(ranks(&[10.0, 20.0, 10.0]), vec![1.5, 3.0, 1.5]);
        assert!((spearman(&[1.0, 2.0, 3.0, 4.0], &[1.0, 8.0, 27.0, 64.0]) - 1.0).abs() < 1e-12);
        assert!((spearman(&[1.0, 2.0, 3.0], &[3.0, 2.0, 1.0]) + 1.0).abs() < 1e-12);
        assert_eq!(spearman(&[1.0, 2.0, 3.0], &[5.0, 5.0, 5.0]), 0.0);
        // one wild point does not move the robust line
        let (b, a) = theil_sen(&[0.0, 1.0, 2.0, 3.0, 4.0], &[1.0, 3.0, 5.0, 70.0, 9.0]).unwrap();
        assert!((b - 2.0).abs() < 1e-12 && (a - 1.0).abs() < 1e-12);
    }
}
