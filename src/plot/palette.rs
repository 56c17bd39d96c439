//! Colours: the Okabe–Ito colour-blind-safe palette (Okabe & Ito, "Color
//! Universal Design", 2008), used for samples and band components.

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
