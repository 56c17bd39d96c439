//! `ddlens analyze --save-project` / `--project` and the cleaning flags,
//! through the binary.

use ddlens::analysis::{analyze, BandCount, BandSetup, Document, Project, Source};
use ddlens::preprocess::{BaselineMethod, Step};
use std::process::Command;

fn ddlens(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .args(args)
        .output()
        .unwrap()
}

fn json(out: &std::process::Output) -> serde_json::Value {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

const DEMO: &str = "fixtures/demo/demo-crx7.csv";

#[test]
fn a_saved_project_recomputes_to_identical_numbers() {
    let dir = std::env::temp_dir().join(format!("ddlens-project-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let saved = dir.join("crx7.json");
    let saved = saved.to_str().unwrap();
    let args = [
        "analyze",
        DEMO,
        "--ion",
        "Cr3+",
        "--bands",
        "2",
        "--crop",
        "12000-32000",
        "--smooth",
        "savgol:9:2",
        "--band",
        "23300:4T1g(F)",
    ];
    let first = ddlens(&[&args[..], &["--json", "--save-project", saved]].concat());
    let first = json(&first);
    let text = std::fs::read_to_string(saved).unwrap();
    let (project, notices) = Project::from_json(&text).unwrap();
    assert!(notices.is_empty(), "{notices:?}");
    assert!(
        project.samples[0].sample.data.is_some(),
        "a project carries its data"
    );
    let again = json(&ddlens(&["analyze", "--project", saved, "--json"]));
    assert_eq!(again[0]["results"], first["results"]);
    assert_eq!(again[0]["steps"], first["steps"]);
    // The text report is the same too.
    let a = ddlens(&args);
    let b = ddlens(&["analyze", "--project", saved]);
    assert_eq!(
        String::from_utf8_lossy(&a.stdout),
        String::from_utf8_lossy(&b.stdout)
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn the_cleaning_flags_change_the_result_exactly_as_apply_steps_does() {
    let steps = vec![
        Step::Crop {
            low: 12_000.0,
            high: 32_000.0,
        },
        Step::Smooth {
            window: 11,
            order: 2,
        },
        Step::SubtractBaseline {
            method: BaselineMethod::Asls {
                lambda: 1e6,
                p: 0.01,
            },
        },
    ];
    let csv = std::fs::read(DEMO).unwrap();
    let setup = BandSetup {
        count: BandCount::Fixed(2),
        ..BandSetup::default()
    };
    let mut doc = Document::import(&csv, DEMO, Source::default(), setup).unwrap();
    doc.steps = steps;
    let lib = analyze(&doc, &mut |_| true).unwrap();
    let cli = json(&ddlens(&[
        "deconvolve",
        DEMO,
        "--bands",
        "2",
        "--crop",
        "12000-32000",
        "--smooth",
        "savgol:11:2",
        "--subtract-baseline",
        "asls:1e6:0.01",
        "--json",
    ]));
    let lib_bands = serde_json::to_value(&lib.results.unwrap().bands).unwrap();
    assert_eq!(cli["bands"], lib_bands["bands"]);
    assert_eq!(cli["statistics"], lib_bands["statistics"]);
    // And the cleaning did change the result.
    let plain = json(&ddlens(&["deconvolve", DEMO, "--bands", "2", "--json"]));
    assert_ne!(plain["bands"], cli["bands"]);
    // `import` reports the cleaned spectrum: the crop shows in its range.
    let imported = json(&ddlens(&[
        "import",
        DEMO,
        "--crop",
        "12000-32000",
        "--json",
    ]));
    let range = &imported["spectra"][0]["x_range_cm"];
    assert!(range[0].as_f64().unwrap() >= 12_000.0 && range[1].as_f64().unwrap() <= 32_000.0);
}

#[test]
fn a_damaged_project_is_refused_with_the_field_named() {
    let dir = std::env::temp_dir().join(format!("ddlens-bad-project-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bad = dir.join("bad.json");
    std::fs::write(
        &bad,
        r#"{"ddlens_project": 2, "samples": [{"sample": {"name": "x"}}]}"#,
    )
    .unwrap();
    let out = ddlens(&["analyze", "--project", bad.to_str().unwrap()]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("samples[0].bands is missing"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_page_project_of_schema_one_is_recomputed_with_a_notice() {
    let out = ddlens(&["analyze", "--project", "fixtures/projects/wave1-demo.json"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("saved in schema 1"), "{text}");
    // Both samples are reported; the second carries the forced ⁴T₁g(F).
    assert_eq!(text.matches("bands (").count(), 2, "{text}");
    let docs = json(&ddlens(&[
        "analyze",
        "--project",
        "fixtures/projects/wave1-demo.json",
        "--json",
    ]));
    let fit = &docs[1]["results"]["fit"]["best"]["assignment"];
    assert_eq!(fit[1]["state"], "4T1g(F)");
}
