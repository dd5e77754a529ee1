//! Shared look of every plot: the colour-blind-safe palette, text sizes, the
//! bundled font and compact number formatting for tick labels.

use plotters::style::{FontStyle, RGBColor};
use std::sync::Once;

/// Bundled font so PNG text never depends on fonts installed on the machine.
pub(crate) static FONT_BYTES: &[u8] = include_bytes!("../fonts/DejaVuSans.ttf");

/// Family name under which the bundled font is registered; SVG viewers fall
/// back to their own sans-serif face when they render the `<text>` elements.
pub const FAMILY: &str = "sans-serif";

static REGISTER: Once = Once::new();

/// Registers the bundled font with plotters once per process, before any drawing.
pub fn ensure_font() {
    REGISTER.call_once(|| {
        // A failure here only means text measurement is unavailable; drawing
        // then reports an error instead of panicking.
        let _ = plotters::style::register_font(FAMILY, FontStyle::Normal, FONT_BYTES);
    });
}

// Palette: Okabe & Ito (2008), "Color Universal Design", a set of colours
// distinguishable under the common forms of colour-vision deficiency.
/// Data points.
pub const POINTS: RGBColor = RGBColor(0x00, 0x72, 0xB2);
/// Plateau (horizontal) lines.
pub const PLATEAU: RGBColor = RGBColor(0x00, 0x9E, 0x73);
/// Fitted straight pieces.
pub const SEGMENT: RGBColor = RGBColor(0xE6, 0x9F, 0x00);
/// Intercept and peak markers.
pub const MARKER: RGBColor = RGBColor(0xD5, 0x5E, 0x00);
/// Solid curves, in turn.
pub const CURVES: [RGBColor; 3] = [
    RGBColor(0x00, 0x00, 0x00),
    RGBColor(0xCC, 0x79, 0xA7),
    RGBColor(0x56, 0xB4, 0xE9),
];
/// Dashed curves (starting curves), in turn.
pub const DASHED: [RGBColor; 2] = [RGBColor(0xD5, 0x5E, 0x00), RGBColor(0xCC, 0x79, 0xA7)];
/// Text and frames.
pub const INK: RGBColor = RGBColor(0x22, 0x22, 0x22);
/// Muted text (notes, empty-panel messages).
pub const MUTED: RGBColor = RGBColor(0x66, 0x66, 0x66);
/// Light grid lines.
pub const GRID: RGBColor = RGBColor(0xE4, 0xE4, 0xE4);

/// Panel title size in pixels.
pub const TITLE_PX: u32 = 17;
/// Axis description size in pixels.
pub const AXIS_PX: u32 = 15;
/// Tick label and inline label size in pixels.
pub const LABEL_PX: u32 = 13;

/// Formats a tick or label value compactly: at most four significant digits,
/// scientific notation outside [1e-3, 1e5), no trailing zeros.
pub fn format_num(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    let a = v.abs();
    if a < 1e-300 {
        return "0".to_string();
    }
    if (1e-3..1e5).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
        let s = format!("{v:.decimals$}");
        let s = if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        };
        if s == "-0" {
            "0".to_string()
        } else {
            s
        }
    } else {
        let s = format!("{v:.3e}");
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') {
                    m.trim_end_matches('0').trim_end_matches('.')
                } else {
                    m
                };
                format!("{m}e{e}")
            }
            None => s,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::format_num;

    #[test]
    fn numbers_are_compact() {
        assert_eq!(format_num(0.0), "0");
        assert_eq!(format_num(0.30000000000000004), "0.3");
        assert_eq!(format_num(1234.5678), "1235");
        assert_eq!(format_num(-2.5), "-2.5");
        assert_eq!(format_num(1.5e7), "1.5e7");
        assert_eq!(format_num(2.0e-5), "2e-5");
        assert_eq!(format_num(-1e-301), "0");
    }
}
