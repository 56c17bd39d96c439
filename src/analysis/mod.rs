//! The analysis of a document: imported data → cleaning steps → band fit
//! (the user's band model, or the automatic deconvolution) → assignment →
//! ligand-field fit.
//!
//! [`analyze`] takes a [`Document`] and returns it with its [`Results`]
//! filled in. The page (through the wasm facade) and `ddlens analyze` both
//! call it, so the page and the shell give identical numbers for the same
//! document. Its halves are public too: [`deconvolve`] (automatic band fit),
//! [`refit`] (the user's band model) and [`assign`] (assignment and fit from a
//! given band fit).
//!
//! Choices made here (each also stated in the output's warnings where it applies):
//! - points inside saturated ranges are left out of the band fit;
//! - every point is weighted by its share of the wavenumber axis (trapezoid
//!   weights normalised to a mean of 1), so a grid even in wavelength does not
//!   over-weight the near infrared;
//! - the noise σ of the spectrum is estimated from the data before cleaning
//!   (smoothing correlates neighbouring points and hides the noise;
//!   [`crate::spectrum::noise`]), and a band is assigned only when it passes
//!   the significance test of [`significance`] (height, width, area, range,
//!   bounds); the others stay in the band model, marked with their reason;
//! - when no band passes, no ligand-field fit is made and the outcome says so
//!   ([`Outcome`]);
//! - a band's position uncertainty for the ligand-field fit is the σ of its
//!   centre from the deconvolution's covariance (which scales with the
//!   residual scatter, i.e. the noise), with no fixed allowance: a band shape
//!   that does not match (a symmetric shape fitted to a skewed band) shows as
//!   a misfit of the ligand-field model, which scales σ up by the Birge ratio
//!   ([`crate::stats::ErrorScale::AtLeastStated`]);
//! - bands narrower than 800 cm⁻¹ are read as spin-flip lines, so spin-forbidden
//!   transitions are considered (common practice: spin-forbidden intraconfigurational
//!   bands are tens to hundreds of cm⁻¹ wide);
//! - when there are more bands than the model has transitions, the highest
//!   unforced band is set aside as not d–d (assumed charge transfer), one at
//!   a time; when every band left is forced, the fit stops with a reason;
//! - unless a baseline is given, a linear, a charge-transfer tail and a scattering (Rayleigh-like,
//!   a + b·ν̃ⁿ with n free) baseline are both tried and the lower BIC wins
//!   (common practice: glasses, powders and turbid solutions scatter; left as
//!   a straight line, the curvature is taken up by small spurious bands at the
//!   high-energy end);
//! - the user's per-band choices (a forced state or "not d–d", the
//!   [`Choice`]s of the ligand-field options) are matched by energy to the bands
//!   the deconvolution finds: each choice goes to the nearest band within
//!   [`defaults::CHOICE_MATCH`] of its energy, so the choices survive a re-analysis
//!   that moves the maxima a little.

use crate::bands::{self, BandFit, BandModel, BaselineModel, FitOptions};
use crate::lf_fit::global::{self, GlobalFit};
use crate::lf_fit::{self, FitOutcome, FitRequest, LfFitError, ObservedBand};
use crate::preprocess::{self, Step};
use crate::spectrum::noise::{self, Noise};
use crate::spectrum::{self, Quantity, Spectrum, Warning, XUnit};
use serde::{Deserialize, Serialize};
use std::fmt;

pub mod defaults;
pub mod document;
mod load;
mod migrate;
pub mod outcome;
pub mod significance;
mod validate;

pub use crate::bands::model_of;
pub use document::{
    BandCount, BandSetup, Choice, Display, Document, LigandFieldOptions, PageState, Project,
    Results, Sample, SampleData, SeriesSort, Source, View, SCHEMA,
};
pub use load::{schema_of, DocumentError};
pub use outcome::Outcome;

use defaults::NARROW_BAND;

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
    /// A cleaning step could not run.
    Clean(preprocess::PreprocessError),
    /// The document holds no data and names no file to read it from.
    NoData,
    /// The global fit was asked for on a document without a ligand-field fit.
    NoLigandFieldFit,
    /// The global fit could not be made.
    Global(global::GlobalFitError),
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
            AnalysisError::Clean(e) => write!(f, "the cleaning failed: {e}"),
            AnalysisError::NoData => f.write_str("the sample holds no data to analyse"),
            AnalysisError::NoLigandFieldFit => f.write_str(
                "the global fit starts from the ligand-field fit of the bands, and this sample has none yet: analyse it first",
            ),
            AnalysisError::Global(e) => write!(f, "the global fit failed: {e}"),
        }
    }
}

impl std::error::Error for AnalysisError {}

