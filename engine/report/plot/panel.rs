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
    let (Some(xe), Some(ye)) = (
        extent(pts.iter().map(|p| p.0)),
        extent(pts.iter().map(|p| p.1)),
    ) else {
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
        .y_label_area_size(60)
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
    let log_ticks = if log_x { log_ticks(xs) } else { Vec::new() };
    let mut mesh = chart.configure_mesh();
    if log_x {
        // Decade-based ticks are drawn below; plotters would pick linear steps in log10 x.
        mesh.disable_x_mesh().x_labels(0);
    } else {
        mesh.x_labels(6);
    }
    mesh.x_desc(x_desc)
        .y_desc(panel.y_label.clone())
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
    for (v, label) in &log_ticks {
        let grid = style::GRID.stroke_width(1);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(*v, ys.lo), (*v, ys.hi)],
                grid,
            )))
            .map_err(err)?;
        let anchor = font(style::LABEL_PX, &style::INK).pos(Pos::new(HPos::Center, VPos::Top));
        chart
            .draw_series(std::iter::once(
                EmptyElement::at((*v, ys.lo))
                    + PathElement::new(vec![(0, 0), (0, 5)], style::MUTED.stroke_width(1))
                    + Text::new(label.clone(), (0, 8), anchor),
            ))
            .map_err(err)?;
    }

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
            .draw_series(DashedLineSeries::new(
                vec![(xs.lo, *y), (xs.hi, *y)],
                9,
                5,
                line,
            ))
            .map_err(err)?;
        if !label.is_empty() {
            // Labels go below the line when it runs close to the top edge, and
            // at whichever end of the line has fewer points crowding it.
            let near_top = (ys.hi - y) < (ys.hi - ys.lo) * 0.08;
            let (v, dy) = if near_top {
                (VPos::Top, 4)
            } else {
                (VPos::Bottom, -4)
            };
            let crowd = |left: bool| {
                pts.iter()
                    .filter(|p| {
                        let u = (p.0 - xs.lo) / (xs.hi - xs.lo);
                        (if left { u < 0.4 } else { u > 0.6 })
                            && (p.1 - y).abs() < (ys.hi - ys.lo) * 0.1
                    })
                    .count()
            };
            let left = crowd(true) < crowd(false);
            let (h, x, dx) = if left {
                (HPos::Left, xs.lo, 6)
            } else {
                (HPos::Right, xs.hi, -6)
            };
            let anchor = font(style::LABEL_PX, &style::PLATEAU).pos(Pos::new(h, v));
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at((x, *y)) + Text::new(label.clone(), (dx, dy), anchor),
                ))
                .map_err(err)?;
        }
    }

    for (x, y, label) in &panel.markers {
        let Some(p) = panel
            .tp((*x, *y))
            .filter(|p| xs.contains(p.0) && ys.contains(p.1))
        else {
            off_scale += 1;
            continue;
        };
        chart
            .draw_series(std::iter::once(Cross::new(
                p,
                6,
                style::MARKER.stroke_width(2),
            )))
            .map_err(err)?;
        if !label.is_empty() {
            // Keep the label inside the box: flip to the left in the right third.
            let right = p.0 > xs.lo + (xs.hi - xs.lo) * 0.66;
            let (h, dx) = if right {
                (HPos::Right, -9)
            } else {
                (HPos::Left, 9)
            };
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
        let why = if panel.log_x {
            "non-finite or x ≤ 0"
        } else {
            "non-finite"
        };
        notes.push(format!("{dropped} point(s) not shown ({why})"));
    }
    if off_scale > 0 {
        notes.push(format!("{off_scale} feature(s) off scale"));
    }
    // Occupancy of the corners: points, plus samples along plateau lines.
    let mut busy = pts.clone();
    for (y, _) in &panel.hlines {
        busy.extend((0..=10).map(|i| (xs.lo + (xs.hi - xs.lo) * i as f64 / 10.0, *y)));
    }
    let corners = quiet_corners(&busy, xs, ys);
    let legend_corner = corners[0];
    if !notes.is_empty() {
        let corner = if legend { corners[1] } else { corners[0] };
        let text = notes.join("; ");
        let (right, upper) = corner;
        let h = if right { HPos::Right } else { HPos::Left };
        let v = if upper { VPos::Top } else { VPos::Bottom };
        let anchor = font(style::LABEL_PX - 1, &style::MUTED).pos(Pos::new(h, v));
        let (tw, th) = area.estimate_text_size(&text, &anchor).map_err(err)?;
        let (tw, th) = (tw as i32, th as i32);
        let dx = if right { -6 } else { 6 };
        let dy = if upper { 6 } else { -6 };
        let x0 = if right { dx - tw - 3 } else { dx - 3 };
        let y0 = if upper { dy - 2 } else { dy - th - 2 };
        let at = (
            if right { xs.hi } else { xs.lo },
            if upper { ys.hi } else { ys.lo },
        );
        chart
            .draw_series(std::iter::once(
                EmptyElement::at(at)
                    + Rectangle::new(
                        [(x0, y0), (x0 + tw + 6, y0 + th + 4)],
                        WHITE.mix(0.85).filled(),
                    )
                    + Text::new(text, (dx, dy), anchor),
            ))
            .map_err(err)?;
    }

    if legend {
        let position = match legend_corner {
            (true, true) => SeriesLabelPosition::UpperRight,
            (false, true) => SeriesLabelPosition::UpperLeft,
            (true, false) => SeriesLabelPosition::LowerRight,
            (false, false) => SeriesLabelPosition::LowerLeft,
        };
        chart
            .configure_series_labels()
            .position(position)
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

/// The four corners of the plotting box as `(right, upper)`, quietest first
/// (fewest occupied places), for the legend and notes.
fn quiet_corners(busy: &[(f64, f64)], xs: Span, ys: Span) -> [(bool, bool); 4] {
    let fx = |x: f64| (x - xs.lo) / (xs.hi - xs.lo);
    let fy = |y: f64| (y - ys.lo) / (ys.hi - ys.lo);
    let count = |(right, upper): (bool, bool)| {
        busy.iter()
            .filter(|p| {
                let (u, v) = (fx(p.0), fy(p.1));
                (if right { u > 0.55 } else { u < 0.45 })
                    && (if upper { v > 0.75 } else { v < 0.25 })
            })
            .count()
    };
    let mut corners = [(true, true), (false, true), (true, false), (false, false)];
    // Stable sort keeps upper-right first among equally quiet corners.
    corners.sort_by_key(|c| count(*c));
    corners
}

/// Tick positions (in log10 x) and labels for a log axis over `xs`: 1-2-5 steps
/// per decade, thinned to decades (or every few decades) when crowded.
fn log_ticks(xs: Span) -> Vec<(f64, String)> {
    let first = xs.lo.floor() as i64;
    let last = xs.hi.ceil() as i64;
    let within = |mults: &[f64], every: i64| -> Vec<(f64, String)> {
        let mut out: Vec<(f64, String)> = Vec::new();
        for k in first..=last {
            if k.rem_euclid(every) != 0 {
                continue;
            }
            for m in mults {
                let value = m * 10f64.powi(k as i32);
                let v = value.log10();
                if xs.contains(v) {
                    out.push((v, style::format_num(value)));
                }
            }
        }
        out
    };
    if last - first > 400 {
        return Vec::new();
    }
    let ticks = within(&[1.0, 2.0, 5.0], 1);
    if ticks.len() > 8 {
        let decades = within(&[1.0], 1);
        let every = (decades.len() as i64 / 7).max(1);
        return if every > 1 {
            within(&[1.0], every)
        } else {
            decades
        };
    }
    if ticks.len() >= 3 {
        return ticks;
    }
    let fine = within(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0], 1);
    if fine.len() >= 2 {
        return fine;
    }
    // Less than a factor of two across: evenly spaced ticks in log10 x.
    (1..=4)
        .map(|i| {
            let v = xs.lo + (xs.hi - xs.lo) * i as f64 / 5.0;
            (v, style::format_num(10f64.powf(v)))
        })
        .collect()
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
        .draw(&Rectangle::new(
            [(0, 0), (w - 1, h - 1)],
            style::GRID.stroke_width(1),
        ))
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
        .draw_text(
            &format!("no valid points ({reason})"),
            &text,
            (w / 2, h / 2),
        )
        .map_err(err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ticks_follow_decades() {
        // 0.5 .. 200: 1-2-5 steps give 0.5,1,2,5,10,20,50,100,200 (9) → decades.
        let t = log_ticks(Span {
            lo: 0.5f64.log10(),
            hi: 200f64.log10(),
        });
        let labels: Vec<&str> = t.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["1", "10", "100"]);
        let t = log_ticks(Span { lo: 0.0, hi: 1.0 });
        let labels: Vec<&str> = t.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["1", "2", "5", "10"]);
        let t = log_ticks(Span { lo: 0.0, hi: 1e-6 });
        assert_eq!(t.len(), 4);
        assert!(
            log_ticks(Span {
                lo: -150.0,
                hi: 150.0
            })
            .len()
                <= 8
        );
    }

    #[test]
    fn quiet_corner_avoids_points() {
        let b = Span { lo: 0.0, hi: 1.0 };
        let pts = [(0.9, 0.9), (0.8, 0.95), (0.1, 0.1), (0.9, 0.1)];
        assert_eq!(quiet_corners(&pts, b, b)[0], (false, true));
    }
}
