//! Every default the analysis and the page rely on, defined once.
//!
//! The page reads them all through [`Defaults::get`] (the wasm facade's
//! `defaults()`), so its script holds no science constant of its own.

use super::document::{BandCount, BandSetup};
use crate::bands::{BaselineModel, Shape};
use crate::preprocess::BaselineMethod;
use serde::Serialize;

/// A band is assigned only when its height is at least this many noise σ
/// (common practice: a feature under about 3σ is not a detection).
pub const SIGNIFICANT_HEIGHT: f64 = 3.0;

/// A band is assigned only when its area is at least this fraction of the
/// strongest band's. Low, because a spin-forbidden line is both weak and
/// narrow: a ²E line 150 cm⁻¹ wide at 4 % of the height of a 2 800 cm⁻¹ band
/// has 0.2 % of its area (CALC, the sharp-line case of the hard cases).
pub const SIGNIFICANT_AREA: f64 = 0.001;

/// How far (as a fraction of its energy) a user's choice may lie from the band
/// it is matched to.
pub const CHOICE_MATCH: f64 = 0.03;

/// Width below which a band is read as a spin-flip line, cm⁻¹ (common
/// practice: spin-forbidden intraconfigurational bands are tens to hundreds of
/// cm⁻¹ wide).
pub const NARROW_BAND: f64 = 800.0;

/// The band count tried up to when it is chosen automatically.
pub const AUTO_BANDS: usize = 6;
/// The largest band count the automatic choice may be asked to try.
pub const MAX_AUTO_BANDS: usize = 12;
/// The largest fixed band count.
pub const MAX_BANDS: usize = 30;
/// Fewest usable points a band fit needs.
pub const MIN_FIT_POINTS: usize = 8;
/// Iteration limit of a band fit.
pub const MAX_ITERATIONS: usize = 200;

/// The baselines tried under the bands when none is given (lower BIC wins).
/// The charge-transfer tail is one of them so that a charge-transfer band
/// rising into the UV end is taken up by the baseline, not by d–d bands.
pub const BASELINE_CANDIDATES: [BaselineModel; 3] = [
    BaselineModel::Linear,
    BaselineModel::Scattering,
    BaselineModel::ChargeTransferTail,
];

/// AsLS baseline defaults: λ (per [`crate::preprocess::REFERENCE_POINTS`]
/// points) and the asymmetry p. The Whittaker penalty follows features of
/// about λ^¼ points; d–d bands are thousands of cm⁻¹ wide, a hundred or more
/// points of a typical spectrum, so λ sits at the stiff end and p at the low
/// end of the ranges Eilers & Boelens (2005, "Baseline correction with
/// asymmetric least squares smoothing") suggest, 10² ≤ λ ≤ 10⁹ and
/// 0.001 ≤ p ≤ 0.1.
pub const ASLS_LAMBDA: f64 = 1e9;
pub const ASLS_P: f64 = 0.001;
/// arPLS baseline default λ, per the same reference point count (as stiff as AsLS's).
pub const ARPLS_LAMBDA: f64 = 1e9;

/// Savitzky–Golay smoothing defaults: window (points, odd) and polynomial order.
pub const SMOOTH_WINDOW: usize = 11;
pub const SMOOTH_ORDER: usize = 2;

impl Default for BandSetup {
    fn default() -> Self {
        BandSetup {
            count: BandCount::Auto(AUTO_BANDS),
            shape: Shape::Gaussian,
            baseline: None,
            max_iterations: MAX_ITERATIONS,
            range: None,
            model: None,
        }
    }
}

/// Number formatting of an [`crate::estimate::Estimate`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NumberFormat {
    /// Significant digits of an uncertainty; the value is rounded to the same decade.
    pub sigma_digits: usize,
    /// Significant digits of a value without uncertainty (trailing zeros dropped).
    pub plain_digits: usize,
}

/// The cleaning panel's starting values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cleaning {
    pub smooth_window: usize,
    pub smooth_order: usize,
    /// One starting method per baseline kind, with its parameters.
    pub baselines: Vec<BaselineMethod>,
}

