//! Band deconvolution in wavenumber space.
//!
//! A spectrum y(ν̃) is modelled as a sum of bands ([`shapes`]) plus a
//! baseline ([`BaselineModel`]) and fitted by the projected
//! Levenberg–Marquardt solver in [`lm`], with ties and bounds compiled in
//! `model`. [`guess()`] makes starting values from a Savitzky–Golay second
//! derivative; [`stats`] gives covariance and information criteria.
//!
//! This module holds the types and re-exports; the work lives in its
//! children: `fit` (data checks, parameter layout, the solve, the report),
//! `select` ([`select_band_count`]), `evaluate` ([`evaluate`],
//! [`evaluate_bands`]).
//!
//! Oscillator strength (when y is the molar absorptivity ε in L mol⁻¹ cm⁻¹):
//! f = (4 ln10 · ε₀ mₑ c² / (N_A e²)) ∫ε dν̃. With CODATA 2018 ε₀, mₑ, c, N_A
//! and e this is 4.31900×10⁻¹⁰ m⁻¹ mol in SI; ∫ε dν̃ in L mol⁻¹ cm⁻² is
//! 10 m mol⁻¹ per unit, so f = 4.319×10⁻⁹ ∫ε dν̃ (CALC; the textbook 4.32×10⁻⁹).

mod evaluate;
mod fit;
pub mod guess;
/// The least-squares solver, now [`crate::solver`]; kept under this path for callers.
pub use crate::solver as lm;
mod model;
mod select;
pub mod shapes;
/// The fit statistics, now [`crate::stats`]; kept under this path for callers.
pub use crate::stats;

pub use evaluate::{evaluate, evaluate_bands, model_of};
pub use fit::{data_spacing, fit};
pub use guess::guess;
pub use lm::{Progress, StopReason};
pub use select::{select_band_count, BIC_MARGIN, MIN_POINTS_PER_FWHM};
pub use shapes::Shape;

use crate::estimate::Estimate;
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
    /// Why the band is left out of the ligand-field analysis, when it is (set
    /// by the analysis's significance test; `None` from a bare band fit).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub left_out: Option<LeftOut>,
}

/// Why a fitted band is kept in the band model but not handed to the
/// assignment (the significance test of `analysis`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LeftOut {
    /// Its height is below a few noise σ.
    BelowNoise,
    /// It is narrower than the spacing of the data points.
    NarrowerThanSpacing,
    /// Its area is a small fraction of the strongest band's.
    SmallArea,
    /// Its centre lies outside the measured range.
    OutsideRange,
    /// A parameter ended on its bound, so the fit did not locate it.
    OnBound,
}

impl fmt::Display for LeftOut {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            LeftOut::BelowNoise => "its height is not clearly above the noise",
            LeftOut::NarrowerThanSpacing => "it is narrower than the spacing of the data points",
            LeftOut::SmallArea => "its area is a tiny fraction of the strongest band's",
            LeftOut::OutsideRange => "its centre lies outside the measured range",
            LeftOut::OnBound => "one of its parameters ended on a bound of the fit",
        })
    }
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
