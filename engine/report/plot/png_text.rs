//! Text in PNG plots: a bitmap backend that lays glyphs out itself with the
//! bundled font. Each glyph is rasterised at its exact (fractional) pen
//! position, its own left side bearing included, so letters sit evenly; the
//! drawing library's own bitmap text placed every glyph's bitmap at the pen
//! position truncated to a whole pixel and dropped the bearing.

use super::style::FONT_BYTES;
use ab_glyph::{point, Font, FontRef, GlyphId, PxScale, ScaleFont};
use plotters::prelude::*;
use plotters_backend::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingErrorKind,
};
use plotters_bitmap::BitMapBackendError;
use std::sync::OnceLock;

/// The bundled font, parsed once.
fn bundled() -> Option<&'static FontRef<'static>> {
    static FONT: OnceLock<Option<FontRef<'static>>> = OnceLock::new();
    FONT.get_or_init(|| FontRef::try_from_slice(FONT_BYTES).ok())
        .as_ref()
}

/// Glyphs of `text` at `px` pixels: (glyph, pen x), the line width and the
/// ascent and descent (descent negative), all in pixels.
fn layout(font: &FontRef<'static>, px: f32, text: &str) -> (Vec<(GlyphId, f32)>, f32, f32, f32) {
    let f = font.as_scaled(PxScale::from(px));
    let mut pen = 0f32;
    let mut prev: Option<GlyphId> = None;
    let mut glyphs = Vec::with_capacity(text.len());
    for c in text.chars() {
        let id = f.glyph_id(c);
        if let Some(p) = prev {
            pen += f.kern(p, id);
        }
        glyphs.push((id, pen));
        pen += f.h_advance(id);
        prev = Some(id);
    }
    (glyphs, pen, f.ascent(), f.descent())
}

/// Width and height of `text` at `px` pixels (height = ascent − descent).
pub fn text_size(px: f64, text: &str) -> Option<(u32, u32)> {
    let font = bundled()?;
    let (_, w, a, d) = layout(font, px as f32, text);
    Some((w.ceil().max(0.0) as u32, (a - d).ceil().max(0.0) as u32))
}

/// A PNG bitmap backend whose text is drawn by [`layout`]; everything else
/// goes straight to the drawing library's bitmap backend.
pub struct GlyphBitmap<'a> {
    inner: BitMapBackend<'a>,
}

impl<'a> GlyphBitmap<'a> {
    /// Wraps a bitmap backend.
    pub fn new(inner: BitMapBackend<'a>) -> Self {
        GlyphBitmap { inner }
    }
}

type Fallible = Result<(), DrawingErrorKind<BitMapBackendError>>;

