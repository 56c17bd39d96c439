//! Bytes as JCAMP-DX: a minimal header is prepended so the ASDF decoder and the
//! block/label parser always see the input; the raw bytes are also tried alone.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let opts = ddlens::spectrum::ImportOptions::default();
    let mut framed = b"##TITLE=f\n##FIRSTX=1\n##LASTX=9\n##NPOINTS=9\n##XYDATA=(X++(Y..Y))\n".to_vec();
    framed.extend_from_slice(data);
    let _ = ddlens::spectrum::import(&framed, "fuzz.jdx", &opts);
    let _ = ddlens::spectrum::read_raw(data, "fuzz.jdx");
});
