//! One plot panel: the input struct and the drawing of points, feature lines,
//! markers and curves on any plotters backend.

use super::geometry::{clip_polyline, clip_segment, extent, padded, plottable, widen_near, Span};
use super::style::{self, FAMILY};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// A straight line between two points, already transformed, with its label.
pub type Segment = ((f64, f64), (f64, f64), String);
/// A polyline with its legend label.
pub type Curve = (Vec<(f64, f64)>, String);

/// One panel of a sheet: points already transformed by the caller (1/y, log y
/// ...) plus the features to draw over them; `log_x` puts x on a log10 axis.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Panel {
    /// Panel title shown above the plot.
    pub title: String,
    /// Description of the x axis.
    pub x_label: String,
    /// Description of the y axis.
    pub y_label: String,
    /// Draw x on a log10 axis; points and features with x ≤ 0 are left out.
    pub log_x: bool,
    /// Data points `(x, y)`; NaN and infinite values are dropped.
    pub points: Vec<(f64, f64)>,
    /// Horizontal lines (plateaus, zero lines) `(y, label)`, drawn dashed.
    pub hlines: Vec<(f64, String)>,
    /// Marked places (intercepts, peaks) `(x, y, label)`, drawn as crosses.
    pub markers: Vec<(f64, f64, String)>,
    /// Fitted straight pieces, drawn thick in a contrasting colour.
    pub segments: Vec<Segment>,
    /// Solid curves (a fitted curve), listed in the legend.
    pub curves: Vec<Curve>,
    /// Dashed curves (a starting curve), listed in the legend.
    pub dashed_curves: Vec<Curve>,
    /// Why the panel may have no valid points (e.g. "y ≤ 0 has no log").
    pub empty_reason: String,
}

impl Panel {
    /// A panel with a title and axis descriptions and nothing drawn yet.
    pub fn new(title: &str, x_label: &str, y_label: &str) -> Self {
        Panel {
            title: title.to_string(),
            x_label: x_label.to_string(),
            y_label: y_label.to_string(),
            ..Panel::default()
        }
    }

    /// Number of points that will actually be drawn (finite, on scale, and
    /// with x > 0 on a log axis).
    pub fn drawable_points(&self) -> usize {
        self.points
            .iter()
            .filter(|(x, y)| self.tx(*x).is_some() && plottable(*y))
            .count()
    }

    /// Maps an x value into axis space (log10 on a log axis).
    fn tx(&self, x: f64) -> Option<f64> {
        let v = if self.log_x {
            if x > 0.0 {
                x.log10()
            } else {
                return None;
            }
        } else {
            x
        };
        plottable(v).then_some(v)
    }

    /// Maps a point into axis space, `None` when it cannot be drawn.
    fn tp(&self, p: (f64, f64)) -> Option<(f64, f64)> {
        Some((self.tx(p.0)?, plottable(p.1).then_some(p.1)?))
    }

    /// Maps a curve into axis space, keeping gaps as NaN so clipping breaks there.
    fn tcurve(&self, pts: &[(f64, f64)]) -> Vec<(f64, f64)> {
        pts.iter()
            .map(|p| self.tp(*p).unwrap_or((f64::NAN, f64::NAN)))
            .collect()
    }
}

/// Error text from a drawing call.
type DrawResult = Result<(), String>;

fn err<E: std::fmt::Debug>(e: E) -> String {
    format!("{e:?}")
}

fn font(px: u32, color: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FAMILY, px).into_font()).color(color)
}

