//! Benchmark of the ligand-field fit: the full assignment search and fit of a
//! three-band d⁸ octahedral spectrum ([Ni(H2O)6]2+ band maxima). One JSON line.

use ddlens::lf_fit::{fit, FitRequest, ObservedBand};
use std::time::Instant;

fn main() {
    let req = FitRequest {
        n: 8,
        ion: Some("Ni2+".to_string()),
        bands: [8500.0, 13800.0, 25300.0]
            .iter()
            .map(|&energy| ObservedBand {
                energy,
                ..ObservedBand::default()
            })
            .collect(),
        ..FitRequest::default()
    };
    let runs = 50;
    let mut times: Vec<f64> = (0..runs)
        .map(|_| {
            let start = Instant::now();
            std::hint::black_box(fit(&req).ok());
            start.elapsed().as_secs_f64() * 1e6
        })
        .collect();
    times.sort_by(f64::total_cmp);
    println!(
        "{}",
        serde_json::json!({"group": "d8 three-band fit", "impl": "assignment search + LM", "median_us": times[runs / 2], "runs": runs})
    );
}
