//! Glue from the engine's results to the report's plain inputs: detected
//! features → survey panels and a features table, a fit → its fit sheet,
//! and everything → the [`ReportInput`] of the HTML page.

use super::fit_table::{format_number, FitContext, SIGNIFICANT};
use super::html::{
    formula_with_response, EstimateRow, MinimumRow, ReportInput, StartingValueRow, Table,
};
use super::plot::{format_num, FitSheet, Panel};
use foothold::features::{DataFeatures, Direction, Segment, ViewReport, XAxis, YTransform};
use foothold::fit::problem::Problem;
use foothold::fit::stats::FitSummary;

/// Points on the dense grid of fitted and starting curves.
pub const CURVE_POINTS: usize = 400;

/// How a view's y is written, e.g. `1/temp`, `ln temp`, `ln(-temp)`.
fn y_name(t: YTransform, negated: bool, y: &str) -> String {
    match t {
        YTransform::Identity => y.to_string(),
        YTransform::Reciprocal => format!("1/{y}"),
        YTransform::Log if negated => format!("ln(-{y})"),
        YTransform::Log => format!("ln {y}"),
    }
}

/// A view's title, e.g. `ln temp against log minutes`.
pub fn view_title(r: &ViewReport, x: &str, y: &str) -> String {
    let yn = y_name(r.view.y_transform, r.view.negated, y);
    match r.view.x_axis {
        XAxis::Linear => format!("{yn} against {x}"),
        XAxis::Log => format!("{yn} against log {x}"),
    }
}

/// Back from view x (natural log of x on a log axis) to data x, for panels
/// that draw log axes themselves.
fn data_x(axis: XAxis, vx: f64) -> f64 {
    match axis {
        XAxis::Linear => vx,
        XAxis::Log => vx.exp(),
    }
}

/// The distinct straight pieces of a view (longest, low end, high end).
fn straight_pieces(r: &ViewReport) -> Vec<&Segment> {
    let s = &r.features.segments;
    let mut out: Vec<&Segment> = Vec::new();
    for seg in [&s.longest, &s.low_end, &s.high_end].into_iter().flatten() {
        if !out
            .iter()
            .any(|o| o.i_from == seg.i_from && o.i_to == seg.i_to)
        {
            out.push(seg);
        }
    }
    out
}

/// Why the views against log x are left out, when they are: x has negative
/// values (it is then likely a log already, and its log drops them), or at
/// least half the points have x ≤ 0. One line for the page.
pub fn log_x_omission(features: &DataFeatures, x: &str) -> Option<String> {
    let lin = features.view(XAxis::Linear, YTransform::Identity)?;
    let logx = features.view(XAxis::Log, YTransform::Identity)?;
    let n: usize = lin
        .view
        .counts
        .iter()
        .sum::<usize>()
        .max(lin.view.points.len());
    let negative: usize = lin
        .view
        .points
        .iter()
        .zip(&lin.view.counts)
        .filter(|(p, _)| p.0 < 0.0)
        .map(|(_, c)| *c)
        .sum();
    let dropped = logx.view.excluded.x_not_positive;
    if negative > 0 {
        Some(format!(
            "The views against log {x} are left out: {negative} of {n} values of {x} are negative \
             ({x} may already be on a log scale), and its log would drop {dropped} of {n} points."
        ))
    } else if n > 0 && 2 * dropped >= n {
        Some(format!(
            "The views against log {x} are left out: {dropped} of {n} values of {x} are zero and have no log."
        ))
    } else {
        None
    }
}

/// The views shown on the page: all of them, less those against log x when
/// [`log_x_omission`] leaves them out.
fn shown_views<'a>(features: &'a DataFeatures, x: &str) -> Vec<&'a ViewReport> {
    let skip_log = log_x_omission(features, x).is_some();
    features
        .views
        .iter()
        .filter(|r| !(skip_log && r.view.x_axis == XAxis::Log))
        .collect()
}