/// Draws `panel` into `area`, scaling both axes to the data and its features.
pub fn draw_panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, panel: &Panel) -> DrawResult {
    let pts: Vec<(f64, f64)> = panel.points.iter().filter_map(|p| panel.tp(*p)).collect();
    let dropped = panel.points.len() - pts.len();
    let (Some(xe), Some(ye)) = (extent(pts.iter().map(|p| p.0)), extent(pts.iter().map(|p| p.1)))
    else {
        return draw_empty(area, panel);
    };

    // Feature coordinates widen the axes only when near the data.
    let mut fx: Vec<f64> = Vec::new();
    let mut fy: Vec<f64> = panel.hlines.iter().map(|h| h.0).collect();
    for (x, y, _) in &panel.markers {
        fx.extend(panel.tx(*x));
        fy.push(*y);
    }
    for (a, b, _) in &panel.segments {
        fx.extend(panel.tx(a.0));
        fx.extend(panel.tx(b.0));
        fy.push(a.1);
        fy.push(b.1);
    }
    for (c, _) in panel.curves.iter().chain(&panel.dashed_curves) {
        fy.extend(c.iter().filter(|p| panel.tx(p.0).is_some()).map(|p| p.1));
    }
    let (xlo, xhi) = widen_near(xe, &fx);
    let (ylo, yhi) = widen_near(ye, &fy);
    let xs = padded(xlo, xhi);
    let ys = padded(ylo, yhi);

    let mut chart = ChartBuilder::on(area)
        .caption(&panel.title, font(style::TITLE_PX, &style::INK))
        .margin(8)
        .margin_right(18)
        .x_label_area_size(46)
        .y_label_area_size(66)
        .build_cartesian_2d(xs.lo..xs.hi, ys.lo..ys.hi)
        .map_err(err)?;

    let log_x = panel.log_x;
    let x_fmt = move |v: &f64| {
        if log_x {
            style::format_num(10f64.powf(*v))
        } else {
            style::format_num(*v)
        }
    };
    let y_fmt = |v: &f64| style::format_num(*v);
    let x_desc = if log_x {
        format!("{} (log scale)", panel.x_label)
    } else {
        panel.x_label.clone()
    };
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(panel.y_label.clone())
        .x_labels(6)
        .y_labels(6)
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .light_line_style(style::GRID.mix(0.5))
        .bold_line_style(style::GRID)
        .axis_style(style::MUTED)
        .axis_desc_style(font(style::AXIS_PX, &style::INK))
        .label_style(font(style::LABEL_PX, &style::INK))
        .draw()
        .map_err(err)?;

    // Points first so every feature is drawn on top of them.
    chart
        .draw_series(
            pts.iter()
                .map(|p| Circle::new(*p, 3, style::POINTS.mix(0.8).filled())),
        )
        .map_err(err)?;

    let mut legend = false;
    for (i, (c, label)) in panel.curves.iter().enumerate() {
        let color = style::CURVES[i % style::CURVES.len()];
        let line = color.stroke_width(2);
        let runs = clip_polyline(&panel.tcurve(c), xs, ys);
        let series = chart
            .draw_series(runs.into_iter().map(move |r| PathElement::new(r, line)))
            .map_err(err)?;
        if !label.is_empty() {
            legend = true;
            series.label(label.clone()).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
            });
        }
    }
    for (i, (c, label)) in panel.dashed_curves.iter().enumerate() {
        let color = style::DASHED[i % style::DASHED.len()];
        let line = color.stroke_width(2);
        for run in clip_polyline(&panel.tcurve(c), xs, ys) {
            chart
                .draw_series(DashedLineSeries::new(run, 7, 5, line))
                .map_err(err)?;
        }
        if !label.is_empty() {
            legend = true;
            // An empty series carries the legend entry of the dashed curve.
            chart
                .draw_series(std::iter::empty::<PathElement<(f64, f64)>>())
                .map_err(err)?
                .label(label.clone())
                .legend(move |(x, y)| {
                    EmptyElement::at((x, y))
                        + PathElement::new(vec![(0, 0), (7, 0)], color.stroke_width(2))
                        + PathElement::new(vec![(12, 0), (19, 0)], color.stroke_width(2))
                });
        }
    }

    let mut off_scale = 0usize;
    for (a, b, label) in &panel.segments {
        let (Some(a), Some(b)) = (panel.tp(*a), panel.tp(*b)) else {
            off_scale += 1;
            continue;
        };
        let Some((a, b)) = clip_segment(a, b, xs, ys) else {
            off_scale += 1;
            continue;
        };
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![a, b],
                style::SEGMENT.stroke_width(3),
            )))
            .map_err(err)?;
        if !label.is_empty() {
            let mid = ((a.0 + b.0) / 2.0, (a.1 + b.1) / 2.0);
            let anchor = font(style::LABEL_PX, &style::INK).pos(Pos::new(HPos::Left, VPos::Top));
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at(mid) + Text::new(label.clone(), (6, 6), anchor),
                ))
                .map_err(err)?;
        }
    }

    for (y, label) in &panel.hlines {
        if !ys.contains(*y) {
            off_scale += 1;
            continue;
        }
        let line = style::PLATEAU.stroke_width(2);
        chart
            .draw_series(DashedLineSeries::new(vec![(xs.lo, *y), (xs.hi, *y)], 9, 5, line))
            .map_err(err)?;
        if !label.is_empty() {
            let anchor = font(style::LABEL_PX, &style::PLATEAU).pos(Pos::new(HPos::Right, VPos::Bottom));
            // Labels go below the line when it runs close to the top edge.
            let near_top = (ys.hi - y) < (ys.hi - ys.lo) * 0.08;
            let anchor = if near_top {
                anchor.pos(Pos::new(HPos::Right, VPos::Top))
            } else {
                anchor
            };
            let dy = if near_top { 4 } else { -4 };
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at((xs.hi, *y)) + Text::new(label.clone(), (-6, dy), anchor),
                ))
                .map_err(err)?;
        }
    }

    for (x, y, label) in &panel.markers {
        let Some(p) = panel.tp((*x, *y)).filter(|p| xs.contains(p.0) && ys.contains(p.1)) else {
            off_scale += 1;
            continue;
        };
        chart
            .draw_series(std::iter::once(Cross::new(p, 6, style::MARKER.stroke_width(2))))
            .map_err(err)?;
        if !label.is_empty() {
            // Keep the label inside the box: flip to the left in the right third.
            let right = p.0 > xs.lo + (xs.hi - xs.lo) * 0.66;
            let (h, dx) = if right { (HPos::Right, -9) } else { (HPos::Left, 9) };
            let anchor = font(style::LABEL_PX, &style::MARKER).pos(Pos::new(h, VPos::Bottom));
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at(p) + Text::new(label.clone(), (dx, -7), anchor),
                ))
                .map_err(err)?;
        }
    }

    let mut notes = Vec::new();
    if dropped > 0 {
        let why = if panel.log_x { "non-finite or x ≤ 0" } else { "non-finite" };
        notes.push(format!("{dropped} point(s) not shown ({why})"));
    }
    if off_scale > 0 {
        notes.push(format!("{off_scale} feature(s) off scale"));
    }
    if !notes.is_empty() {
        let anchor = font(style::LABEL_PX - 1, &style::MUTED).pos(Pos::new(HPos::Left, VPos::Bottom));
        chart
            .draw_series(std::iter::once(
                EmptyElement::at((xs.lo, ys.lo)) + Text::new(notes.join("; "), (5, -4), anchor),
            ))
            .map_err(err)?;
    }

    if legend {
        chart
            .configure_series_labels()
            .position(quietest_corner(&pts, xs, ys))
            .margin(8)
            .legend_area_size(26)
            .background_style(WHITE.mix(0.85))
            .border_style(style::GRID)
            .label_font(font(style::LABEL_PX, &style::INK))
            .draw()
            .map_err(err)?;
    }
    Ok(())
}

