//! The fit as an aligned plain-text table: one row per parameter (estimate,
//! standard error, t value, 95% interval), then the fit's overall figures and warnings.

use crate::fit::stats::{unidentified_text, FitSummary};

/// What the fit was of, for the heading of a report.
#[derive(Debug, Clone, Default)]
pub struct FitContext {
    /// The model formula as given.
    pub model: String,
    /// Where the data came from.
    pub data: String,
    /// The response column.
    pub response: String,
    /// Rows dropped because a needed cell was empty.
    pub skipped_rows: usize,
    /// Warnings from reading the data (fit warnings live in the summary).
    pub warnings: Vec<String>,
    /// When the starts were found by the multistart search: (local fits tried, distinct minima).
    pub search: Option<(usize, usize)>,
}

/// The stop reason with whether it counts as converged, as tables print it.
pub fn stop_text(summary: &FitSummary) -> String {
    let state = if summary.converged {
        "converged"
    } else {
        "NOT converged"
    };
    format!("{} ({})", summary.stop_reason, state)
}

/// Significant digits for estimates, errors, intervals and sums of squares.
pub const SIGNIFICANT: usize = 7;
/// Significant digits for t values.
pub const T_SIGNIFICANT: usize = 4;

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

/// Renders the whole fit as text, ending with a newline.
pub fn fit_table(summary: &FitSummary, ctx: &FitContext) -> String {
    let mut out = String::new();
    out += &format!("model      {}\n", ctx.model);
    out += &format!(
        "data       {} ({} rows used, {} skipped)\n",
        ctx.data, summary.n_obs, ctx.skipped_rows
    );
    out += &format!("response   {}\n\n", ctx.response);

    // A parameter the data do not determine is marked beside its row (the
    // column appears only when one is).
    let flagged = summary
        .parameters
        .iter()
        .any(|p| p.identifiable == Some(false));
    let mut header = vec![
        "parameter",
        "estimate",
        "std. error",
        "t value",
        "95% low",
        "95% high",
    ];
    if flagged {
        header.push("note");
    }
    let rows: Vec<Vec<String>> = summary
        .parameters
        .iter()
        .map(|p| {
            let mut r = vec![
                p.name.clone(),
                format_number(p.estimate, SIGNIFICANT),
                format_number(p.std_error, SIGNIFICANT),
                format_number(p.t_value, T_SIGNIFICANT),
                format_number(p.ci_low, SIGNIFICANT),
                format_number(p.ci_high, SIGNIFICANT),
            ];
            if flagged {
                r.push(
                    p.unidentified_reason
                        .filter(|_| p.identifiable == Some(false))
                        .map(unidentified_text)
                        .unwrap_or("")
                        .to_string(),
                );
            }
            r
        })
        .collect();
    let mut widths: Vec<usize> = header.iter().map(|h| h.chars().count()).collect();
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r.iter()) {
            *w = (*w).max(c.chars().count());
        }
    }
    let last = header.len() - 1;
    let line = |cells: &[String]| -> String {
        let mut s = String::new();
        for (j, (c, w)) in cells.iter().zip(widths.iter()).enumerate() {
            if j == 0 || (flagged && j == last) {
                s += &format!("{}{:<w$}", if j == 0 { "" } else { "  " }, c, w = *w);
            } else {
                s += &format!("  {:>w$}", c, w = *w);
            }
        }
        s.trim_end().to_string() + "\n"
    };
    out += &line(&header.iter().map(|h| h.to_string()).collect::<Vec<_>>());
    for r in &rows {
        out += &line(r);
    }
    out += "\n";

    let figures = [
        (
            "residual sum of squares",
            format_number(summary.ssr, SIGNIFICANT),
        ),
        (
            "residual std. deviation",
            format_number(summary.residual_sd, SIGNIFICANT),
        ),
        ("degrees of freedom", summary.dof.to_string()),
        ("observations", summary.n_obs.to_string()),
        (
            "iterations",
            format!(
                "{} ({} model evaluations)",
                summary.iterations, summary.evaluations
            ),
        ),
        ("stop reason", stop_text(summary)),
        (
            "condition number",
            format_number(summary.condition_number, 3),
        ),
    ];
    let fw = figures.iter().map(|(k, _)| k.len()).max().unwrap_or(0);
    for (k, v) in &figures {
        out += &format!("{:<fw$}  {}\n", k, v, fw = fw);
    }
    let warnings: Vec<&String> = ctx.warnings.iter().chain(&summary.warnings).collect();
    if warnings.is_empty() {
        out += &format!("{:<fw$}  none\n", "warnings", fw = fw);
    } else {
        out += "warnings\n";
        for w in warnings {
            out += &format!("  - {}\n", w);
        }
    }
    out
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::fit::stats::ParamEstimate;

    /// A hand-made summary for the formatting tests.
    pub(crate) fn sample_summary() -> FitSummary {
        FitSummary {
            parameters: vec![
                ParamEstimate {
                    name: "a".into(),
                    estimate: 12.3456789,
                    std_error: 0.0123456789,
                    t_value: 1000.0,
                    ci_low: 12.32,
                    ci_high: 12.37,
                    p_value: 0.0,
                    identifiable: Some(true),
                    unidentified_reason: None,
                },
                ParamEstimate {
                    name: "rate_k".into(),
                    estimate: -3.2e-9,
                    std_error: f64::NAN,
                    t_value: f64::NAN,
                    ci_low: f64::NEG_INFINITY,
                    ci_high: f64::INFINITY,
                    p_value: f64::NAN,
                    identifiable: Some(false),
                    unidentified_reason: Some("singular_direction"),
                },
            ],
            ssr: 0.5,
            residual_sd: 0.125,
            dof: 32,
            n_obs: 34,
            iterations: 9,
            evaluations: 14,
            stop_reason: "small_reduction".into(),
            converged: true,
            correlation: vec![vec![1.0, f64::NAN], vec![f64::NAN, 1.0]],
            condition_number: 1.5e12,
            warnings: vec!["rate_k is poorly determined".into()],
        }
    }

    #[test]
    fn numbers_keep_seven_significant_digits() {
        assert_eq!(format_number(12.3456789, 7), "12.34568");
        assert_eq!(format_number(-0.00123456789, 7), "-0.001234568");
        assert_eq!(format_number(1234567.89, 7), "1234568");
        assert_eq!(format_number(12345678.9, 7), "1.234568e7");
        assert_eq!(format_number(3.2e-9, 7), "3.200000e-9");
        assert_eq!(format_number(9.99999996, 7), "10.00000");
        assert_eq!(format_number(0.0, 7), "0");
        assert_eq!(format_number(f64::NAN, 7), "n/a");
        assert_eq!(format_number(f64::NEG_INFINITY, 7), "-inf");
        assert_eq!(format_number(1000.0, 4), "1000");
    }

    #[test]
    fn table_is_aligned_and_complete() {
        let ctx = FitContext {
            model: "y = a*exp(-rate_k*t)".into(),
            data: "d.csv".into(),
            response: "y".into(),
            skipped_rows: 2,
            warnings: vec!["skipped 2 rows with a missing value in t, y".into()],
            search: None,
        };
        let t = fit_table(&sample_summary(), &ctx);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines[0], "model      y = a*exp(-rate_k*t)");
        assert_eq!(lines[1], "data       d.csv (34 rows used, 2 skipped)");
        let head = lines[4];
        let a = lines[5];
        let k = lines[6];
        assert!(
            head.starts_with("parameter      estimate  std. error"),
            "{t}"
        );
        assert!(a.starts_with("a         "), "{t}");
        // Right-aligned columns end at the same character.
        let end_est = head.find("estimate").unwrap() + "estimate".len();
        assert_eq!(&a[end_est - 8..end_est], "12.34568", "{t}");
        assert!(
            k.contains("-3.200000e-9") && k.contains("n/a") && k.contains("inf"),
            "{t}"
        );
        assert!(t.contains("residual sum of squares  0.5000000\n"), "{t}");
        assert!(t.contains("degrees of freedom       32\n"), "{t}");
        assert!(
            t.contains("stop reason              small_reduction (converged)\n"),
            "{t}"
        );
        assert!(t.contains("  - skipped 2 rows"), "{t}");
        assert!(t.contains("  - rate_k is poorly determined\n"), "{t}");
    }
}
