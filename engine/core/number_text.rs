//! Numbers written for people: one formatter for every table, page and
//! derivation, so the same value reads the same everywhere.

/// Formats a number to `sig` significant digits: fixed notation for
/// magnitudes in [1e-4, 1e7), scientific outside; `n/a` for NaN.
pub fn format_number(v: f64, sig: usize) -> String {
    let sig = sig.max(1);
    if v.is_nan() {
        return "n/a".into();
    }
    if v.is_infinite() {
        return if v > 0.0 { "inf" } else { "-inf" }.into();
    }
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if !(1e-4..1e7).contains(&a) {
        return format!("{:.*e}", sig - 1, v);
    }
    let mag = a.log10().floor() as i32;
    let mut dec = (sig as i32 - 1 - mag).max(0) as usize;
    let s = format!("{:.*}", dec, v);
    // Rounding may carry into a new leading digit (9.9999996 -> 10.000000).
    let rounded: f64 = s.parse().unwrap_or(v);
    if rounded.abs() >= 10f64.powi(mag + 1) && dec > 0 {
        dec -= 1;
        return format!("{:.*}", dec, v);
    }
    s
}
