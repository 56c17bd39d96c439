//! How many bands: fits of 0…n bands compared by BIC.
//!
//! - Zero bands (the baseline alone) is a count like any other, so a spectrum
//!   of noise can come out with no band.
//! - Each count grows from the previous one: the fitted bands are kept as
//!   starts and one band is added where the residual is largest
//!   ([`residual_band`]); a count whose growth fails starts afresh from
//!   [`guess()`](super::guess()).
//! - A fit with a band narrower than [`MIN_POINTS_PER_FWHM`] data spacings,
//!   or with a width on its bound, does not resolve that band and is not
//!   recommended.
//! - The recommendation is the smallest eligible count whose BIC lies within
//!   [`BIC_MARGIN`] of the lowest: on the scale of Kass & Raftery (1995,
//!   *JASA* 90, 773–795, table of 2 ln B), a BIC difference up to 6 is at
//!   most "positive" evidence, above 6 "strong"; one more band must earn
//!   strong evidence.
//! - The search stops at the first count that does not lower the lowest BIC
//!   by more than [`BIC_MARGIN`] (it could not be recommended over the
//!   smaller one); grown from the residual, each real band lowers it by far
//!   more.

use super::fit::{data_spacing, fit, validate};
use super::guess::residual_band;
use super::{
    evaluate, guess, BandCountReport, BandFit, BandFitError, BandModel, BaselineModel, FitOptions,
    Shape,
};

/// A BIC this much above the lowest still counts as "as good" (Kass & Raftery 1995).
pub const BIC_MARGIN: f64 = 6.0;
/// A band must span this many data spacings at half height to count as resolved.
pub const MIN_POINTS_PER_FWHM: f64 = 3.0;
/// Counts in a row without a BIC lower by [`BIC_MARGIN`] after which the search stops.
const PATIENCE: usize = 1;

/// One fitted count: the count, its BIC, whether it may be recommended, the fit.
struct Tried {
    n: usize,
    bic: f64,
    eligible: bool,
    fit: BandFit,
}

/// The data and settings every count is fitted with.
struct Problem<'a> {
    x: &'a [f64],
    y: &'a [f64],
    weights: Option<&'a [f64]>,
    shape: Shape,
    baseline: BaselineModel,
    opts: &'a FitOptions,
    spacing: f64,
}

impl Problem<'_> {
    fn fit_bands(&self, mut bands: Vec<super::BandSpec>) -> Result<BandFit, BandFitError> {
        for b in &mut bands {
            b.shape = self.shape;
        }
        let model = BandModel {
            bands,
            baseline: self.baseline,
            ties: Vec::new(),
        };
        fit(self.x, self.y, self.weights, &model, self.opts, &mut |_| {
            true
        })
    }

    /// The previous fit's bands plus one where its residual is largest.
    fn grown(&self, prev: &BandFit) -> Option<Vec<super::BandSpec>> {
        let (total, _, _) = evaluate(self.x, prev);
        let residual: Vec<f64> = self.y.iter().zip(&total).map(|(y, t)| y - t).collect();
        let extra = residual_band(self.x, &residual, self.spacing * MIN_POINTS_PER_FWHM)?;
        let mut bands = super::model_of(prev).bands;
        bands.push(extra);
        // Ascending centres, as a fresh start lists them (the band table's order).
        bands.sort_by(|a, b| a.centre.total_cmp(&b.centre));
        Some(bands)
    }

    /// The fit with `n` bands: grown from `prev` when there is one, else (or
    /// when that fails) from fresh starts.
    fn count(&self, n: usize, prev: Option<&BandFit>) -> Result<BandFit, BandFitError> {
        if n == 0 {
            return self.fit_bands(Vec::new());
        }
        let grown = prev
            .filter(|p| p.bands.len() + 1 == n)
            .and_then(|p| self.grown(p))
            .map(|bands| self.fit_bands(bands));
        match grown {
            Some(Ok(f)) => Ok(f),
            _ => self.fit_bands(guess(self.x, self.y, Some(n))),
        }
    }

    /// Every band resolved: wide enough and no width on its bound.
    fn resolves(&self, f: &BandFit) -> bool {
        f.bands.iter().all(|b| {
            b.fwhm.value >= MIN_POINTS_PER_FWHM * self.spacing
                && !b
                    .at_bound
                    .iter()
                    .any(|p| p.rsplit('.').next() == Some("fwhm"))
        })
    }
}

