//! Facade over the analysis document (`analysis::document`): the page hands
//! the core whole documents and projects, and every rule about them —
//! cleaning, analysis, validation, the schema, defaults and the way numbers
//! are written — stays in the core.
//!
//! - [`analyze_document`]: `analysis::analyze` on one document (the function
//!   `ddlens analyze --project` runs), with progress and cancellation;
//! - [`apply_steps`]: a sample's cleaning steps on its imported data;
//! - [`new_document`]: a blank document around an imported sample;
//! - [`project_from_json`] / [`project_to_json`]: project files, autosave and
//!   share links, validated and written by the core;
//! - [`defaults`]: every default the page shows or sends;
//! - [`format_estimate`]: a value with its σ as the engine writes it;
//! - [`csv_cell`]: one text cell of the page's CSV exports (`spectrum::csv::text_cell`).

use super::{from_js, to_js};
use crate::analysis::{self, defaults::Defaults, document};
use crate::bands::BaselineModel;
use crate::estimate::Estimate;
use crate::preprocess::{self, Step};
use crate::spectrum::{Spectrum, Warning, XUnit};
use serde::Serialize;
use wasm_bindgen::prelude::*;

/// Analyses a document (`analysis::analyze`): data → cleaning steps → the
/// band model on screen (or the automatic deconvolution) → assignment and
/// ligand-field fit. Returns the document with its results. `progress` is
/// called with the iteration number; returning false cancels.
#[wasm_bindgen]
pub fn analyze_document(doc: JsValue, progress: &js_sys::Function) -> Result<JsValue, JsError> {
    let doc: document::Document = from_js(doc, "the analysis document")?;
    let mut report = |p: crate::bands::Progress| {
        progress
            .call1(&JsValue::NULL, &JsValue::from_f64(p.iteration as f64))
            .map_or(true, |v| v.as_bool() != Some(false))
    };
    let done = analysis::analyze(&doc, &mut report).map_err(|e| JsError::new(&e.to_string()))?;
    to_js(&done)
}

/// The cleaned spectrum the page draws.
#[derive(Serialize)]
struct Cleaned {
    wavenumber: Vec<f64>,
    values: Vec<f64>,
    warnings: Vec<Warning>,
}

/// Applies cleaning steps (`preprocess::apply_steps`) to a sample's imported
/// data (`SampleData`); returns `{wavenumber, values, warnings}`.
#[wasm_bindgen]
pub fn apply_steps(data: JsValue, steps: JsValue) -> Result<JsValue, JsError> {
    let data: document::SampleData = from_js(data, "the sample's data")?;
    let steps: Vec<Step> = from_js(steps, "the cleaning steps")?;
    let spectrum = Spectrum {
        name: String::new(),
        wavenumber: data.wavenumber,
        values: data.values,
        quantity: data.quantity,
        x_unit_read: XUnit::Wavenumber,
        saturated: data.saturated,
        metadata: std::collections::BTreeMap::default(),
        warnings: Vec::new(),
    };
    let (out, warnings) =
        preprocess::apply_steps(&spectrum, &steps).map_err(|e| JsError::new(&e.to_string()))?;
    to_js(&Cleaned {
        wavenumber: out.wavenumber,
        values: out.values,
        warnings,
    })
}

/// A blank document (the engine's default band setup, no steps, no
/// ligand-field options) around an imported sample.
#[wasm_bindgen]
pub fn new_document(sample: JsValue) -> Result<JsValue, JsError> {
    let sample: document::Sample = from_js(sample, "the sample")?;
    to_js(&document::Document {
        sample,
        steps: Vec::new(),
        bands: document::BandSetup::default(),
        ligand_field: None,
        results: None,
        program: String::new(),
        notices: Vec::new(),
    })
}

/// What [`project_from_json`] returns.
#[derive(Serialize)]
struct Loaded {
    project: document::Project,
    notices: Vec<String>,
}

