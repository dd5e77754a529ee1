//! Plots of the survey (six transformed views of the data with the features
//! found) and of a fit (data, starting and fitted curves, residuals), as SVG
//! text or PNG files. Inputs are plain structs so any caller can fill them.

mod geometry;
mod labels;
mod overlay;
mod panel;
mod png_text;
mod style;

pub use overlay::{
    common_y_range, group_panel, GroupSeries, Overlay, GROUP_COLOURS, MAX_LEGEND,
    MAX_OVERLAY_GROUPS,
};
pub use panel::{Curve, Panel, Segment};
pub use style::format_num;

use plotters::coord::Shift;
use plotters::prelude::*;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::Path;

/// Why a plot could not be produced.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// The drawing library reported an error (including failing to write a file).
    #[error("drawing failed: {0}")]
    Draw(String),
    /// The drawing library stopped unexpectedly; the plot was abandoned.
    #[error("drawing stopped unexpectedly: {0}")]
    Internal(String),
}

/// Columns in a survey sheet (y, 1/y, log y side by side).
const SURVEY_COLUMNS: usize = 3;
/// Pixel size of one survey panel: three side by side fill the page's text
/// column (about 1050 pixels) without scaling the text down.
const SURVEY_PANEL: (u32, u32) = (350, 300);
/// Pixel size of the whole fit sheet (the width of the page's text column).
const FIT_SIZE: (u32, u32) = (1050, 800);

/// Input of a fit sheet: data, fitted values, dense curves and residuals.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FitSheet {
    /// Title over the data panel.
    pub title: String,
    /// Description of the x axis.
    pub x_label: String,
    /// Description of the y axis.
    pub y_label: String,
    /// Observed x.
    pub x: Vec<f64>,
    /// Observed y.
    pub y: Vec<f64>,
    /// Fitted values at the observed x.
    pub fitted: Vec<f64>,
    /// Residuals y − fitted; computed from `y` and `fitted` when left empty.
    pub residuals: Vec<f64>,
    /// The model at the starting values on a dense grid `(x, f(x))`.
    pub start_curve: Vec<(f64, f64)>,
    /// The model at the estimates on a dense grid `(x, f(x))`.
    pub fitted_curve: Vec<(f64, f64)>,
}

impl FitSheet {
    /// The three panels of the sheet: data with curves, residuals against x,
    /// residuals against fitted values.
    pub fn panels(&self) -> [Panel; 3] {
        let residuals: Vec<f64> = if self.residuals.is_empty() {
            self.y
                .iter()
                .zip(&self.fitted)
                .map(|(y, f)| y - f)
                .collect()
        } else {
            self.residuals.clone()
        };
        let mut data = Panel::new(&self.title, &self.x_label, &self.y_label);
        data.points = self.x.iter().copied().zip(self.y.iter().copied()).collect();
        if !self.start_curve.is_empty() {
            data.dashed_curves
                .push((self.start_curve.clone(), "starting curve".into()));
        }
        if !self.fitted_curve.is_empty() {
            data.curves
                .push((self.fitted_curve.clone(), "fitted curve".into()));
        }
        let mut by_x = Panel::new("Residuals against x", &self.x_label, "residual");
        by_x.points = self
            .x
            .iter()
            .copied()
            .zip(residuals.iter().copied())
            .collect();
        by_x.hlines.push((0.0, String::new()));
        let mut by_fit = Panel::new(
            "Residuals against fitted values",
            "fitted value",
            "residual",
        );
        by_fit.points = self
            .fitted
            .iter()
            .copied()
            .zip(residuals.iter().copied())
            .collect();
        by_fit.hlines.push((0.0, String::new()));
        [data, by_x, by_fit]
    }
}

/// Pixel size of a survey sheet of `n` panels laid out three to a row.
fn survey_size(n: usize) -> (u32, u32) {
    let rows = n.div_ceil(SURVEY_COLUMNS).max(1) as u32;
    let cols = n.clamp(1, SURVEY_COLUMNS) as u32;
    (SURVEY_PANEL.0 * cols, SURVEY_PANEL.1 * rows)
}

/// Lays the panels out three to a row (the first row against x, the second
/// against log x for the usual six views).
fn draw_survey<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    panels: &[Panel],
) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| format!("{e:?}"))?;
    let rows = panels.len().div_ceil(SURVEY_COLUMNS).max(1);
    let cols = panels.len().clamp(1, SURVEY_COLUMNS);
    let areas = root.split_evenly((rows, cols));
    for (area, panel) in areas.iter().zip(panels) {
        panel::draw_panel(area, panel)?;
    }
    root.present().map_err(|e| format!("{e:?}"))
}

