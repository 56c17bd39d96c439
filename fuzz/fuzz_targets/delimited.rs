//! Any bytes through the whole import path (the delimited reader unless the bytes start with `##` or `{`).
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = ddlens::spectrum::import(data, "fuzz.csv", &ddlens::spectrum::ImportOptions::default());
});
