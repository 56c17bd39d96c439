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

#[test]
fn a_sample_named_like_a_formula_exports_as_text_in_the_spectra_csv() {
    // OWASP guidance on CSV injection (common practice): a text cell starting
    // with = + - @ gets a leading ' so that a spreadsheet does not run it.
    let dir = std::env::temp_dir().join(format!("ddlens-csv-cell-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let input = dir.join("formula-name.csv");
    let output = dir.join("export.csv");
    std::fs::write(&input, "nm,=1+1\n400,0.1\n500,0.5\n600,-0.02\n").unwrap();
    let out = ddlens(&[
        "import",
        input.to_str().unwrap(),
        "--export-csv",
        output.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&output);
    std::fs::remove_dir_all(&dir).ok();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = text.unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("'=1+1 cm-1,'=1+1 Absorbance"));
    // Numbers are not text cells: a negative absorbance stays a number.
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|c| c.parse().unwrap()).collect())
        .collect();
    assert_eq!(rows.len(), 3);
    assert!((rows[0][1] + 0.02).abs() < 1e-12, "{}", rows[0][1]);
}
