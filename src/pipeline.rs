//! The whole analysis in one function: import → preprocessing → band
//! deconvolution → assignment → ligand-field fit.
//!
//! The browser (through the wasm facade) and `ddlens analyze` both call
//! [`analyze_spectrum`] / [`analyze_file`] with the same [`AnalysisOptions`],
//! so the page and the shell give identical numbers for the same file.
//!
//! Choices made here (each also stated in the output's warnings where it applies):
//! - points inside saturated ranges are left out of the band fit;
//! - every point is weighted by its share of the wavenumber axis (trapezoid
//!   weights normalised to a mean of 1), so a grid even in wavelength does not
//!   over-weight the near infrared;
//! - a band's position uncertainty for the ligand-field fit is its fitted σ
//!   combined in quadrature with 0.5 % of its energy, an allowance for the
//!   band-shape model (common practice: maxima of broad d–d bands are rarely
//!   reproducible to better than about 0.5–1 %);
//! - bands narrower than 800 cm⁻¹ are read as spin-flip lines, so spin-forbidden
//!   transitions are considered (common practice: spin-forbidden intraconfigurational
//!   bands are tens to hundreds of cm⁻¹ wide);
//! - when there are more bands than the model has transitions, the highest
//!   are set aside as not d–d (assumed charge transfer), one at a time;
//! - unless a baseline is given, a linear and a scattering (Rayleigh-like,
//!   a + b·ν̃ⁿ with n free) baseline are both tried and the lower BIC wins
//!   (common practice: glasses, powders and turbid solutions scatter; left as
//!   a straight line, the curvature is taken up by small spurious bands at the
//!   high-energy end);
//! - the user's per-band choices (a forced state or "not d–d", given as the
//!   `bands` of the ligand-field request) are matched by energy to the bands
//!   the deconvolution finds: each choice goes to the nearest band within
//!   [`CHOICE_MATCH`] of its energy, so the choices survive a re-analysis
//!   that moves the maxima a little.

use crate::bands::{self, BandFit, BandModel, BaselineModel, FitOptions, Shape};
use crate::lf_fit::{self, FitOutcome, FitRequest, LfFitError, ObservedBand};
use crate::preprocess;
use crate::spectrum::{self, ImportOptions, Quantity, Spectrum, Warning, XUnit};
use serde::{Deserialize, Serialize};
use std::fmt;

/// How many bands to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum BandCount {
    /// Chosen by BIC among 1…max.
    Auto(usize),
    Fixed(usize),
}

/// Every choice of an analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AnalysisOptions {
    #[serde(default)]
    pub import: ImportOptions,
    /// Which spectrum of the file (0 = first).
    #[serde(default)]
    pub spectrum: usize,
    /// Fit only this wavenumber range, cm⁻¹.
    #[serde(default)]
    pub range: Option<[f64; 2]>,
    pub bands: BandCount,
    pub shape: Shape,
    /// The baseline under the bands; `None` (the default) chooses between a
    /// linear and a scattering baseline by BIC.
    #[serde(default)]
    pub baseline: Option<BaselineModel>,
    pub max_iterations: usize,
    /// The ligand-field choices; its `bands` and `observed_from` are filled
    /// from the band table and the spectrum, except that the `assign` and
    /// `not_dd` of any `bands` given here are kept (see [`apply_choices`]).
    /// Without it the analysis stops after the band table.
    #[serde(default)]
    pub ligand_field: Option<FitRequest>,
}

impl Default for AnalysisOptions {
    fn default() -> Self {
        AnalysisOptions {
            import: ImportOptions::default(),
            spectrum: 0,
            range: None,
            bands: BandCount::Auto(6),
            shape: Shape::Gaussian,
            baseline: None,
            max_iterations: 200,
            ligand_field: None,
        }
    }
}

/// What was imported (as `ddlens import` reports it).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ImportSummary {
    pub name: String,
    pub points: usize,
    pub x_range_cm: [f64; 2],
    pub x_unit_read: XUnit,
    pub quantity: Quantity,
    pub saturated: Vec<[f64; 2]>,
    pub warnings: Vec<Warning>,
}