/// Imports a file and returns the spectrum `source.spectrum`, read with `source.import`.
pub fn pick_spectrum(
    bytes: &[u8],
    file_name: &str,
    source: &Source,
) -> Result<Spectrum, AnalysisError> {
    let report =
        spectrum::import(bytes, file_name, &source.import).map_err(AnalysisError::Import)?;
    let found = report.spectra.len();
    report
        .spectra
        .into_iter()
        .nth(source.spectrum)
        .ok_or(AnalysisError::NoSuchSpectrum {
            asked: source.spectrum,
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

/// [`fit_points`] in the setup's range, or an error when too few are left to fit.
fn enough_points(s: &Spectrum, setup: &BandSetup) -> Result<FitPoints, AnalysisError> {
    let points = fit_points(s, setup.range);
    if points.0.len() < defaults::MIN_FIT_POINTS {
        return Err(AnalysisError::TooFewPoints(points.0.len()));
    }
    Ok(points)
}

/// Resolves the bands of a spectrum (the band-table half of the analysis).
pub fn deconvolve(
    s: &Spectrum,
    setup: &BandSetup,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    let (x, y, w) = enough_points(s, setup)?;
    let fit_opts = fit_options(s, setup);
    let candidates = match setup.baseline {
        Some(b) => vec![b],
        None => defaults::BASELINE_CANDIDATES.to_vec(),
    };
    let mut best: Option<Deconvolution> = None;
    let mut tried = Vec::new();
    let mut last_error = None;
    for &baseline in &candidates {
        match deconvolve_with(&x, &y, &w, setup, baseline, &fit_opts, progress) {
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
    setup: &BandSetup,
    baseline: BaselineModel,
    fit_opts: &FitOptions,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    match setup.count {
        BandCount::Auto(max) => {
            let r = bands::select_band_count(
                x,
                y,
                Some(w),
                max.min(defaults::MAX_AUTO_BANDS),
                setup.shape,
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
            let mut specs = bands::guess(x, y, Some(n.clamp(1, defaults::MAX_BANDS)));
            if specs.is_empty() {
                return Err(AnalysisError::TooFewPoints(x.len()));
            }
            for b in &mut specs {
                b.shape = setup.shape;
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
    setup: &BandSetup,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Deconvolution, AnalysisError> {
    let (x, y, w) = enough_points(s, setup)?;
    let fit = bands::fit(&x, &y, Some(&w), model, &fit_options(s, setup), progress)
        .map_err(AnalysisError::Bands)?;
    Ok(Deconvolution {
        fit,
        bic_per_band_count: None,
        reduced_chi2_per_band_count: None,
    })
}

fn fit_options(s: &Spectrum, setup: &BandSetup) -> FitOptions {
    FitOptions {
        max_iterations: setup.max_iterations,
        molar_absorptivity: s.quantity == Quantity::MolarAbsorptivity,
        ..FitOptions::default()
    }
}

/// The band maxima of a band fit, as input to the ligand-field fit: every
/// band not marked as left out by the significance test.
pub fn observed_bands(fit: &BandFit, quantity: Quantity) -> Vec<ObservedBand> {
    fit.bands
        .iter()
        .filter(|b| b.left_out.is_none() && b.centre.value.is_finite() && b.centre.value > 0.0)
        .map(|b| {
            let energy = b.maximum.unwrap_or(b.centre.value);
            ObservedBand {
                energy,
                sigma: b.centre.sigma.filter(|s| s.is_finite() && *s > 0.0),
                epsilon: (quantity == Quantity::MolarAbsorptivity).then_some(b.height.value),
                fwhm: Some(b.fwhm.value),
                not_dd: false,
                assign: None,
            }
        })
        .collect()
}

/// The noise of the data a band fit rests on: the spectrum before cleaning,
/// in the setup's range and the cleaned spectrum's.
fn noise_of(raw: &Spectrum, cleaned: &Spectrum, setup: &BandSetup) -> Option<Noise> {
    let (lo, hi) = (cleaned.wavenumber.first()?, cleaned.wavenumber.last()?);
    let range = match setup.range {
        Some([a, b]) => [a.max(*lo), b.min(*hi)],
        None => [*lo, *hi],
    };
    let (x, y, _) = fit_points(raw, Some(range));
    noise::estimate(&x, &y)
}

/// Marks the bands that fail the significance test (see [`significance`]).
fn mark_significance(
    bands: &mut Deconvolution,
    s: &Spectrum,
    setup: &BandSetup,
    noise: Option<&Noise>,
) {
    let (x, _, _) = fit_points(s, setup.range);
    let (Some(lo), Some(hi)) = (x.first().copied(), x.last().copied()) else {
        return;
    };
    let ctx = significance::Context {
        noise: noise.map(|n| n.sigma),
        spacing: bands::data_spacing(&x),
        range: [lo, hi],
    };
    significance::mark(&mut bands.fit, &ctx);
}

/// Copies the user's choices (`assign`, `not_dd`) onto the nearest band of
/// `observed` within [`defaults::CHOICE_MATCH`]; returns a warning for each
/// choice that matched no band. A choice with neither is ignored.
pub fn apply_choices(observed: &mut [ObservedBand], choices: &[Choice]) -> Vec<String> {
    let mut warnings = Vec::new();
    for c in choices.iter().filter(|c| c.not_dd || c.assign.is_some()) {
        let nearest = observed
            .iter_mut()
            .filter(|b| (b.energy - c.energy).abs() <= defaults::CHOICE_MATCH * c.energy.abs())
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

/// The ligand-field half of an analysis: the band maxima handed to the fit
/// (with the user's choices applied), the fit or why there is none, and warnings.
#[derive(Debug, Clone, PartialEq)]
pub struct Assignment {
    pub observed: Vec<ObservedBand>,
    pub fit: Option<FitOutcome>,
    pub fit_error: Option<String>,
    pub warnings: Vec<String>,
}

/// Assigns the bands of a band fit and fits the ligand field to them.
///
/// When the bands outnumber what the model can take, the highest unforced
/// band is set aside as not d–d, one at a time; when every remaining band is
/// forced (or only one is left), the search stops with the fit's error.
pub fn assign(
    bands: &Deconvolution,
    s: &Spectrum,
    range: Option<[f64; 2]>,
    lf: &LigandFieldOptions,
) -> Assignment {
    let mut observed = observed_bands(&bands.fit, s.quantity);
    if observed.is_empty() {
        // Nothing significant to assign: no fit, no numbers (the outcome says why).
        return Assignment {
            observed,
            fit: None,
            fit_error: None,
            warnings: Vec::new(),
        };
    }
    let mut warnings = apply_choices(&mut observed, &lf.choices);
    let narrow = observed
        .iter()
        .any(|b| b.fwhm.is_some_and(|w| w < NARROW_BAND));
    if narrow && !lf.spin_forbidden {
        warnings.push(format!("a band narrower than {NARROW_BAND:.0} cm⁻¹ was found: spin-forbidden transitions were considered too"));
    }
    let mut req = FitRequest {
        bands: observed,
        spin_forbidden: lf.spin_forbidden || narrow,
        observed_from: s
            .wavenumber
            .first()
            .copied()
            .map(|lo| range.map_or(lo, |r| lo.max(r[0]))),
        ..lf.request()
    };
    let (mut fit, mut fit_error) = (None, None);
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
                } else {
                    fit_error = Some(format!(
                        "{m}; every band left has a forced state, so none can be set aside: the forced states cannot all hold at once (check their order) — change or remove one"
                    ));
                    break;
                }
            }
            Err(e) => {
                fit_error = Some(e.to_string());
                break;
            }
        }
    }
    Assignment {
        observed: req.bands,
        fit,
        fit_error,
        warnings,
    }
}

/// Said when the band count was chosen on smoothed data.
const SMOOTHED: &str = "the data were smoothed before the band fit: smoothing correlates neighbouring points, so the BIC counts more independent points than there are and may favour extra bands (the noise was estimated before smoothing)";

/// One warning per band left out of the assignment, with its reason.
fn left_out_warnings(fit: &BandFit) -> Vec<String> {
    fit.bands
        .iter()
        .filter_map(|b| {
            b.left_out.map(|why| {
                format!(
                    "the band at {:.0} cm⁻¹ is kept in the band model but not assigned: {why}",
                    b.centre.value
                )
            })
        })
        .collect()
}

/// The global fit of the two-step result on the band fit's points, when the
/// ligand-field options ask for it (`Ok(None)` when they do not); its σ rest
/// on the spectrum's noise where it is known (see [`global`]).
fn global_fit(
    s: &Spectrum,
    setup: &BandSetup,
    bands: &Deconvolution,
    lf: &LigandFieldOptions,
    outcome: &FitOutcome,
    noise: Option<&Noise>,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Option<GlobalFit>, AnalysisError> {
    let Some(options) = lf.global else {
        return Ok(None);
    };
    let (x, y, w) = enough_points(s, setup)?;
    let n = lf
        .ion
        .as_deref()
        .and_then(crate::ions::ion)
        .map_or(lf.n, |i| i.d_electrons);
    let start = global::Start {
        n,
        geometry: lf.geometry,
        band_fit: &bands.fit,
        solution: &outcome.best,
        options,
    };
    let points = global::Points {
        x: &x,
        y: &y,
        w: Some(&w),
        noise: noise.map(|n| n.sigma),
    };
    global::fit_outcome(&start, &outcome.alternatives, &points, progress)
        .map(Some)
        .map_err(AnalysisError::Global)
}

/// The global fit of an analysed document, on its results as they stand:
/// the cleaned spectrum, the band fit, the two-step fit and the noise of
/// `doc.results` (what [`analyze`] computes when `ligand_field.global` is
/// set, without fitting the bands again). The options are `options`, or the
/// document's, or the defaults; they are stored in the document, so that a
/// later [`analyze`] recomputes the same global fit.
pub fn fit_globally(
    doc: &Document,
    options: Option<global::GlobalOptions>,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Document, AnalysisError> {
    let mut out = doc.clone();
    let (Some(lf), Some(results)) = (out.ligand_field.as_mut(), out.results.as_mut()) else {
        return Err(AnalysisError::NoLigandFieldFit);
    };
    let outcome = results
        .fit
        .as_ref()
        .ok_or(AnalysisError::NoLigandFieldFit)?;
    lf.global = Some(options.or(lf.global).unwrap_or_default());
    let raw = sample_spectrum(doc)?;
    let (s, _) = preprocess::apply_steps(&raw, &doc.steps).map_err(AnalysisError::Clean)?;
    let noise = results.noise.as_ref();
    results.global = global_fit(&s, &doc.bands, &results.bands, lf, outcome, noise, progress)?;
    Ok(out)
}

/// The spectrum a document's sample holds, as imported (before cleaning).
pub fn sample_spectrum(doc: &Document) -> Result<Spectrum, AnalysisError> {
    let data = doc.sample.data.as_ref().ok_or(AnalysisError::NoData)?;
    Ok(data.spectrum(&doc.sample.name, &doc.sample.metadata))
}

/// Analyses a document: its data, cleaned by its steps, fitted with its band
/// model (or deconvolved automatically when it has none), then assigned and
/// fitted with its ligand-field options. Returns the document with `results`
/// and `program` filled in.
///
/// ```
/// use ddlens::analysis::{analyze, BandCount, BandSetup, Document, Source};
/// let csv = std::fs::read("fixtures/demo/demo-crx7.csv").unwrap();
/// let setup = BandSetup { count: BandCount::Fixed(2), ..BandSetup::default() };
/// let doc = Document::import(&csv, "demo-crx7.csv", Source::default(), setup).unwrap();
/// let done = analyze(&doc, &mut |_| true).unwrap();
/// let results = done.results.unwrap();
/// assert_eq!(results.bands.fit.bands.len(), 2);
/// // The demo's first band is ν₁ = 10Dq = 16 500 cm⁻¹ (fixtures/demo/README.md).
/// assert!((results.observed[0].energy - 16_500.0).abs() < 200.0);
/// ```
pub fn analyze(
    doc: &Document,
    progress: &mut dyn FnMut(bands::lm::Progress) -> bool,
) -> Result<Document, AnalysisError> {
    let raw = sample_spectrum(doc)?;
    let (s, cleaning) = preprocess::apply_steps(&raw, &doc.steps).map_err(AnalysisError::Clean)?;
    let mut bands = match &doc.bands.model {
        Some(model) => refit(&s, model, &doc.bands, progress)?,
        None => deconvolve(&s, &doc.bands, progress)?,
    };
    let noise = noise_of(&raw, &s, &doc.bands);
    mark_significance(&mut bands, &s, &doc.bands, noise.as_ref());
    let a = match &doc.ligand_field {
        Some(lf) => assign(&bands, &s, doc.bands.range, lf),
        None => Assignment {
            observed: observed_bands(&bands.fit, s.quantity),
            fit: None,
            fit_error: None,
            warnings: Vec::new(),
        },
    };
    let mut warnings: Vec<String> = cleaning.into_iter().map(|w| w.message).collect();
    warnings.extend(left_out_warnings(&bands.fit));
    if doc.bands.model.is_none() && doc.steps.iter().any(|st| matches!(st, Step::Smooth { .. })) {
        warnings.push(SMOOTHED.into());
    }
    warnings.extend(a.warnings);
    let assignable = a.observed.len();
    let (outcome, outcome_text) = doc
        .ligand_field
        .as_ref()
        .and_then(|_| outcome::outcome_of(a.fit.as_ref(), assignable, noise.as_ref(), s.quantity))
        .unzip();
    let global = match (&doc.ligand_field, &a.fit) {
        (Some(lf), Some(outcome)) => global_fit(
            &s,
            &doc.bands,
            &bands,
            lf,
            outcome,
            noise.as_ref(),
            progress,
        )
        .map_err(|e| warnings.push(e.to_string()))
        .ok()
        .flatten(),
        _ => None,
    };
    let mut out = doc.clone();
    out.results = Some(Results {
        import: ImportSummary::of(&raw),
        bands,
        observed: a.observed,
        fit: a.fit,
        fit_error: a.fit_error,
        global,
        warnings,
        noise,
        outcome,
        outcome_text,
    });
    out.program = format!("ddlens {}", crate::VERSION);
    Ok(out)
}
