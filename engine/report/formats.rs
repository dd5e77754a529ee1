//! The output formats shared by every command: YAML from the same documents
//! as JSON, CSV with one record a line, and aligned plain-text tables.
//! Non-finite numbers are `null` in JSON and YAML and empty cells in CSV.

use super::fit_json::fit_document;
use super::fit_table::FitContext;
use crate::fit::stats::FitSummary;
use serde::Serialize;

/// Serialises any document as YAML (field order as declared), ending with a newline.
pub fn to_yaml<T: Serialize>(doc: &T) -> Result<String, serde_yaml_ng::Error> {
    let mut s = serde_yaml_ng::to_string(doc)?;
    if !s.ends_with('\n') {
        s.push('\n');
    }
    Ok(s)
}

/// Serialises any document as pretty JSON, ending with a newline.
pub fn to_json<T: Serialize>(doc: &T) -> Result<String, serde_json::Error> {
    Ok(serde_json::to_string_pretty(doc)? + "\n")
}

/// A number for a CSV cell: the shortest text that reads back to the same
/// value (scientific outside [1e-5, 1e16)); empty for NaN and infinities.
pub fn csv_number(v: f64) -> String {
    if !v.is_finite() {
        String::new()
    } else if v == 0.0 || (1e-5..1e16).contains(&v.abs()) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// A text cell for CSV, quoted when it holds a comma, quote or line break.
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// One CSV record from already formatted cells (numbers via [`csv_number`]),
/// text cells quoted as needed, ending with a newline.
pub fn csv_line<S: AsRef<str>>(cells: &[S]) -> String {
    let mut s = cells
        .iter()
        .map(|c| csv_field(c.as_ref()))
        .collect::<Vec<_>>()
        .join(",");
    s.push('\n');
    s
}

/// Header of the per-parameter CSV of a fit.
pub const FIT_CSV_HEADER: [&str; 8] = [
    "name",
    "estimate",
    "std_error",
    "t_value",
    "ci_low",
    "ci_high",
    "identifiable",
    "unidentified_reason",
];

/// `true`, `false`, or empty when undefined: a parameter's identifiability as
/// CSV and batch tables print it.
pub fn identifiable_cell(v: Option<bool>) -> String {
    v.map(|b| b.to_string()).unwrap_or_default()
}

/// The fit as CSV: a header, then one row per parameter.
pub fn fit_csv(summary: &FitSummary) -> String {
    let mut out = csv_line(&FIT_CSV_HEADER);
    for p in &summary.parameters {
        out += &csv_line(&[
            p.name.clone(),
            csv_number(p.estimate),
            csv_number(p.std_error),
            csv_number(p.t_value),
            csv_number(p.ci_low),
            csv_number(p.ci_high),
            identifiable_cell(p.identifiable),
            p.unidentified_reason.unwrap_or("").to_string(),
        ]);
    }
    out
}

/// The fit as YAML: the same document and field order as the JSON output.
pub fn fit_yaml(summary: &FitSummary, ctx: &FitContext) -> Result<String, serde_yaml_ng::Error> {
    to_yaml(&fit_document(summary, ctx))
}

/// How a column of an aligned table is justified.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Text: padded on the right.
    Left,
    /// Numbers: padded on the left.
    Right,
}

/// An aligned plain-text table: headings, then rows, columns two spaces
/// apart, trailing spaces trimmed. Short rows are padded with empty cells.
pub fn aligned_table<S: AsRef<str>>(headers: &[&str], align: &[Align], rows: &[Vec<S>]) -> String {
    let n = headers.len();
    let mut widths: Vec<usize> = headers.iter().map(|h| h.chars().count()).collect();
    for r in rows {
        for (j, c) in r.iter().enumerate().take(n) {
            widths[j] = widths[j].max(c.as_ref().chars().count());
        }
    }
    let line = |cells: &mut dyn Iterator<Item = &str>| -> String {
        let mut s = String::new();
        for (j, w) in widths.iter().enumerate() {
            let c = cells.next().unwrap_or("");
            if j > 0 {
                s += "  ";
            }
            let pad = w.saturating_sub(c.chars().count());
            match align.get(j).copied().unwrap_or(Align::Left) {
                Align::Left => {
                    s += c;
                    s += &" ".repeat(pad);
                }
                Align::Right => {
                    s += &" ".repeat(pad);
                    s += c;
                }
            }
        }
        s.trim_end().to_string() + "\n"
    };
    let mut out = line(&mut headers.iter().copied());
    for r in rows {
        out += &line(&mut r.iter().map(|c| c.as_ref()));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::fit_table::tests::sample_summary;

    #[test]
    fn csv_has_one_row_per_parameter_and_empty_non_finite_cells() {
        let csv = fit_csv(&sample_summary());
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(
            lines[0],
            "name,estimate,std_error,t_value,ci_low,ci_high,identifiable,unidentified_reason"
        );
        assert_eq!(lines[1], "a,12.3456789,0.0123456789,1000,12.32,12.37,true,");
        assert_eq!(lines[2], "rate_k,-3.2e-9,,,,,false,singular_direction");
        assert_eq!(lines.len(), 3);
        assert_eq!(
            csv_line(&["a,b", "say \"hi\"", "3"]),
            "\"a,b\",\"say \"\"hi\"\"\",3\n"
        );
    }

    #[test]
    fn yaml_keeps_the_json_fields_in_order_with_nulls() {
        let ctx = FitContext {
            model: "a*exp(-rate_k*t)".into(),
            data: "d.csv".into(),
            response: "y".into(),
            skipped_rows: 0,
            warnings: vec![],
            search: None,
        };
        let y = fit_yaml(&sample_summary(), &ctx).unwrap();
        let v: serde_yaml_ng::Value = serde_yaml_ng::from_str(&y).unwrap();
        assert_eq!(v["parameters"][0]["estimate"].as_f64(), Some(12.3456789));
        assert!(v["parameters"][1]["std_error"].is_null());
        assert_eq!(v["dof"].as_u64(), Some(32));
        assert!(y.find("model:").unwrap() < y.find("parameters:").unwrap());
        assert!(y.find("ssr:").unwrap() < y.find("warnings:").unwrap());
    }

    #[test]
    fn tables_align_text_left_and_numbers_right() {
        let t = aligned_table(
            &["name", "value"],
            &[Align::Left, Align::Right],
            &[vec!["long-name", "1.5"], vec!["k", "12.25"]],
        );
        assert_eq!(t, "name       value\nlong-name    1.5\nk          12.25\n");
    }
}
