//! Band deconvolution in wavenumber space.
//!
//! A spectrum y(ν̃) is modelled as a sum of bands ([`shapes`]) plus a
//! baseline ([`BaselineModel`]) and fitted by the projected
//! Levenberg–Marquardt solver in [`lm`], with ties and bounds compiled in
//! `model`. [`guess()`] makes starting values from a Savitzky–Golay second
//! derivative; [`stats`] gives covariance and information criteria.
//!
//! Oscillator strength (when y is the molar absorptivity ε in L mol⁻¹ cm⁻¹):
//! f = (4 ln10 · ε₀ mₑ c² / (N_A e²)) ∫ε dν̃. With CODATA 2018 ε₀, mₑ, c, N_A
//! and e this is 4.31900×10⁻¹⁰ m⁻¹ mol in SI; ∫ε dν̃ in L mol⁻¹ cm⁻² is
//! 10 m mol⁻¹ per unit, so f = 4.319×10⁻⁹ ∫ε dν̃ (CALC; the textbook 4.32×10⁻⁹).

pub mod guess;
/// The least-squares solver, now [`crate::solver`]; kept under this path for callers.
pub use crate::solver as lm;
mod model;
pub mod shapes;
/// The fit statistics, now [`crate::stats`]; kept under this path for callers.
pub use crate::stats;

pub use guess::guess;
pub use lm::{Progress, StopReason};
pub use shapes::Shape;

use crate::estimate::Estimate;
use model::{baseline_params, Compiled, ParamDef};
use serde::{Deserialize, Serialize};
use std::fmt;

/// f = OSCILLATOR_CONSTANT · ∫ε dν̃ (see the module documentation).
pub const OSCILLATOR_CONSTANT: f64 = 4.319e-9;

/// One band to fit: its shape and starting values.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandSpec {
    pub shape: Shape,
    pub centre: f64,
    pub fwhm: f64,
    pub height: f64,
    /// η (pseudo-Voigt), Lorentzian FWHM (Voigt) or skew (skewed Gaussian).
    pub extra: Option<f64>,
    /// Parameters held at their start: "centre", "fwhm", "height", "extra".
    #[serde(default)]
    pub fixed: Vec<String>,
}

/// The baseline fitted together with the bands.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum BaselineModel {
    None,
    Constant,
    #[default]
    Linear,
    Polynomial(usize),
    Scattering,
    ChargeTransferTail,
}

impl std::str::FromStr for BaselineModel {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        let s = s.to_ascii_lowercase();
        Ok(match s.as_str() {
            "none" => BaselineModel::None,
            "constant" => BaselineModel::Constant,
            "linear" => BaselineModel::Linear,
            "scattering" => BaselineModel::Scattering,
            "ct-tail" | "charge-transfer-tail" => BaselineModel::ChargeTransferTail,
            _ => match s.strip_prefix("polynomial").and_then(|o| o.trim_start_matches(':').parse().ok()) {
                Some(order) if order <= 8 => BaselineModel::Polynomial(order),
                _ => return Err(format!(
                    "unknown baseline '{s}'; use none, constant, linear, polynomial:N (N ≤ 8), scattering or ct-tail"
                )),
            },
        })
    }
}

/// The spelling [`FromStr`](std::str::FromStr) reads back ("linear", "polynomial:2", "ct-tail").
impl fmt::Display for BaselineModel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BaselineModel::None => f.write_str("none"),
            BaselineModel::Constant => f.write_str("constant"),
            BaselineModel::Linear => f.write_str("linear"),
            BaselineModel::Polynomial(order) => write!(f, "polynomial:{order}"),
            BaselineModel::Scattering => f.write_str("scattering"),
            BaselineModel::ChargeTransferTail => f.write_str("ct-tail"),
        }
    }
}

/// A linear tie between parameters of two bands (indices into `bands`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Tie {
    /// `fwhm[band] = fwhm[to]`.
    EqualFwhm { band: usize, to: usize },
    /// `centre[band] = centre[to] + spacing`.
    Spacing {
        band: usize,
        to: usize,
        spacing: f64,
    },
    /// `height[band] = ratio · height[to]`.
    HeightRatio { band: usize, to: usize, ratio: f64 },
}

/// Bands, baseline and ties.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct BandModel {
    pub bands: Vec<BandSpec>,
    pub baseline: BaselineModel,
    #[serde(default)]
    pub ties: Vec<Tie>,
}

