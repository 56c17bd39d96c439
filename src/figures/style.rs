//! Colours and line styles shared by every figure (one place): the
//! Okabe–Ito colour-blind-safe palette (Okabe & Ito, "Color Universal
//! Design", 2008) for samples and band components, the ink and grid of the
//! axes, and the spin-multiplicity colours of the energy-level diagram.

use plotters::style::RGBColor;

/// Okabe–Ito colours without black, in the order samples take them.
pub const SERIES: [RGBColor; 7] = [
    RGBColor(0, 114, 178),   // blue
    RGBColor(213, 94, 0),    // vermillion
    RGBColor(0, 158, 115),   // bluish green
    RGBColor(204, 121, 167), // reddish purple
    RGBColor(230, 159, 0),   // orange
    RGBColor(86, 180, 233),  // sky blue
    RGBColor(240, 228, 66),  // yellow
];

/// Axis and text colour (passes WCAG AA on white).
pub const INK: RGBColor = RGBColor(34, 34, 34);
/// Grid lines.
pub const GRID: RGBColor = RGBColor(225, 225, 225);

/// Predicted-transition markers and their ± spans (Okabe–Ito reddish purple).
pub const MARKER: RGBColor = SERIES[3];
/// Fitted values and observed points on the diagram (Okabe–Ito vermillion).
pub const ACCENT: RGBColor = SERIES[1];
/// Shaded (flagged) x spans, drawn at [`SHADE_ALPHA`].
pub const SHADE: RGBColor = RGBColor(120, 120, 120);
/// Opacity of shaded spans.
pub const SHADE_ALPHA: f64 = 0.18;
/// Dash and gap lengths of dashed lines, CSS pixels.
pub const DASH: (f64, f64) = (6.0, 4.0);

/// Colour of a diagram curve by its spin multiplicity (1…6).
pub fn multiplicity(multiplicity: u8) -> RGBColor {
    match multiplicity {
        1 => RGBColor(120, 120, 120),
        2 => RGBColor(31, 119, 180),
        3 => RGBColor(214, 39, 40),
        4 => RGBColor(44, 160, 44),
        5 => RGBColor(148, 103, 189),
        _ => RGBColor(255, 127, 14),
    }
}

/// The colour of series number `i`, cycling through the palette.
pub fn series(i: usize) -> RGBColor {
    SERIES[i % SERIES.len()]
}

/// Parses `#rrggbb`; falls back to the first palette colour.
pub fn parse_hex(text: &str) -> RGBColor {
    let t = text.trim().trim_start_matches('#');
    if t.len() == 6 {
        if let Ok(v) = u32::from_str_radix(t, 16) {
            return RGBColor((v >> 16) as u8, (v >> 8) as u8, v as u8);
        }
    }
    SERIES[0]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hex_colours_parse_and_bad_ones_fall_back() {
        assert_eq!(parse_hex("#d55e00"), RGBColor(213, 94, 0));
        assert_eq!(parse_hex("nonsense"), SERIES[0]);
        assert_eq!(series(7), SERIES[0]);
    }
}
