//! Schema 1 → schema 2: the page's first project files (written by its
//! `projectDoc()`: one flat record per sample with the page's own field
//! names, the cleaning as a `processing` record, the ligand-field panel's
//! controls as strings) become documents.

use super::document::SCHEMA;
use super::load::finite_list;
use super::DocumentError;
use serde_json::{json, Value};

/// The schema-2 value of a schema-1 project; `notices` say what changed.
pub fn from_schema_1(v: &Value, notices: &mut Vec<String>) -> Result<Value, DocumentError> {
    let program = v
        .get("program")
        .and_then(Value::as_str)
        .unwrap_or("an earlier ddlens");
    notices.push(format!(
        "this project was saved in schema 1 (by {program}) and was read as schema {SCHEMA}; its analyses are recomputed"
    ));
    let Some(samples) = v.get("samples").and_then(Value::as_array) else {
        return Err(DocumentError::field("samples", "is missing or not a list"));
    };
    let bands = v.get("bands").cloned().unwrap_or(Value::Null);
    let mut docs = Vec::new();
    for (i, s) in samples.iter().enumerate() {
        // An older page kept one `ligand_field` for one sample at the top level.
        let lf = match s.get("ligand_field") {
            Some(lf) if !lf.is_null() => Some(lf),
            _ => v
                .get("ligand_field")
                .filter(|lf| lf.get("sample").and_then(Value::as_u64) == Some(i as u64)),
        };
        docs.push(sample(s, lf, &bands, &format!("samples[{i}]"), notices)?);
    }
    let selected = v
        .get("selected")
        .and_then(Value::as_i64)
        .filter(|&i| i >= 0);
    let view = v.get("view").cloned().unwrap_or(Value::Null);
    Ok(json!({
        "ddlens_project": SCHEMA,
        "program": program,
        "saved": v.get("saved").cloned().unwrap_or(Value::Null),
        "samples": docs,
        "active": selected.filter(|&i| (i as usize) < samples.len()),
        "page": {
            "view": {
                "x": view.get("x").cloned().unwrap_or(Value::Null),
                "y": view.get("y").cloned().unwrap_or(Value::Null),
                "nm_bottom": view.get("nmBottom").and_then(Value::as_bool).unwrap_or(false),
                "y_mode": view.get("yMode").and_then(Value::as_str).unwrap_or("a"),
            },
            "series_sort": v.get("series_sort").cloned().unwrap_or(json!({})),
        },
    }))
}

/// One schema-1 sample as a schema-2 document.
fn sample(
    s: &Value,
    lf: Option<&Value>,
    bands: &Value,
    at: &str,
    notices: &mut Vec<String>,
) -> Result<Value, DocumentError> {
    let processing = s.get("processing").filter(|p| !p.is_null());
    // A cleaned sample kept the file's data as `raw`; an uncleaned one only its data.
    let (data, data_at) = match (processing, s.get("raw")) {
        (Some(_), Some(raw)) => (raw, format!("{at}.raw")),
        _ => (s, at.to_string()),
    };
    for key in ["wavenumber", "values"] {
        finite_list(data.get(key), &format!("{data_at}.{key}"))?;
    }
    let controls = lf.and_then(|l| l.get("controls"));
    let text = |v: Option<&Value>, k: &str| {
        v.and_then(|c| c.get(k))
            .and_then(Value::as_str)
            .map(str::to_string)
    };
    let flag = |k: &str| {
        controls
            .and_then(|c| c.get(k))
            .and_then(Value::as_bool)
            .unwrap_or(false)
    };
    let count_text = text(controls, "band_count").or_else(|| text(Some(bands), "count"));
    let count = match count_text
        .as_deref()
        .map(str::trim)
        .and_then(|t| t.parse::<usize>().ok())
    {
        Some(n) if n > 0 => json!({ "fixed": n }),
        _ => json!({ "auto": super::defaults::AUTO_BANDS }),
    };
    let shape = text(controls, "shape")
        .or_else(|| text(Some(bands), "shape"))
        .filter(|t| !t.is_empty())
        .unwrap_or_else(|| "gaussian".into());
    let choices = s.get("lfChoices").cloned().unwrap_or(json!([]));
    let ligand_field = if let Some(c) = controls {
        json!({
            "ion": text(Some(c), "ion").filter(|t| !t.is_empty()),
            "geometry": text(Some(c), "geometry").unwrap_or_else(|| "octahedral".into()),
            "c_over_b": text(Some(c), "c_over_b").and_then(|t| t.trim().parse::<f64>().ok())
                .or_else(|| c.get("c_over_b").and_then(Value::as_f64)),
            "free_c": flag("free_c"),
            "spin_forbidden": flag("spin_forbidden"),
            "b0_source": text(Some(c), "b0").filter(|t| !t.is_empty()).unwrap_or_else(|| "common".into()),
            "ligand": text(Some(c), "ligand").filter(|t| !t.is_empty()),
            "choices": choices,
        })
    } else {
        if choices.as_array().is_some_and(|a| !a.is_empty()) {
            notices.push(format!(
                "{at}: its band choices had no ligand-field settings and were left out"
            ));
        }
        Value::Null
    };
    Ok(json!({
        "sample": {
            "name": s.get("name").cloned().unwrap_or(json!("sample")),
            "source": { "file_name": s.get("file").cloned().unwrap_or(Value::Null) },
            "concentration": s.get("concentration").cloned().unwrap_or(Value::Null),
            "path_length": s.get("path").cloned().unwrap_or(Value::Null),
            "metadata": s.get("metadata").cloned().unwrap_or(json!({})),
            "display": {
                "colour": s.get("colour").cloned().unwrap_or(Value::Null),
                "visible": s.get("visible").and_then(Value::as_bool).unwrap_or(true),
            },
            "data": {
                "wavenumber": data["wavenumber"],
                "values": data["values"],
                "quantity": s.get("quantity").cloned().unwrap_or(json!("absorbance")),
                "x_unit_read": s.get("xUnit").cloned().unwrap_or(json!("cm-1")),
                "saturated": s.get("saturated").cloned().unwrap_or(json!([])),
            },
        },
        "steps": processing.map(steps).unwrap_or_default(),
        "bands": {
            "count": count,
            "shape": shape,
            "max_iterations": super::defaults::MAX_ITERATIONS,
        },
        "ligand_field": ligand_field,
    }))
}

/// The page's processing record `{crop, smooth, baseline}` as steps, in the
/// order the page applied them.
fn steps(p: &Value) -> Vec<Value> {
    let mut out = Vec::new();
    if let Some([lo, hi]) = p.get("crop").and_then(Value::as_array).map(Vec::as_slice) {
        out.push(json!({ "crop": { "low": lo, "high": hi } }));
    }
    if let Some(s) = p.get("smooth").filter(|s| !s.is_null()) {
        out.push(json!({ "smooth": s }));
    }
    if let Some(b) = p.get("baseline").filter(|b| !b.is_null()) {
        out.push(json!({ "subtract_baseline": { "method": b } }));
    }
    out
}
