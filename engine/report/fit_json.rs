//! The fit as JSON: fields in a fixed order, non-finite numbers as `null`,
//! so that the output is always valid JSON and the same for the same fit.

use super::fit_table::FitContext;
use foothold::fit::stats::FitSummary;
use serde::Serialize;

/// One parameter in the JSON (and YAML) output; `None` is a non-finite number.
#[derive(Debug, Serialize)]
pub struct ParamJson<'a> {
    pub name: &'a str,
    pub estimate: Option<f64>,
    pub std_error: Option<f64>,
    pub t_value: Option<f64>,
    pub ci_low: Option<f64>,
    pub ci_high: Option<f64>,
    /// Whether the data determine the parameter (`null`: undefined).
    pub identifiable: Option<bool>,
    /// Why not: `singular_direction` or `relative_se` (`null` otherwise).
    pub unidentified_reason: Option<&'a str>,
}

/// The whole JSON document (struct order = output order).
#[derive(Debug, Serialize)]
pub struct FitJson<'a> {
    pub model: &'a str,
    pub data: &'a str,
    pub response: &'a str,
    pub converged: bool,
    pub parameters: Vec<ParamJson<'a>>,
    pub ssr: Option<f64>,
    pub residual_sd: Option<f64>,
    pub dof: usize,
    pub n_obs: usize,
    pub skipped_rows: usize,
    pub iterations: usize,
    pub evaluations: usize,
    pub stop_reason: &'a str,
    pub condition_number: Option<f64>,
    /// Row i, column j: correlation of parameters i and j (parameter order).
    pub correlation: Vec<Vec<Option<f64>>>,
    /// Row i, column j: covariance s²·(JᵀJ)⁻¹ of parameters i and j (parameter order).
    pub covariance: Vec<Vec<Option<f64>>>,
    pub warnings: Vec<&'a str>,
    /// Local fits run by the multistart search (only when no starts were given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub candidates_tried: Option<usize>,
    /// Distinct minima the search found (only when no starts were given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub minima_found: Option<usize>,
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// Renders the fit as pretty-printed JSON, ending with a newline.
pub fn fit_json(summary: &FitSummary, ctx: &FitContext) -> Result<String, serde_json::Error> {
    Ok(serde_json::to_string_pretty(&fit_document(summary, ctx))? + "\n")
}

/// The document behind the JSON output, for other serialisations (YAML).
pub fn fit_document<'a>(summary: &'a FitSummary, ctx: &'a FitContext) -> FitJson<'a> {
    FitJson {
        model: &ctx.model,
        data: &ctx.data,
        response: &ctx.response,
        converged: summary.converged,
        parameters: summary
            .parameters
            .iter()
            .map(|p| ParamJson {
                name: &p.name,
                estimate: finite(p.estimate),
                std_error: finite(p.std_error),
                t_value: finite(p.t_value),
                ci_low: finite(p.ci_low),
                ci_high: finite(p.ci_high),
                identifiable: p.identifiable,
                unidentified_reason: p.unidentified_reason,
            })
            .collect(),
        ssr: finite(summary.ssr),
        residual_sd: finite(summary.residual_sd),
        dof: summary.dof,
        n_obs: summary.n_obs,
        skipped_rows: ctx.skipped_rows,
        iterations: summary.iterations,
        evaluations: summary.evaluations,
        stop_reason: &summary.stop_reason,
        candidates_tried: ctx.search.map(|s| s.0),
        minima_found: ctx.search.map(|s| s.1),
        condition_number: finite(summary.condition_number),
        correlation: summary
            .correlation
            .iter()
            .map(|r| r.iter().map(|&v| finite(v)).collect())
            .collect(),
        covariance: foothold::fit::covariance::covariance_matrix(summary)
            .iter()
            .map(|r| r.iter().map(|&v| finite(v)).collect())
            .collect(),
        warnings: ctx
            .warnings
            .iter()
            .chain(&summary.warnings)
            .map(|s| s.as_str())
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit_table::tests::sample_summary;

    #[test]
    fn non_finite_numbers_are_null_and_json_is_valid() {
        let ctx = FitContext {
            model: "a*exp(-rate_k*t)".into(),
            data: "d.csv".into(),
            response: "y".into(),
            skipped_rows: 1,
            warnings: vec!["skipped 1 row".into()],
            search: None,
        };
        let text = fit_json(&sample_summary(), &ctx).unwrap();
        let v: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(v["parameters"][0]["name"], "a");
        assert_eq!(v["parameters"][0]["estimate"], 12.3456789);
        assert!(v["parameters"][1]["std_error"].is_null());
        assert!(v["parameters"][1]["ci_low"].is_null());
        assert_eq!(v["parameters"][1]["estimate"], -3.2e-9);
        assert!(v["correlation"][0][1].is_null());
        assert_eq!(v["correlation"][1][1], 1.0);
        // Covariance: se_i·se_j·r_ij; null where a standard error is undefined.
        let se0 = sample_summary().parameters[0].std_error;
        assert_eq!(v["covariance"][0][0], se0 * se0);
        assert!(v["covariance"][0][1].is_null());
        assert!(v["covariance"][1][1].is_null());
        assert_eq!(v["dof"], 32);
        assert_eq!(v["converged"], true);
        assert_eq!(v["stop_reason"], "small_reduction");
        assert_eq!(v["warnings"][0], "skipped 1 row");
        assert_eq!(v["warnings"][1], "rate_k is poorly determined");
        // Fixed field order: deterministic output.
        assert!(text.find("\"model\"").unwrap() < text.find("\"parameters\"").unwrap());
        assert!(text.find("\"ssr\"").unwrap() < text.find("\"warnings\"").unwrap());
        assert_eq!(text, fit_json(&sample_summary(), &ctx).unwrap());
    }
}
