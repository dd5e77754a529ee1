//! One plot panel: the input struct and the drawing of points, feature lines,
//! markers and curves on any plotters backend.

use super::geometry::{clip_polyline, clip_segment, extent, padded, plottable, widen_near, Span};
use super::labels::{around, place, Pending, Rect};
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
    /// A y range `(low, high)` shared with other panels; `None` scales y to this panel.
    pub y_range: Option<(f64, f64)>,
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
    let ys = match panel.y_range {
        Some((lo, hi)) => padded(lo, hi),
        None => padded(ylo, yhi),
    };

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

    // Lines and markers first; their labels are placed together afterwards so
    // that none overlaps another or runs past the plotting box.
    let mut off_scale = 0usize;
    let mut pending: Vec<PendingText> = Vec::new();
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
            pending.push(PendingText::new(label, &style::INK, Near::Point(mid)));
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
            // Start at whichever end of the line has fewer points crowding it.
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
            pending.push(PendingText::new(
                label,
                &style::PLATEAU,
                Near::Line { y: *y, left },
            ));
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
            pending.push(PendingText::new(label, &style::MARKER, Near::Point(p)));
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

    // Pixel space of the plotting box, for measuring and placing text.
    let plot = chart.plotting_area();
    let base = plot.get_base_pixel();
    let (pw, ph) = plot.dim_in_pixel();
    let (pw, ph) = (pw as i32, ph as i32);
    let to_px = |p: (f64, f64)| {
        let (x, y) = plot.map_coordinate(&p);
        (x - base.0, y - base.1)
    };
    let mut reserved: Vec<Rect> = Vec::new();
    if legend {
        // The legend box as the drawing library lays it out (margin 8, a
        // 26-pixel sample column, one line per entry), measured generously.
        let entries: Vec<&String> = panel
            .curves
            .iter()
            .chain(&panel.dashed_curves)
            .map(|c| &c.1)
            .filter(|l| !l.is_empty())
            .collect();
        let label_font = font(style::LABEL_PX, &style::INK);
        let mut w = 0i32;
        for l in &entries {
            w = w.max(area.estimate_text_size(l, &label_font).map_err(err)?.0 as i32);
        }
        let (w, h) = (
            w + 26 + 24,
            entries.len() as i32 * (style::LABEL_PX as i32 + 8) + 14,
        );
        let (right, upper) = legend_corner;
        let x0 = if right { pw - 8 - w } else { 8 };
        let y0 = if upper { 8 } else { ph - 8 - h };
        reserved.push(Rect::at((x0, y0), (w, h)));
    }
    let note = if notes.is_empty() {
        None
    } else {
        let corner = if legend { corners[1] } else { corners[0] };
        let text = notes.join("; ");
        let style = font(style::LABEL_PX - 1, &style::MUTED);
        let (tw, th) = text_box(area, &text, &style)?;
        let (right, upper) = corner;
        let x0 = if right { pw - 6 - tw } else { 6 };
        let y0 = if upper { 6 } else { ph - 6 - th };
        reserved.push(Rect::at((x0 - 3, y0 - 2), (tw + 6, th + 4)));
        Some((text, style, (x0, y0), (tw, th)))
    };

    // Text positions are chosen in pixels; obstacles are the data points and
    // samples along the lines drawn.
    let mut obstacles: Vec<(i32, i32)> = pts.iter().map(|p| to_px(*p)).collect();
    for (a, b, _) in &panel.segments {
        if let (Some(a), Some(b)) = (panel.tp(*a), panel.tp(*b)) {
            if let Some((a, b)) = clip_segment(a, b, xs, ys) {
                // A sample every three pixels or so along the drawn piece.
                let (pa, pb) = (to_px(a), to_px(b));
                let len = (pb.0 - pa.0).abs().max((pb.1 - pa.1).abs());
                let k = (len / 3).clamp(1, 400);
                obstacles.extend((0..=k).map(|i| {
                    let t = f64::from(i) / f64::from(k);
                    to_px((a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t))
                }));
            }
        }
    }
    for (y, _) in panel.hlines.iter().filter(|h| ys.contains(h.0)) {
        let (_, py) = to_px((xs.lo, *y));
        obstacles.extend((0..=pw / 3).map(|i| (3 * i, py)));
    }
    let mut boxes: Vec<Pending> = Vec::with_capacity(pending.len());
    for t in &pending {
        let (w, h) = text_box(area, &t.text, &font(style::LABEL_PX, t.colour))?;
        let candidates = match t.near {
            Near::Point(p) => around(to_px(p), (w, h), 7),
            Near::Line { y, left } => {
                let (_, py) = to_px((xs.lo, y));
                let (l, r) = (6, pw - 6 - w);
                let (first, second) = if left { (l, r) } else { (r, l) };
                vec![
                    (first, py - 4 - h),
                    (first, py + 4),
                    (second, py - 4 - h),
                    (second, py + 4),
                ]
            }
        };
        boxes.push(Pending {
            size: (w, h),
            candidates,
        });
    }
    let placed = place(&boxes, (pw, ph), &obstacles, &reserved);
    let text_area = plot.strip_coord_spec();
    let mut left_out = 0usize;
    for (t, at) in pending.iter().zip(&placed) {
        let Some((x, y)) = *at else {
            left_out += 1;
            continue;
        };
        let style = font(style::LABEL_PX, t.colour).pos(Pos::new(HPos::Left, VPos::Top));
        text_area
            .draw(&Text::new(t.text.clone(), (x + 2, y + 1), style))
            .map_err(err)?;
    }

    let note = match (note, left_out) {
        (Some((text, style, at, size)), n) if n > 0 => Some((
            format!("{text}; {n} label(s) left out for room"),
            style,
            at,
            size,
        )),
        (None, n) if n > 0 => {
            // Rare: the box is full; say so in the quietest corner.
            let text = format!("{n} label(s) left out for room");
            let style = font(style::LABEL_PX - 1, &style::MUTED);
            let size = text_box(area, &text, &style)?;
            Some((text, style, (6, 6), size))
        }
        (note, _) => note,
    };
    if let Some((text, style, (x0, y0), (tw, th))) = note {
        text_area
            .draw(&Rectangle::new(
                [(x0 - 3, y0 - 2), (x0 + tw + 3, y0 + th + 2)],
                WHITE.mix(0.85).filled(),
            ))
            .map_err(err)?;
        text_area
            .draw(&Text::new(
                text,
                (x0 + 2, y0 + 1),
                style.pos(Pos::new(HPos::Left, VPos::Top)),
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

/// Where a label belongs: beside a point, or along a horizontal line at
/// the left or right end.
#[derive(Debug, Clone, Copy)]
enum Near {
    Point((f64, f64)),
    Line { y: f64, left: bool },
}

/// A label waiting for its place.
struct PendingText {
    text: String,
    colour: &'static RGBColor,
    near: Near,
}

impl PendingText {
    fn new(text: &str, colour: &'static RGBColor, near: Near) -> Self {
        PendingText {
            text: text.to_string(),
            colour,
            near,
        }
    }
}

/// The box a text needs, with room for the browser's own face in SVG: at
/// least one line of the font size high, plus a little air on every side.
fn text_box<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    text: &str,
    style: &TextStyle,
) -> Result<(i32, i32), String> {
    let (w, h) = area.estimate_text_size(text, style).map_err(err)?;
    let px = style.font.get_size().ceil() as i32;
    Ok((w as i32 * 21 / 20 + 4, (h as i32).max(px) + 3))
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
