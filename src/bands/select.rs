//! How many bands: fits of 1…n bands compared by BIC.

use super::fit::{fit, validate};
use super::{
    guess, BandCountReport, BandFit, BandFitError, BandModel, BaselineModel, FitOptions, Shape,
};

/// Fits 1…max_n bands (starts from [`guess()`](super::guess())) and recommends
/// the smallest count whose BIC is within 2 of the lowest (ΔBIC < 2 is "not worth more
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