impl ImportSummary {
    pub fn of(s: &Spectrum) -> Self {
        let lo = s.wavenumber.first().copied().unwrap_or(f64::NAN);
        let hi = s.wavenumber.last().copied().unwrap_or(f64::NAN);
        ImportSummary {
            name: s.name.clone(),
            points: s.wavenumber.len(),
            x_range_cm: [lo, hi],
            x_unit_read: s.x_unit_read,
            quantity: s.quantity,
            saturated: s.saturated.clone(),
            warnings: s.warnings.clone(),
        }
    }
}

/// The band table with its model-selection record.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Deconvolution {
    #[serde(flatten)]
    pub fit: BandFit,
    /// (number of bands, BIC) when the count was chosen automatically.
    pub bic_per_band_count: Option<Vec<(usize, f64)>>,
    /// (number of bands, reduced χ²) for the same counts.
    #[serde(default)]
    pub reduced_chi2_per_band_count: Option<Vec<(usize, Option<f64>)>>,
}

/// The result of an analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Analysis {
    pub import: ImportSummary,
    pub bands: Deconvolution,
    /// The band maxima handed to the ligand-field fit.
    pub observed: Vec<ObservedBand>,
    /// The ligand-field fit (as `ddlens fit`), when requested and possible.
    pub fit: Option<FitOutcome>,
    /// Why there is no ligand-field fit, when one was requested.
    pub fit_error: Option<String>,
    pub warnings: Vec<String>,
    pub version: String,
}

/// Why an analysis stopped.
#[derive(Debug, Clone, PartialEq)]
pub enum AnalysisError {
    /// The file could not be read as a spectrum.
    Import(spectrum::ImportError),
    /// The file holds fewer spectra than the one asked for.
    NoSuchSpectrum { asked: usize, found: usize },
    /// Too few points are left in the range to fit.
    TooFewPoints(usize),
    /// The band fit failed.
    Bands(bands::BandFitError),
}

impl fmt::Display for AnalysisError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            AnalysisError::Import(e) => e.fmt(f),
            AnalysisError::NoSuchSpectrum { asked, found } => {
                write!(
                    f,
                    "spectrum {} was asked for, but the file holds {found}",
                    asked + 1
                )
            }
            AnalysisError::TooFewPoints(n) => {
                write!(f, "only {n} usable points are left in the chosen range")
            }
            AnalysisError::Bands(e) => write!(f, "the band fit failed: {e}"),
        }
    }
}

impl std::error::Error for AnalysisError {}

/// Reads a file and runs the whole analysis on the chosen spectrum.
pub fn analyze_file(
    bytes: &[u8],
    file_name: &str,
    opts: &AnalysisOptions,
) -> Result<Analysis, AnalysisError> {
    let spectrum = pick_spectrum(bytes, file_name, opts)?;
    analyze_spectrum(&spectrum, opts, &mut |_| true)
}

/// Imports a file and returns the spectrum `opts.spectrum`.
pub fn pick_spectrum(
    bytes: &[u8],
    file_name: &str,
    opts: &AnalysisOptions,
) -> Result<Spectrum, AnalysisError> {
    let report = spectrum::import(bytes, file_name, &opts.import).map_err(AnalysisError::Import)?;
    let found = report.spectra.len();
    report
        .spectra
        .into_iter()
        .nth(opts.spectrum)
        .ok_or(AnalysisError::NoSuchSpectrum {
            asked: opts.spectrum,
            found,
        })
}

/// x, y and weight of the points a band fit uses.
pub type FitPoints = (Vec<f64>, Vec<f64>, Vec<f64>);

/// The points a band fit uses: inside the range, outside saturated regions,
/// with their trapezoid weights (mean 1).
pub fn fit_points(s: &Spectrum, range: Option<[f64; 2]>) -> FitPoints {
    let s = match range {
        Some([lo, hi]) => preprocess::crop(s, lo, hi),
        None => s.clone(),
    };
    let weights = preprocess::point_weights(&s.wavenumber);
    let mean = weights.iter().sum::<f64>() / weights.len().max(1) as f64;
    let mut out = (Vec::new(), Vec::new(), Vec::new());
    for ((x, y), w) in s.wavenumber.iter().zip(&s.values).zip(&weights) {
        if s.saturated.iter().any(|r| *x >= r[0] && *x <= r[1]) || !y.is_finite() {
            continue;
        }
        out.0.push(*x);
        out.1.push(*y);
        out.2.push(if mean > 0.0 { w / mean } else { 1.0 });
    }
    out
}