/// One survey panel per view shown: the points, plateaus reached as horizontal
/// lines, nearby intercepts and peaks as markers, straight pieces as segments.
pub fn survey_panels(features: &DataFeatures, x: &str, y: &str) -> Vec<Panel> {
    shown_views(features, x)
        .into_iter()
        .map(|r| {
            let axis = r.view.x_axis;
            let f = &r.features;
            let mut p = Panel::new(
                &view_title(r, x, y),
                x,
                &y_name(r.view.y_transform, r.view.negated, y),
            );
            p.log_x = axis == XAxis::Log;
            p.points = r
                .view
                .points
                .iter()
                .map(|&(vx, vy)| (data_x(axis, vx), vy))
                .collect();
            for pl in [&f.low_plateau, &f.high_plateau].into_iter().flatten() {
                if pl.reached {
                    p.hlines
                        .push((pl.level, format!("plateau {}", format_num(pl.level))));
                }
            }
            if let Some(i) = f.intercept.as_ref().filter(|i| i.near) {
                p.markers.push((
                    data_x(axis, i.x_at),
                    i.value,
                    format!("intercept {}", format_num(i.value)),
                ));
            }
            for seg in straight_pieces(r) {
                let at = |vx: f64| (data_x(axis, vx), seg.intercept + seg.slope * vx);
                p.segments.push((
                    at(seg.x_from),
                    at(seg.x_to),
                    format!("slope {}", format_num(seg.slope)),
                ));
            }
            for pk in &f.peaks.peaks {
                p.markers.push((
                    data_x(axis, pk.centre),
                    pk.value,
                    format!("peak at {}", format_num(pk.centre)),
                ));
            }
            for tr in &f.peaks.troughs {
                p.markers.push((
                    data_x(axis, tr.centre),
                    tr.value,
                    format!("trough at {}", format_num(tr.centre)),
                ));
            }
            let ex = &r.view.excluded;
            let mut why = Vec::new();
            if ex.x_not_positive > 0 {
                why.push(format!(
                    "{} points with {x} ≤ 0 have no log",
                    ex.x_not_positive
                ));
            }
            if ex.y_not_positive > 0 {
                why.push(format!(
                    "{} points with {y} ≤ 0 have no log",
                    ex.y_not_positive
                ));
            }
            if ex.y_zero > 0 {
                why.push(format!(
                    "{} points with {y} = 0 have no reciprocal",
                    ex.y_zero
                ));
            }
            p.empty_reason = why.join("; ");
            p
        })
        .collect()
}

fn direction(d: Direction) -> &'static str {
    match d {
        Direction::Increasing => "increasing",
        Direction::Decreasing => "decreasing",
        Direction::NotMonotone => "rises and falls",
        Direction::Flat => "flat",
    }
}

/// The features of every view as rows (view, feature, value, details);
/// x values of log-axis views are given back on the data's scale.
pub fn features_table(features: &DataFeatures, x: &str, y: &str) -> Table {
    let n = |v: f64| format_num(v);
    let mut rows: Vec<Vec<String>> = Vec::new();
    for r in shown_views(features, x) {
        let view = view_title(r, x, y);
        let axis = r.view.x_axis;
        let f = &r.features;
        let mut row = |feature: &str, value: String, details: String| {
            rows.push(vec![view.clone(), feature.to_string(), value, details]);
        };
        if let Some(m) = &f.monotonicity {
            row(
                "direction",
                direction(m.direction).into(),
                format!("Spearman rank correlation {:.3}", m.spearman),
            );
        }
        for (name, pl) in [
            ("low-end plateau", &f.low_plateau),
            ("high-end plateau", &f.high_plateau),
        ] {
            if let Some(pl) = pl.as_ref().filter(|p| p.reached) {
                row(
                    name,
                    n(pl.level),
                    format!(
                        "{} points, {x} {} to {}",
                        pl.n_points,
                        n(data_x(axis, pl.x_from)),
                        n(data_x(axis, pl.x_to))
                    ),
                );
            }
        }
        if let Some(i) = &f.intercept {
            let at = match axis {
                XAxis::Linear => format!("at {x} = 0"),
                XAxis::Log => format!("at the lowest {x} = {}", n(data_x(axis, i.x_at))),
            };
            let near = if i.near { "" } else { ", far extrapolation" };
            row("intercept", n(i.value), format!("{at}{near}"));
        }
        for seg in straight_pieces(r) {
            row(
                "straight segment, slope",
                n(seg.slope),
                format!(
                    "{x} {} to {}, {} points, R² {:.4}",
                    n(data_x(axis, seg.x_from)),
                    n(data_x(axis, seg.x_to)),
                    seg.n_points,
                    seg.r_squared
                ),
            );
        }
        for pk in &f.peaks.peaks {
            let width = pk
                .hwhm
                .map(|w| format!(", half width {}", n(w)))
                .unwrap_or_default();
            row(
                "peak",
                n(pk.value),
                format!("at {x} = {}, height {}{width}", n(pk.centre), n(pk.height)),
            );
        }
        for tr in &f.peaks.troughs {
            row("trough", n(tr.value), format!("at {x} = {}", n(tr.centre)));
        }
        for pe in f.periods.iter().filter(|p| p.false_alarm < 0.01) {
            row(
                "period",
                n(pe.period),
                format!(
                    "power ratio {}, false-alarm probability {:.2e}",
                    n(pe.power_ratio),
                    pe.false_alarm
                ),
            );
        }
    }
    Table {
        headers: vec![
            "View".into(),
            "Feature".into(),
            "Value".into(),
            "Details".into(),
        ],
        rows,
    }
}

