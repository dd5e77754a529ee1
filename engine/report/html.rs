//! The self-contained HTML report: one HTML5 page with inline CSS and inline
//! SVG plots, no scripts, no network fetches, deterministic for equal input.

use std::fmt::Write as _;

/// A table of text cells with its column headings.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Table {
    /// Column headings.
    pub headers: Vec<String>,
    /// Rows of cells; short rows are padded with empty cells.
    pub rows: Vec<Vec<String>>,
}

/// One starting value and the sentence saying how it was derived.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StartingValueRow {
    /// Parameter name as written in the model.
    pub parameter: String,
    /// The starting value.
    pub value: f64,
    /// How the value was earned from the model and the data.
    pub derivation: String,
}

/// One distinct minimum found by the multistart search.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MinimumRow {
    /// Rank, 1 for the lowest residual sum of squares.
    pub rank: usize,
    /// Residual sum of squares at the minimum.
    pub ssr: f64,
    /// Fraction (0..=1) of the starts that ended in this minimum.
    pub share: f64,
    /// Iterations the refinement took (for the best start of this minimum).
    pub iterations: usize,
    /// Parameter values at the minimum, already formatted (e.g. "a = 4.98, k = 2.02").
    pub parameters: String,
}

/// One final estimate with its standard error and 95% interval.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct EstimateRow {
    /// Parameter name.
    pub parameter: String,
    /// The estimate.
    pub estimate: f64,
    /// Standard error, when it could be computed.
    pub std_error: Option<f64>,
    /// 95% interval `(lower, upper)`, when it could be computed.
    pub interval: Option<(f64, f64)>,
    /// Shown beside the estimate when the data do not determine it
    /// (e.g. "not identifiable: std. error > 1000 x |estimate|").
    pub note: Option<String>,
}

/// Everything the HTML report shows; plain values so any caller can fill it.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReportInput {
    /// Page title (e.g. the model or the study name).
    pub title: String,
    /// Date text shown in the header as given; the renderer never reads a clock.
    pub date: String,
    /// The model formula as the user wrote it.
    pub model: String,
    /// Name of the data file.
    pub data_file: String,
    /// Rows read from the file.
    pub rows_read: usize,
    /// Rows used in the fit.
    pub rows_used: usize,
    /// Rows skipped, with the reasons given in `skipped_reasons`.
    pub rows_skipped: usize,
    /// Why rows were skipped (one line each).
    pub skipped_reasons: Vec<String>,
    /// Columns used and their roles, e.g. ("x", "dose_mg").
    pub columns_used: Vec<(String, String)>,
    /// Features found in the data (plateaus, intercepts, straight pieces, peaks).
    pub features: Table,
    /// Rows of `features` shown up front (those the starts were read from);
    /// the rest are folded away under a summary line.
    pub features_shown: Vec<usize>,
    /// One line above the features saying what is shown up front and why.
    pub features_note: String,
    /// Starting values with their derivations.
    pub starting_values: Vec<StartingValueRow>,
    /// Distinct minima of the multistart search, best first.
    pub minima: Vec<MinimumRow>,
    /// Final estimates.
    pub estimates: Vec<EstimateRow>,
    /// Further facts about the fit, e.g. ("residual sum of squares", "0.0412").
    pub fit_summary: Vec<(String, String)>,
    /// Survey sheet as an SVG string (from `plot::survey_sheet_svg`); empty to omit.
    pub survey_svg: String,
    /// One line over the survey, e.g. why the views against log x are left out.
    pub survey_note: String,
    /// Fit sheet as an SVG string (from `plot::fit_sheet_svg`); empty to omit.
    pub fit_svg: String,
    /// Warnings to show the reader.
    pub warnings: Vec<String>,
}

/// The caution shown on every report.
pub const CAUTION: &str = "Results that could inform safety-critical or regulated decisions \
(for example drug dosing or structural loads) must be checked independently, and they defer \
to local codes and licensed professional practice.";

/// Section headings, in page order (tests check every one appears).
pub const SECTIONS: [&str; 10] = [
    "Data",
    "Features found",
    "Starting values",
    "Ranking of minima",
    "Estimates",
    "Survey of the data",
    "Fit",
    "Warnings",
    "Caution",
    "Model",
];