/// [`fit_points`] in the options' range, or an error when too few are left to fit.
fn enough_points(s: &Spectrum, opts: &AnalysisOptions) -> Result<FitPoints, AnalysisError> {
    let points = fit_points(s, opts.range);
    if points.0.len() < 8 {
        return Err(AnalysisError::TooFewPoints(points.0.len()));
    }
    Ok(points)
}

/// Resolves the bands of a spectrum (the band-table half of the analysis).
pub fn deconvolve(
    s: &Spectrum,
    opts: &AnalysisOptions,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    let (x, y, w) = enough_points(s, opts)?;
    let fit_opts = fit_options(s, opts);
    let candidates = match opts.baseline {
        Some(b) => vec![b],
        None => vec![BaselineModel::Linear, BaselineModel::Scattering],
    };
    let mut best: Option<Deconvolution> = None;
    let mut tried = Vec::new();
    let mut last_error = None;
    for &baseline in &candidates {
        match deconvolve_with(&x, &y, &w, opts, baseline, &fit_opts, progress) {
            Ok(d) => {
                let bic = d.fit.statistics.bic.unwrap_or(f64::INFINITY);
                tried.push(format!("{baseline} {bic:.1}"));
                let better = best
                    .as_ref()
                    .is_none_or(|b| bic < b.fit.statistics.bic.unwrap_or(f64::INFINITY));
                if better {
                    best = Some(d);
                }
            }
            Err(e) => last_error = Some(e),
        }
    }
    let mut best = match (best, last_error) {
        (Some(b), _) => b,
        (None, Some(e)) => return Err(e),
        (None, None) => return Err(AnalysisError::TooFewPoints(x.len())),
    };
    if candidates.len() > 1 {
        best.fit.warnings.push(format!(
            "baseline chosen by BIC: {} (BIC {})",
            best.fit.baseline.model,
            tried.join(", ")
        ));
    }
    Ok(best)
}

/// The band fit with one baseline model.
fn deconvolve_with(
    x: &[f64],
    y: &[f64],
    w: &[f64],
    opts: &AnalysisOptions,
    baseline: BaselineModel,
    fit_opts: &FitOptions,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    match opts.bands {
        BandCount::Auto(max) => {
            let r = bands::select_band_count(
                x,
                y,
                Some(w),
                max.clamp(1, 12),
                opts.shape,
                baseline,
                fit_opts,
            )
            .map_err(AnalysisError::Bands)?;
            Ok(Deconvolution {
                fit: r.best,
                bic_per_band_count: Some(r.bic),
                reduced_chi2_per_band_count: Some(r.reduced_chi2),
            })
        }
        BandCount::Fixed(n) => {
            let mut specs = bands::guess(x, y, Some(n.clamp(1, 30)));
            if specs.is_empty() {
                return Err(AnalysisError::TooFewPoints(x.len()));
            }
            for b in &mut specs {
                b.shape = opts.shape;
            }
            let model = BandModel {
                bands: specs,
                baseline,
                ties: Vec::new(),
            };
            let fit = bands::fit(x, y, Some(w), &model, fit_opts, progress)
                .map_err(AnalysisError::Bands)?;
            Ok(Deconvolution {
                fit,
                bic_per_band_count: None,
                reduced_chi2_per_band_count: None,
            })
        }
    }
}

/// Fits a given band model (the user's edited bands, locks and ties) to a
/// spectrum with the same points, weights and settings as [`deconvolve`].
pub fn refit(
    s: &Spectrum,
    model: &BandModel,
    opts: &AnalysisOptions,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    let (x, y, w) = enough_points(s, opts)?;
    let fit = bands::fit(&x, &y, Some(&w), model, &fit_options(s, opts), progress)
        .map_err(AnalysisError::Bands)?;
    Ok(Deconvolution {
        fit,
        bic_per_band_count: None,
        reduced_chi2_per_band_count: None,
    })
}

fn fit_options(s: &Spectrum, opts: &AnalysisOptions) -> FitOptions {
    FitOptions {
        max_iterations: opts.max_iterations,
        molar_absorptivity: s.quantity == Quantity::MolarAbsorptivity,
        ..FitOptions::default()
    }
}

/// Width below which a band is read as a spin-flip line, cm⁻¹ (see the module docs).
pub const NARROW_BAND: f64 = 800.0;

