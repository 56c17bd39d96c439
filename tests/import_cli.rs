//! `ddlens import` as a user runs it: JSON shape, refusal exit code, hidden options.

use std::process::Command;

fn ddlens(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .args(args)
        .output()
        .unwrap()
}

fn fixture(name: &str) -> String {
    format!("{}/fixtures/import/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn json_summary_names_points_ranges_and_warnings() {
    let out = ddlens(&[
        "import",
        &fixture("cary_descending_trailing_commas.csv"),
        "--json",
    ]);
    assert!(out.status.success());
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let first = &doc["spectra"][0];
    assert_eq!(first["name"], "Sample CrA");
    assert_eq!(first["points"], 31);
    assert_eq!(first["x_unit_read"], "nm");
    assert_eq!(first["quantity"], "absorbance");
    // 800 nm → 12 500 cm⁻¹ and 500 nm → 20 000 cm⁻¹ (ν̃ = 10⁷/λ).
    assert_eq!(first["x_range_cm"], serde_json::json!([12500.0, 20000.0]));
}

#[test]
fn a_refused_file_exits_non_zero_with_the_line_on_stderr() {
    let out = ddlens(&["import", &fixture("malformed_text_in_data.csv")]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("line 5:"));
}

#[test]
fn hidden_options_raw_and_savgol_coefficients() {
    let out = ddlens(&["import", "--savgol-coeffs", "5,2,0", "--json"]);
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // Savitzky & Golay (1964) Table I: 17/35 at the centre of the 5-point quadratic smoother.
    assert!((doc["coefficients"][2].as_f64().unwrap() - 17.0 / 35.0).abs() < 1e-12);
    let out = ddlens(&["import", &fixture("duplicate_x.csv"), "--raw"]);
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        doc["spectra"][0]["x"],
        serde_json::json!([500.0, 510.0, 510.0, 520.0, 530.0])
    );
    assert_eq!(
        ddlens(&["import", "--x-unit", "furlong", "f.csv"])
            .status
            .code(),
        Some(2)
    );
}