/// Escapes text for HTML element content and attribute values.
pub fn escape_html(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// Formats a number with `sig` significant digits, plain or scientific as fits.
pub(crate) fn num(v: f64, sig: usize) -> String {
    if v.is_nan() {
        return "—".to_string();
    }
    if v.is_infinite() {
        return if v > 0.0 { "∞" } else { "−∞" }.to_string();
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let exp = v.abs().log10().floor() as i32;
    if (-4..6).contains(&exp) {
        let decimals = (sig as i32 - 1 - exp).max(0) as usize;
        format!("{v:.decimals$}")
    } else {
        format!("{:.*e}", sig.saturating_sub(1), v)
    }
}

/// Inline stylesheet: readable typography, quiet tables, print-friendly.
const CSS: &str = r#"
:root { --ink: #1f2328; --muted: #59636e; --rule: #d0d7de; --band: #f6f8fa; --accent: #0072b2; --warn: #d55e00; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
  font: 16px/1.55 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif; }
main { max-width: 1100px; margin: 0 auto; padding: 2rem 1.5rem 3rem; }
header { border-bottom: 3px solid var(--accent); padding-bottom: .75rem; margin-bottom: 1.5rem; }
h1 { font-size: 1.8rem; margin: 0 0 .25rem; line-height: 1.2; }
h2 { font-size: 1.25rem; margin: 2.2rem 0 .6rem; padding-bottom: .25rem; border-bottom: 1px solid var(--rule); }
.meta { color: var(--muted); margin: 0; }
code, .formula { font-family: ui-monospace, "SFMono-Regular", Menlo, Consolas, "DejaVu Sans Mono", monospace; font-size: .95em; }
.formula { display: block; background: var(--band); border-left: 4px solid var(--accent); padding: .6rem .9rem; overflow-x: auto; white-space: pre-wrap; }
table { border-collapse: collapse; width: 100%; margin: .4rem 0 1rem; font-size: .95rem; font-variant-numeric: tabular-nums; }
th, td { padding: .4rem .7rem; text-align: left; vertical-align: top; border-bottom: 1px solid var(--rule); }
th { background: var(--band); font-weight: 600; border-bottom: 2px solid var(--rule); }
tbody tr:nth-child(even) td { background: #fbfcfd; }
td.num, th.num { text-align: right; white-space: nowrap; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: .25rem 1.2rem; margin: .4rem 0 1rem; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; }
.empty { color: var(--muted); font-style: italic; }
figure { margin: .5rem 0 1rem; max-width: 100%; }
figure svg { display: block; width: 100%; max-width: 100%; height: auto; border: 1px solid var(--rule); }
p.note { color: var(--muted); margin: .3rem 0 .6rem; }
details { margin: .4rem 0 1rem; }
details > summary { cursor: pointer; color: var(--accent); }
table.groups tbody tr.failed td { background: #fdecea; }
table.groups tbody tr.failed td:nth-child(2) { color: #b3261e; font-weight: 700; }
table.groups tbody tr.not-converged td { background: #fff6e0; }
table.groups tbody tr.not-converged td:nth-child(2) { color: #8a5a00; font-weight: 700; }
figcaption { color: var(--muted); font-size: .9rem; margin-top: .3rem; }
ul.warnings li { margin: .2rem 0; }
.caution { border: 2px solid var(--warn); background: #fff6ef; padding: .8rem 1rem; border-radius: 4px; font-weight: 500; }
@media print {
  body { font-size: 10.5pt; }
  main { max-width: none; padding: 0; }
  h2 { break-after: avoid; }
  table, figure, .caution { break-inside: avoid; }
  tbody tr:nth-child(even) td { background: none; }
}
"#;

/// Starts a page: doctype, head with the inline style, the title (or
/// `fallback` when empty) and date as header, and the Model section.
pub(crate) fn page_start(
    capacity: usize,
    title: &str,
    fallback: &str,
    date: &str,
    model: &str,
) -> String {
    let mut h = String::with_capacity(capacity);
    let title = if title.is_empty() { fallback } else { title };
    h.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    h.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    let _ = writeln!(h, "<title>{}</title>", escape_html(title));
    let _ = writeln!(h, "<style>{CSS}</style>\n</head>\n<body>\n<main>");
    h.push_str("<header>\n");
    let _ = writeln!(h, "<h1>{}</h1>", escape_html(title));
    if !date.is_empty() {
        let _ = writeln!(h, "<p class=\"meta\">{}</p>", escape_html(date));
    }
    h.push_str("</header>\n");
    section(&mut h, "Model");
    let _ = writeln!(h, "<code class=\"formula\">{}</code>", escape_html(model));
    h
}

/// Renders the whole report as one self-contained HTML5 page.
pub fn render_report(input: &ReportInput) -> String {
    let mut h = page_start(
        64 * 1024 + input.survey_svg.len() + input.fit_svg.len(),
        &input.title,
        "Fit report",
        &input.date,
        &input.model,
    );

    section(&mut h, "Data");
    data_summary(&mut h, input);

    section(&mut h, "Features found");
    features(&mut h, input);

    section(&mut h, "Starting values");
    starting_values(&mut h, &input.starting_values);

    section(&mut h, "Ranking of minima");
    minima(&mut h, &input.minima);

    section(&mut h, "Estimates");
    estimates(&mut h, &input.estimates);
    facts(&mut h, &input.fit_summary);

    section(&mut h, "Survey of the data");
    note(&mut h, &input.survey_note);
    figure(
        &mut h,
        &input.survey_svg,
        "The data in up to six views (y, 1/y and log y against x, and against log x when x allows it) with the features found drawn on each.",
    );

    section(&mut h, "Fit");
    figure(
        &mut h,
        &input.fit_svg,
        "Data with the starting curve (dashed) and the fitted curve; residuals against x and against fitted values.",
    );

    page_end(&mut h, &input.warnings);
    h
}

/// Ends a page: the Warnings and Caution sections and the closing tags.
pub(crate) fn page_end(h: &mut String, warnings: &[String]) {
    section(h, "Warnings");
    if warnings.is_empty() {
        h.push_str("<p class=\"empty\">No warnings.</p>\n");
    } else {
        h.push_str("<ul class=\"warnings\">\n");
        for w in warnings {
            let _ = writeln!(h, "<li>{}</li>", escape_html(w));
        }
        h.push_str("</ul>\n");
    }
    section(h, "Caution");
    let _ = writeln!(h, "<p class=\"caution\">{}</p>", escape_html(CAUTION));
    h.push_str("</main>\n</body>\n</html>\n");
}

pub(crate) fn section(h: &mut String, heading: &str) {
    let _ = writeln!(h, "<h2>{}</h2>", escape_html(heading));
}

pub(crate) fn facts(h: &mut String, pairs: &[(String, String)]) {
    if pairs.is_empty() {
        return;
    }
    h.push_str("<dl class=\"facts\">\n");
    for (k, v) in pairs {
        let _ = writeln!(h, "<dt>{}</dt><dd>{}</dd>", escape_html(k), escape_html(v));
    }
    h.push_str("</dl>\n");
}

fn data_summary(h: &mut String, input: &ReportInput) {
    let columns = if input.columns_used.is_empty() {
        "—".to_string()
    } else {
        input
            .columns_used
            .iter()
            .map(|(role, name)| {
                format!("{} = <code>{}</code>", escape_html(role), escape_html(name))
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    h.push_str("<dl class=\"facts\">\n");
    let _ = writeln!(
        h,
        "<dt>File</dt><dd><code>{}</code></dd>",
        escape_html(&input.data_file)
    );
    let _ = writeln!(h, "<dt>Rows read</dt><dd>{}</dd>", input.rows_read);
    let _ = writeln!(h, "<dt>Rows used</dt><dd>{}</dd>", input.rows_used);
    let _ = writeln!(h, "<dt>Rows skipped</dt><dd>{}</dd>", input.rows_skipped);
    let _ = writeln!(h, "<dt>Columns used</dt><dd>{columns}</dd>");
    h.push_str("</dl>\n");
    if !input.skipped_reasons.is_empty() {
        h.push_str("<ul>\n");
        for r in &input.skipped_reasons {
            let _ = writeln!(h, "<li>{}</li>", escape_html(r));
        }
        h.push_str("</ul>\n");
    }
}

/// The model as a formula with its response, `response = right side`; a
/// formula already written with `=` is kept as it is.
pub fn formula_with_response(text: &str, response: &str) -> String {
    if text.contains('=') || response.is_empty() {
        text.to_string()
    } else {
        format!("{response} = {text}")
    }
}

/// A one-line note in muted text; nothing when empty.
pub(crate) fn note(h: &mut String, text: &str) {
    if !text.is_empty() {
        let _ = writeln!(h, "<p class=\"note\">{}</p>", escape_html(text));
    }
}

/// The features: the rows the starts were read from up front, every other
/// row folded away in a `<details>` element under a one-line summary.
fn features(h: &mut String, input: &ReportInput) {
    let table = &input.features;
    if table.rows.is_empty() {
        h.push_str("<p class=\"empty\">No features were found.</p>\n");
        return;
    }
    note(h, &input.features_note);
    let shown: Vec<&Vec<String>> = input
        .features_shown
        .iter()
        .filter_map(|&i| table.rows.get(i))
        .collect();
    let rest: Vec<&Vec<String>> = table
        .rows
        .iter()
        .enumerate()
        .filter(|(i, _)| !input.features_shown.contains(i))
        .map(|(_, r)| r)
        .collect();
    if !shown.is_empty() {
        table_rows(h, &table.headers, &shown);
    }
    if !rest.is_empty() {
        let what = if shown.is_empty() { "" } else { "other " };
        let _ = writeln!(
            h,
            "<details class=\"features\">\n<summary>{} {what}feature{} found in the views</summary>",
            rest.len(),
            if rest.len() == 1 { "" } else { "s" }
        );
        table_rows(h, &table.headers, &rest);
        h.push_str("</details>\n");
    }
}

/// True when a cell reads as a number, so it is right-aligned.
fn numeric(cell: &str) -> bool {
    let t = cell.trim();
    !t.is_empty() && t.parse::<f64>().is_ok()
}

fn table_rows(h: &mut String, headers: &[String], rows: &[&Vec<String>]) {
    let width = rows
        .iter()
        .map(|r| r.len())
        .chain(std::iter::once(headers.len()))
        .max()
        .unwrap_or(0);
    h.push_str("<table>\n<thead><tr>");
    for i in 0..width {
        let head = headers.get(i).map(String::as_str).unwrap_or("");
        let _ = write!(h, "<th>{}</th>", escape_html(head));
    }
    h.push_str("</tr></thead>\n<tbody>\n");
    for row in rows {
        h.push_str("<tr>");
        for i in 0..width {
            let cell = row.get(i).map(String::as_str).unwrap_or("");
            let class = if numeric(cell) { " class=\"num\"" } else { "" };
            let _ = write!(h, "<td{class}>{}</td>", escape_html(cell));
        }
        h.push_str("</tr>\n");
    }
    h.push_str("</tbody>\n</table>\n");
}

fn starting_values(h: &mut String, rows: &[StartingValueRow]) {
    if rows.is_empty() {
        h.push_str("<p class=\"empty\">No starting values were derived.</p>\n");
        return;
    }
    h.push_str("<table>\n<thead><tr><th>Parameter</th><th class=\"num\">Starting value</th><th>How it was found</th></tr></thead>\n<tbody>\n");
    for r in rows {
        let _ = writeln!(
            h,
            "<tr><td><code>{}</code></td><td class=\"num\">{}</td><td>{}</td></tr>",
            escape_html(&r.parameter),
            num(r.value, 6),
            escape_html(&r.derivation)
        );
    }
    h.push_str("</tbody>\n</table>\n");
}

fn minima(h: &mut String, rows: &[MinimumRow]) {
    if rows.is_empty() {
        h.push_str("<p class=\"empty\">No minima were ranked.</p>\n");
        return;
    }
    h.push_str("<table>\n<thead><tr><th class=\"num\">Rank</th><th class=\"num\">Residual sum of squares</th><th class=\"num\">Share of starts</th><th class=\"num\">Iterations</th><th>Parameters</th></tr></thead>\n<tbody>\n");
    for r in rows {
        let share = if r.share.is_finite() {
            format!("{:.1}%", r.share * 100.0)
        } else {
            "—".to_string()
        };
        let _ = writeln!(
            h,
            "<tr><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td><code>{}</code></td></tr>",
            r.rank,
            num(r.ssr, 6),
            share,
            r.iterations,
            escape_html(&r.parameters)
        );
    }
    h.push_str("</tbody>\n</table>\n");
}

fn estimates(h: &mut String, rows: &[EstimateRow]) {
    if rows.is_empty() {
        h.push_str("<p class=\"empty\">No estimates are available.</p>\n");
        return;
    }
    h.push_str("<table>\n<thead><tr><th>Parameter</th><th class=\"num\">Estimate</th><th class=\"num\">Standard error</th><th class=\"num\">95% interval</th></tr></thead>\n<tbody>\n");
    for r in rows {
        let se = r.std_error.map_or("—".to_string(), |s| num(s, 4));
        let ci = r.interval.map_or("—".to_string(), |(lo, hi)| {
            format!("{} to {}", num(lo, 6), num(hi, 6))
        });
        let note = r.note.as_ref().map_or(String::new(), |n| {
            format!(" <em class=\"unidentified\">({})</em>", escape_html(n))
        });
        let _ = writeln!(
            h,
            "<tr><td><code>{}</code></td><td class=\"num\">{}{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
            escape_html(&r.parameter),
            num(r.estimate, 6),
            note,
            se,
            ci
        );
    }
    h.push_str("</tbody>\n</table>\n");
}

/// True when a tag in `s` carries an ` on…=` attribute (an event handler);
/// text between tags (a label such as "onset = 3") does not count.
fn has_event_attribute(s: &str) -> bool {
    s.split('<').skip(1).any(|chunk| {
        let tag: String = chunk
            .split('>')
            .next()
            .unwrap_or("")
            .chars()
            .map(|c| if c.is_ascii_whitespace() { ' ' } else { c })
            .collect();
        tag.split(" on").skip(1).any(|rest| {
            let name_len = rest.bytes().take_while(u8::is_ascii_alphabetic).count();
            name_len > 0 && rest[name_len..].trim_start().starts_with('=')
        })
    })
}

/// Embeds an SVG inline: drops any XML prolog and the namespace URL (inline
/// SVG in HTML5 needs neither), and refuses anything that is not plain SVG.
pub(crate) fn figure(h: &mut String, svg: &str, caption: &str) {
    let body = svg.trim();
    let body = match body.find("<svg") {
        Some(i) if body[..i].trim().is_empty() || body[..i].trim_start().starts_with("<?xml") => {
            &body[i..]
        }
        _ => "",
    };
    let lower = body.to_ascii_lowercase();
    let unsafe_svg = lower.contains("<script")
        || lower.contains("javascript:")
        || lower.contains("<foreignobject")
        || has_event_attribute(&lower);
    if body.is_empty() || unsafe_svg || !body.ends_with("</svg>") {
        h.push_str("<p class=\"empty\">Plot not available.</p>\n");
        return;
    }
    let body = body
        .replace(" xmlns=\"http://www.w3.org/2000/svg\"", "")
        .replace(" xmlns:xlink=\"http://www.w3.org/1999/xlink\"", "");
    let _ = writeln!(
        h,
        "<figure>\n{body}\n<figcaption>{}</figcaption>\n</figure>",
        escape_html(caption)
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::{demo, fit_sheet_svg, survey_sheet_svg};

    fn demo_input() -> ReportInput {
        ReportInput {
            title: "Invented enzyme saturation study".into(),
            date: "2024-05-17".into(),
            model: "y ~ a*x/(k + x)".into(),
            data_file: "saturation <demo>.csv".into(),
            rows_read: 25,
            rows_used: 24,
            rows_skipped: 1,
            skipped_reasons: vec!["row 14: y is not a number".into()],
            columns_used: vec![
                ("x".into(), "substrate".into()),
                ("y".into(), "<script>alert(1)</script>".into()),
            ],
            features: Table {
                headers: vec!["View".into(), "Feature".into(), "Value".into()],
                rows: vec![
                    vec!["y against x".into(), "plateau".into(), "4.93".into()],
                    vec!["y against x".into(), "initial slope".into(), "1.78".into()],
                ],
            },
            features_shown: vec![0],
            features_note: "The starting values were read from this feature.".into(),
            starting_values: vec![
                StartingValueRow {
                    parameter: "a".into(),
                    value: 4.93,
                    derivation: "a is the limit of y as x → ∞; the plateau of y against x is 4.93."
                        .into(),
                },
                StartingValueRow {
                    parameter: "k".into(),
                    value: 2.1,
                    derivation: "k is the x at half the plateau; y crosses 2.47 at x ≈ 2.1.".into(),
                },
            ],
            minima: vec![
                MinimumRow {
                    rank: 1,
                    ssr: 0.0412,
                    share: 0.92,
                    iterations: 7,
                    parameters: "a = 4.98, k = 2.02".into(),
                },
                MinimumRow {
                    rank: 2,
                    ssr: 3.5,
                    share: 0.08,
                    iterations: 31,
                    parameters: "a = 1.0e6, k = 4.1e5".into(),
                },
            ],
            estimates: vec![
                EstimateRow {
                    parameter: "a".into(),
                    estimate: 4.98123,
                    std_error: Some(0.0312),
                    interval: Some((4.917, 5.046)),
                    note: None,
                },
                EstimateRow {
                    parameter: "k".into(),
                    estimate: 2.0211,
                    std_error: None,
                    interval: None,
                    note: Some("not identifiable: on a singular direction of the Jacobian".into()),
                },
            ],
            fit_summary: vec![("residual sum of squares".into(), "0.0412".into())],
            survey_svg: survey_sheet_svg(&demo::saturation_survey()),
            survey_note: String::new(),
            fit_svg: fit_sheet_svg(&demo::saturation_fit()),
            warnings: vec!["k's standard error could not be computed & was left out.".into()],
        }
    }

    #[test]
    fn report_has_every_section_and_the_caution() {
        let html = render_report(&demo_input());
        assert!(html.starts_with("<!DOCTYPE html>"));
        for s in SECTIONS {
            assert!(
                html.contains(&format!("<h2>{s}</h2>")),
                "missing section {s}"
            );
        }
        assert!(html.contains(CAUTION));
        assert!(html.contains("class=\"caution\""));
        assert!(html.contains("2024-05-17"));
        assert!(html.contains("92.0%"), "share of starts as a percentage");
        assert!(html.contains("4.98123") && html.contains("0.03120"));
        assert!(html.contains("4.91700 to 5.04600"));
        // The feature used up front, the other folded away.
        let feats =
            &html[html.find("<h2>Features found").unwrap()..html.find("<h2>Starting").unwrap()];
        let fold = feats.find("<details").expect("details element");
        assert!(feats[..fold].contains("<td>plateau</td>"), "{feats}");
        assert!(feats[fold..].contains("<summary>1 other feature found in the views</summary>"));
        assert!(feats[fold..].contains("<td>initial slope</td>"), "{feats}");
    }

    #[test]
    fn formula_gets_its_response() {
        assert_eq!(formula_with_response("a*exp(-k*t)", "y"), "y = a*exp(-k*t)");
        assert_eq!(
            formula_with_response("log(y) = b0 + b1*x", "log(y)"),
            "log(y) = b0 + b1*x"
        );
    }

    #[test]
    fn user_text_is_escaped() {
        let html = render_report(&demo_input());
        assert!(!html.contains("<script"), "no script element anywhere");
        assert!(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
        assert!(html.contains("saturation &lt;demo&gt;.csv"));
        assert!(html.contains("&amp; was left out"));
    }

    #[test]
    fn report_is_self_contained() {
        let html = render_report(&demo_input());
        assert_eq!(html.matches("<svg").count(), 2, "both plots inline");
        assert!(!html.contains("http://") && !html.contains("https://"));
        assert!(!html.contains("<link") && !html.contains("@import") && !html.contains("url("));
        // Deterministic: equal input, equal page.
        assert_eq!(html, render_report(&demo_input()));
        let dir =
            std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../target/plots-check");
        std::fs::create_dir_all(&dir).expect("create target/plots-check");
        std::fs::write(dir.join("report.html"), &html).expect("write report.html");
    }

    #[test]
    fn empty_input_and_hostile_svg_are_handled() {
        let input = ReportInput {
            fit_svg: "<svg><script>x()</script></svg>".into(),
            survey_svg: "not svg".into(),
            estimates: vec![EstimateRow {
                parameter: "p".into(),
                estimate: f64::NAN,
                std_error: Some(f64::INFINITY),
                interval: None,
                note: None,
            }],
            ..ReportInput::default()
        };
        let html = render_report(&input);
        assert!(!html.contains("<script") && !html.contains("<svg"));
        assert_eq!(html.matches("Plot not available.").count(), 2);
        assert!(html.contains("<h1>Fit report</h1>"));
        assert!(html.contains("<td class=\"num\">—</td><td class=\"num\">∞</td>"));
        assert!(has_event_attribute("<svg onload = \"x\">"));
        assert!(has_event_attribute("<g\tonclick=\"x\">"));
        assert!(!has_event_attribute("<text x=\"1\">peak onset = 4</text>"));
    }

    #[test]
    fn numbers_keep_significant_digits() {
        assert_eq!(num(4.98123, 6), "4.98123");
        assert_eq!(num(0.0312, 4), "0.03120");
        assert_eq!(num(1.5e7, 3), "1.50e7");
        assert_eq!(num(-2.5e-6, 2), "-2.5e-6");
    }
}
