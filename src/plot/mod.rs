//! Drawing code shared by the browser canvas and SVG export.
//!
//! Every function here is generic over a plotters `DrawingBackend`, so the
//! same code draws to a `<canvas>` (plotters-canvas, in `web`) and to an SVG
//! string (native CLI and the browser's SVG export). Pixel sizes are
//! multiplied by `scale` so that canvases sized at CSS × devicePixelRatio
//! stay sharp on high-DPI screens.

pub mod palette;
pub mod spectrum;

/// A drawing failed in the backend (the message comes from plotters).
#[derive(Debug, Clone, PartialEq)]
pub struct PlotError(pub String);

impl std::fmt::Display for PlotError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "the figure could not be drawn: {}", self.0)
    }
}

impl std::error::Error for PlotError {}

impl<E: std::error::Error + Send + Sync> From<plotters::drawing::DrawingAreaErrorKind<E>>
    for PlotError
{
    fn from(e: plotters::drawing::DrawingAreaErrorKind<E>) -> Self {
        PlotError(e.to_string())
    }
}