impl DrawingBackend for GlyphBitmap<'_> {
    type ErrorType = BitMapBackendError;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }
    fn ensure_prepared(&mut self) -> Fallible {
        self.inner.ensure_prepared()
    }
    fn present(&mut self) -> Fallible {
        self.inner.present()
    }
    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Fallible {
        self.inner.draw_pixel(point, color)
    }
    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        s: &S,
    ) -> Fallible {
        self.inner.draw_line(from, to, s)
    }
    fn draw_rect<S: BackendStyle>(
        &mut self,
        a: BackendCoord,
        b: BackendCoord,
        s: &S,
        fill: bool,
    ) -> Fallible {
        self.inner.draw_rect(a, b, s, fill)
    }
    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        s: &S,
    ) -> Fallible {
        self.inner.draw_path(path, s)
    }
    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        s: &S,
        fill: bool,
    ) -> Fallible {
        self.inner.draw_circle(center, radius, s, fill)
    }
    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        s: &S,
    ) -> Fallible {
        self.inner.fill_polygon(vert, s)
    }
    fn blit_bitmap(&mut self, pos: BackendCoord, size: (u32, u32), src: &[u8]) -> Fallible {
        self.inner.blit_bitmap(pos, size, src)
    }

    fn estimate_text_size<T: BackendTextStyle>(
        &self,
        text: &str,
        style: &T,
    ) -> Result<(u32, u32), DrawingErrorKind<Self::ErrorType>> {
        match text_size(style.size(), text) {
            Some(s) => Ok(s),
            None => self.inner.estimate_text_size(text, style),
        }
    }

    fn draw_text<T: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &T,
        pos: BackendCoord,
    ) -> Fallible {
        let color = style.color();
        let Some(font) = bundled() else {
            return self.inner.draw_text(text, style, pos);
        };
        if color.alpha == 0.0 || text.is_empty() {
            return Ok(());
        }
        let px = style.size() as f32;
        let (glyphs, width, ascent, descent) = layout(font, px, text);
        let height = ascent - descent;
        let anchor = style.anchor();
        let dx = match anchor.h_pos {
            HPos::Left => 0.0,
            HPos::Right => -width,
            HPos::Center => -width / 2.0,
        };
        let dy = match anchor.v_pos {
            VPos::Top => 0.0,
            VPos::Center => -height / 2.0,
            VPos::Bottom => -height,
        };
        // Baseline on a whole pixel keeps horizontal strokes crisp; x stays fractional.
        let baseline = (dy + ascent).round();
        let trans = style.transform();
        let (w, h) = self.get_size();
        let mut coverage: Vec<(i32, i32, f32)> = Vec::new();
        for (id, x) in glyphs {
            let g = id.with_scale_and_position(PxScale::from(px), point(dx + x, baseline));
            if let Some(outline) = font.outline_glyph(g) {
                let b = outline.px_bounds();
                let (x0, y0) = (b.min.x as i32, b.min.y as i32);
                outline.draw(|gx, gy, c| coverage.push((x0 + gx as i32, y0 + gy as i32, c)));
            }
        }
        for (x, y, c) in coverage {
            if c <= 0.0 {
                continue;
            }
            let (tx, ty) = trans.transform(x, y);
            let (tx, ty) = (pos.0 + tx, pos.1 + ty);
            if tx >= 0 && ty >= 0 && (tx as u32) < w && (ty as u32) < h {
                let c = BackendColor {
                    alpha: color.alpha * f64::from(c.min(1.0)),
                    rgb: color.rgb,
                };
                self.inner.draw_pixel((tx, ty), c)?;
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::style::text_anchor::Pos;

    /// Columns holding any ink in an RGB buffer of width `w` on white.
    fn inked_columns(buf: &[u8], w: usize) -> Vec<usize> {
        let mut cols: Vec<usize> = buf
            .chunks(3)
            .enumerate()
            .filter(|(_, px)| px.iter().any(|v| *v < 200))
            .map(|(i, _)| i % w)
            .collect();
        cols.sort_unstable();
        cols.dedup();
        cols
    }

    #[test]
    fn glyphs_keep_their_bearings_and_advances() {
        super::super::style::ensure_font();
        let (w, h) = (400usize, 80usize);
        let mut buf = vec![255u8; w * h * 3];
        {
            let root = GlyphBitmap::new(BitMapBackend::with_buffer(&mut buf, (w as u32, h as u32)))
                .into_drawing_area();
            let style = TextStyle::from((super::super::style::FAMILY, 40).into_font())
                .color(&BLACK)
                .pos(Pos::new(HPos::Left, VPos::Top));
            root.draw_text("HxH", &style, (10, 10)).unwrap();
            root.present().unwrap();
        }
        // Where the glyph outlines fall, from the font itself: the first H's
        // stem starts at its left side bearing, the last H ends at pen + its
        // outline's right edge.
        let font = bundled().expect("bundled font");
        let (glyphs, width, ..) = layout(font, 40.0, "HxH");
        let bounds = |(id, x): (GlyphId, f32)| {
            font.outline_glyph(id.with_scale_and_position(PxScale::from(40.0), point(x, 0.0)))
                .unwrap()
                .px_bounds()
        };
        let first = bounds(glyphs[0]);
        let last = bounds(glyphs[2]);
        let ink = inked_columns(&buf, w);
        let (lo, hi) = (*ink.first().unwrap() as f32, *ink.last().unwrap() as f32);
        assert!(
            first.min.x >= 2.0,
            "H has a left side bearing: {}",
            first.min.x
        );
        assert!(
            (lo - (10.0 + first.min.x)).abs() <= 1.0,
            "ink starts at {lo}"
        );
        assert!(
            (hi + 1.0 - (10.0 + last.max.x)).abs() <= 1.0,
            "ink ends at {hi}"
        );
        // The measured size is the laid-out width, so anchors centre text truly.
        let (tw, _) = text_size(40.0, "HxH").unwrap();
        assert_eq!(tw, width.ceil() as u32);
    }
}
