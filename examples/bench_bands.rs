//! Benchmark: 2000 points × 5 overlapping Gaussians + linear baseline
//! (fixtures/bands/five_gaussians_2000.txt, made by bench/bands_scipy.py with
//! a fixed seed). Prints one JSON line per contracts.md: median time per fit.

use ddlens::bands::{self, BandModel, BandSpec, BaselineModel, FitOptions, Shape};

fn main() {
    let text = include_str!("../fixtures/bands/five_gaussians_2000.txt");
    let (x, y): (Vec<f64>, Vec<f64>) = text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .filter_map(|l| {
            let mut w = l.split_whitespace().map(str::parse::<f64>);
            Some((w.next()?.ok()?, w.next()?.ok()?))
        })
        .unzip();
    // The same start as bench/bands_scipy.py: truth with heights ×1.4,
    // centres ±3 %, widths ×1.3, baseline at zero.
    let truth = [
        (12500.0, 2400.0, 0.35),
        (15800.0, 3000.0, 0.8),
        (19000.0, 2600.0, 0.5),
        (23500.0, 4200.0, 0.65),
        (27000.0, 3000.0, 0.3),
    ];
    let signs = [1.0, -1.0, 1.0, -1.0, 1.0];
    let model = BandModel {
        bands: truth
            .iter()
            .zip(signs)
            .map(|(&(c, w, h), s)| BandSpec {
                shape: Shape::Gaussian,
                centre: c * (1.0 + 0.03 * s),
                fwhm: w * 1.3,
                height: h * 1.4,
                extra: None,
                fixed: Vec::new(),
            })
            .collect(),
        baseline: BaselineModel::Linear,
        ties: Vec::new(),
    };
    let opts = FitOptions::default();
    let runs = 200;
    let mut times = Vec::with_capacity(runs);
    let mut last = None;
    for _ in 0..runs {
        let t = std::time::Instant::now();
        let fit = bands::fit(&x, &y, None, &model, &opts, &mut |_| true);
        times.push(t.elapsed().as_secs_f64() * 1e6);
        last = Some(fit);
    }
    times.sort_by(f64::total_cmp);
    let median = times[runs / 2];
    if let Some(Ok(fit)) = last {
        eprintln!(
            "chi2 = {:.8e}, evaluations = {}, stop = {:?}",
            fit.statistics.chi2, fit.statistics.evaluations, fit.statistics.stopped
        );
    }
    println!("{{\"group\":\"deconvolve 2000 pts × 5 Gaussians\",\"impl\":\"ddlens lm (native)\",\"median_us\":{median:.1},\"runs\":{runs}}}");
}