/// The band maxima of a band fit, as input to the ligand-field fit.
pub fn observed_bands(fit: &BandFit, quantity: Quantity) -> Vec<ObservedBand> {
    fit.bands
        .iter()
        .filter(|b| b.centre.value.is_finite() && b.centre.value > 0.0)
        .map(|b| {
            let energy = b.maximum.unwrap_or(b.centre.value);
            let stat = b.centre.sigma.unwrap_or(0.0);
            ObservedBand {
                energy,
                sigma: Some((stat * stat + (0.005 * energy).powi(2)).sqrt()),
                epsilon: (quantity == Quantity::MolarAbsorptivity).then_some(b.height.value),
                fwhm: Some(b.fwhm.value),
                not_dd: false,
                assign: None,
            }
        })
        .collect()
}

/// How far (as a fraction of its energy) a choice may lie from the band it is matched to.
pub const CHOICE_MATCH: f64 = 0.03;

/// Copies the user's choices (`assign`, `not_dd`) onto the nearest band of
/// `observed` within [`CHOICE_MATCH`]; returns a warning for each choice that
/// matched no band. A choice with neither is ignored.
pub fn apply_choices(observed: &mut [ObservedBand], choices: &[ObservedBand]) -> Vec<String> {
    let mut warnings = Vec::new();
    for c in choices.iter().filter(|c| c.not_dd || c.assign.is_some()) {
        let nearest = observed
            .iter_mut()
            .filter(|b| (b.energy - c.energy).abs() <= CHOICE_MATCH * c.energy.abs())
            .min_by(|a, b| {
                (a.energy - c.energy)
                    .abs()
                    .total_cmp(&(b.energy - c.energy).abs())
            });
        match nearest {
            Some(b) => {
                b.not_dd = c.not_dd;
                b.assign = if c.not_dd { None } else { c.assign.clone() };
            }
            None => warnings.push(format!(
                "the choice for the band at {:.0} cm⁻¹ matches no band found now and was left out",
                c.energy
            )),
        }
    }
    warnings
}

/// Runs the analysis on a spectrum already imported (the browser's entry point).
pub fn analyze_spectrum(
    s: &Spectrum,
    opts: &AnalysisOptions,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Analysis, AnalysisError> {
    let bands = deconvolve(s, opts, progress)?;
    let mut observed = observed_bands(&bands.fit, s.quantity);
    let mut warnings = Vec::new();
    let (mut fit, mut fit_error) = (None, None);
    if let Some(lf) = &opts.ligand_field {
        warnings.extend(apply_choices(&mut observed, &lf.bands));
        let narrow = observed
            .iter()
            .any(|b| b.fwhm.is_some_and(|w| w < NARROW_BAND));
        if narrow && !lf.spin_forbidden {
            warnings.push(format!("a band narrower than {NARROW_BAND:.0} cm⁻¹ was found: spin-forbidden transitions were considered too"));
        }
        let mut req = FitRequest {
            bands: observed.clone(),
            spin_forbidden: lf.spin_forbidden || narrow,
            observed_from: s
                .wavenumber
                .first()
                .copied()
                .map(|lo| opts.range.map_or(lo, |r| lo.max(r[0]))),
            ..lf.clone()
        };
        loop {
            match lf_fit::fit(&req) {
                Ok(o) => {
                    fit = Some(o);
                    break;
                }
                Err(LfFitError::NoCandidates(m))
                    if req.bands.iter().filter(|b| !b.not_dd).count() > 1 =>
                {
                    if let Some(top) = req
                        .bands
                        .iter_mut()
                        .filter(|b| !b.not_dd && b.assign.is_none())
                        .max_by(|a, b| a.energy.total_cmp(&b.energy))
                    {
                        top.not_dd = true;
                        warnings.push(format!(
                            "the band at {:.0} cm⁻¹ was set aside as not d–d ({m})",
                            top.energy
                        ));
                    }
                }
                Err(e) => {
                    fit_error = Some(e.to_string());
                    break;
                }
            }
        }
        observed = req.bands;
    }
    Ok(Analysis {
        import: ImportSummary::of(s),
        bands,
        observed,
        fit,
        fit_error,
        warnings,
        version: crate::VERSION.to_string(),
    })
}