/// Fit settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitOptions {
    pub max_iterations: usize,
    /// The weights are 1/σ² of the data: do not rescale errors by χ²_ν.
    pub absolute_sigma: bool,
    /// y is ε in L mol⁻¹ cm⁻¹: report oscillator strengths and band classes.
    pub molar_absorptivity: bool,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            max_iterations: 200,
            absolute_sigma: false,
            molar_absorptivity: false,
        }
    }
}

/// A fitted band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandResult {
    pub shape: Shape,
    pub centre: Estimate,
    /// The centre as a vacuum wavelength, 10⁷/ν̃ nm.
    pub centre_nm: Estimate,
    pub fwhm: Estimate,
    pub height: Estimate,
    pub extra: Option<Estimate>,
    pub area: Estimate,
    /// Skewed Gaussian only: the numerically located maximum (cm⁻¹).
    pub maximum: Option<f64>,
    pub oscillator_strength: Option<Estimate>,
    pub class: Option<String>,
    /// Parameters that ended on a bound.
    pub at_bound: Vec<String>,
}

/// A named fitted coefficient.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Coefficient {
    pub name: String,
    pub value: f64,
    pub sigma: Option<f64>,
}

/// The fitted baseline; polynomial coefficients are in t = (ν̃ − x_mid)/x_half.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BaselineResult {
    pub model: BaselineModel,
    pub coefficients: Vec<Coefficient>,
    pub x_mid: f64,
    pub x_half: f64,
    pub x_max: f64,
}

/// Goodness of fit and solver outcome.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Statistics {
    pub chi2: f64,
    pub reduced_chi2: Option<f64>,
    pub r2: Option<f64>,
    pub aic: Option<f64>,
    pub bic: Option<f64>,
    pub points: usize,
    pub parameters: usize,
    pub evaluations: usize,
    pub iterations: usize,
    pub stopped: StopReason,
    pub condition: Option<f64>,
}

/// The result of a band fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandFit {
    pub bands: Vec<BandResult>,
    pub baseline: BaselineResult,
    pub statistics: Statistics,
    /// Names of the free parameters, in the order of `correlation`.
    pub free_parameters: Vec<String>,
    pub correlation: Vec<Vec<f64>>,
    pub warnings: Vec<String>,
}

/// Why a band fit could not be made.
#[derive(Debug, Clone, PartialEq)]
pub enum BandFitError {
    /// x, y (and weights) have different lengths.
    LengthMismatch,
    /// Fewer points than free parameters.
    TooFewPoints { points: usize, parameters: usize },
    /// A value is NaN or infinite (index of the first one).
    NotFinite { index: usize },
    /// Every y value is the same: there is nothing to fit.
    ConstantData,
    /// A weight is negative or not finite.
    BadWeight { index: usize },
    /// A starting band lies outside the data range.
    BandOutsideRange { band: usize, centre: f64 },
    /// A tie refers to a missing band or to a tied parameter.
    BadTie(String),
    /// A starting value is not usable (non-finite, zero width).
    BadStart(String),
    /// The solver refused the problem.
    Solver(lm::LmError),
}