/// Fits 0…max_n bands (see the module documentation for the rules) and
/// recommends a count. Zero bands is tried only when the baseline has
/// parameters of its own.
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
    let problem = Problem {
        x,
        y,
        weights,
        shape,
        baseline,
        opts,
        spacing: data_spacing(x),
    };
    let first = usize::from(baseline == BaselineModel::None);
    let mut tried: Vec<Tried> = Vec::new();
    let mut last_error = None;
    let (mut lowest, mut stale) = (f64::INFINITY, 0);
    for n in first..=max_n.max(1) {
        let prev = tried.last().map(|t| &t.fit);
        match problem.count(n, prev) {
            Ok(f) => {
                let Some(bic) = f.statistics.bic else {
                    continue;
                };
                if bic < lowest - BIC_MARGIN {
                    stale = 0;
                } else {
                    stale += 1;
                }
                lowest = lowest.min(bic);
                let eligible = problem.resolves(&f);
                tried.push(Tried {
                    n,
                    bic,
                    eligible,
                    fit: f,
                });
                if stale >= PATIENCE {
                    break;
                }
            }
            Err(e) => last_error = Some(e),
        }
    }
    let lowest_eligible = tried
        .iter()
        .filter(|t| t.eligible)
        .map(|t| t.bic)
        .fold(f64::INFINITY, f64::min);
    let pos = tried
        .iter()
        .position(|t| t.eligible && t.bic <= lowest_eligible + BIC_MARGIN)
        .or_else(|| (!tried.is_empty()).then_some(0));
    let Some(pos) = pos else {
        return Err(last_error.unwrap_or(BandFitError::ConstantData));
    };
    let bic = tried.iter().map(|t| (t.n, t.bic)).collect();
    let reduced_chi2 = tried
        .iter()
        .map(|t| (t.n, t.fit.statistics.reduced_chi2))
        .collect();
    let chosen = tried.swap_remove(pos);
    Ok(BandCountReport {
        bic,
        reduced_chi2,
        recommended: chosen.n,
        best: chosen.fit,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn noise(seed: u64, n: usize) -> Vec<f64> {
        let mut s = seed;
        (0..n)
            .map(|_| {
                s = s
                    .wrapping_mul(6_364_136_223_846_793_005)
                    .wrapping_add(1_442_695_040_888_963_407);
                // A sum of four uniforms: near-normal, mean 0, variance 1/3.
                (0..4)
                    .map(|k| ((s >> (16 * k)) & 0xFFFF) as f64 / 65_535.0 - 0.5)
                    .sum::<f64>()
            })
            .collect()
    }

    fn up_to_six(x: &[f64], y: &[f64]) -> BandCountReport {
        let opts = FitOptions::default();
        select_band_count(x, y, None, 6, Shape::Gaussian, BaselineModel::Linear, &opts).unwrap()
    }

    #[test]
    fn flat_noise_is_given_no_band() {
        let x: Vec<f64> = (0..400).map(|i| 12_000.0 + 25.0 * f64::from(i)).collect();
        let y: Vec<f64> = noise(3, x.len()).iter().map(|e| 0.01 + 0.002 * e).collect();
        let r = up_to_six(&x, &y);
        assert_eq!(r.recommended, 0, "BIC per count {:?}", r.bic);
        assert!(r.best.bands.is_empty());
    }

    #[test]
    fn two_separated_bands_on_noise_are_counted_as_two() {
        let x: Vec<f64> = (0..500).map(|i| 8_000.0 + 40.0 * f64::from(i)).collect();
        let g =
            |v: f64, c: f64, w: f64| (-4.0 * std::f64::consts::LN_2 * ((v - c) / w).powi(2)).exp();
        let y: Vec<f64> = x
            .iter()
            .zip(noise(5, x.len()))
            .map(|(&v, e)| 0.3 * g(v, 13_000.0, 2500.0) + 0.2 * g(v, 21_000.0, 3000.0) + 0.002 * e)
            .collect();
        let r = up_to_six(&x, &y);
        assert_eq!(r.recommended, 2, "BIC per count {:?}", r.bic);
    }
}