/// The feature kind a derivation names, for each kind of row in the features table.
fn cited_word(feature: &str) -> Option<&'static str> {
    match feature {
        "low-end plateau" | "high-end plateau" => Some("plateau"),
        "intercept" => Some("intercept"),
        "straight segment, slope" => Some("segment"),
        "peak" => Some("peak"),
        "trough" => Some("trough"),
        "period" => Some("period"),
        _ => None,
    }
}

/// The numbers written in a text (e.g. `≈ 24.300` or `1.5e-3`).
fn numbers_in(text: &str) -> Vec<f64> {
    text.split(|c: char| !(c.is_ascii_digit() || matches!(c, '.' | '-' | 'e' | 'E' | '+')))
        .filter_map(|t| {
            t.trim_matches(|c| c == '.' || c == 'e' || c == 'E')
                .parse::<f64>()
                .ok()
        })
        .filter(|v| v.is_finite())
        .collect()
}

/// Rows of the features table the starts' derivations cite: the derivation
/// names the row's kind (plateau, intercept, segment, peak, trough, period)
/// and one of its numbers equals one of the row's to four significant digits.
pub fn cited_rows(table: &Table, derivations: &[&str]) -> Vec<usize> {
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-3 * a.abs().max(b.abs()).max(1e-300);
    table
        .rows
        .iter()
        .enumerate()
        .filter(|(_, row)| {
            let Some(word) = row.get(1).and_then(|f| cited_word(f)) else {
                return false;
            };
            // The value, and for peaks and troughs the place (`at x = …`).
            let mut mine = numbers_in(row.get(2).map_or("", String::as_str));
            if matches!(word, "peak" | "trough") {
                mine.extend(numbers_in(row.get(3).map_or("", String::as_str)));
            }
            mine.retain(|v| *v != 0.0);
            derivations.iter().any(|d| {
                d.contains(word)
                    && numbers_in(d)
                        .iter()
                        .any(|v| mine.iter().any(|m| same(*v, *m)))
            })
        })
        .map(|(i, _)| i)
        .collect()
}

/// Which features go up front and the line saying why: those the starts
/// were read from; when none was, the shape of the response against x
/// (direction, plateaus, intercept) with a line saying where the starts came from.
pub fn features_up_front(
    table: &Table,
    starts: &[StartingValueRow],
    x: &str,
    y: &str,
) -> (Vec<usize>, String) {
    let derivations: Vec<&str> = starts.iter().map(|s| s.derivation.as_str()).collect();
    let cited = cited_rows(table, &derivations);
    if !cited.is_empty() {
        let s = if cited.len() == 1 { "" } else { "s" };
        return (
            cited,
            format!("The starting values were read from the feature{s} below; the other features found are folded away."),
        );
    }
    let main = format!("{y} against {x}");
    let shape: Vec<usize> = table
        .rows
        .iter()
        .enumerate()
        .filter(|(_, r)| {
            r.first() == Some(&main)
                && r.get(1)
                    .is_some_and(|f| f == "direction" || f.ends_with("plateau") || f == "intercept")
        })
        .map(|(i, _)| i)
        .collect();
    let given = !starts.is_empty()
        && derivations
            .iter()
            .all(|d| d.contains("given on the command line"));
    let why = if given {
        "The starting values were given on the command line, so none was read from a feature"
    } else {
        "No starting value was read from a feature (see how each was found under Starting values)"
    };
    (
        shape,
        format!("{why}; the shape of {main} is shown, the other features found are folded away."),
    )
}

/// `n` evenly spaced values from `lo` to `hi` (both included).
fn grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if n < 2 || hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        return vec![lo];
    }
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
        .collect()
}

