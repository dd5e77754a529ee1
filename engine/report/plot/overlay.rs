//! The batch plots: every group's points and fitted curve on one chart, a
//! colour and marker per group with a legend beside the chart, and a small
//! grid of one panel per group.

use super::geometry::{clip_polyline, extent, padded, widen_near};
use super::panel::{draw_panel, Panel};
use super::style::{self, FAMILY};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// One group of a batch: its label, data points and fitted curve (empty when it failed).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct GroupSeries {
    /// The group's label, e.g. `KX-101`.
    pub label: String,
    /// Extra words for the legend and panel title, e.g. `failed`; empty when converged.
    pub note: String,
    /// Data points `(x, y)`.
    pub points: Vec<(f64, f64)>,
    /// The fitted curve on a dense grid; empty when there is none.
    pub curve: Vec<(f64, f64)>,
}

/// Everything on the overlay chart.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Overlay {
    /// Title over the chart.
    pub title: String,
    /// Description of the x axis.
    pub x_label: String,
    /// Description of the y axis.
    pub y_label: String,
    /// The groups, in the order of the legend.
    pub groups: Vec<GroupSeries>,
}

/// Twelve qualitative group colours: Okabe & Ito (2008) without yellow (too
/// pale on white), then indigo, wine, olive and green from Tol (2021, "Colour
/// schemes", SRON/EPS/TN/09-002, the muted set) and a mid grey.
pub const GROUP_COLOURS: [RGBColor; 12] = [
    RGBColor(0x00, 0x72, 0xB2),
    RGBColor(0xD5, 0x5E, 0x00),
    RGBColor(0x00, 0x9E, 0x73),
    RGBColor(0xCC, 0x79, 0xA7),
    RGBColor(0x56, 0xB4, 0xE9),
    RGBColor(0xE6, 0x9F, 0x00),
    RGBColor(0x00, 0x00, 0x00),
    RGBColor(0x33, 0x22, 0x88),
    RGBColor(0x88, 0x22, 0x55),
    RGBColor(0x99, 0x99, 0x33),
    RGBColor(0x11, 0x77, 0x33),
    RGBColor(0x88, 0x88, 0x88),
];

/// Most groups drawn together on the overlay chart; past this the page shows
/// one panel per group on a common y scale instead.
pub const MAX_OVERLAY_GROUPS: usize = GROUP_COLOURS.len();

/// Marker shapes, in turn: circle, triangle, square, diamond, downward
/// triangle, cross.
const SHAPES: usize = 6;

/// Legend entries listed before the rest are summarised as "… and N more".
pub const MAX_LEGEND: usize = 22;
/// Pixel size of the overlay sheet (chart and legend column).
pub const OVERLAY_SIZE: (u32, u32) = (1050, 600);
/// Width of the legend column.
const LEGEND_WIDTH: u32 = 220;
/// Panels per row in the grid of groups, and the pixel size of one panel.
pub const GRID_COLUMNS: usize = 3;
const GRID_PANEL: (u32, u32) = (350, 270);

/// Colour and marker shape of group `i`: the colour and the shape both
/// change from one group to the next, so the first twelve groups differ in
/// colour and neighbours in shape too.
fn look(i: usize) -> (RGBColor, usize) {
    (GROUP_COLOURS[i % GROUP_COLOURS.len()], i % SHAPES)
}

/// Outline of marker `shape` of radius `r` around (0, 0), in pixels.
fn shape_outline(shape: usize, r: i32) -> Vec<(i32, i32)> {
    let rf = r as f64;
    match shape % SHAPES {
        0 => (0..16)
            .map(|k| {
                let t = k as f64 * std::f64::consts::TAU / 16.0;
                ((rf * t.cos()).round() as i32, (rf * t.sin()).round() as i32)
            })
            .collect(),
        1 => vec![(0, -r - 1), (r + 1, r), (-r - 1, r)],
        2 => vec![
            (-r + 1, -r + 1),
            (r - 1, -r + 1),
            (r - 1, r - 1),
            (-r + 1, r - 1),
        ],
        3 => vec![(0, -r - 1), (r + 1, 0), (0, r + 1), (-r - 1, 0)],
        4 => vec![(-r - 1, -r), (r + 1, -r), (0, r + 1)],
        _ => {
            // A diagonal cross with arms a third of the radius wide.
            let (a, b) = (r, (r / 3).max(1));
            vec![
                (-a, -a + b),
                (-a + b, -a),
                (0, -b),
                (a - b, -a),
                (a, -a + b),
                (b, 0),
                (a, a - b),
                (a - b, a),
                (0, b),
                (-a + b, a),
                (-a, a - b),
                (-b, 0),
            ]
        }
    }
}

fn err<E: std::fmt::Debug>(e: E) -> String {
    format!("{e:?}")
}

fn font(px: u32, color: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FAMILY, px).into_font()).color(color)
}