impl fmt::Display for BandFitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BandFitError::LengthMismatch => f.write_str("the x and y columns (and weights) have different lengths"),
            BandFitError::TooFewPoints { points, parameters } => write!(
                f,
                "{points} data points are too few for {parameters} free parameters; use fewer bands or a simpler baseline"
            ),
            BandFitError::NotFinite { index } => write!(f, "point {} is not a finite number (NaN or infinity)", index + 1),
            BandFitError::ConstantData => f.write_str("all y values are the same; there are no bands to fit"),
            BandFitError::BadWeight { index } => write!(f, "weight {} is negative or not finite", index + 1),
            BandFitError::BandOutsideRange { band, centre } => write!(
                f,
                "band {} starts at {centre:.0} cm⁻¹, outside the fitted range",
                band + 1
            ),
            BandFitError::BadTie(m) => write!(f, "a tie is not valid: {m}"),
            BandFitError::BadStart(m) => write!(f, "a starting value is not usable: {m}"),
            BandFitError::Solver(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for BandFitError {}

/// Checks the data: lengths, finiteness, weights, non-constant y.
fn validate(x: &[f64], y: &[f64], weights: Option<&[f64]>) -> Result<(), BandFitError> {
    if x.len() != y.len() || weights.is_some_and(|w| w.len() != x.len()) {
        return Err(BandFitError::LengthMismatch);
    }
    if let Some(index) = x
        .iter()
        .zip(y)
        .position(|(a, b)| !a.is_finite() || !b.is_finite())
    {
        return Err(BandFitError::NotFinite { index });
    }
    if let Some(index) = weights.and_then(|w| w.iter().position(|v| !v.is_finite() || *v < 0.0)) {
        return Err(BandFitError::BadWeight { index });
    }
    if let Some(&first) = y.first() {
        if y.iter().all(|&v| v - first == 0.0) {
            return Err(BandFitError::ConstantData);
        }
    }
    Ok(())
}

/// Builds the parameter layout: names, bounds, ties → q.
#[expect(
    clippy::too_many_lines,
    reason = "over the ~100-line limit; to be split into named steps (issue 15)"
)]
fn compile<'a>(
    x: &'a [f64],
    y: &'a [f64],
    weights: Option<&[f64]>,
    model: &BandModel,
) -> Result<Compiled<'a>, BandFitError> {
    let x_min = x.iter().copied().fold(f64::INFINITY, f64::min);
    let x_max = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let span = (x_max - x_min).max(f64::MIN_POSITIVE);
    let inf = f64::INFINITY;
    let mut params: Vec<ParamDef> = Vec::new();
    let mut band_start = Vec::new();
    let push = |params: &mut Vec<ParamDef>, name: String, value: f64, lower: f64, upper: f64| {
        params.push(ParamDef {
            name,
            value,
            lower,
            upper,
            source: None,
            offset: 0.0,
        });
    };
    for (b, spec) in model.bands.iter().enumerate() {
        if !(spec.centre >= x_min && spec.centre <= x_max) {
            return Err(BandFitError::BandOutsideRange {
                band: b,
                centre: spec.centre,
            });
        }
        if !(spec.fwhm.is_finite() && spec.fwhm > 0.0 && spec.height.is_finite()) {
            return Err(BandFitError::BadStart(format!(
                "band {} needs a positive width and a finite height",
                b + 1
            )));
        }
        band_start.push(params.len());
        let n = b + 1;
        push(
            &mut params,
            format!("band{n}.centre"),
            spec.centre,
            x_min - 0.1 * span,
            x_max + 0.1 * span,
        );
        push(
            &mut params,
            format!("band{n}.fwhm"),
            spec.fwhm,
            1e-4 * span,
            3.0 * span,
        );
        push(
            &mut params,
            format!("band{n}.height"),
            spec.height.max(0.0),
            0.0,
            inf,
        );
        if spec.shape.has_extra() {
            let extra = spec
                .extra
                .unwrap_or_else(|| spec.shape.default_extra(spec.fwhm));
            let (lo, hi) = match spec.shape {
                Shape::PseudoVoigt => (0.0, 1.0),
                Shape::Voigt => (1e-4 * span, 3.0 * span),
                _ => (-20.0, 20.0),
            };
            if !extra.is_finite() {
                return Err(BandFitError::BadStart(format!(
                    "band {}: the extra shape parameter is not finite",
                    b + 1
                )));
            }
            push(
                &mut params,
                format!("band{n}.{}", spec.shape.extra_name().unwrap_or("extra")),
                extra.clamp(lo, hi),
                lo,
                hi,
            );
        }
    }
    let baseline_start = params.len();
    for (name, value, lo, hi) in baseline_params(&model.baseline, x, y) {
        push(&mut params, format!("baseline.{name}"), value, lo, hi);
    }
    // Fixed parameters and ties, then free parameters in order.
    let mut tied: Vec<Option<(usize, f64, f64)>> = vec![None; params.len()];
    for tie in &model.ties {
        let (band, to, slot, factor, offset) = match *tie {
            Tie::EqualFwhm { band, to } => (band, to, 1, 1.0, 0.0),
            Tie::Spacing { band, to, spacing } => (band, to, 0, 1.0, spacing),
            Tie::HeightRatio { band, to, ratio } => (band, to, 2, ratio, 0.0),
        };
        let (Some(&sb), Some(&st)) = (band_start.get(band), band_start.get(to)) else {
            return Err(BandFitError::BadTie(format!(
                "band {} or {} does not exist",
                band + 1,
                to + 1
            )));
        };
        if band == to || !factor.is_finite() || !offset.is_finite() {
            return Err(BandFitError::BadTie(
                "a band cannot be tied to itself, and factors must be finite".into(),
            ));
        }
        tied[sb + slot] = Some((st + slot, factor, offset));
    }
    for (i, t) in tied.iter().enumerate() {
        if let Some((target, _, _)) = t {
            if tied[*target].is_some() {
                return Err(BandFitError::BadTie(format!(
                    "{} is tied to a tied parameter",
                    params[i].name
                )));
            }
        }
    }
    let mut fixed = vec![false; params.len()];
    for (b, spec) in model.bands.iter().enumerate() {
        for name in &spec.fixed {
            let slot = match name.as_str() {
                "centre" | "center" => 0,
                "fwhm" => 1,
                "height" => 2,
                "extra" if spec.shape.has_extra() => 3,
                other => {
                    return Err(BandFitError::BadStart(format!(
                        "band {}: cannot fix '{other}'",
                        b + 1
                    )))
                }
            };
            fixed[band_start[b] + slot] = true;
        }
    }
    let mut free_owner = Vec::new();
    for i in 0..params.len() {
        if tied[i].is_none() && !fixed[i] {
            params[i].source = Some((free_owner.len(), 1.0));
            free_owner.push(i);
        }
    }
    let free_count = free_owner.len();
    for i in 0..params.len() {
        if let Some((target, factor, offset)) = tied[i] {
            let (tv, ts, to) = (
                params[target].value,
                params[target].source,
                params[target].offset,
            );
            match ts {
                Some((k, f)) => {
                    params[i].source = Some((k, factor * f));
                    params[i].offset = factor * to + offset;
                }
                None => params[i].value = factor * tv + offset,
            }
        }
    }
    let sqrt_w = match weights {
        Some(w) => w.iter().map(|v| v.sqrt()).collect(),
        None => vec![1.0; x.len()],
    };
    Ok(Compiled {
        x,
        y,
        sqrt_w,
        shapes: model.bands.iter().map(|b| b.shape).collect(),
        band_start,
        baseline: model.baseline,
        baseline_start,
        params,
        free_count,
        free_owner,
        x_mid: 0.5 * (x_min + x_max),
        x_half: 0.5 * span,
        x_max,
    })
}

