//! The analysis document and project files: the page's first format loads,
//! migrated with a notice; a project survives writing and reading; bad input
//! gives an error naming the field, never a panic; cleaning steps do exactly
//! what the functions they name do.

use ddlens::analysis::{
    analyze, refit, sample_spectrum, BandCount, BandSetup, Document, Project, Source, SCHEMA,
};
use ddlens::preprocess::{apply_steps, baseline, crop, savgol, BaselineMethod, Step};
use serde_json::{json, Value};

const WAVE1: &str = include_str!("../fixtures/projects/wave1-demo.json");

fn demo_doc() -> Document {
    let csv = include_bytes!("../fixtures/demo/demo-crx7.csv");
    let setup = BandSetup {
        count: BandCount::Fixed(2),
        ..BandSetup::default()
    };
    Document::import(csv, "demo-crx7.csv", Source::default(), setup).unwrap()
}

fn project_of(doc: Document) -> Value {
    serde_json::to_value(Project {
        ddlens_project: SCHEMA,
        program: "test".into(),
        saved: None,
        samples: vec![doc],
        active: Some(0),
        page: ddlens::analysis::PageState::default(),
    })
    .unwrap()
}

/// The error message of loading `v`.
fn refused(v: &Value) -> String {
    Project::from_json(&v.to_string())
        .map(|_| ())
        .expect_err("the project should be refused")
        .to_string()
}

#[test]
fn a_wave_one_project_loads_as_schema_two_with_a_notice() {
    let (p, notices) = Project::from_json(WAVE1).unwrap();
    assert_eq!(p.ddlens_project, SCHEMA);
    assert!(notices[0].contains("schema 1"), "{notices:?}");
    assert_eq!(p.samples.len(), 2);
    assert_eq!(p.active, Some(1));
    assert_eq!(p.page.view.x, Some([12000.0, 31000.0]));
    let raw: Value = serde_json::from_str(WAVE1).unwrap();
    // The cropped sample keeps the file's data and its crop as a step.
    let cropped = &p.samples[0];
    let data = cropped.sample.data.as_ref().unwrap();
    assert_eq!(
        data.wavenumber.len(),
        raw["samples"][0]["raw"]["wavenumber"]
            .as_array()
            .unwrap()
            .len()
    );
    assert_eq!(
        cropped.steps,
        vec![Step::Crop {
            low: 13000.0,
            high: 30000.0
        }]
    );
    assert_eq!(
        cropped.sample.source.file_name.as_deref(),
        Some("demo-crx7.csv")
    );
    assert_eq!(cropped.sample.display.colour.as_deref(), Some("#0072b2"));
    // Applying the step to the data gives back what the page showed.
    let s = sample_spectrum(cropped).unwrap();
    let (clean, _) = apply_steps(&s, &cropped.steps).unwrap();
    let shown: Vec<f64> = serde_json::from_value(raw["samples"][0]["wavenumber"].clone()).unwrap();
    assert_eq!(clean.wavenumber, shown);
    // The other sample's panel controls become ligand-field options.
    let lf = p.samples[1].ligand_field.as_ref().unwrap();
    assert_eq!(lf.ion.as_deref(), Some("Cr3+"));
    assert_eq!(lf.c_over_b, None);
    assert_eq!(lf.b0_source.as_deref(), Some("common"));
    assert_eq!(lf.choices[0].assign.as_deref(), Some("4T1g(F)"));
    assert_eq!(p.samples[1].bands.count, BandCount::Fixed(2));
    assert!(p.samples[0].ligand_field.is_none());
}

#[test]
fn a_project_written_and_read_again_is_unchanged_results_included() {
    let (p, _) = Project::from_json(WAVE1).unwrap();
    let mut p = p;
    p.samples[1] = analyze(&p.samples[1], &mut |_| true).unwrap();
    let (again, notices) = Project::from_json(&p.to_json()).unwrap();
    assert_eq!(again, p);
    assert!(notices.is_empty(), "{notices:?}");
    // The forced state reached the fit: ⁴T₁g(F) on the upper band.
    let fit = again.samples[1]
        .results
        .as_ref()
        .unwrap()
        .fit
        .as_ref()
        .unwrap();
    assert_eq!(fit.best.assignment[1].state, "4T1g(F)");
}