/// Data panel across the top, the two residual panels side by side below.
fn draw_fit<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    sheet: &FitSheet,
) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| format!("{e:?}"))?;
    let [data, by_x, by_fit] = sheet.panels();
    let (_, h) = root.dim_in_pixel();
    let (top, bottom) = root.split_vertically(h * 56 / 100);
    panel::draw_panel(&top, &data)?;
    let (left, right) = bottom.split_horizontally(bottom.dim_in_pixel().0 / 2);
    panel::draw_panel(&left, &by_x)?;
    panel::draw_panel(&right, &by_fit)?;
    root.present().map_err(|e| format!("{e:?}"))
}

/// Runs a drawing job, turning drawing errors and unexpected panics inside
/// the drawing library into [`PlotError`].
fn guarded<F: FnOnce() -> Result<(), String>>(job: F) -> Result<(), PlotError> {
    style::ensure_font();
    match catch_unwind(AssertUnwindSafe(job)) {
        Ok(Ok(())) => Ok(()),
        Ok(Err(e)) => Err(PlotError::Draw(e)),
        Err(panic) => {
            let msg = panic
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown cause".into());
            Err(PlotError::Internal(msg))
        }
    }
}

/// Draws into an SVG string of the given size.
fn svg_of<F>(size: (u32, u32), draw: F) -> Result<String, PlotError>
where
    F: FnOnce(&DrawingArea<SVGBackend, Shift>) -> Result<(), String>,
{
    let mut out = String::new();
    guarded(|| {
        let root = SVGBackend::with_string(&mut out, size).into_drawing_area();
        draw(&root)
    })?;
    Ok(out)
}

/// Draws into a PNG file of the given size.
fn png_of<F>(size: (u32, u32), path: &Path, draw: F) -> Result<(), PlotError>
where
    F: FnOnce(&DrawingArea<png_text::GlyphBitmap, Shift>) -> Result<(), String>,
{
    guarded(|| {
        let root = png_text::GlyphBitmap::new(BitMapBackend::new(path, size)).into_drawing_area();
        draw(&root)
    })
}

/// A small valid SVG that states why the real plot is missing.
fn failure_svg(size: (u32, u32), e: &PlotError) -> String {
    let msg = escape_xml(&e.to_string());
    format!(
        "<svg width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\">\
         <rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\
         <text x=\"20\" y=\"40\" font-family=\"sans-serif\" font-size=\"14\">plot unavailable: {msg}</text></svg>\n",
        w = size.0,
        h = size.1
    )
}

/// Escapes text for XML character data and attribute values (same rules as HTML).
pub(crate) use crate::html::escape_html as escape_xml;

/// Survey sheet as SVG: the panels (usually the six views y, 1/y, log y
/// against x and against log x) three to a row, features drawn on each.
/// Never fails: on a drawing error the SVG says why the plot is missing.
pub fn survey_sheet_svg(panels: &[Panel]) -> String {
    let size = survey_size(panels.len());
    svg_of(size, |root| draw_survey(root, panels)).unwrap_or_else(|e| failure_svg(size, &e))
}

/// Survey sheet written as a PNG file at `path` (parent directory must exist).
pub fn survey_sheet_png(panels: &[Panel], path: &Path) -> Result<(), PlotError> {
    png_of(survey_size(panels.len()), path, |root| {
        draw_survey(root, panels)
    })
}

/// Fit sheet as SVG: data with the starting curve (dashed) and the fitted
/// curve, residuals against x and against fitted values with a zero line.
/// Never fails: on a drawing error the SVG says why the plot is missing.
pub fn fit_sheet_svg(sheet: &FitSheet) -> String {
    svg_of(FIT_SIZE, |root| draw_fit(root, sheet)).unwrap_or_else(|e| failure_svg(FIT_SIZE, &e))
}

/// The batch overlay as SVG: every group's points and fitted curve, a colour
/// and marker per group, the legend beside the chart. Never fails: on a
/// drawing error the SVG says why the plot is missing.
pub fn overlay_svg(o: &Overlay) -> String {
    let size = overlay::OVERLAY_SIZE;
    svg_of(size, |root| overlay::draw_overlay(root, o)).unwrap_or_else(|e| failure_svg(size, &e))
}

/// The batch overlay written as a PNG file at `path`.
pub fn overlay_png(o: &Overlay, path: &Path) -> Result<(), PlotError> {
    png_of(overlay::OVERLAY_SIZE, path, |root| {
        overlay::draw_overlay(root, o)
    })
}

/// A grid of group panels (see [`group_panel`]) three to a row, as SVG.
pub fn group_grid_svg(panels: &[Panel]) -> String {
    let size = overlay::grid_size(panels.len());
    svg_of(size, |root| overlay::draw_grid(root, panels)).unwrap_or_else(|e| failure_svg(size, &e))
}

/// Fit sheet written as a PNG file at `path` (parent directory must exist).
pub fn fit_sheet_png(sheet: &FitSheet, path: &Path) -> Result<(), PlotError> {
    png_of(FIT_SIZE, path, |root| draw_fit(root, sheet))
}

#[cfg(test)]
mod tests;

#[cfg(test)]
pub(crate) mod demo;
