//! Facade for the ligand-field side: ions, levels, the whole-pipeline
//! analysis, the assignment fit and the energy-level diagram.

use super::{from_js, to_js};
use crate::analysis::{self, Document};
use crate::figures::diagram::{draw_diagram, DiagramStyle};
use crate::figures::series::{draw_series, series_svg, SeriesPoint};
use crate::ligand_field::{self, Geometry, Params};
use plotters::prelude::IntoDrawingArea;
use plotters_canvas::CanvasBackend;
use serde::Deserialize;
use wasm_bindgen::prelude::*;
use web_sys::HtmlCanvasElement;

fn geometry(text: &str) -> Result<Geometry, JsError> {
    text.parse()
        .map_err(|e: ligand_field::LfError| JsError::new(&e.to_string()))
}

/// Every ion of the table with its dⁿ and free-ion parameters (and their sources).
#[wasm_bindgen]
pub fn ions() -> Result<JsValue, JsError> {
    to_js(&crate::ions::all_ions())
}

/// Jørgensen's ligand table (f and h).
#[wasm_bindgen]
pub fn ligands() -> Result<JsValue, JsError> {
    to_js(&crate::ions::all_ligands())
}

/// All levels of dⁿ at (Dq, B, C), lowest first.
#[wasm_bindgen]
pub fn levels(n: u8, geometry_name: &str, dq: f64, b: f64, c: f64) -> Result<JsValue, JsError> {
    let m = ligand_field::model(n, geometry(geometry_name)?)?;
    to_js(&m.levels(&Params { dq, b, c })?)
}

/// Analyses a document (the same function as `ddlens analyze`): returns it
/// with its results.
#[wasm_bindgen]
pub fn analyze(document: JsValue) -> Result<JsValue, JsError> {
    let doc: Document = from_js(document, "the analysis document")?;
    to_js(&analysis::analyze(&doc, &mut |_| true)?)
}

/// Every default the page needs (`analysis::defaults::Defaults`).
#[wasm_bindgen]
pub fn defaults() -> Result<JsValue, JsError> {
    to_js(&analysis::defaults::Defaults::get())
}

/// The assignment search and fit for given band maxima (after the user edits the assignment).
#[wasm_bindgen]
pub fn fit_ligand_field(request: JsValue) -> Result<JsValue, JsError> {
    let req: crate::lf_fit::FitRequest = from_js(request, "the fit request")?;
    to_js(&crate::lf_fit::fit(&req)?)
}

/// What the page asks a diagram for.
#[derive(Deserialize)]
struct DiagramRequest {
    n: u8,
    geometry: String,
    c_over_b: f64,
    max_delta_over_b: f64,
    /// The fitted (or what-if) Δ/B, drawn as a vertical line.
    #[serde(default)]
    fitted: Option<f64>,
    /// Observed bands as (Δ/B, E/B).
    #[serde(default)]
    observed: Vec<[f64; 2]>,
}

fn diagram_and_style(
    request: JsValue,
    scale: f64,
) -> Result<(ligand_field::Diagram, DiagramStyle), JsError> {
    let r: DiagramRequest = from_js(request, "the diagram request")?;
    let d = ligand_field::diagram(
        r.n,
        geometry(&r.geometry)?,
        r.c_over_b,
        r.max_delta_over_b,
        300,
    )?;
    Ok((
        d,
        DiagramStyle {
            scale,
            fitted_delta_over_b: r.fitted,
            observed: r.observed,
            ..DiagramStyle::default()
        },
    ))
}

/// Draws the energy-level diagram (E/B against Δ/B) on a canvas sized CSS × `scale`;
/// returns its frame (plot area in canvas pixels and the Δ/B and E/B ranges) for read-outs.
#[wasm_bindgen]
pub fn draw_level_diagram(
    canvas: HtmlCanvasElement,
    request: JsValue,
    scale: f64,
) -> Result<JsValue, JsError> {
    let (d, style) = diagram_and_style(request, scale.clamp(0.5, 8.0))?;
    let backend = CanvasBackend::with_canvas_object(canvas)
        .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
    to_js(&draw_diagram(&backend.into_drawing_area(), &d, &style)?)
}

/// The same diagram as an SVG document.
#[wasm_bindgen]
pub fn level_diagram_svg(request: JsValue) -> Result<String, JsError> {
    let (d, style) = diagram_and_style(request, 1.0)?;
    let mut out = String::new();
    {
        let root =
            plotters::prelude::SVGBackend::with_string(&mut out, (900, 700)).into_drawing_area();
        draw_diagram(&root, &d, &style)?;
    }
    Ok(out)
}

/// Δ and β across samples (`figures::series::draw_series`) on a canvas sized CSS × `scale`.
#[wasm_bindgen]
pub fn draw_series_plot(
    canvas: HtmlCanvasElement,
    points: JsValue,
    scale: f64,
) -> Result<(), JsError> {
    let points: Vec<SeriesPoint> = from_js(points, "the series")?;
    let backend = CanvasBackend::with_canvas_object(canvas)
        .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
    Ok(draw_series(
        &backend.into_drawing_area(),
        &points,
        scale.clamp(0.5, 8.0),
    )?)
}

/// The same figure as an SVG document.
#[wasm_bindgen]
pub fn series_plot_svg(points: JsValue) -> Result<String, JsError> {
    let points: Vec<SeriesPoint> = from_js(points, "the series")?;
    Ok(series_svg(&points, 720, 480)?)
}