/// Draws the overlay: the chart on the left, the legend column on the right.
pub(crate) fn draw_overlay<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    o: &Overlay,
) -> Result<(), String> {
    root.fill(&WHITE).map_err(err)?;
    let (w, _) = root.dim_in_pixel();
    let (left, right) = root.split_horizontally(w.saturating_sub(LEGEND_WIDTH));
    let all = || o.groups.iter().flat_map(|g| g.points.iter());
    let (Some(xe), Some(ye)) = (extent(all().map(|p| p.0)), extent(all().map(|p| p.1))) else {
        let p = Panel::new(&o.title, &o.x_label, &o.y_label);
        return draw_panel(&left, &p);
    };
    let curve_y: Vec<f64> = o
        .groups
        .iter()
        .flat_map(|g| g.curve.iter().map(|p| p.1))
        .collect();
    let (ylo, yhi) = widen_near(ye, &curve_y);
    let xs = padded(xe.0, xe.1);
    let ys = padded(ylo, yhi);
    let mut chart = ChartBuilder::on(&left)
        .caption(&o.title, font(style::TITLE_PX + 3, &style::INK))
        .margin(10)
        .margin_right(16)
        .x_label_area_size(50)
        .y_label_area_size(66)
        .build_cartesian_2d(xs.lo..xs.hi, ys.lo..ys.hi)
        .map_err(err)?;
    let fmt = |v: &f64| style::format_num(*v);
    chart
        .configure_mesh()
        .x_labels(8)
        .y_labels(7)
        .x_desc(o.x_label.clone())
        .y_desc(o.y_label.clone())
        .x_label_formatter(&fmt)
        .y_label_formatter(&fmt)
        .light_line_style(style::GRID.mix(0.5))
        .bold_line_style(style::GRID)
        .axis_style(style::MUTED)
        .axis_desc_style(font(style::AXIS_PX + 2, &style::INK))
        .label_style(font(style::LABEL_PX + 2, &style::INK))
        .draw()
        .map_err(err)?;
    for (i, g) in o.groups.iter().enumerate() {
        let (colour, shape) = look(i);
        let line = colour.stroke_width(2);
        let runs = clip_polyline(&g.curve, xs, ys);
        chart
            .draw_series(runs.into_iter().map(move |r| PathElement::new(r, line)))
            .map_err(err)?;
        let pts = g
            .points
            .iter()
            .copied()
            .filter(|p| xs.contains(p.0) && ys.contains(p.1));
        chart
            .draw_series(pts.map(|p| {
                EmptyElement::at(p)
                    + Polygon::new(shape_outline(shape, 4), colour.mix(0.8).filled())
            }))
            .map_err(err)?;
    }
    draw_legend(&right, o)?;
    root.present().map_err(err)
}

/// The legend column: one line per group (marker, line, label).
fn draw_legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    o: &Overlay,
) -> Result<(), String> {
    let row = 24i32;
    let top = 56i32;
    let text = font(style::LABEL_PX + 2, &style::INK).pos(Pos::new(HPos::Left, VPos::Center));
    area.draw_text(
        "groups",
        &font(style::AXIS_PX + 2, &style::INK).pos(Pos::new(HPos::Left, VPos::Center)),
        (10, top - row),
    )
    .map_err(err)?;
    let shown = o.groups.len().min(MAX_LEGEND);
    for (i, g) in o.groups.iter().take(shown).enumerate() {
        let (colour, shape) = look(i);
        let y = top + row * i as i32;
        area.draw(&PathElement::new(
            vec![(10, y), (40, y)],
            colour.stroke_width(if g.curve.is_empty() { 0 } else { 2 }),
        ))
        .map_err(err)?;
        area.draw(
            &(EmptyElement::at((25, y))
                + Polygon::new(shape_outline(shape, 5), colour.mix(0.8).filled())),
        )
        .map_err(err)?;
        let mut label = g.label.clone();
        if label.chars().count() > 18 {
            label = label.chars().take(17).collect::<String>() + "…";
        }
        if !g.note.is_empty() {
            label += &format!(" ({})", g.note);
        }
        area.draw_text(&label, &text, (48, y)).map_err(err)?;
    }
    if o.groups.len() > shown {
        let y = top + row * shown as i32;
        area.draw_text(
            &format!("… and {} more", o.groups.len() - shown),
            &font(style::LABEL_PX + 2, &style::MUTED).pos(Pos::new(HPos::Left, VPos::Center)),
            (10, y),
        )
        .map_err(err)?;
    }
    Ok(())
}

/// The panel of one group: its points and fitted curve, titled with its label.
pub fn group_panel(g: &GroupSeries, x_label: &str, y_label: &str) -> Panel {
    let title = if g.note.is_empty() {
        g.label.clone()
    } else {
        format!("{} ({})", g.label, g.note)
    };
    let mut p = Panel::new(&title, x_label, y_label);
    p.points = g.points.clone();
    if !g.curve.is_empty() {
        p.curves.push((g.curve.clone(), String::new()));
    }
    p
}

/// The y range every group's panel shares: all points, and the fitted
/// curves where they stay near the data (a wild curve is left to clipping).
pub fn common_y_range(groups: &[GroupSeries]) -> Option<(f64, f64)> {
    let ye = extent(groups.iter().flat_map(|g| g.points.iter().map(|p| p.1)))?;
    let curve_y: Vec<f64> = groups
        .iter()
        .flat_map(|g| g.curve.iter().map(|p| p.1))
        .collect();
    Some(widen_near(ye, &curve_y))
}

/// Pixel size of a grid of `n` group panels.
pub fn grid_size(n: usize) -> (u32, u32) {
    let rows = n.div_ceil(GRID_COLUMNS).max(1) as u32;
    let cols = n.clamp(1, GRID_COLUMNS) as u32;
    (GRID_PANEL.0 * cols, GRID_PANEL.1 * rows)
}

/// Draws the grid of group panels, three to a row.
pub(crate) fn draw_grid<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    panels: &[Panel],
) -> Result<(), String> {
    root.fill(&WHITE).map_err(err)?;
    let rows = panels.len().div_ceil(GRID_COLUMNS).max(1);
    let cols = panels.len().clamp(1, GRID_COLUMNS);
    for (area, panel) in root.split_evenly((rows, cols)).iter().zip(panels) {
        draw_panel(area, panel)?;
    }
    root.present().map_err(err)
}
