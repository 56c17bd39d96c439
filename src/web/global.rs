//! Facade over the global fit (`analysis::fit_globally`): the spectrum of an
//! analysed document fitted with the ligand-field model itself, in the worker.

use super::{from_js, to_js};
use crate::analysis::{self, document::Document};
use wasm_bindgen::prelude::*;

/// The global fit of an analysed document (its results as they stand; the
/// document's global options or the defaults). Returns the document with
/// `results.global` and `ligand_field.global` set. `progress` is called with
/// the iteration number; returning false cancels.
#[wasm_bindgen]
pub fn global_fit_document(doc: JsValue, progress: &js_sys::Function) -> Result<JsValue, JsError> {
    let doc: Document = from_js(doc, "the analysis document")?;
    let mut report = |p: crate::bands::Progress| {
        progress
            .call1(&JsValue::NULL, &JsValue::from_f64(p.iteration as f64))
            .map_or(true, |v| v.as_bool() != Some(false))
    };
    let done = analysis::fit_globally(&doc, None, &mut report)
        .map_err(|e| JsError::new(&e.to_string()))?;
    to_js(&done)
}
