//! The browser facade: the only code compiled with wasm-bindgen.
//!
//! Every export is a thin wrapper: it converts JS values with
//! serde-wasm-bindgen, calls a pure function of the core and converts the
//! result back. Errors become JS `Error`s whose message is the core error's
//! plain sentence. Plotting runs on the main thread (plotters measures text
//! through the DOM); heavy computation runs in the worker's own instance.

mod document;
mod global;
mod ligand;

use crate::figures::spectrum::{self as spectrum_plot, SpectrumFigure};
use plotters::prelude::IntoDrawingArea;
use plotters_canvas::CanvasBackend;
use serde::Serialize;
use wasm_bindgen::prelude::*;
use web_sys::HtmlCanvasElement;

/// Sends Rust panics to the console with their message instead of "unreachable".
#[wasm_bindgen(start)]
pub fn start() {
    std::panic::set_hook(Box::new(|info| {
        web_sys::console::error_1(&JsValue::from_str(&format!(
            "ddlens internal error: {info}"
        )));
    }));
}

/// The program version.
#[wasm_bindgen]
pub fn version() -> String {
    crate::VERSION.to_string()
}

/// The built-in demo spectrum file (an invented sample; see fixtures/demo/README.md).
#[wasm_bindgen]
pub fn demo_file() -> String {
    include_str!("../../fixtures/demo/demo-crx7.csv").to_string()
}

fn to_js<T: Serialize>(value: &T) -> Result<JsValue, JsError> {
    let ser = serde_wasm_bindgen::Serializer::json_compatible();
    value
        .serialize(&ser)
        .map_err(|e| JsError::new(&e.to_string()))
}

fn from_js<T: serde::de::DeserializeOwned>(value: JsValue, what: &str) -> Result<T, JsError> {
    serde_wasm_bindgen::from_value(value)
        .map_err(|e| JsError::new(&format!("{what} is malformed: {e}")))
}

/// Draws a spectrum figure on a canvas whose pixel size is already CSS size × `scale`;
/// returns the plot frame (pixel ↔ data mapping) for mouse read-outs.
///
/// The curves travel apart from the description, packed in `data` (each line,
/// then each residual line: its x values, then its y values) with one length
/// per curve in `lengths`: a typed array is copied into wasm in one step,
/// where a JS array would be converted number by number.
#[wasm_bindgen]
pub fn draw_spectrum(
    canvas: HtmlCanvasElement,
    figure: JsValue,
    data: &[f64],
    lengths: &[u32],
    scale: f64,
) -> Result<JsValue, JsError> {
    let mut fig: SpectrumFigure = from_js(figure, "the figure description")?;
    unpack_curves(&mut fig, data, lengths)?;
    let backend = CanvasBackend::with_canvas_object(canvas)
        .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
    let frame = spectrum_plot::draw(&backend.into_drawing_area(), &fig, scale.clamp(0.5, 8.0))?;
    to_js(&frame)
}

/// Fills the lines' x and y from the packed curve data of [`draw_spectrum`].
fn unpack_curves(fig: &mut SpectrumFigure, data: &[f64], lengths: &[u32]) -> Result<(), JsError> {
    let curves = fig.lines.iter_mut().chain(fig.residuals.iter_mut());
    let mut rest = data;
    let mut count = 0;
    for (line, &n) in curves.zip(lengths) {
        let n = n as usize;
        if rest.len() < 2 * n {
            break;
        }
        let (xy, tail) = rest.split_at(2 * n);
        line.x = xy[..n].to_vec();
        line.y = xy[n..].to_vec();
        rest = tail;
        count += 1;
    }
    if count != fig.lines.len() + fig.residuals.len() || !rest.is_empty() {
        return Err(JsError::new(
            "the figure's packed curves do not match its lines",
        ));
    }
    Ok(())
}

/// The same figure as an SVG document.
#[wasm_bindgen]
pub fn spectrum_svg(figure: JsValue, width: u32, height: u32) -> Result<String, JsError> {
    let fig: SpectrumFigure = from_js(figure, "the figure description")?;
    Ok(spectrum_plot::to_svg(&fig, width, height)?)
}

/// Reads a spectrum file (`spectrum::import`); `options` is an `ImportOptions`
/// object or null. Errors carry the importer's sentence ("line 7: …").
#[wasm_bindgen]
pub fn import_spectrum(
    bytes: &[u8],
    file_name: &str,
    options: JsValue,
) -> Result<JsValue, JsError> {
    let opts: crate::spectrum::ImportOptions = if options.is_null() || options.is_undefined() {
        crate::spectrum::ImportOptions::default()
    } else {
        from_js(options, "the import settings")?
    };
    let report = crate::spectrum::import(bytes, file_name, &opts)
        .map_err(|e| JsError::new(&e.to_string()))?;
    to_js(&report)
}

/// Baseline under (x, y) by one of the core's methods
/// (`preprocess::baseline`); `method` is a `BaselineMethod`.
#[wasm_bindgen]
pub fn baseline(x: &[f64], y: &[f64], method: JsValue) -> Result<Vec<f64>, JsError> {
    let method: crate::preprocess::BaselineMethod = from_js(method, "the baseline method")?;
    crate::preprocess::baseline(x, y, &method).map_err(|e| JsError::new(&e.to_string()))
}

/// Bands at their given values (`BandSpec` list) plus a fitted baseline
/// (`BaselineResult` or null) on x, for redrawing bands while they are edited.
/// Returns one Float64Array (copied out in one step): the total on x, then
/// each band's component on x, in the order of `bands`.
#[wasm_bindgen]
pub fn evaluate_bands(x: &[f64], bands: JsValue, baseline: JsValue) -> Result<Vec<f64>, JsError> {
    let bands: Vec<crate::bands::BandSpec> = from_js(bands, "the bands")?;
    let baseline: Option<crate::bands::BaselineResult> = from_js(baseline, "the baseline")?;
    let (total, components, _) = crate::bands::evaluate_bands(x, &bands, baseline.as_ref());
    Ok(total
        .into_iter()
        .chain(components.into_iter().flatten())
        .collect())
}
