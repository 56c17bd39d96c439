//! A 10⁶-point file must import in one pass (no quadratic step): this test only checks
//! that it completes with the right point count; timing is left to examples/bench_import.rs.

use ddlens::spectrum::{import, ImportOptions};
use std::fmt::Write as _;

#[test]
fn a_million_point_csv_imports() {
    let mut text = String::from("Wavenumber (cm-1)\tAbs\n");
    for i in 0..1_000_000u32 {
        let _ = writeln!(
            text,
            "{}\t{}",
            10_000.0 + f64::from(i) * 0.02,
            f64::from(i % 1000) * 1e-3
        );
    }
    let report = import(text.as_bytes(), "big.tsv", &ImportOptions::default()).unwrap();
    assert_eq!(report.spectra[0].wavenumber.len(), 1_000_000);
}

#[test]
fn a_million_point_dif_jcamp_imports() {
    // Ordinates 0,1,2,… written as SQZ start + DIF 'J' (+1) steps, 20 per line, with checkpoints.
    let n = 1_000_000usize;
    let mut text = format!("##TITLE=big\n##XUNITS=1/CM\n##YUNITS=ABSORBANCE\n##FIRSTX=1\n##LASTX={n}\n##NPOINTS={n}\n##XYDATA=(X++(Y..Y))\n");
    let mut i = 0;
    while i < n {
        let start = if i == 0 { 0 } else { i - 1 };
        let end = (i + 20).min(n);
        let digits = start.to_string();
        let lead = if start == 0 {
            '@'
        } else {
            (b'A' + digits.as_bytes()[0] - b'1') as char
        };
        let _ = write!(text, "{} {lead}{}", start + 1, &digits[1..]);
        for _ in start + 1..end {
            text.push('J');
        }
        text.push('\n');
        i = end;
    }
    text.push_str("##END=\n");
    let report = import(text.as_bytes(), "big.jdx", &ImportOptions::default()).unwrap();
    let s = &report.spectra[0];
    assert_eq!(s.wavenumber.len(), n);
    assert!(
        s.warnings.iter().all(|w| !w.message.contains("checkpoint")),
        "{:?}",
        s.warnings
    );
    // Integer ordinates decode exactly (DIF steps add integers), so the last one is n − 1 to the bit.
    assert_eq!(s.values[n - 1].to_bits(), ((n - 1) as f64).to_bits());
}
