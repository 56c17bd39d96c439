//! Band fitting: oscillator strength, recovery of synthetic bands, ties, bad input.

use ddlens::bands::{self, BandModel, BandSpec, BaselineModel, FitOptions, Shape, Tie};

fn gaussian(x: f64, c: f64, w: f64, h: f64) -> f64 {
    h * (-4.0 * std::f64::consts::LN_2 * (x - c).powi(2) / (w * w)).exp()
}

fn spec(c: f64, w: f64, h: f64) -> BandSpec {
    BandSpec {
        shape: Shape::Gaussian,
        centre: c,
        fwhm: w,
        height: h,
        extra: None,
        fixed: Vec::new(),
    }
}

fn grid(n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| 10_000.0 + 20_000.0 * i as f64 / (n - 1) as f64)
        .collect()
}

/// CALC from the definition f = 4.319e-9 ∫ε dν̃ and ∫ of a Gaussian
/// = ε_max·FWHM·√(π/(4 ln 2)) (fitting notes §4.5).
#[test]
fn oscillator_strength_of_a_gaussian_band() {
    let x = grid(800);
    let (c, w, h) = (17_000.0, 3_000.0, 40.0);
    let y: Vec<f64> = x
        .iter()
        .map(|&v| gaussian(v, c, w, h) + 1e-3 * ((v * 0.37).sin()))
        .collect();
    let model = BandModel {
        bands: vec![spec(16_500.0, 2_500.0, 30.0)],
        baseline: BaselineModel::None,
        ties: vec![],
    };
    let opts = FitOptions {
        molar_absorptivity: true,
        ..FitOptions::default()
    };
    let fit = bands::fit(&x, &y, None, &model, &opts, &mut |_| true).unwrap();
    let b = &fit.bands[0];
    let expected = 4.319e-9
        * b.height.value
        * b.fwhm.value
        * (std::f64::consts::PI / (4.0 * std::f64::consts::LN_2)).sqrt();
    let f = b.oscillator_strength.unwrap();
    assert!((f.value - expected).abs() / expected < 1e-12);
    assert!((f.value - 4.319e-9 * 40.0 * 3000.0 * 1.064_467).abs() / f.value < 1e-4);
    assert!(f.sigma.is_some());
    // ε_max 40: Laporte-forbidden d–d (common practice classes).
    assert!(b.class.as_deref().unwrap().starts_with("Laporte"));
}

/// Three overlapping bands on a linear baseline are recovered from the auto guess.
#[test]
fn recovers_overlapping_bands_from_the_guess() {
    let x = grid(1500);
    let truth = [
        (14_000.0, 2_500.0, 0.6),
        (17_500.0, 3_000.0, 0.9),
        (22_000.0, 3_500.0, 0.4),
    ];
    let y: Vec<f64> = x
        .iter()
        .map(|&v| {
            truth
                .iter()
                .map(|&(c, w, h)| gaussian(v, c, w, h))
                .sum::<f64>()
                + 0.02
                + 1e-6 * v
        })
        .collect();
    let start = bands::guess(&x, &y, Some(3));
    assert_eq!(start.len(), 3);
    let model = BandModel {
        bands: start,
        baseline: BaselineModel::Linear,
        ties: vec![],
    };
    let fit = bands::fit(&x, &y, None, &model, &FitOptions::default(), &mut |_| true).unwrap();
    assert_eq!(fit.bands.len(), truth.len());
    for (b, t) in fit.bands.iter().zip(truth) {
        assert!(
            (b.centre.value - t.0).abs() < 1e-3,
            "{} vs {}",
            b.centre.value,
            t.0
        );
        assert!((b.fwhm.value - t.1).abs() < 1e-3);
    }
    assert!(fit.statistics.stopped.was_successful());
    let (total, components, _) = bands::evaluate(&x, &fit);
    assert_eq!(components.len(), 3);
    assert!((total[700] - y[700]).abs() < 1e-8);
}