/// Reads a project file, autosave or share link (`Project::from_json`):
/// validated completely, wave-1 files migrated with notices. Returns the JSON
/// text of `{project, notices}` (the page parses it natively, far faster than
/// a value-by-value conversion of the spectra). Errors are the core's
/// sentence naming the field.
#[wasm_bindgen]
pub fn project_from_json(text: &str) -> Result<String, JsError> {
    let (project, notices) =
        document::Project::from_json(text).map_err(|e| JsError::new(&e.to_string()))?;
    serde_json::to_string(&Loaded { project, notices }).map_err(|e| JsError::new(&e.to_string()))
}

/// Writes the page's workspace (the JSON text of a `Project`, as
/// `JSON.stringify` gives it, with the schema of `defaults()`) as a project
/// file (`Project::to_json`).
#[wasm_bindgen]
pub fn project_to_json(text: &str) -> Result<String, JsError> {
    let project: document::Project = serde_json::from_str(text)
        .map_err(|e| JsError::new(&format!("the project is malformed: {e}")))?;
    Ok(project.to_json())
}

/// The most bytes a share link may inflate to, 64 MiB (the figure issue 20
/// names): a link is at most a few MiB of text in any browser, and deflate
/// expands at most about 1 032 : 1 (from memory), so a larger output is a decompression
/// bomb, not a project. The page counts bytes while inflating and stops here.
pub const MAX_LINK_TEXT: usize = 64 << 20;

/// The page's defaults: the engine's (`analysis::defaults`) plus what the
/// page's read-outs and band editing use.
#[derive(Serialize)]
struct PageDefaults {
    #[serde(flatten)]
    engine: Defaults,
    /// cm⁻¹ per eV (`spectrum::units`), for the plot's read-out.
    wavenumber_per_ev: f64,
    /// The baseline under a band model the user builds without a fit
    /// (`BaselineModel`'s default).
    refit_baseline: BaselineModel,
    /// B, cm⁻¹, that scales the diagram and the what-if levels when a fit has
    /// none (d¹, d⁹): their levels do not depend on B, so any positive value
    /// draws the same diagram; 1000 is a round scale, not a measured value.
    b_stand_in: f64,
    /// The highest energy the what-if predictions list, cm⁻¹ (the fit's default).
    max_prediction: f64,
    /// The most bytes a share link may inflate to ([`MAX_LINK_TEXT`]).
    max_link_bytes: usize,
}

/// Every default the page shows or sends, defined once in the core.
#[wasm_bindgen]
pub fn defaults() -> Result<JsValue, JsError> {
    to_js(&PageDefaults {
        engine: Defaults::get(),
        wavenumber_per_ev: crate::spectrum::units::WAVENUMBER_PER_EV,
        refit_baseline: BaselineModel::default(),
        b_stand_in: 1000.0,
        max_prediction: crate::lf_fit::DEFAULT_MAX_PREDICTION,
        max_link_bytes: MAX_LINK_TEXT,
    })
}

/// A value with its σ (or none) as the engine writes it: `Estimate`'s
/// rounding, digit groups of thin spaces; a dash for a non-finite value;
/// `determined: false` (an `Estimate`'s field; absent means true) writes it
/// as held.
#[wasm_bindgen]
pub fn format_estimate(value: f64, sigma: Option<f64>, determined: Option<bool>) -> String {
    let e = match sigma {
        _ if determined == Some(false) => Estimate::held(value),
        Some(s) => Estimate::new(value, s),
        None => Estimate::exact(value),
    };
    e.grouped()
}

/// One text cell of a CSV export (`spectrum::csv::text_cell`): a cell that a
/// spreadsheet would read as a formula (`= + - @`) gets a leading `'`, and
/// a cell with a comma, quote or line break is quoted.
#[wasm_bindgen]
pub fn csv_cell(text: &str) -> String {
    crate::spectrum::csv::text_cell(text)
}
