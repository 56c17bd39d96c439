//! Benchmark: the automatic analysis (`analysis::analyze`: band count chosen
//! by BIC, both baselines, significance test, assignment and ligand-field
//! fit) of a 2 001-point three-band Ni²⁺ Oh spectrum made by the engine
//! (tests/support/hard_cases.rs, 1 % noise, 300–1 600 nm in 0.65 nm steps).
//! Prints one JSON line: the median time per analysis (issue 17's target:
//! ≤ 50 ms native).

#[path = "../tests/support/hard_cases.rs"]
mod hard_cases;

use ddlens::analysis::{self, BandSetup, Document, LigandFieldOptions, Source};
use ddlens::lf_fit::FitRequest;
use hard_cases::Axis;

fn main() {
    let case = hard_cases::Case {
        axis: Axis::Nm {
            from: 300.0,
            to: 1600.0,
            step: 0.65,
        },
        ..hard_cases::nickel_coverage(0.0045, 17)
    };
    let request = FitRequest {
        ion: Some(case.ion.to_string()),
        geometry: case.geometry,
        ..FitRequest::default()
    };
    let doc = Document::import(
        case.csv().as_bytes(),
        &case.file_name(),
        Source::default(),
        BandSetup::default(),
    )
    .expect("the synthetic file imports");
    let doc = Document {
        ligand_field: Some(LigandFieldOptions::from(request)),
        ..doc
    };
    let points = doc.sample.data.as_ref().map_or(0, |d| d.wavenumber.len());
    let runs = 21;
    let mut times = Vec::with_capacity(runs);
    let mut last = None;
    for _ in 0..runs {
        let t = std::time::Instant::now();
        let done = analysis::analyze(&doc, &mut |_| true);
        times.push(t.elapsed().as_secs_f64() * 1e6);
        last = Some(done);
    }
    times.sort_by(f64::total_cmp);
    let median = times[runs / 2];
    if let Some(Ok(done)) = last {
        let r = done.results.expect("analyze fills in results");
        eprintln!(
            "{points} points, {} bands, 10Dq {:?}",
            r.bands.fit.bands.len(),
            r.fit.map(|f| 10.0 * f.best.parameters.dq.value)
        );
    }
    println!("{{\"group\":\"automatic analysis 2000 pts\",\"impl\":\"ddlens analyze (native)\",\"median_us\":{median:.1},\"runs\":{runs}}}");
}
