//! The browser facade: the only code compiled with wasm-bindgen.
//!
//! Every export is a thin wrapper: it converts JS values with
//! serde-wasm-bindgen, calls a pure function of the core and converts the
//! result back. Errors become JS `Error`s whose message is the core error's
//! plain sentence. Plotting runs on the main thread (plotters measures text
//! through the DOM); heavy computation runs in the worker's own instance.

mod ligand;

use crate::plot::spectrum::{self as spectrum_plot, SpectrumFigure};
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
#[wasm_bindgen]
pub fn draw_spectrum(
    canvas: HtmlCanvasElement,
    figure: JsValue,
    scale: f64,
) -> Result<JsValue, JsError> {
    let fig: SpectrumFigure = from_js(figure, "the figure description")?;
    let backend = CanvasBackend::with_canvas_object(canvas)
        .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
    let frame = spectrum_plot::draw(&backend.into_drawing_area(), &fig, scale.clamp(0.5, 8.0))?;
    to_js(&frame)
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
        Default::default()
    } else {
        from_js(options, "the import settings")?
    };
    let report = crate::spectrum::import(bytes, file_name, &opts)
        .map_err(|e| JsError::new(&e.to_string()))?;
    to_js(&report)
}

/// Savitzky–Golay smoothing (`spectrum::preprocess::savgol`, derivative 0).
#[wasm_bindgen]
pub fn smooth_savgol(y: &[f64], window: usize, order: usize) -> Result<Vec<f64>, JsError> {
    crate::spectrum::preprocess::savgol(y, window, order, 0)
        .map_err(|e| JsError::new(&e.to_string()))
}

/// Starting bands for (x, y) (`bands::guess`); `n` = 0 lets the core choose.
#[wasm_bindgen]
pub fn guess_bands(x: &[f64], y: &[f64], n: usize) -> Result<JsValue, JsError> {
    to_js(&crate::bands::guess(x, y, (n > 0).then_some(n)))
}

/// What the page needs after a band fit: the fit and its curves on x.
#[derive(Serialize)]
struct FitView {
    fit: crate::bands::BandFit,
    total: Vec<f64>,
    components: Vec<Vec<f64>>,
    baseline: Vec<f64>,
}

/// Fits a band model (`bands::fit`, default options) and evaluates it on x.
/// `progress` is called with the iteration number; returning false cancels.
#[wasm_bindgen]
pub fn fit_bands(
    x: &[f64],
    y: &[f64],
    model: JsValue,
    progress: &js_sys::Function,
) -> Result<JsValue, JsError> {
    let model: crate::bands::BandModel = from_js(model, "the band model")?;
    let mut report = |p: crate::bands::Progress| {
        progress
            .call1(&JsValue::NULL, &JsValue::from_f64(p.iteration as f64))
            .map(|v| v.as_bool() != Some(false))
            .unwrap_or(true)
    };
    let fit = crate::bands::fit(x, y, None, &model, &Default::default(), &mut report)
        .map_err(|e| JsError::new(&e.to_string()))?;
    let (total, components, baseline) = crate::bands::evaluate(x, &fit);
    to_js(&FitView {
        fit,
        total,
        components,
        baseline,
    })
}