/// Bounds and start of the free parameters q, from the parameters they drive.
fn free_bounds(c: &Compiled) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut lower = vec![f64::NEG_INFINITY; c.free_count];
    let mut upper = vec![f64::INFINITY; c.free_count];
    let mut start = vec![0.0; c.free_count];
    for d in &c.params {
        if let Some((k, f)) = d.source {
            let (a, b) = ((d.lower - d.offset) / f, (d.upper - d.offset) / f);
            let (lo, hi) = if f > 0.0 { (a, b) } else { (b, a) };
            lower[k] = lower[k].max(lo);
            upper[k] = upper[k].min(hi);
        }
    }
    for (k, &owner) in c.free_owner.iter().enumerate() {
        start[k] = c.params[owner].value;
    }
    for k in 0..c.free_count {
        if lower[k] > upper[k] {
            upper[k] = lower[k];
        }
        start[k] = start[k].clamp(lower[k], upper[k]);
    }
    (lower, upper, start)
}

/// Fits `model` to (x, y); x in cm⁻¹. `weights` multiply the squared residuals.
///
/// One Gaussian on a sloping line, started 400 cm⁻¹ off: the fit finds the
/// band, and its area is h·FWHM·√(π / (4 ln 2)), the Gaussian integral:
///
/// ```
/// use ddlens::bands::{fit, BandModel, BandSpec, BaselineModel, FitOptions, Shape};
///
/// let x: Vec<f64> = (0..300).map(|i| 12_000.0 + 40.0 * f64::from(i)).collect();
/// let gauss = |v: f64| 0.8 * (-4.0 * 2f64.ln() * ((v - 17_500.0) / 2_600.0).powi(2)).exp();
/// let y: Vec<f64> = x.iter().map(|&v| gauss(v) + 0.02 + 1e-6 * v).collect();
/// let start = BandSpec {
///     shape: Shape::Gaussian,
///     centre: 17_900.0,
///     fwhm: 2_000.0,
///     height: 0.5,
///     extra: None,
///     fixed: vec![],
/// };
/// let model = BandModel { bands: vec![start], baseline: BaselineModel::Linear, ties: vec![] };
/// let result = fit(&x, &y, None, &model, &FitOptions::default(), &mut |_| true)?;
/// let band = &result.bands[0];
/// assert!((band.centre.value - 17_500.0).abs() < 1e-3);
/// assert!((band.fwhm.value - 2_600.0).abs() < 1e-3);
/// let area = 0.8 * 2_600.0 * (std::f64::consts::PI / (4.0 * 2f64.ln())).sqrt();
/// assert!((band.area.value - area).abs() < 1e-6 * area);
/// # Ok::<(), ddlens::bands::BandFitError>(())
/// ```
pub fn fit(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    model: &BandModel,
    opts: &FitOptions,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<BandFit, BandFitError> {
    validate(x, y, weights)?;
    let compiled = compile(x, y, weights, model)?;
    let (lower, upper, start) = free_bounds(&compiled);
    let n = compiled.free_count;
    if x.len() <= n {
        return Err(BandFitError::TooFewPoints {
            points: x.len(),
            parameters: n,
        });
    }
    let lm_opts = lm::LmOptions {
        max_iterations: opts.max_iterations,
        lower,
        upper,
        ..lm::LmOptions::default()
    };
    let report = lm::solve(&compiled, &start, &lm_opts, progress).map_err(BandFitError::Solver)?;
    Ok(report_fit(&compiled, &report, opts))
}

/// Turns the solver report into per-band results, statistics and warnings.
#[expect(
    clippy::too_many_lines,
    reason = "over the ~100-line limit; to be split into named steps (issue 15)"
)]
fn report_fit(c: &Compiled, report: &lm::LmReport, opts: &FitOptions) -> BandFit {
    let m = c.x.len();
    let n = c.free_count;
    let p = c.expand(&report.x);
    let mut warnings = Vec::new();
    let include: Vec<bool> = report.at_bound.iter().map(|b| !b).collect();
    let scale = if opts.absolute_sigma {
        stats::ErrorScale::Absolute
    } else {
        stats::ErrorScale::ReducedChi2 {
            chi2: report.chi2,
            points: m,
            parameters: n,
        }
    };
    let cov = stats::covariance(&report.jacobian, m, n, &include, scale);
    if cov.is_none() {
        warnings
            .push("the covariance matrix could not be computed; no uncertainties are given".into());
    }
    if cov.as_ref().is_some_and(|c| c.rank_deficient) {
        warnings.push(
            "some parameters are redundant (singular Jacobian); their uncertainties are not given"
                .into(),
        );
    }
    if !report.stop.converged() {
        warnings.push(format!("the fit did not converge: {}", report.stop));
    }
    // σ of a model parameter and of a derived quantity with gradient in p.
    let grad_q = |gp: &[f64]| -> Vec<f64> {
        let mut g = vec![0.0; n];
        for (d, v) in c.params.iter().zip(gp) {
            if let Some((k, f)) = d.source {
                g[k] += v * f;
            }
        }
        g
    };
    let sigma_of = |i: usize| -> Option<f64> {
        let (k, _) = c.params[i].source?;
        if report.at_bound.get(k).copied().unwrap_or(true) {
            return None;
        }
        let mut gp = vec![0.0; p.len()];
        gp[i] = 1.0;
        cov.as_ref()?.propagate(&grad_q(&gp))
    };
    let est = |i: usize| match sigma_of(i) {
        Some(s) => Estimate::new(p[i], s),
        None => Estimate::exact(p[i]),
    };
    let mut bands = Vec::new();
    for (&shape, &s) in c.shapes.iter().zip(&c.band_start) {
        let extra = if shape.has_extra() { p[s + 3] } else { 0.0 };
        let area = shapes::area(shape, p[s + 1], p[s + 2], extra);
        let mut gp = vec![0.0; p.len()];
        for (slot, idx) in [(1usize, s + 1), (2, s + 2), (3, s + 3)] {
            if slot == 3 && !shape.has_extra() {
                continue;
            }
            let mut q = [p[s + 1], p[s + 2], extra];
            let h = 1e-6 * q[slot - 1].abs().max(1e-9);
            q[slot - 1] += h;
            let up = shapes::area(shape, q[0], q[1], q[2]);
            q[slot - 1] -= 2.0 * h;
            let down = shapes::area(shape, q[0], q[1], q[2]);
            gp[idx] = (up - down) / (2.0 * h);
        }
        let area_sigma = cov.as_ref().and_then(|cv| {
            let touches_bound = c.params[s..s + 3]
                .iter()
                .any(|d| d.source.is_some_and(|(k, _)| report.at_bound[k]));
            if touches_bound {
                None
            } else {
                cv.propagate(&grad_q(&gp))
            }
        });
        let area_est = area_sigma.map_or(Estimate::exact(area), |sg| Estimate::new(area, sg));
        let centre = est(s);
        let centre_nm = if centre.value > 0.0 {
            let nm = 1e7 / centre.value;
            centre.sigma.map_or(Estimate::exact(nm), |sg| {
                Estimate::new(nm, nm * sg / centre.value)
            })
        } else {
            Estimate::exact(0.0)
        };
        let at_bound: Vec<String> = c.params[s..s + if shape.has_extra() { 4 } else { 3 }]
            .iter()
            .filter(|d| d.source.is_some_and(|(k, _)| report.at_bound[k]))
            .map(|d| d.name.clone())
            .collect();
        for name in &at_bound {
            warnings.push(format!("{name} ended on its bound; it has no uncertainty"));
        }
        let height = p[s + 2];
        let (oscillator_strength, class) = if opts.molar_absorptivity {
            let fval = OSCILLATOR_CONSTANT * area;
            let f_est = area_est.sigma.map_or(Estimate::exact(fval), |sg| {
                Estimate::new(fval, OSCILLATOR_CONSTANT * sg)
            });
            (Some(f_est), Some(band_class(height).to_string()))
        } else {
            (None, None)
        };
        bands.push(BandResult {
            shape,
            centre,
            centre_nm,
            fwhm: est(s + 1),
            height: est(s + 2),
            extra: shape.has_extra().then(|| est(s + 3)),
            area: area_est,
            maximum: (shape == Shape::SkewGaussian)
                .then(|| shapes::skew_maximum(p[s], p[s + 1], p[s + 2], extra).0),
            oscillator_strength,
            class,
            at_bound,
        });
    }
    let coefficients = (c.baseline_start..p.len())
        .map(|i| Coefficient {
            name: c.params[i].name.trim_start_matches("baseline.").to_string(),
            value: p[i],
            sigma: sigma_of(i),
        })
        .collect();
    // Goodness of fit.
    let wsum: f64 = c.sqrt_w.iter().map(|w| w * w).sum();
    let ybar = if wsum > 0.0 {
        c.y.iter()
            .zip(&c.sqrt_w)
            .map(|(y, w)| w * w * y)
            .sum::<f64>()
            / wsum
    } else {
        0.0
    };
    let ydev: f64 =
        c.y.iter()
            .zip(&c.sqrt_w)
            .map(|(y, w)| w * w * (y - ybar).powi(2))
            .sum();
    let g = stats::goodness(report.chi2, m, n, ydev);
    let correlation = cov
        .as_ref()
        .map(stats::Covariance::correlation)
        .unwrap_or_default();
    let free_parameters: Vec<String> = {
        let mut names = vec![String::new(); n];
        for d in &c.params {
            if let Some((k, f)) = d.source {
                // A tie with factor exactly 1 and no offset is a plain copy of its target.
                if f.to_bits() == 1f64.to_bits() && d.offset == 0.0 && names[k].is_empty() {
                    names[k].clone_from(&d.name);
                }
            }
        }
        names
    };
    for i in 0..correlation.len() {
        for j in 0..i {
            if correlation[i][j].abs() > 0.95 {
                warnings.push(format!(
                    "{} and {} are strongly correlated (ρ = {:.3})",
                    free_parameters[i], free_parameters[j], correlation[i][j]
                ));
            }
        }
    }
    let narrowest = bands
        .iter()
        .map(|b| b.fwhm.value)
        .fold(f64::INFINITY, f64::min);
    let spacing = 2.0 * c.x_half / (m.max(2) - 1) as f64;
    if narrowest.is_finite() && narrowest / spacing > 10.0 {
        warnings.push(format!(
            "about {:.0} points per band width: neighbouring residuals are correlated, so the error bars are optimistic",
            narrowest / spacing
        ));
    }
    BandFit {
        bands,
        baseline: BaselineResult {
            model: c.baseline,
            coefficients,
            x_mid: c.x_mid,
            x_half: c.x_half,
            x_max: c.x_max,
        },
        statistics: Statistics {
            chi2: g.chi2,
            reduced_chi2: g.reduced_chi2,
            r2: g.r2,
            aic: g.aic,
            bic: g.bic,
            points: m,
            parameters: n,
            evaluations: report.evaluations,
            iterations: report.iterations,
            stopped: report.stop,
            condition: cov.as_ref().map(|c| c.condition),
        },
        free_parameters,
        correlation,
        warnings,
    }
}