/// The corner of the plotting box holding the fewest points, for the legend.
fn quietest_corner(pts: &[(f64, f64)], xs: Span, ys: Span) -> SeriesLabelPosition {
    let fx = |x: f64| (x - xs.lo) / (xs.hi - xs.lo);
    let fy = |y: f64| (y - ys.lo) / (ys.hi - ys.lo);
    let count = |right: bool, upper: bool| {
        pts.iter()
            .filter(|p| {
                let (u, v) = (fx(p.0), fy(p.1));
                (if right { u > 0.6 } else { u < 0.4 }) && (if upper { v > 0.7 } else { v < 0.3 })
            })
            .count()
    };
    let options = [
        (count(true, true), SeriesLabelPosition::UpperRight),
        (count(false, true), SeriesLabelPosition::UpperLeft),
        (count(true, false), SeriesLabelPosition::LowerRight),
        (count(false, false), SeriesLabelPosition::LowerLeft),
    ];
    options
        .into_iter()
        .min_by_key(|(n, _)| *n)
        .map(|(_, pos)| pos)
        .unwrap_or(SeriesLabelPosition::UpperRight)
}

/// Draws a titled frame saying why there is nothing to plot.
fn draw_empty<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, panel: &Panel) -> DrawResult {
    let inner = area
        .margin(8, 8, 8, 18)
        .titled(&panel.title, font(style::TITLE_PX, &style::INK))
        .map_err(err)?;
    let (w, h) = inner.dim_in_pixel();
    let (w, h) = (w as i32, h as i32);
    inner
        .draw(&Rectangle::new([(0, 0), (w - 1, h - 1)], style::GRID.stroke_width(1)))
        .map_err(err)?;
    let reason = if !panel.empty_reason.is_empty() {
        panel.empty_reason.clone()
    } else if panel.points.is_empty() {
        "no data".to_string()
    } else if panel.log_x {
        "non-finite values or x ≤ 0".to_string()
    } else {
        "non-finite values".to_string()
    };
    let text = font(style::AXIS_PX, &style::MUTED).pos(Pos::new(HPos::Center, VPos::Center));
    inner
        .draw_text(&format!("no valid points ({reason})"), &text, (w / 2, h / 2))
        .map_err(err)?;
    Ok(())
}
