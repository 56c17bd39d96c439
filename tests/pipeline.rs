//! The whole pipeline on synthetic spectra made from known (Dq, B, C) by the
//! engine itself: the parameters must come back within their stated
//! uncertainties (a self-consistency check of import → bands → fit).

use ddlens::bands::BaselineModel;
use ddlens::lf_fit::{FitRequest, ObservedBand};
use ddlens::ligand_field::{model, Geometry, Params};
use ddlens::pipeline::{analyze_file, AnalysisOptions, BandCount};
use std::fmt::Write as _;

/// A CSV in nm (descending, 1 nm steps, as instruments write it) with Gaussian
/// bands in wavenumber at the first `k` spin-allowed transitions, a sloping
/// baseline and deterministic pseudo-noise.
fn synthetic(n: u8, geometry: Geometry, p: Params, k: usize) -> (String, Vec<f64>) {
    let levels = model(n, geometry).unwrap().levels(&p).unwrap();
    let g = levels[0].multiplicity;
    // Only the bands inside the measured range (250–2500 nm, 4 000–40 000 cm⁻¹).
    let centres: Vec<f64> = levels
        .iter()
        .skip(1)
        .filter(|l| l.multiplicity == g && l.energy > 4500.0)
        .map(|l| l.energy)
        .take(k)
        .collect();
    let mut csv = String::from("Wavelength (nm),Abs\n");
    let mut state = 12345u64;
    for nm in (250..=2500).rev() {
        let x = 1e7 / f64::from(nm);
        let mut y = 0.01 + 2e-7 * x;
        for (i, c) in centres.iter().enumerate() {
            let h = 0.3 + 0.1 * i as f64;
            y += h * (-4.0 * std::f64::consts::LN_2 * ((x - c) / 2600.0).powi(2)).exp();
        }
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        y += 2e-4 * ((state >> 33) as f64 / (1u64 << 31) as f64 - 0.5);
        let _ = writeln!(csv, "{nm},{y:.6}");
    }
    (csv, centres)
}

fn check(n: u8, geometry: Geometry, p: Params, k: usize) {
    let (csv, centres) = synthetic(n, geometry, p, k);
    let opts = AnalysisOptions {
        bands: BandCount::Fixed(centres.len()),
        ligand_field: Some(FitRequest {
            n,
            geometry,
            c_over_b: Some(p.c / p.b),
            ..FitRequest::default()
        }),
        ..AnalysisOptions::default()
    };
    let a = analyze_file(csv.as_bytes(), "synthetic.csv", &opts)
        .unwrap_or_else(|e| panic!("d{n} {geometry}: {e}"));
    let fit = a
        .fit
        .unwrap_or_else(|| panic!("d{n} {geometry}: no fit: {:?}", a.fit_error));
    let best = &fit.best;
    let dq = best.parameters.dq;
    let b = best.parameters.b.unwrap();
    for (name, got, truth) in [("Dq", dq, p.dq), ("B", b, p.b)] {
        let s = got.sigma.expect("an uncertainty");
        assert!(
            (got.value - truth).abs() <= 2.0 * s + 1e-3 * truth,
            "d{n} {geometry}: {name} = {got} against {truth}"
        );
        assert!(
            s < 0.1 * truth,
            "d{n} {geometry}: {name} uncertainty {s} is not informative"
        );
    }
}

#[test]
fn recovers_parameters_for_d2_d3_d7_tetrahedral_and_d8() {
    check(
        2,
        Geometry::Octahedral,
        Params {
            dq: 1800.0,
            b: 650.0,
            c: 2925.0,
        },
        2,
    );
    check(
        3,
        Geometry::Octahedral,
        Params {
            dq: 1650.0,
            b: 690.0,
            c: 2898.0,
        },
        2,
    );
    check(
        7,
        Geometry::Tetrahedral,
        Params {
            dq: 330.0,
            b: 720.0,
            c: 3240.0,
        },
        2,
    );
    check(
        8,
        Geometry::Octahedral,
        Params {
            dq: 850.0,
            b: 880.0,
            c: 3960.0,
        },
        3,
    );
}

#[test]
fn the_demo_with_default_options_finds_its_two_bands_on_a_scattering_baseline() {
    // fixtures/demo/make_demo.py: two d³ bands from Dq 1650, B 690 cm⁻¹ on a
    // 0.015 + 0.02·(ν̃/30 000)⁴ baseline. With every choice left automatic the
    // pipeline must pick the scattering baseline and two bands, not take up the
    // curvature with small extra bands.
    let opts = AnalysisOptions {
        ligand_field: Some(FitRequest {
            ion: Some("Cr3+".into()),
            ..FitRequest::default()
        }),
        ..AnalysisOptions::default()
    };
    let csv = include_bytes!("../fixtures/demo/demo-crx7.csv");
    let a = analyze_file(csv, "demo-crx7.csv", &opts).unwrap();
    assert_eq!(a.bands.fit.baseline.model, BaselineModel::Scattering);
    assert_eq!(a.bands.fit.bands.len(), 2);
    let best = a.fit.expect("a fit").best;
    let (dq, b) = (best.parameters.dq, best.parameters.b.unwrap());
    for (name, got, truth) in [("Dq", dq, 1650.0), ("B", b, 690.0)] {
        let s = got.sigma.unwrap();
        assert!(
            (got.value - truth).abs() <= 2.0 * s,
            "{name} = {got} against {truth}"
        );
    }
}