#[test]
fn an_unknown_or_newer_schema_is_refused_by_name() {
    assert!(
        refused(&json!({"ddlens_project": 99, "samples": []})).contains("newer ddlens (schema 99)")
    );
    assert!(refused(&json!({"ddlens_project": "2"})).contains("whole number"));
    assert!(refused(&json!({"samples": []})).contains("no \"ddlens_project\""));
    assert!(refused(&json!([1, 2])).contains("not a ddlens project"));
    assert!(Project::from_json("{ not json")
        .unwrap_err()
        .to_string()
        .contains("not valid JSON"));
}

#[test]
fn missing_fields_are_named_with_their_path() {
    let mut v = project_of(demo_doc());
    v["samples"][0].as_object_mut().unwrap().remove("bands");
    assert_eq!(refused(&v), "samples[0].bands is missing");
    let mut v = project_of(demo_doc());
    v["samples"][0]["sample"]
        .as_object_mut()
        .unwrap()
        .remove("name");
    let m = refused(&v);
    assert!(
        m.starts_with("samples[0].sample cannot be read") && m.contains("`name`"),
        "{m}"
    );
    let mut v = project_of(demo_doc());
    v.as_object_mut().unwrap().remove("samples");
    assert_eq!(refused(&v), "samples is missing");
}

#[test]
fn non_finite_numbers_and_unequal_lengths_are_named() {
    let mut v = project_of(demo_doc());
    v["samples"][0]["sample"]["data"]["values"][17] = Value::Null; // a browser's NaN
    assert_eq!(
        refused(&v),
        "samples[0].sample.data.values[17] is not a finite number"
    );
    let mut v = project_of(demo_doc());
    v["samples"][0]["sample"]["data"]["values"]
        .as_array_mut()
        .unwrap()
        .pop();
    assert!(refused(&v)
        .starts_with("samples[0].sample.data.values holds 600 numbers but wavenumber holds 601"));
    let mut v: Value = serde_json::from_str(WAVE1).unwrap();
    v["samples"][1]["values"][3] = json!("1.0");
    assert_eq!(refused(&v), "samples[1].values[3] is not a finite number");
    let mut v = project_of(demo_doc());
    v["page"] = json!({"view": {"x": [30000, 10000]}});
    assert!(refused(&v).starts_with("page.view.x should run from low to high"));
}

#[test]
fn a_band_model_outside_its_spectrum_or_with_bad_ties_is_refused() {
    let mut doc = analyze(&demo_doc(), &mut |_| true).unwrap();
    let fit = &doc.results.as_ref().unwrap().bands.fit;
    let mut model = ddlens::analysis::model_of(fit);
    model.bands[1].centre = 52_000.0;
    doc.bands.model = Some(model.clone());
    let m = refused(&project_of(doc.clone()));
    assert!(
        m.starts_with(
            "samples[0].bands.model.bands[1].centre 52000 cm⁻¹ lies outside the spectrum"
        ),
        "{m}"
    );
    model.bands[1].centre = 23_000.0;
    model.ties = vec![ddlens::bands::Tie::EqualFwhm { band: 1, to: 5 }];
    doc.bands.model = Some(model);
    assert!(refused(&project_of(doc))
        .starts_with("samples[0].bands.model.ties[0] should tie two different bands"));
}

#[test]
fn a_forced_state_that_the_ion_does_not_have_is_named() {
    let mut doc = demo_doc();
    doc.ligand_field = Some(
        ddlens::lf_fit::FitRequest {
            ion: Some("Cr3+".into()),
            bands: vec![ddlens::lf_fit::ObservedBand {
                assign: Some("5Eg".into()),
                ..ddlens::lf_fit::ObservedBand::at(16_500.0)
            }],
            ..Default::default()
        }
        .into(),
    );
    assert_eq!(
        refused(&project_of(doc.clone())),
        "samples[0].ligand_field.choices[0].assign '5Eg' is no state of d3 octahedral"
    );
    doc.ligand_field.as_mut().unwrap().choices[0].assign = Some("⁴T₁g(P)".into());
    assert!(Project::from_json(&project_of(doc).to_string()).is_ok());
}

