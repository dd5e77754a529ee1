//! Student-t distribution: tail probabilities and quantiles, for the intervals
//! and t tests of a fit. The tail comes from the regularised incomplete beta
//! function, P(T > t) = ½·I_{ν/(ν+t²)}(ν/2, ½) (Abramowitz & Stegun 1964,
//! 26.7.1 and 26.5.27), evaluated by its continued fraction with the modified
//! Lentz method (Lentz 1976; as in Press et al. 1992, §6.4). The quantile
//! inverts that tail by a bracketed Newton iteration with bisection safeguard.

use std::f64::consts::PI;

/// ln Γ(x) for x > 0 by the rational-series gamma approximation of Press et al.
/// (1992, §6.1), with P. Godfrey's (2001) coefficients for g = 7 (nine terms),
/// with the reflection formula below ½. Accurate to about 1e-15 relative.
pub fn ln_gamma(x: f64) -> f64 {
    const G: f64 = 7.0;
    const C: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if !x.is_finite() || x <= 0.0 {
        return f64::NAN;
    }
    if x < 0.5 {
        // Γ(x)Γ(1−x) = π / sin(πx)
        return (PI / (PI * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut a = C[0];
    let t = x + G + 0.5;
    for (i, c) in C.iter().enumerate().skip(1) {
        a += c / (x + i as f64);
    }
    0.5 * (2.0 * PI).ln() + (x + 0.5) * t.ln() - t + a.ln()
}

/// Continued fraction for I_x(a, b) (modified Lentz).
fn beta_cf(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    let qab = a + b;
    let qap = a + 1.0;
    let qam = a - 1.0;
    let mut c = 1.0;
    let mut d = 1.0 - qab * x / qap;
    if d.abs() < TINY {
        d = TINY;
    }
    d = 1.0 / d;
    let mut h = d;
    for m in 1..=500 {
        let m = m as f64;
        let m2 = 2.0 * m;
        let aa = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 + aa * d;
        if d.abs() < TINY {
            d = TINY;
        }
        c = 1.0 + aa / c;
        if c.abs() < TINY {
            c = TINY;
        }
        d = 1.0 / d;
        h *= d * c;
        let aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 + aa * d;
        if d.abs() < TINY {
            d = TINY;
        }
        c = 1.0 + aa / c;
        if c.abs() < TINY {
            c = TINY;
        }
        d = 1.0 / d;
        let del = d * c;
        h *= del;
        if (del - 1.0).abs() < 1e-16 {
            break;
        }
    }
    h
}

/// Regularised incomplete beta function I_x(a, b) for a, b > 0, 0 ≤ x ≤ 1.
pub fn incomplete_beta(a: f64, b: f64, x: f64) -> f64 {
    if !(a > 0.0 && b > 0.0) || x.is_nan() {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let ln_bt = ln_gamma(a + b) - ln_gamma(a) - ln_gamma(b) + a * x.ln() + b * (1.0 - x).ln();
    let bt = ln_bt.exp();
    if x < (a + 1.0) / (a + b + 2.0) {
        bt * beta_cf(a, b, x) / a
    } else {
        1.0 - bt * beta_cf(b, a, 1.0 - x) / b
    }
}

// NaN-aware on purpose: `!(x > 0.0)` is also true for NaN, which must take
// the same branch as a non-positive value (clippy's partial_cmp form hides that).
#[allow(clippy::neg_cmp_op_on_partial_ord)]
/// Upper tail P(T > t) of Student's t with `dof` degrees of freedom.
pub fn t_upper_tail(t: f64, dof: f64) -> f64 {
    if t.is_nan() || !(dof > 0.0) {
        return f64::NAN;
    }
    if t == f64::INFINITY {
        return 0.0;
    }
    if t == f64::NEG_INFINITY {
        return 1.0;
    }
    let half = 0.5 * incomplete_beta(0.5 * dof, 0.5, dof / (dof + t * t));
    if t >= 0.0 {
        half
    } else {
        1.0 - half
    }
}

/// Two-sided p-value P(|T| > |t|).
pub fn t_two_sided_p(t: f64, dof: f64) -> f64 {
    (2.0 * t_upper_tail(t.abs(), dof)).min(1.0)
}

/// Density of Student's t.
fn t_density(t: f64, dof: f64) -> f64 {
    let ln_c = ln_gamma(0.5 * (dof + 1.0)) - ln_gamma(0.5 * dof) - 0.5 * (dof * PI).ln();
    (ln_c - 0.5 * (dof + 1.0) * (t * t / dof).ln_1p()).exp()
}

// NaN-aware on purpose: `!(x > 0.0)` is also true for NaN, which must take
// the same branch as a non-positive value (clippy's partial_cmp form hides that).
#[allow(clippy::neg_cmp_op_on_partial_ord)]
/// Quantile t_p,ν: the t with P(T ≤ t) = p. NaN for p outside (0, 1) or dof ≤ 0.
pub fn t_quantile(p: f64, dof: f64) -> f64 {
    if !(p > 0.0 && p < 1.0 && dof > 0.0 && dof.is_finite()) {
        return f64::NAN;
    }
    if p == 0.5 {
        return 0.0;
    }
    if p < 0.5 {
        return -t_quantile(1.0 - p, dof);
    }
    let q = 1.0 - p; // target upper tail
                     // Bracket [lo, hi] with tail(lo) ≥ q > tail(hi).
    let mut lo = 0.0;
    let mut hi = 2.0;
    let mut guard = 0;
    while t_upper_tail(hi, dof) > q {
        lo = hi;
        hi *= 4.0;
        guard += 1;
        if guard > 200 || !hi.is_finite() {
            return f64::INFINITY;
        }
    }
    let mut t = 0.5 * (lo + hi);
    for _ in 0..200 {
        let g = t_upper_tail(t, dof) - q;
        if g == 0.0 {
            return t;
        }
        if g > 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        // Newton on tail(t) − q, whose derivative is −density(t).
        let mut next = t + g / t_density(t, dof);
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if (next - t).abs() <= 1e-15 * t.abs() || hi - lo <= 1e-15 * hi {
            return next;
        }
        t = next;
    }
    t
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ln_gamma_known_values() {
        // Γ(½) = √π and Γ(10) = 9! (exact identities).
        assert!((ln_gamma(0.5) - PI.sqrt().ln()).abs() < 1e-14);
        assert!((ln_gamma(10.0) - 362_880f64.ln()).abs() < 1e-13);
        assert!((ln_gamma(1.0)).abs() < 1e-15);
        assert!(ln_gamma(-1.0).is_nan());
    }

    #[test]
    fn incomplete_beta_identities() {
        // I_x(1, 1) = x and I_x(a, 1) = x^a (exact).
        assert!((incomplete_beta(1.0, 1.0, 0.3) - 0.3).abs() < 1e-14);
        assert!((incomplete_beta(2.5, 1.0, 0.4) - 0.4f64.powf(2.5)).abs() < 1e-14);
        // Symmetry I_x(a, b) = 1 − I_{1−x}(b, a).
        let s = incomplete_beta(3.0, 4.5, 0.35) + incomplete_beta(4.5, 3.0, 0.65);
        assert!((s - 1.0).abs() < 1e-14);
    }

    #[test]
    fn quantiles_match_closed_forms() {
        // ν = 1 (Cauchy): t = tan(π(p − ½)); ν = 2: t = (2p − 1)/√(2p(1 − p)) (exact).
        for p in [0.6, 0.9, 0.975, 0.995] {
            let c = (PI * (p - 0.5)).tan();
            assert!((t_quantile(p, 1.0) - c).abs() < 1e-10 * c, "p={p}");
            let t2 = (2.0 * p - 1.0) / (2.0 * p * (1.0 - p)).sqrt();
            assert!((t_quantile(p, 2.0) - t2).abs() < 1e-11 * t2, "p={p}");
        }
        assert!((t_quantile(0.025, 2.0) + t_quantile(0.975, 2.0)).abs() < 1e-14);
    }

    #[test]
    fn quantiles_match_textbook_table() {
        // Textbook t-table values, three decimals (from memory).
        let table = [
            (0.975, 5.0, 2.571),
            (0.975, 8.0, 2.306),
            (0.975, 10.0, 2.228),
            (0.975, 30.0, 2.042),
            (0.975, 120.0, 1.980),
            (0.95, 10.0, 1.812),
            (0.995, 20.0, 2.845),
        ];
        for (p, nu, want) in table {
            let t = t_quantile(p, nu);
            assert!((t - want).abs() < 6e-4, "t({p}, {nu}) = {t}, table {want}");
        }
        // Large ν tends to the normal quantile 1.959964 (from memory).
        assert!((t_quantile(0.975, 1e7) - 1.959964).abs() < 1e-5);
    }

    #[test]
    fn tail_and_quantile_are_inverse_and_bad_input_is_nan() {
        let t = t_quantile(0.99, 7.0);
        assert!((t_upper_tail(t, 7.0) - 0.01).abs() < 1e-15);
        assert!((t_two_sided_p(t, 7.0) - 0.02).abs() < 1e-14);
        assert!(t_quantile(0.975, 0.0).is_nan());
        assert!(t_quantile(1.0, 5.0).is_nan());
        assert!(t_upper_tail(f64::NAN, 5.0).is_nan());
    }
}
