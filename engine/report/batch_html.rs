//! The self-contained HTML page of a batch (`report --by`): the model, the
//! data, one summary row per group, every group on one overlay chart, a grid
//! of per-group panels, warnings and the caution. Inline CSS and SVG only.

use super::html::{escape_html, facts, figure, num, page_end, page_start, section};
use std::fmt::Write as _;

/// One group's line of the summary table.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BatchGroupRow {
    /// The group's label.
    pub group: String,
    /// `converged`, `not_converged` or `failed`.
    pub status: String,
    /// Rows used in the group's fit.
    pub n_obs: usize,
    /// Per parameter (in `BatchReportInput::parameters` order): estimate and standard error.
    pub estimates: Vec<(Option<f64>, Option<f64>)>,
    /// Residual sum of squares.
    pub ssr: Option<f64>,
    /// Why the group failed or did not converge, or the fit's warnings.
    pub message: String,
}

/// Everything the batch page shows; plain values so any caller can fill it.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BatchReportInput {
    /// Page title.
    pub title: String,
    /// Date text for the header (the renderer reads no clock).
    pub date: String,
    /// The model formula.
    pub model: String,
    /// Facts about the data, e.g. ("Rows read", "132").
    pub data_facts: Vec<(String, String)>,
    /// The group column's name.
    pub by: String,
    /// Parameter names, in table order.
    pub parameters: Vec<String>,
    /// One row per group, in order of first appearance.
    pub groups: Vec<BatchGroupRow>,
    /// The overlay chart as SVG (from `plot::overlay_svg`); empty when left out.
    pub overlay_svg: String,
    /// Why the overlay chart is left out (too many groups); empty when it is shown.
    pub overlay_note: String,
    /// The grid of per-group panels as SVG (from `plot::group_grid_svg`); empty to omit.
    pub grid_svg: String,
    /// Caption of the grid (says when only some groups are drawn).
    pub grid_caption: String,
    /// Warnings to show the reader.
    pub warnings: Vec<String>,
}

/// Section headings of the batch page, in page order (tests check every one appears).
pub const BATCH_SECTIONS: [&str; 7] = [
    "Model",
    "Data",
    "Groups",
    "All groups",
    "Each group",
    "Warnings",
    "Caution",
];

/// Renders the batch page as one self-contained HTML5 document.
pub fn render_batch_report(input: &BatchReportInput) -> String {
    let mut h = page_start(
        64 * 1024 + input.overlay_svg.len() + input.grid_svg.len(),
        &input.title,
        "Batch fit report",
        &input.date,
        &input.model,
    );

    section(&mut h, "Data");
    facts(&mut h, &input.data_facts);

    section(&mut h, "Groups");
    group_table(&mut h, input);

    section(&mut h, "All groups");
    if input.overlay_svg.is_empty() && !input.overlay_note.is_empty() {
        let _ = writeln!(
            h,
            "<p class=\"note\">{}</p>",
            escape_html(&input.overlay_note)
        );
    } else {
        figure(
            &mut h,
            &input.overlay_svg,
            &format!(
                "Every group's data (markers) and fitted curve (line), one colour and marker per value of {}.",
                input.by
            ),
        );
    }

    section(&mut h, "Each group");
    if input.grid_svg.is_empty() {
        h.push_str("<p class=\"empty\">No per-group panels.</p>\n");
    } else {
        figure(&mut h, &input.grid_svg, &input.grid_caption);
    }

    page_end(&mut h, &input.warnings);
    h
}

