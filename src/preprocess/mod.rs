//! Preprocessing of imported spectra: crop, even resampling, point weights,
//! baselines and Savitzky–Golay smoothing.
//!
//! - [`crop`] keeps points inside a wavenumber window;
//! - [`resample_even`] interpolates linearly onto an even wavenumber grid;
//! - [`point_weights`] gives each point its share of the axis (trapezoid rule),
//!   so a grid even in wavelength does not over-weight the near infrared in a fit;
//! - [`baseline`] estimates a baseline by one of [`BaselineMethod`];
//! - [`savgol`]/[`savgol_coeffs`]: Savitzky–Golay smoothing and derivatives;
//! - [`Step`] and [`apply_steps`]: the cleaning steps of an analysis document.

mod baselines;
mod savgol;
mod steps;
mod whittaker;

use crate::spectrum::{Spectrum, Warning, MAX_POINTS};
use serde::{Deserialize, Serialize};

pub use baselines::MAX_POLYNOMIAL_ORDER;
pub use savgol::{savgol, savgol_coeffs, MAX_WINDOW};
pub use steps::{apply_steps, Step};
pub use whittaker::{whittaker_smooth, MAX_ITERATIONS, MAX_LAMBDA, REFERENCE_POINTS};

/// Why a preprocessing step could not run.
#[derive(Debug, Clone, PartialEq)]
pub enum PreprocessError {
    /// A parameter is out of its range (the message says which and why).
    BadParameter(String),
    /// The spectrum has fewer points than the method needs.
    TooFewPoints { needed: usize, found: usize },
    /// A linear system had no unique solution (e.g. collinear points).
    Singular,
}

impl std::fmt::Display for PreprocessError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PreprocessError::BadParameter(m) => f.write_str(m),
            PreprocessError::TooFewPoints { needed, found } => {
                write!(f, "this needs at least {needed} points; the spectrum has {found}")
            }
            PreprocessError::Singular => f.write_str(
                "the least-squares problem has no unique solution (too few distinct points for the chosen order)",
            ),
        }
    }
}

impl std::error::Error for PreprocessError {}

/// How to estimate a baseline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BaselineMethod {
    /// Least-squares polynomial through the points inside `regions` (cm⁻¹ ranges;
    /// empty = all points).
    Polynomial {
        order: usize,
        regions: Vec<[f64; 2]>,
    },
    /// Asymmetric least squares (Eilers & Boelens 2005); λ per [`REFERENCE_POINTS`] points.
    Asls { lambda: f64, p: f64 },
    /// Asymmetrically reweighted penalised least squares (Baek et al., Analyst 140 (2015) 250).
    Arpls { lambda: f64 },
    /// Lower convex hull of the points (rubber band), in real x.
    RubberBand,
    /// Scattering k·ν̃ⁿ (Rayleigh n = 4; `None` fits n in [0, 6]) under the spectrum.
    Scattering { exponent: Option<f64> },
}

/// The baseline under `y` at every `x` (x ascending).
///
/// A straight-line baseline under a Gaussian band, fitted through band-free
/// regions only, comes back as that line:
///
/// ```
/// use ddlens::preprocess::{baseline, BaselineMethod};
///
/// let x: Vec<f64> = (0..=200).map(|i| 10_000.0 + 100.0 * f64::from(i)).collect();
/// let line = |v: f64| 0.05 + 2e-6 * v;
/// let y: Vec<f64> = x
///     .iter()
///     .map(|&v| line(v) + (-((v - 20_000.0) / 1_500.0).powi(2)).exp())
///     .collect();
/// let method = BaselineMethod::Polynomial {
///     order: 1,
///     regions: vec![[10_000.0, 12_000.0], [28_000.0, 30_000.0]],
/// };
/// let b = baseline(&x, &y, &method)?;
/// assert_eq!(b.len(), x.len());
/// for (v, bv) in x.iter().zip(&b) {
///     assert!((bv - line(*v)).abs() < 1e-9);
/// }
/// # Ok::<(), ddlens::preprocess::PreprocessError>(())
/// ```
pub fn baseline(
    x: &[f64],
    y: &[f64],
    method: &BaselineMethod,
) -> Result<Vec<f64>, PreprocessError> {
    if x.len() != y.len() {
        return Err(PreprocessError::BadParameter(format!(
            "x has {} points but y has {}",
            x.len(),
            y.len()
        )));
    }
    if x.iter().chain(y).any(|v| !v.is_finite()) {
        return Err(PreprocessError::BadParameter(
            "x and y must be finite numbers".into(),
        ));
    }
    match method {
        BaselineMethod::Polynomial { order, regions } => {
            baselines::polynomial(x, y, *order, regions)
        }
        BaselineMethod::Asls { lambda, p } => whittaker::asls(y, *lambda, *p),
        BaselineMethod::Arpls { lambda } => whittaker::arpls(y, *lambda),
        BaselineMethod::RubberBand => baselines::rubber_band(x, y),
        BaselineMethod::Scattering { exponent } => baselines::scattering(x, y, *exponent),
    }
}