#[test]
// Exact comparison meant: a fixed parameter and an equal-width tie are exact by construction.
#[allow(clippy::float_cmp)]
fn ties_hold_and_fixed_parameters_stay() {
    let x = grid(600);
    let y: Vec<f64> = x
        .iter()
        .map(|&v| gaussian(v, 15_000.0, 3_000.0, 1.0) + gaussian(v, 19_000.0, 3_000.0, 0.5))
        .collect();
    let mut b1 = spec(15_200.0, 2_800.0, 0.8);
    b1.fixed.push("centre".into());
    let model = BandModel {
        bands: vec![b1, spec(18_800.0, 2_600.0, 0.6)],
        baseline: BaselineModel::None,
        ties: vec![
            Tie::EqualFwhm { band: 1, to: 0 },
            Tie::HeightRatio {
                band: 1,
                to: 0,
                ratio: 0.5,
            },
        ],
    };
    let fit = bands::fit(&x, &y, None, &model, &FitOptions::default(), &mut |_| true).unwrap();
    assert_eq!(fit.bands[0].centre.value, 15_200.0);
    assert_eq!(fit.bands[0].fwhm.value, fit.bands[1].fwhm.value);
    assert!((fit.bands[1].height.value - 0.5 * fit.bands[0].height.value).abs() < 1e-12);
    assert_eq!(fit.statistics.parameters, 3);
}

#[test]
fn bad_input_gives_clear_errors_not_panics() {
    let x = grid(50);
    let y: Vec<f64> = x
        .iter()
        .map(|&v| gaussian(v, 20_000.0, 3_000.0, 1.0))
        .collect();
    let model = BandModel {
        bands: vec![spec(20_000.0, 2_000.0, 1.0)],
        baseline: BaselineModel::Linear,
        ties: vec![],
    };
    let opts = FitOptions::default();
    let run = |x: &[f64], y: &[f64], m: &BandModel| bands::fit(x, y, None, m, &opts, &mut |_| true);
    // too few points
    let short = BandModel {
        bands: vec![spec(x[2], 2_000.0, 1.0)],
        ..model.clone()
    };
    let e = run(&x[..4], &y[..4], &short).unwrap_err();
    assert!(e.to_string().contains("too few"), "{e}");
    // constant data
    assert!(run(&x, &vec![0.3; 50], &model)
        .unwrap_err()
        .to_string()
        .contains("same"));
    // NaN and infinity
    let mut bad = y.clone();
    bad[7] = f64::NAN;
    assert!(run(&x, &bad, &model)
        .unwrap_err()
        .to_string()
        .contains("point 8"));
    bad[7] = f64::INFINITY;
    assert!(run(&x, &bad, &model).is_err());
    // band outside the data
    let outside = BandModel {
        bands: vec![spec(40_000.0, 2_000.0, 1.0)],
        ..model.clone()
    };
    assert!(run(&x, &y, &outside)
        .unwrap_err()
        .to_string()
        .contains("outside"));
    // singular Jacobian: two identical bands; best-so-far with a warning, no NaN
    let twin = BandModel {
        bands: vec![spec(20_000.0, 2_000.0, 0.5), spec(20_000.0, 2_000.0, 0.5)],
        ..model.clone()
    };
    let fit = run(&x, &y, &twin).unwrap();
    let json = serde_json::to_string(&fit).unwrap();
    assert!(!json.contains("NaN") && !json.contains("null,\"sigma\":NaN"));
    assert!(fit.statistics.chi2.is_finite());
    // iteration limit: best so far, flagged
    let limited = FitOptions {
        max_iterations: 1,
        ..FitOptions::default()
    };
    let fit = bands::fit(&x, &y, None, &outside_free(&model), &limited, &mut |_| true).unwrap();
    assert_eq!(fit.statistics.stopped, bands::StopReason::IterationLimit);
    assert!(fit.warnings.iter().any(|w| w.contains("did not converge")));
    // cancellation
    let fit = bands::fit(&x, &y, None, &outside_free(&model), &opts, &mut |p| {
        p.iteration < 1
    })
    .unwrap();
    assert_eq!(fit.statistics.stopped, bands::StopReason::Cancelled);
    // empty guess on too-short data
    assert!(bands::guess(&x[..3], &y[..3], Some(2)).is_empty());
}