/// The summary table: group, status, n, each estimate ± standard error, ssr.
fn group_table(h: &mut String, input: &BatchReportInput) {
    if input.groups.is_empty() {
        h.push_str("<p class=\"empty\">No groups.</p>\n");
        return;
    }
    h.push_str("<table class=\"groups\">\n<thead><tr>");
    let _ = write!(
        h,
        "<th>{}</th><th>Status</th><th class=\"num\">n</th>",
        escape_html(&input.by)
    );
    for p in &input.parameters {
        let _ = write!(
            h,
            "<th class=\"num\"><code>{}</code> ± s.e.</th>",
            escape_html(p)
        );
    }
    h.push_str("<th class=\"num\">Residual sum of squares</th></tr></thead>\n<tbody>\n");
    for g in &input.groups {
        let class = match g.status.as_str() {
            "converged" => "ok",
            "failed" => "failed",
            _ => "not-converged",
        };
        let _ = write!(
            h,
            "<tr class=\"{class}\"><td>{}</td><td>{}</td><td class=\"num\">{}</td>",
            escape_html(&g.group),
            escape_html(&g.status.replace('_', " ")),
            g.n_obs
        );
        for k in 0..input.parameters.len() {
            let cell = match g.estimates.get(k).copied().unwrap_or((None, None)) {
                (Some(e), Some(se)) => format!("{} ± {}", num(e, 5), num(se, 3)),
                (Some(e), None) => format!("{} ± —", num(e, 5)),
                _ => "—".to_string(),
            };
            let _ = write!(h, "<td class=\"num\">{cell}</td>");
        }
        let ssr = g.ssr.map_or("—".to_string(), |v| num(v, 5));
        let _ = writeln!(h, "<td class=\"num\">{ssr}</td></tr>");
    }
    h.push_str("</tbody>\n</table>\n");
    let notes: Vec<&BatchGroupRow> = input
        .groups
        .iter()
        .filter(|g| !g.message.is_empty())
        .collect();
    if !notes.is_empty() {
        h.push_str("<ul class=\"group-notes\">\n");
        for g in notes {
            let _ = writeln!(
                h,
                "<li><strong>{}</strong>: {}</li>",
                escape_html(&g.group),
                escape_html(&g.message)
            );
        }
        h.push_str("</ul>\n");
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::html::CAUTION;
    use crate::plot::{group_grid_svg, group_panel, overlay_svg, GroupSeries, Overlay};

    fn demo() -> BatchReportInput {
        // Invented: two exponential decays and one failed group.
        let series: Vec<GroupSeries> = [("A1", 10.0f64, 0.3f64), ("B<12>", 4.0, 0.8)]
            .iter()
            .map(|(l, a, k)| GroupSeries {
                label: l.to_string(),
                note: String::new(),
                points: (0..10)
                    .map(|i| (i as f64 * 0.5, a * (-k * i as f64 * 0.5).exp()))
                    .collect(),
                curve: (0..50)
                    .map(|i| (i as f64 * 0.09, a * (-k * i as f64 * 0.09).exp()))
                    .collect(),
            })
            .chain(std::iter::once(GroupSeries {
                label: "spec 2".into(),
                note: "failed".into(),
                points: vec![(0.5, 2.0), (1.0, 1.5)],
                curve: Vec::new(),
            }))
            .collect();
        let overlay = Overlay {
            title: "All groups".into(),
            x_label: "x".into(),
            y_label: "y".into(),
            groups: series.clone(),
        };
        let panels: Vec<_> = series.iter().map(|g| group_panel(g, "x", "y")).collect();
        BatchReportInput {
            title: "Batch".into(),
            date: "2024-05-17".into(),
            model: "a*exp(-k*x)".into(),
            data_facts: vec![("Rows read".into(), "22".into())],
            by: "well".into(),
            parameters: vec!["a".into(), "k".into()],
            groups: vec![
                BatchGroupRow {
                    group: "A1".into(),
                    status: "converged".into(),
                    n_obs: 10,
                    estimates: vec![(Some(10.0), Some(0.01)), (Some(0.3), Some(0.002))],
                    ssr: Some(1e-20),
                    message: String::new(),
                },
                BatchGroupRow {
                    group: "spec 2".into(),
                    status: "failed".into(),
                    n_obs: 0,
                    estimates: vec![(None, None), (None, None)],
                    ssr: None,
                    message: "too few rows".into(),
                },
            ],
            overlay_svg: overlay_svg(&overlay),
            overlay_note: String::new(),
            grid_svg: group_grid_svg(&panels),
            grid_caption: "Each group.".into(),
            warnings: vec!["skipped 1 row with an empty 'well' cell".into()],
        }
    }

    #[test]
    fn batch_page_has_every_section_table_plots_and_caution() {
        let html = render_batch_report(&demo());
        for s in BATCH_SECTIONS {
            assert!(html.contains(&format!("<h2>{s}</h2>")), "missing {s}");
        }
        assert_eq!(html.matches("<svg").count(), 2, "overlay and grid inline");
        assert!(html.contains("<td>A1</td><td>converged</td><td class=\"num\">10</td><td class=\"num\">10.000 ± 0.0100</td>"), "{html}");
        assert!(html.contains("<tr class=\"failed\"><td>spec 2</td><td>failed</td>"));
        assert!(html.contains("<strong>spec 2</strong>: too few rows"));
        assert!(html.contains("B&lt;12&gt;"), "labels escaped in the plot");
        assert!(html.contains(CAUTION));
        assert!(
            !html.contains("<script") && !html.contains("http://") && !html.contains("https://")
        );
        assert_eq!(html, render_batch_report(&demo()), "deterministic");
    }
}