/// The demo (fixtures/demo/make_demo.py: d³ octahedral, Dq 1650, B 690) with
/// two bands, and the user's per-band choices handed in as the request's bands.
fn demo(choices: Vec<ObservedBand>) -> ddlens::pipeline::Analysis {
    let opts = AnalysisOptions {
        bands: BandCount::Fixed(2),
        ligand_field: Some(FitRequest {
            ion: Some("Cr3+".into()),
            bands: choices,
            ..FitRequest::default()
        }),
        ..AnalysisOptions::default()
    };
    let csv = include_bytes!("../fixtures/demo/demo-crx7.csv");
    analyze_file(csv, "demo-crx7.csv", &opts).unwrap()
}

fn states(a: &ddlens::pipeline::Analysis) -> Vec<String> {
    let fit = a.fit.as_ref().expect("a fit");
    fit.best
        .assignment
        .iter()
        .map(|x| x.state.clone())
        .collect()
}

#[test]
fn user_choices_reach_the_fit_matched_by_energy() {
    let auto = demo(Vec::new());
    assert_eq!(states(&auto), ["4T2g", "4T1g(F)"]);
    let (low, high) = (auto.observed[0].energy, auto.observed[1].energy);
    let choice = |energy: f64, assign: Option<&str>, not_dd: bool| ObservedBand {
        energy,
        assign: assign.map(String::from),
        not_dd,
        ..ObservedBand::default()
    };
    // The upper band forced onto ⁴T₁g(P), given 1 % off its fitted maximum.
    let forced = demo(vec![choice(high * 1.01, Some("4T1g(P)"), false)]);
    assert_eq!(states(&forced)[1], "4T1g(P)");
    assert_eq!(forced.observed[1].assign.as_deref(), Some("4T1g(P)"));
    let d = |a: &ddlens::pipeline::Analysis| a.fit.as_ref().unwrap().best.derived.delta.value;
    assert!(
        (d(&forced) - d(&auto)).abs() > 100.0,
        "forcing changed nothing"
    );
    // The lower band marked as not d–d: only the upper band is fitted.
    let one = demo(vec![choice(low, None, true)]);
    assert!(one.observed[0].not_dd);
    assert_eq!(one.fit.as_ref().unwrap().best.assignment.len(), 1);
    assert!((one.fit.as_ref().unwrap().best.assignment[0].observed - high).abs() < 1e-9);
    // A spin-forbidden state can be forced without asking for spin-forbidden bands.
    let flip = demo(vec![choice(low, Some("2Eg"), false)]);
    assert_eq!(states(&flip)[0], "2Eg(G)");
    // A choice far from every band is reported, not applied.
    let stray = demo(vec![choice(5000.0, None, true)]);
    assert_eq!(states(&stray), states(&auto));
    assert!(stray
        .warnings
        .iter()
        .any(|w| w.contains("5000 cm⁻¹ matches no band")));
}

/// `refit` starts from given bands and keeps their locks and ties, on the
/// same weighted points as `deconvolve` (fixtures/bands/README.md: five Gaussians).
#[test]
// Exact comparison meant: a locked centre and an equal-width tie are exact by construction.
#[allow(clippy::float_cmp)]
fn refit_keeps_locks_and_ties_and_matches_deconvolve_when_unchanged() {
    use ddlens::bands::{BandModel, BaselineModel, Tie};
    use ddlens::pipeline::{deconvolve, pick_spectrum, refit};
    let bytes = std::fs::read("fixtures/bands/five_gaussians_2000.txt").unwrap();
    let opts = AnalysisOptions {
        bands: BandCount::Fixed(5),
        ..AnalysisOptions::default()
    };
    let s = pick_spectrum(&bytes, "five.txt", &opts).unwrap();
    let auto = deconvolve(&s, &opts, &mut |_| true).unwrap().fit;
    let mut bands: Vec<_> = auto
        .bands
        .iter()
        .map(|b| ddlens::bands::BandSpec {
            shape: b.shape,
            centre: b.centre.value,
            fwhm: b.fwhm.value,
            height: b.height.value,
            extra: None,
            fixed: Vec::new(),
        })
        .collect();
    let model = BandModel {
        bands: bands.clone(),
        baseline: BaselineModel::Linear,
        ties: Vec::new(),
    };
    let again = refit(&s, &model, &opts, &mut |_| true).unwrap().fit;
    assert_eq!(auto.bands.len(), again.bands.len());
    for (a, b) in auto.bands.iter().zip(&again.bands) {
        assert!((a.centre.value - b.centre.value).abs() < 1e-3 * a.centre.value);
    }
    bands[0].centre += 300.0;
    bands[0].fixed = vec!["centre".into()];
    let model = BandModel {
        bands,
        baseline: BaselineModel::Linear,
        ties: vec![Tie::EqualFwhm { band: 2, to: 1 }],
    };
    let edited = refit(&s, &model, &opts, &mut |_| true).unwrap().fit;
    assert_eq!(edited.bands[0].centre.value, model.bands[0].centre);
    assert_eq!(edited.bands[0].centre.sigma, None);
    assert_eq!(edited.bands[2].fwhm.value, edited.bands[1].fwhm.value);
}
