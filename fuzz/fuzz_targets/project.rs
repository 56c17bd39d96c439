//! Bytes as a project file: JSON parsing and the envelope check.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(value) = serde_json::from_slice::<serde_json::Value>(data) {
        let _ = ddlens::spectrum::project::check_envelope(&value);
    }
    let _ = ddlens::spectrum::import(data, "fuzz.json", &ddlens::spectrum::ImportOptions::default());
});
