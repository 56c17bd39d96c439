//! Cleaning steps as data, and the one function that applies them.
//!
//! A [`Step`] list is part of an analysis document: the page and the command
//! line both clean a spectrum by calling [`apply_steps`] on the imported data,
//! so a saved project reproduces the cleaned spectrum exactly. Steps run in
//! the order given (the page offers crop, then smoothing, then baseline
//! subtraction).

use super::{baseline, crop, savgol, BaselineMethod, PreprocessError};
use crate::spectrum::{noise, Spectrum, Warning};
use serde::{Deserialize, Serialize};

/// One cleaning step.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Step {
    /// Keep the points with `low` ≤ ν̃ ≤ `high`, cm⁻¹.
    Crop { low: f64, high: f64 },
    /// Savitzky–Golay smoothing over `window` points (odd) with a polynomial of `order`.
    Smooth { window: usize, order: usize },
    /// Subtract the baseline that `method` estimates.
    SubtractBaseline { method: BaselineMethod },
}

/// Fewest points a crop may leave (the page refused fewer than two points).
const MIN_POINTS: usize = 2;

/// Applies `steps` in order to `s`; the warnings say what a step did that the
/// user should know (a subtracted baseline that rises above the data: more
/// than 5 % of the points below zero by more than 3 noise σ,
/// [`crate::spectrum::noise`]).
pub fn apply_steps(
    s: &Spectrum,
    steps: &[Step],
) -> Result<(Spectrum, Vec<Warning>), PreprocessError> {
    let mut out = s.clone();
    let mut warnings = Vec::new();
    for (i, step) in steps.iter().enumerate() {
        match step {
            Step::Crop { low, high } => {
                if !low.is_finite() || !high.is_finite() {
                    return Err(PreprocessError::BadParameter(format!(
                        "step {}: the crop limits must be finite numbers of cm⁻¹",
                        i + 1
                    )));
                }
                out = crop(&out, *low, *high);
                if out.wavenumber.len() < MIN_POINTS {
                    return Err(PreprocessError::BadParameter(format!(
                        "step {}: the crop range {low}–{high} cm⁻¹ holds fewer than {MIN_POINTS} points",
                        i + 1
                    )));
                }
            }
            Step::Smooth { window, order } => {
                out.values = savgol(&out.values, *window, *order, 0)?;
            }
            Step::SubtractBaseline { method } => {
                let base = baseline(&out.wavenumber, &out.values, method)?;
                // Negative by more than the noise (3σ): the baseline rose above the data,
                // not just through the scatter of a flat stretch.
                let tolerance =
                    noise::estimate(&out.wavenumber, &out.values).map_or(0.0, |n| 3.0 * n.sigma);
                let mut below = 0;
                for (y, b) in out.values.iter_mut().zip(&base) {
                    *y -= b;
                    if *y < -tolerance {
                        below += 1;
                    }
                }
                if below * 20 > out.values.len() {
                    warnings.push(Warning::new(
                        None,
                        format!(
                            "the subtracted baseline rises above the data at {below} of {} points: the cleaned spectrum goes negative there",
                            out.values.len()
                        ),
                    ));
                }
            }
        }
    }
    Ok((out, warnings))
}