/// Suggested band class from ε_max (L mol⁻¹ cm⁻¹); common practice.
pub fn band_class(epsilon_max: f64) -> &'static str {
    if epsilon_max < 1.0 {
        "spin-forbidden"
    } else if epsilon_max < 100.0 {
        "Laporte-forbidden d–d (centrosymmetric)"
    } else if epsilon_max < 1000.0 {
        "d–d without a centre of symmetry (e.g. tetrahedral)"
    } else {
        "charge transfer or fully allowed"
    }
}

/// The band model of a band fit: its fitted values as starting values, its
/// baseline, no locks or ties (what the page puts in the Bands panel after an
/// automatic deconvolution, for the user to edit).
pub fn model_of(fit: &BandFit) -> BandModel {
    BandModel {
        bands: fit
            .bands
            .iter()
            .map(|b| BandSpec {
                shape: b.shape,
                centre: b.centre.value,
                fwhm: b.fwhm.value,
                height: b.height.value,
                extra: b.extra.map(|e| e.value),
                fixed: Vec::new(),
            })
            .collect(),
        baseline: fit.baseline.model,
        ties: Vec::new(),
    }
}

/// The fitted model at `x`: (total, one curve per band, baseline).
pub fn evaluate(x: &[f64], fit: &BandFit) -> (Vec<f64>, Vec<Vec<f64>>, Vec<f64>) {
    evaluate_bands(x, &model_of(fit).bands, Some(&fit.baseline))
}

