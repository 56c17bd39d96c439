//! Every figure ddlens draws: the spectrum figure, the energy-level
//! (Tanabe–Sugano-type) diagram and the Δ/β series plot, with their shared
//! colours and line styles in [`style`] and one error type, [`FigureError`].
//!
//! Every function here is generic over a plotters `DrawingBackend`, so the
//! same code draws to a `<canvas>` (plotters-canvas, in `web`) and to an SVG
//! string (native CLI and the browser's SVG export). Pixel sizes are
//! multiplied by `scale` so that canvases sized at CSS × devicePixelRatio
//! stay sharp on high-DPI screens.
//!
//! Axis ranges are checked at each figure's entry point ([`axis_range`]):
//! a range whose ends are not finite, or lie beyond ±[`MAX_AXIS_MAGNITUDE`],
//! is refused, so tick placement (ours and plotters') never sees a span that
//! overflows.

pub mod diagram;
pub mod series;
pub mod spectrum;
pub mod style;

use std::fmt;

/// Largest axis end a figure accepts. Wavenumbers, absorbances and
/// molar absorption coefficients are far inside it; past it, a span
/// computed from two ends can overflow (common practice: keep
/// plotting ranges well inside the f64 range).
pub const MAX_AXIS_MAGNITUDE: f64 = 1e15;

/// Why a figure could not be drawn.
#[derive(Debug, Clone, PartialEq)]
pub enum FigureError {
    /// The series plot was given no sample with a finite Δ.
    NothingToCompare,
    /// An axis range (given or taken from the data) is not drawable.
    AxisRange(&'static str),
    /// The drawing backend failed (the message comes from plotters).
    Drawing(String),
}

impl fmt::Display for FigureError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FigureError::NothingToCompare => {
                f.write_str("no sample has a ligand-field result to compare")
            }
            FigureError::AxisRange(axis) => write!(
                f,
                "the {axis} axis cannot be drawn: its ends must be finite numbers within ±{MAX_AXIS_MAGNITUDE:e}"
            ),
            FigureError::Drawing(m) => write!(f, "the figure could not be drawn: {m}"),
        }
    }
}

impl std::error::Error for FigureError {}

impl<E: std::error::Error + Send + Sync> From<plotters::drawing::DrawingAreaErrorKind<E>>
    for FigureError
{
    fn from(e: plotters::drawing::DrawingAreaErrorKind<E>) -> Self {
        FigureError::Drawing(e.to_string())
    }
}

/// A drawable axis range from two ends in any order: refused when an end is
/// not finite or beyond ±[`MAX_AXIS_MAGNITUDE`]; an empty or vanishing span
/// is widened around its value.
pub fn axis_range(lo: f64, hi: f64, axis: &'static str) -> Result<[f64; 2], FigureError> {
    // Checked before ordering: f64::min and max drop a NaN end silently.
    if !(lo.is_finite() && hi.is_finite()) {
        return Err(FigureError::AxisRange(axis));
    }
    let (lo, hi) = (lo.min(hi), lo.max(hi));
    if lo.abs() > MAX_AXIS_MAGNITUDE || hi.abs() > MAX_AXIS_MAGNITUDE {
        return Err(FigureError::AxisRange(axis));
    }
    // Narrower than ~1e-9 of its magnitude, tick labels could not tell ends apart.
    let magnitude = hi.abs().max(lo.abs()).max(1.0);
    if hi - lo <= 1e-9 * magnitude {
        return Ok([lo - 0.5 * magnitude, hi + 0.5 * magnitude]);
    }
    Ok([lo, hi])
}

/// Scales a pixel size by `scale` (1 when `scale` is not a positive number).
pub(crate) fn pixel_scale(scale: f64) -> f64 {
    if scale.is_finite() && scale > 0.0 {
        scale
    } else {
        1.0
    }
}

/// A length of `css` CSS pixels on a canvas `scale` times denser, in whole
/// backend pixels and never less than one (`as` saturates a huge value).
pub(crate) fn pixels(css: f64, scale: f64) -> u32 {
    (css * scale).round().max(1.0) as u32
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_range_past_the_largest_magnitude_is_refused() {
        assert_eq!(
            axis_range(-1e308, 1e308, "x"),
            Err(FigureError::AxisRange("x"))
        );
        assert_eq!(
            axis_range(0.0, f64::INFINITY, "y"),
            Err(FigureError::AxisRange("y"))
        );
        assert!(axis_range(f64::NAN, 1.0, "y").is_err());
    }

    #[test]
    // Exact comparison meant: ordering two ends returns them unchanged.
    #[allow(clippy::float_cmp)]
    fn an_empty_range_is_widened_around_its_value() {
        let [lo, hi] = axis_range(2.0, 2.0, "y").unwrap();
        assert!(lo < 2.0 && hi > 2.0);
        assert_eq!(axis_range(3.0, 1.0, "x").unwrap(), [1.0, 3.0]);
    }

    #[test]
    fn an_axis_error_reads_as_a_sentence_without_numbers_from_the_data() {
        let text = FigureError::AxisRange("wavenumber").to_string();
        assert!(text.starts_with("the wavenumber axis cannot be drawn"));
        assert!(!text.contains("NaN") && !text.contains("inf"));
    }
}