/// The points of `s` with lo ≤ ν̃ ≤ hi; saturated ranges are clipped to the window.
pub fn crop(s: &Spectrum, lo: f64, hi: f64) -> Spectrum {
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let keep: Vec<usize> = (0..s.wavenumber.len().min(s.values.len()))
        .filter(|&i| s.wavenumber[i] >= lo && s.wavenumber[i] <= hi)
        .collect();
    Spectrum {
        wavenumber: keep.iter().map(|&i| s.wavenumber[i]).collect(),
        values: keep.iter().map(|&i| s.values[i]).collect(),
        saturated: s
            .saturated
            .iter()
            .filter(|r| r[1] >= lo && r[0] <= hi)
            .map(|r| [r[0].max(lo), r[1].min(hi)])
            .collect(),
        ..s.clone()
    }
}

/// Linear interpolation of `s` onto `points` evenly spaced wavenumbers over its range.
/// With fewer than two points (in `s` or asked for) the spectrum is returned unchanged;
/// more than [`crate::spectrum::MAX_POINTS`] are reduced to that many, with a warning.
pub fn resample_even(s: &Spectrum, points: usize) -> Spectrum {
    let n = s.wavenumber.len().min(s.values.len());
    if n < 2 || points < 2 {
        return s.clone();
    }
    let mut warnings = s.warnings.clone();
    let points = if points > MAX_POINTS {
        warnings.push(Warning::new(
            None,
            format!("resampling asked for {points} points; {MAX_POINTS} were used, the most a spectrum holds"),
        ));
        MAX_POINTS
    } else {
        points
    };
    let (lo, hi) = (s.wavenumber[0], s.wavenumber[n - 1]);
    let step = (hi - lo) / (points - 1) as f64;
    let mut grid = Vec::with_capacity(points);
    let mut values = Vec::with_capacity(points);
    let mut j = 0;
    for i in 0..points {
        let x = if i == points - 1 {
            hi
        } else {
            lo + step * i as f64
        };
        while j + 2 < n && s.wavenumber[j + 1] < x {
            j += 1;
        }
        let (x0, x1) = (s.wavenumber[j], s.wavenumber[j + 1]);
        let t = if x1 > x0 {
            ((x - x0) / (x1 - x0)).clamp(0.0, 1.0)
        } else {
            0.0
        };
        grid.push(x);
        values.push(s.values[j] + t * (s.values[j + 1] - s.values[j]));
    }
    Spectrum {
        wavenumber: grid,
        values,
        warnings,
        ..s.clone()
    }
}

/// Trapezoid weights: half the distance between each point's neighbours
/// (half the single spacing at the ends). They sum to the axis length.
pub fn point_weights(x: &[f64]) -> Vec<f64> {
    let n = x.len();
    (0..n)
        .map(|i| {
            let left = if i > 0 { x[i] - x[i - 1] } else { 0.0 };
            let right = if i + 1 < n { x[i + 1] - x[i] } else { 0.0 };
            0.5 * (left.abs() + right.abs())
        })
        .collect()
}