/// Bands (at their given values) plus a fitted baseline (none: zero) at `x`:
/// (total, one curve per band, baseline). Used to redraw bands the user edits.
pub fn evaluate_bands(
    x: &[f64],
    bands: &[BandSpec],
    baseline: Option<&BaselineResult>,
) -> (Vec<f64>, Vec<Vec<f64>>, Vec<f64>) {
    let mut p = Vec::new();
    let mut band_start = Vec::new();
    for b in bands {
        band_start.push(p.len());
        p.extend([b.centre, b.fwhm, b.height]);
        if b.shape.has_extra() {
            p.push(b.extra.unwrap_or_else(|| b.shape.default_extra(b.fwhm)));
        }
    }
    let baseline_start = p.len();
    let (model, x_mid, x_half, x_max) = match baseline {
        Some(bl) => {
            p.extend(bl.coefficients.iter().map(|c| c.value));
            (bl.model, bl.x_mid, bl.x_half, bl.x_max)
        }
        None => (BaselineModel::None, 0.0, 1.0, 1.0),
    };
    // A baseline whose coefficient count does not match its model is dropped.
    let expected = match model {
        BaselineModel::None => 0,
        BaselineModel::Constant => 1,
        BaselineModel::Linear => 2,
        BaselineModel::Polynomial(k) => k + 1,
        BaselineModel::Scattering => 3,
        BaselineModel::ChargeTransferTail => 4,
    };
    let model = if p.len() - baseline_start == expected {
        model
    } else {
        p.truncate(baseline_start);
        BaselineModel::None
    };
    let compiled = Compiled {
        x,
        y: x,
        sqrt_w: Vec::new(),
        shapes: bands.iter().map(|b| b.shape).collect(),
        band_start,
        baseline: model,
        baseline_start,
        params: p
            .iter()
            .map(|&v| ParamDef {
                name: String::new(),
                value: v,
                lower: v,
                upper: v,
                source: None,
                offset: 0.0,
            })
            .collect(),
        free_count: 0,
        free_owner: Vec::new(),
        x_mid,
        x_half: if x_half.is_finite() && x_half != 0.0 {
            x_half
        } else {
            1.0
        },
        x_max: if x_max.is_finite() && x_max != 0.0 {
            x_max
        } else {
            1.0
        },
    };
    compiled.curves(&p, x)
}