/// Every default, as the page reads it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Defaults {
    /// C/B used when the ion's free-ion table gives none.
    pub c_over_b_fallback: f64,
    pub choice_match: f64,
    pub narrow_band: f64,
    /// Significance test: least height in noise σ, least area as a fraction
    /// of the strongest band, least data spacings per FWHM.
    pub significant_height: f64,
    pub significant_area: f64,
    pub min_points_per_fwhm: f64,
    /// Band count: a BIC within this of the lowest counts as as good, and the smaller count wins.
    pub bic_margin: f64,
    pub auto_bands: usize,
    pub max_auto_bands: usize,
    pub max_bands: usize,
    pub baseline_candidates: Vec<BaselineModel>,
    pub bands: BandSetup,
    pub cleaning: Cleaning,
    /// Sample colours, `#rrggbb`, in the order samples take them (Okabe–Ito).
    pub palette: Vec<String>,
    pub number_format: NumberFormat,
    /// The schema of documents and projects this build writes.
    pub schema: u32,
}

impl Defaults {
    /// The defaults of this build.
    pub fn get() -> Self {
        Defaults {
            c_over_b_fallback: crate::lf_fit::DEFAULT_C_OVER_B,
            choice_match: CHOICE_MATCH,
            narrow_band: NARROW_BAND,
            significant_height: SIGNIFICANT_HEIGHT,
            significant_area: SIGNIFICANT_AREA,
            min_points_per_fwhm: crate::bands::MIN_POINTS_PER_FWHM,
            bic_margin: crate::bands::BIC_MARGIN,
            auto_bands: AUTO_BANDS,
            max_auto_bands: MAX_AUTO_BANDS,
            max_bands: MAX_BANDS,
            baseline_candidates: BASELINE_CANDIDATES.to_vec(),
            bands: BandSetup::default(),
            cleaning: Cleaning {
                smooth_window: SMOOTH_WINDOW,
                smooth_order: SMOOTH_ORDER,
                baselines: vec![
                    BaselineMethod::Polynomial {
                        order: 1,
                        regions: Vec::new(),
                    },
                    BaselineMethod::RubberBand,
                    BaselineMethod::Asls {
                        lambda: ASLS_LAMBDA,
                        p: ASLS_P,
                    },
                    BaselineMethod::Arpls {
                        lambda: ARPLS_LAMBDA,
                    },
                    BaselineMethod::Scattering { exponent: None },
                ],
            },
            palette: crate::figures::style::SERIES
                .iter()
                .map(|c| format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2))
                .collect(),
            number_format: NumberFormat {
                sigma_digits: crate::estimate::SIGMA_DIGITS,
                plain_digits: crate::estimate::PLAIN_DIGITS,
            },
            schema: super::SCHEMA,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_palette_reads_as_okabe_ito_hex_colours() {
        // Okabe & Ito, "Color Universal Design" (2008): blue is (0, 114, 178),
        // vermillion (213, 94, 0).
        let v = serde_json::to_value(Defaults::get()).unwrap();
        assert_eq!(v["palette"][0], "#0072b2");
        assert_eq!(v["palette"][1], "#d55e00");
    }

    /// The default AsLS and arPLS baselines under a 3 000 cm⁻¹ band on a
    /// sloping line (1 000 points over 10 000–30 000 cm⁻¹) stay near the line:
    /// at the band maximum within 10 % of the band height (the former
    /// λ = 10⁵, p = 0.01 followed the band to about half its height).
    #[test]
    fn the_default_whittaker_baselines_do_not_follow_a_band_thousands_of_wavenumbers_wide() {
        let x: Vec<f64> = (0..1000).map(|i| 10_000.0 + 20.0 * f64::from(i)).collect();
        let line = |v: f64| 0.1 + 2e-6 * (v - 10_000.0);
        let y: Vec<f64> = x
            .iter()
            .map(|&v| {
                line(v) + (-4.0 * std::f64::consts::LN_2 * ((v - 20_000.0) / 3000.0).powi(2)).exp()
            })
            .collect();
        for method in &Defaults::get().cleaning.baselines {
            if !matches!(
                method,
                BaselineMethod::Asls { .. } | BaselineMethod::Arpls { .. }
            ) {
                continue;
            }
            let b = crate::preprocess::baseline(&x, &y, method).unwrap();
            let at_peak = b[500] - line(x[500]);
            assert!(
                at_peak.abs() < 0.1,
                "{method:?}: {at_peak} above the line at the maximum"
            );
        }
    }

    #[test]
    fn the_band_setup_default_is_the_documented_one() {
        let v = serde_json::to_value(Defaults::get()).unwrap();
        assert_eq!(v["bands"]["count"]["auto"], AUTO_BANDS);
        assert_eq!(v["bands"]["shape"], "gaussian");
        assert_eq!(v["c_over_b_fallback"], 4.5);
    }
}