#[test]
fn unknown_entries_are_ignored_with_a_notice() {
    let mut v = project_of(demo_doc());
    v["colour_scheme"] = json!("dark");
    v["samples"][0]["comment"] = json!("hello");
    let (_, notices) = Project::from_json(&v.to_string()).unwrap();
    assert!(
        notices.iter().any(|n| n.starts_with("colour_scheme:")),
        "{notices:?}"
    );
    assert!(
        notices.iter().any(|n| n.starts_with("samples[0].comment:")),
        "{notices:?}"
    );
}

#[test]
fn damaged_project_text_never_panics() {
    // Every prefix of a project (a cut-off download or share link) and every
    // single-character corruption at a spread of places is an error or a project.
    let text = project_of(demo_doc()).to_string();
    let step = (text.len() / 300).max(1);
    for cut in (0..text.len()).step_by(step) {
        if text.is_char_boundary(cut) {
            let _ = Project::from_json(&text[..cut]);
            for c in ["0", "-", "\"", "]", "null", "1e999"] {
                let mut t = text.clone();
                t.replace_range(
                    cut..text[cut..]
                        .chars()
                        .next()
                        .map_or(cut, |ch| cut + ch.len_utf8()),
                    c,
                );
                let _ = Project::from_json(&t);
            }
        }
    }
}

#[test]
// Exact comparison meant: a locked centre is returned exactly as given.
#[allow(clippy::float_cmp)]
fn a_document_with_a_band_model_is_fitted_from_that_model() {
    let auto = analyze(&demo_doc(), &mut |_| true).unwrap();
    let fit = &auto.results.as_ref().unwrap().bands.fit;
    let mut doc = demo_doc();
    let mut model = ddlens::analysis::model_of(fit);
    // The user dragged the upper band 400 cm⁻¹ up and locked it there.
    model.bands[1].centre += 400.0;
    model.bands[1].fixed = vec!["centre".into()];
    doc.bands.model = Some(model.clone());
    let done = analyze(&doc, &mut |_| true).unwrap();
    let got = &done.results.as_ref().unwrap().bands.fit;
    assert_eq!(got.bands[1].centre.value, model.bands[1].centre);
    let s = sample_spectrum(&doc).unwrap();
    let direct = refit(&s, &model, &doc.bands, &mut |_| true).unwrap();
    assert_eq!(got, &direct.fit);
}

#[test]
fn steps_do_exactly_what_the_functions_they_name_do() {
    let s = sample_spectrum(&demo_doc()).unwrap();
    let method = BaselineMethod::Asls {
        lambda: 1e5,
        p: 0.01,
    };
    let steps = [
        Step::Crop {
            low: 12_000.0,
            high: 30_000.0,
        },
        Step::Smooth {
            window: 11,
            order: 2,
        },
        Step::SubtractBaseline {
            method: method.clone(),
        },
    ];
    let (out, _) = apply_steps(&s, &steps).unwrap();
    let c = crop(&s, 12_000.0, 30_000.0);
    let y = savgol(&c.values, 11, 2, 0).unwrap();
    let b = baseline(&c.wavenumber, &y, &method).unwrap();
    let expect: Vec<f64> = y.iter().zip(&b).map(|(y, b)| y - b).collect();
    assert_eq!(out.wavenumber, c.wavenumber);
    assert_eq!(out.values, expect);
}

#[test]
fn a_baseline_above_the_data_is_reported_and_a_bad_step_is_an_error() {
    let s = sample_spectrum(&demo_doc()).unwrap();
    // A constant through the top of the first band lies above most of the spectrum.
    let high = Step::SubtractBaseline {
        method: BaselineMethod::Polynomial {
            order: 0,
            regions: vec![[16_300.0, 16_700.0]],
        },
    };
    let (_, warnings) = apply_steps(&s, &[high]).unwrap();
    assert!(
        warnings
            .iter()
            .any(|w| w.message.contains("rises above the data")),
        "{warnings:?}"
    );
    let empty = Step::Crop {
        low: 1.0,
        high: 2.0,
    };
    assert!(apply_steps(&s, &[empty])
        .unwrap_err()
        .to_string()
        .contains("fewer than 2 points"));
    let even = Step::Smooth {
        window: 10,
        order: 2,
    };
    assert!(apply_steps(&s, &[even]).is_err());
}