/// BIC for each band count.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandCountReport {
    /// (number of bands, BIC) for every count that could be fitted.
    pub bic: Vec<(usize, f64)>,
    /// (number of bands, reduced χ²) for the same counts.
    #[serde(default)]
    pub reduced_chi2: Vec<(usize, Option<f64>)>,
    pub recommended: usize,
    pub best: BandFit,
}

/// Fits 1…max_n bands (starts from [`guess()`]) and recommends the smallest
/// count whose BIC is within 2 of the lowest (ΔBIC < 2 is "not worth more
/// than a bare mention", Kass & Raftery 1995, from memory).
pub fn select_band_count(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    max_n: usize,
    shape: Shape,
    baseline: BaselineModel,
    opts: &FitOptions,
) -> Result<BandCountReport, BandFitError> {
    validate(x, y, weights)?;
    let mut fits: Vec<(usize, f64, BandFit)> = Vec::new();
    let mut last_error = None;
    for n in 1..=max_n.max(1) {
        let mut bands = guess(x, y, Some(n));
        for b in &mut bands {
            b.shape = shape;
        }
        let model = BandModel {
            bands,
            baseline,
            ties: Vec::new(),
        };
        match fit(x, y, weights, &model, opts, &mut |_| true) {
            Ok(f) => {
                if let Some(bic) = f.statistics.bic {
                    fits.push((n, bic, f));
                }
            }
            Err(e) => last_error = Some(e),
        }
    }
    let lowest = fits.iter().map(|f| f.1).fold(f64::INFINITY, f64::min);
    let Some(pos) = fits.iter().position(|f| f.1 <= lowest + 2.0) else {
        return Err(last_error.unwrap_or(BandFitError::ConstantData));
    };
    let bic = fits.iter().map(|f| (f.0, f.1)).collect();
    let reduced_chi2 = fits
        .iter()
        .map(|f| (f.0, f.2.statistics.reduced_chi2))
        .collect();
    let (recommended, _, best) = fits.swap_remove(pos);
    Ok(BandCountReport {
        bic,
        reduced_chi2,
        recommended,
        best,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use lm::LeastSquares;

    /// Issue 14: the free slot of a width tie belongs to the target band, so
    /// the fit starts from the target's FWHM, not from the tied band's own.
    #[test]
    // Exact comparison meant: a start value copied from its target is exactly that value.
    #[allow(clippy::float_cmp)]
    fn a_width_tie_starts_from_its_targets_width() {
        let x: Vec<f64> = (0..40).map(|i| 10_000.0 + 500.0 * f64::from(i)).collect();
        let y = vec![1.0; x.len()];
        let band = |centre: f64, fwhm: f64| BandSpec {
            shape: Shape::Gaussian,
            centre,
            fwhm,
            height: 1.0,
            extra: None,
            fixed: Vec::new(),
        };
        let model = BandModel {
            bands: vec![band(15_000.0, 2_000.0), band(22_000.0, 3_500.0)],
            baseline: BaselineModel::None,
            ties: vec![Tie::EqualFwhm { band: 1, to: 0 }],
        };
        let c = compile(&x, &y, None, &model).unwrap();
        let (_, _, start) = free_bounds(&c);
        let (k, _) = c.params[c.band_start[0] + 1].source.unwrap();
        assert_eq!(start[k], 2_000.0);
    }

    /// The tied, fixed and baseline Jacobian (J·A) against central differences.
    #[test]
    fn compiled_jacobian_matches_finite_differences() {
        let x: Vec<f64> = (0..60).map(|i| 10_000.0 + 300.0 * f64::from(i)).collect();
        let y: Vec<f64> = x.iter().map(|v| (v / 4000.0).sin() + 2.0).collect();
        for baseline in [
            BaselineModel::Polynomial(3),
            BaselineModel::Scattering,
            BaselineModel::ChargeTransferTail,
        ] {
            let band = |shape, c: f64, extra| BandSpec {
                shape,
                centre: c,
                fwhm: 3_000.0,
                height: 0.7,
                extra,
                fixed: Vec::new(),
            };
            let model = BandModel {
                bands: vec![
                    band(Shape::Voigt, 14_000.0, Some(800.0)),
                    band(Shape::SkewGaussian, 19_000.0, Some(1.5)),
                    band(Shape::PseudoVoigt, 24_000.0, Some(0.3)),
                ],
                baseline,
                ties: vec![
                    Tie::Spacing {
                        band: 2,
                        to: 1,
                        spacing: 5_000.0,
                    },
                    Tie::HeightRatio {
                        band: 1,
                        to: 0,
                        ratio: 0.8,
                    },
                ],
            };
            let c = compile(&x, &y, None, &model).unwrap();
            let (_, _, q) = free_bounds(&c);
            let (m, n) = (x.len(), c.free_count);
            let mut r = vec![0.0; m];
            let mut jac = vec![0.0; m * n];
            assert!(c.evaluate(&q, &mut r, Some(&mut jac)));
            for k in 0..n {
                let h = 1e-6 * q[k].abs().max(1e-3);
                let (mut up, mut down) = (q.clone(), q.clone());
                up[k] += h;
                down[k] -= h;
                let (mut ru, mut rd) = (vec![0.0; m], vec![0.0; m]);
                c.evaluate(&up, &mut ru, None);
                c.evaluate(&down, &mut rd, None);
                for i in 0..m {
                    let fd = (ru[i] - rd[i]) / (2.0 * h);
                    let an = jac[k * m + i];
                    assert!(
                        (fd - an).abs() <= 1e-5 * (1.0 + an.abs()),
                        "{baseline:?} q{k} point {i}: {an} vs {fd}"
                    );
                }
            }
        }
    }
}