fn outside_free(model: &BandModel) -> BandModel {
    BandModel {
        bands: vec![spec(18_000.0, 4_000.0, 0.4)],
        ..model.clone()
    }
}

#[test]
fn band_count_selection_prefers_the_true_count() {
    let x = grid(800);
    let mut seed = 12345u64;
    let mut noise = || {
        seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 0.01
    };
    let y: Vec<f64> = x
        .iter()
        .map(|&v| {
            gaussian(v, 15_000.0, 3_000.0, 1.0) + gaussian(v, 22_000.0, 3_000.0, 0.7) + noise()
        })
        .collect();
    let report = bands::select_band_count(
        &x,
        &y,
        None,
        4,
        Shape::Gaussian,
        BaselineModel::Constant,
        &FitOptions::default(),
    )
    .unwrap();
    assert_eq!(report.recommended, 2, "{:?}", report.bic);
    // χ²ᵥ is given for the same counts; one band leaves the second unexplained.
    let counts: Vec<usize> = report.reduced_chi2.iter().map(|r| r.0).collect();
    assert_eq!(counts, report.bic.iter().map(|r| r.0).collect::<Vec<_>>());
    let chi = |n: usize| {
        report
            .reduced_chi2
            .iter()
            .find(|r| r.0 == n)
            .unwrap()
            .1
            .unwrap()
    };
    assert!(chi(1) > 10.0 * chi(2), "χ²ᵥ {:?}", report.reduced_chi2);
}

#[test]
fn edited_bands_are_evaluated_with_the_fitted_baseline() {
    let x = grid(300);
    let y: Vec<f64> = x
        .iter()
        .map(|&v| gaussian(v, 16_000.0, 3_000.0, 0.8) + 0.05)
        .collect();
    let model = BandModel {
        bands: vec![spec(16_500.0, 2_500.0, 0.5)],
        baseline: BaselineModel::Constant,
        ties: Vec::new(),
    };
    let fit = bands::fit(&x, &y, None, &model, &FitOptions::default(), &mut |_| true).unwrap();
    // A band moved by the user: the closed-form Gaussian (IUPAC Gold Book G02597)
    // plus the fitted constant.
    let moved = [spec(20_000.0, 2_000.0, 0.3)];
    let (total, parts, base) = bands::evaluate_bands(&x, &moved, Some(&fit.baseline));
    let a0 = fit.baseline.coefficients[0].value;
    for (i, &v) in x.iter().enumerate() {
        assert!((parts[0][i] - gaussian(v, 20_000.0, 2_000.0, 0.3)).abs() < 1e-12);
        assert!((total[i] - parts[0][i] - a0).abs() < 1e-12 && (base[i] - a0).abs() < 1e-12);
    }
    // A baseline whose coefficients do not fit its model is left out, never indexed past.
    let mut broken = fit.baseline.clone();
    broken.model = BaselineModel::Polynomial(5);
    let (total, _, base) = bands::evaluate_bands(&x, &moved, Some(&broken));
    assert!(base.iter().all(|b| *b == 0.0) && total.iter().all(|t| t.is_finite()));
    assert!(bands::evaluate_bands(&x, &[], None)
        .0
        .iter()
        .all(|t| *t == 0.0));
}

#[test]
fn baseline_names_read_back() {
    // The name shown in warnings and reports is the spelling `--baseline` accepts.
    use ddlens::bands::BaselineModel as B;
    for m in [
        B::None,
        B::Constant,
        B::Linear,
        B::Polynomial(3),
        B::Scattering,
        B::ChargeTransferTail,
    ] {
        assert_eq!(m.to_string().parse::<B>(), Ok(m), "{m}");
    }
}