/// The fit sheet of a problem: data against the first predictor, fitted
/// values, residuals, and (for one-predictor models) the starting and
/// fitted curves on a dense grid. `start` may be empty (no starting curve).
pub fn fit_sheet(problem: &Problem, start: &[f64], estimates: &[f64], title: &str) -> FitSheet {
    let x: Vec<f64> = problem.x.first().cloned().unwrap_or_default();
    let y = problem.y.clone();
    let mut fitted = vec![f64::NAN; y.len()];
    problem.predict(estimates, &mut fitted);
    let (mut start_curve, mut fitted_curve) = (Vec::new(), Vec::new());
    if problem.x.len() == 1 {
        let lo = x
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(f64::INFINITY, f64::min);
        let hi = x
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(f64::NEG_INFINITY, f64::max);
        if lo.is_finite() && hi.is_finite() {
            let g = grid(lo, hi, CURVE_POINTS);
            let curve = |p: &[f64]| -> Vec<(f64, f64)> {
                let v = problem.predict_at(p, &[&g]);
                g.iter().copied().zip(v).collect()
            };
            fitted_curve = curve(estimates);
            if start.len() == estimates.len() {
                start_curve = curve(start);
            }
        }
    }
    let model = &problem.model;
    let y_label = model.response_text();
    FitSheet {
        title: title.to_string(),
        x_label: model.vars.first().cloned().unwrap_or_default(),
        y_label,
        x,
        y,
        fitted,
        residuals: Vec::new(),
        start_curve,
        fitted_curve,
    }
}

/// The fit's estimates as report rows; non-finite errors and intervals are left out.
pub fn estimate_rows(summary: &FitSummary) -> Vec<EstimateRow> {
    summary
        .parameters
        .iter()
        .map(|p| EstimateRow {
            parameter: p.name.clone(),
            estimate: p.estimate,
            std_error: p.std_error.is_finite().then_some(p.std_error),
            interval: (p.ci_low.is_finite() && p.ci_high.is_finite())
                .then_some((p.ci_low, p.ci_high)),
            note: p
                .unidentified_reason
                .filter(|_| p.identifiable == Some(false))
                .map(|c| foothold::fit::stats::unidentified_text(c).to_string()),
        })
        .collect()
}

/// The overall figures of a fit as (label, value) pairs.
pub fn fit_facts(summary: &FitSummary) -> Vec<(String, String)> {
    let f = |v: f64| format_number(v, SIGNIFICANT);
    vec![
        ("Residual sum of squares".into(), f(summary.ssr)),
        ("Residual standard deviation".into(), f(summary.residual_sd)),
        ("Degrees of freedom".into(), summary.dof.to_string()),
        ("Observations".into(), summary.n_obs.to_string()),
        (
            "Iterations".into(),
            format!(
                "{} ({} model evaluations)",
                summary.iterations, summary.evaluations
            ),
        ),
        ("Stop reason".into(), crate::fit_table::stop_text(summary)),
        (
            "Condition number".into(),
            format_number(summary.condition_number, 3),
        ),
    ]
}

/// Everything the report is built from.
#[derive(Debug, Clone)]
pub struct ReportParts<'a> {
    /// Page title.
    pub title: String,
    /// Date text for the header (the renderer reads no clock).
    pub date: String,
    /// The model, data source, response and data warnings.
    pub context: &'a FitContext,
    /// Rows in the data file.
    pub rows_read: usize,
    /// The bound problem (rows used, predictors, response).
    pub problem: &'a Problem,
    /// Features of the response against the first predictor.
    pub features: &'a DataFeatures,
    /// Starting values with how each was obtained.
    pub starts: Vec<StartingValueRow>,
    /// Ranked minima of the multistart search (empty until the search is wired).
    pub minima: Vec<MinimumRow>,
    /// The final fit.
    pub summary: &'a FitSummary,
    /// Further warnings for the reader.
    pub warnings: Vec<String>,
}

