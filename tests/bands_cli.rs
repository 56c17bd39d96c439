//! `ddlens deconvolve` end to end on the synthetic benchmark fixture
//! (five Gaussians of known parameters, see fixtures/bands/README.md).

use std::process::Command;

fn ddlens(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn deconvolve_json_recovers_the_five_synthetic_bands() {
    let out = ddlens(&[
        "deconvolve",
        "fixtures/bands/five_gaussians_2000.txt",
        "--bands",
        "5",
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let centres: Vec<f64> = doc["bands"]
        .as_array()
        .unwrap()
        .iter()
        .map(|b| b["centre"]["value"].as_f64().unwrap())
        .collect();
    // The generating centres (bench/bands_scipy.py); noise moves them by ≲ 3σ.
    let truth = [12500.0, 15800.0, 19000.0, 23500.0, 27000.0];
    assert_eq!(centres.len(), truth.len());
    for (c, t) in centres.iter().zip(truth) {
        assert!((c - t).abs() < 150.0, "{c} vs {t}");
    }
    for key in [
        "chi2",
        "reduced_chi2",
        "r2",
        "aic",
        "bic",
        "evaluations",
        "stopped",
    ] {
        assert!(!doc["statistics"][key].is_null(), "{key}");
    }
}

#[test]
fn deconvolve_reports_bad_files_plainly() {
    let dir = std::env::temp_dir().join("ddlens-bands-cli");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("bad.txt");
    std::fs::write(&path, "x y\nfoo bar\n").unwrap();
    let out = ddlens(&["deconvolve", path.to_str().unwrap(), "--bands", "1"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("no spectrum found"));
    let out = ddlens(&[
        "deconvolve",
        "--bands",
        "x",
        "fixtures/bands/five_gaussians_2000.txt",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let out = ddlens(&[
        "deconvolve",
        "--range",
        "8000:30000",
        "--bands",
        "1",
        "--shape",
        "voigt",
        "fixtures/bands/five_gaussians_2000.txt",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}
