//! Benchmark of the global fit (issue 19: ≤ 50 ms native): a 2 000-point
//! spectrum of three Gaussian Ni²⁺ bands placed by the engine at Dq 860,
//! B 880 cm⁻¹ (C at the free-ion C/B) with 0.3 % noise, fitted with the model
//! from its two-step result (band fit, then the ligand-field fit of the maxima),
//! which is made once outside the timing. One JSON line.

use ddlens::analysis::observed_bands;
use ddlens::bands::{self, BandModel, BandSpec, BaselineModel, FitOptions, Shape};
use ddlens::ions;
use ddlens::lf_fit::global::{self, GlobalOptions, Points, Start};
use ddlens::lf_fit::{self, FitRequest};
use ddlens::ligand_field::{model, Geometry, Params};
use ddlens::spectrum::{noise, Quantity};
use std::time::Instant;

fn main() {
    let b = 880.0;
    let ratio = ions::ion("Ni2+")
        .and_then(|i| i.free_c_over_b())
        .expect("nickel has a free-ion C/B");
    let truth = Params {
        dq: 860.0,
        b,
        c: ratio * b,
    };
    let levels = model(8, Geometry::Octahedral)
        .and_then(|m| m.levels(&truth))
        .expect("the engine runs");
    let energy = |label: &str| levels.iter().find(|l| l.label == label).map(|l| l.energy);
    let bands: Vec<(f64, f64, f64)> = [("3T2g", 0.30), ("3T1g(F)", 0.25), ("3T1g(P)", 0.45)]
        .iter()
        .map(|&(s, h)| (energy(s).expect("a state"), 2_600.0, h))
        .collect();
    let x: Vec<f64> = (0..2_000).map(|i| 6_000.0 + 12.0 * f64::from(i)).collect();
    // A fixed pseudo-random sequence (a linear congruential generator, Knuth's
    // MMIX constants) summed to a near-normal scatter.
    let mut state: u64 = 0x5EED;
    let mut uniform = || {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let y: Vec<f64> = x
        .iter()
        .map(|&v| {
            let clean: f64 = bands
                .iter()
                .map(|&(c, w, h)| h * (-4.0 * std::f64::consts::LN_2 * ((v - c) / w).powi(2)).exp())
                .sum();
            let scatter: f64 = (0..12).map(|_| uniform()).sum::<f64>() - 6.0;
            0.01 + clean + 0.0015 * scatter
        })
        .collect();
    let specs = bands
        .iter()
        .map(|&(c, w, h)| BandSpec {
            shape: Shape::Gaussian,
            centre: c * 1.01,
            fwhm: w * 1.1,
            height: h * 0.9,
            extra: None,
            fixed: Vec::new(),
        })
        .collect();
    let band_model = BandModel {
        bands: specs,
        baseline: BaselineModel::Linear,
        ties: Vec::new(),
    };
    let fit = bands::fit(
        &x,
        &y,
        None,
        &band_model,
        &FitOptions::default(),
        &mut |_| true,
    )
    .expect("the band fit runs");
    let req = FitRequest {
        ion: Some("Ni2+".to_string()),
        bands: observed_bands(&fit, Quantity::Absorbance),
        ..FitRequest::default()
    };
    let outcome = lf_fit::fit(&req).expect("the two-step fit runs");
    let start = Start {
        n: 8,
        geometry: Geometry::Octahedral,
        band_fit: &fit,
        solution: &outcome.best,
        options: GlobalOptions::default(),
    };
    let points = Points {
        x: &x,
        y: &y,
        w: None,
        noise: noise::estimate(&x, &y).map(|n| n.sigma),
    };
    let once = global::fit(&start, &points, &mut |_| true).expect("the global fit runs");
    assert!(
        once.parameters.b.is_some_and(|e| (e.value - b).abs() < 5.0),
        "B comes back"
    );
    let runs = 30;
    let mut times: Vec<f64> = (0..runs)
        .map(|_| {
            let t = Instant::now();
            std::hint::black_box(global::fit(&start, &points, &mut |_| true).ok());
            t.elapsed().as_secs_f64() * 1e6
        })
        .collect();
    times.sort_by(f64::total_cmp);
    println!(
        "{}",
        serde_json::json!({"group": "global fit, 2000 points, 3 bands", "impl": "LM with Hellmann-Feynman Jacobian", "median_us": times[runs / 2], "runs": runs})
    );
}