/// Builds the report's input: tables, facts and both plots as inline SVG.
pub fn report_input(parts: &ReportParts) -> ReportInput {
    use super::plot::{fit_sheet_svg, survey_sheet_svg};
    let problem = parts.problem;
    let model = &problem.model;
    let x_name = model.vars.first().cloned().unwrap_or_default();
    let estimates: Vec<f64> = parts
        .summary
        .parameters
        .iter()
        .map(|p| p.estimate)
        .collect();
    let start: Vec<f64> = parts.starts.iter().map(|s| s.value).collect();
    let sheet = fit_sheet(
        problem,
        &start,
        &estimates,
        &format!("Fit of {}", parts.context.model),
    );
    let panels = survey_panels(parts.features, &x_name, &parts.context.response);
    let features = features_table(parts.features, &x_name, &parts.context.response);
    let (features_shown, features_note) =
        features_up_front(&features, &parts.starts, &x_name, &parts.context.response);
    let mut columns_used: Vec<(String, String)> = model
        .vars
        .iter()
        .map(|v| ("predictor".to_string(), v.clone()))
        .collect();
    columns_used.push(("response".into(), model.response.clone()));
    let mut warnings: Vec<String> = parts.context.warnings.clone();
    warnings.extend(parts.summary.warnings.iter().cloned());
    warnings.extend(parts.warnings.iter().cloned());
    let skipped_reasons = parts
        .context
        .warnings
        .iter()
        .filter(|w| w.starts_with("skipped"))
        .cloned()
        .collect();
    ReportInput {
        title: parts.title.clone(),
        date: parts.date.clone(),
        model: formula_with_response(&parts.context.model, &model.response_text()),
        data_file: parts.context.data.clone(),
        rows_read: parts.rows_read,
        rows_used: problem.y.len(),
        rows_skipped: parts.rows_read.saturating_sub(problem.y.len()),
        skipped_reasons,
        columns_used,
        features,
        features_shown,
        features_note,
        starting_values: parts.starts.clone(),
        minima: parts.minima.clone(),
        estimates: estimate_rows(parts.summary),
        fit_summary: fit_facts(parts.summary),
        survey_svg: survey_sheet_svg(&panels),
        survey_note: log_x_omission(parts.features, &x_name).unwrap_or_default(),
        fit_svg: fit_sheet_svg(&sheet),
        warnings,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use foothold::features::detect;
    use foothold::symbolic::Model;

    fn saturation() -> (Vec<f64>, Vec<f64>) {
        // Invented: y = 5x/(2 + x) on x = 0.25 .. 12, no noise.
        let x: Vec<f64> = (1..=48).map(|i| i as f64 * 0.25).collect();
        let y = x.iter().map(|x| 5.0 * x / (2.0 + x)).collect();
        (x, y)
    }

    #[test]
    fn survey_has_six_panels_with_log_axes_on_data_scale() {
        let (x, y) = saturation();
        let f = detect(&x, &y);
        let panels = survey_panels(&f, "s", "v");
        assert_eq!(panels.len(), 6);
        assert_eq!(panels[0].title, "v against s");
        assert_eq!(panels[1].title, "1/v against s");
        assert_eq!(panels[5].title, "ln v against log s");
        assert!(panels[3].log_x && !panels[0].log_x);
        // Log-axis panels carry the data's own x, not its logarithm.
        let (x0, y0) = panels[3].points[0];
        assert!((x0 - 0.25).abs() < 1e-12, "{x0}");
        assert!((y0 - 5.0 * 0.25 / 2.25).abs() < 1e-12);
        // 1/v against 1/s is a straight line; against s it is not, but 1/v
        // against s has a straight piece at the high end at least.
        assert!(panels.iter().any(|p| !p.segments.is_empty()));
        let t = features_table(&f, "s", "v");
        assert_eq!(t.headers.len(), 4);
        assert!(
            t.rows
                .iter()
                .any(|r| r[1] == "direction" && r[2] == "increasing"),
            "{:?}",
            t.rows
        );
    }

    #[test]
    fn fit_sheet_curves_follow_the_model() {
        let (x, y) = saturation();
        let cols = vec!["x".to_string(), "y".to_string()];
        let model = Model::new("a*x/(k + x)", &cols, None).unwrap();
        let problem = Problem::from_columns(model, vec![x.clone()], y).unwrap();
        let sheet = fit_sheet(&problem, &[4.0, 1.0], &[5.0, 2.0], "t");
        assert_eq!(sheet.fitted_curve.len(), CURVE_POINTS);
        let (gx, gy) = sheet.fitted_curve[CURVE_POINTS - 1];
        assert!((gx - 12.0).abs() < 1e-12 && (gy - 60.0 / 14.0).abs() < 1e-12);
        let (sx, sy) = sheet.start_curve[0];
        assert!((sx - 0.25).abs() < 1e-12 && (sy - 1.0 / 1.25).abs() < 1e-12);
        assert!(sheet
            .fitted
            .iter()
            .zip(&sheet.y)
            .all(|(f, y)| (f - y).abs() < 1e-12));
        assert_eq!(sheet.x_label, "x");
    }
}
