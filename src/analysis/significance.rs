//! Which fitted bands are real enough to assign: the test between the
//! deconvolution and the ligand-field fit.
//!
//! A band goes to the assignment only when
//! - no parameter of it ended on a bound (the fit did not locate it),
//! - its centre lies inside the measured range,
//! - it spans at least [`MIN_POINTS_PER_FWHM`] data spacings at half height
//!   (narrower, it is one or two points of noise),
//! - its height is at least [`defaults::SIGNIFICANT_HEIGHT`] noise σ (the
//!   noise of the spectrum, [`crate::spectrum::noise`]),
//! - its area is at least [`defaults::SIGNIFICANT_AREA`] of the strongest band's.
//!
//! Bands narrower than [`defaults::NARROW_BAND`] that pass go through as
//! narrow lines with their width, so the ranking can read them as
//! spin-forbidden only. A band that fails stays in the band model and carries
//! its reason ([`LeftOut`]).

use super::defaults;
use crate::bands::{BandFit, LeftOut, MIN_POINTS_PER_FWHM};

/// What the test needs to know about the data.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Context {
    /// Noise σ of the spectrum, when it could be estimated.
    pub noise: Option<f64>,
    /// Spacing of the data points, cm⁻¹.
    pub spacing: f64,
    /// The measured range, cm⁻¹.
    pub range: [f64; 2],
}

/// Marks every band of `fit` that fails the test with its reason (and clears
/// the mark of every band that passes).
pub fn mark(fit: &mut BandFit, ctx: &Context) {
    let strongest = fit
        .bands
        .iter()
        .map(|b| b.area.value.abs())
        .fold(0.0, f64::max);
    for b in &mut fit.bands {
        let centre = b.centre.value;
        b.left_out = if !b.at_bound.is_empty() {
            Some(LeftOut::OnBound)
        } else if !(at_least(centre, ctx.range[0]) && at_least(ctx.range[1], centre)) {
            Some(LeftOut::OutsideRange)
        } else if !at_least(b.fwhm.value, MIN_POINTS_PER_FWHM * ctx.spacing) {
            Some(LeftOut::NarrowerThanSpacing)
        } else if ctx
            .noise
            .is_some_and(|s| !at_least(b.height.value, defaults::SIGNIFICANT_HEIGHT * s))
        {
            Some(LeftOut::BelowNoise)
        } else if !at_least(b.area.value, defaults::SIGNIFICANT_AREA * strongest) {
            Some(LeftOut::SmallArea)
        } else {
            None
        };
    }
}

/// `value ≥ floor`, false when either is NaN (a NaN never passes).
fn at_least(value: f64, floor: f64) -> bool {
    value >= floor
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bands::{self, BandModel, BandSpec, BaselineModel, FitOptions, Shape};

    fn fit_of(bands: &[(f64, f64, f64)]) -> BandFit {
        let x: Vec<f64> = (0..300).map(|i| 10_000.0 + 50.0 * f64::from(i)).collect();
        let specs: Vec<BandSpec> = bands
            .iter()
            .map(|&(centre, fwhm, height)| BandSpec {
                shape: Shape::Gaussian,
                centre,
                fwhm,
                height,
                extra: None,
                fixed: vec!["centre".into(), "fwhm".into(), "height".into()],
            })
            .collect();
        let (y, _, _) = bands::evaluate_bands(&x, &specs, None);
        let y: Vec<f64> = y
            .iter()
            .enumerate()
            .map(|(i, v)| v + 0.001 * (i as f64 * 1.7).sin())
            .collect();
        let model = BandModel {
            bands: specs,
            baseline: BaselineModel::Constant,
            ties: Vec::new(),
        };
        bands::fit(&x, &y, None, &model, &FitOptions::default(), &mut |_| true).unwrap()
    }

    #[test]
    fn a_band_lower_than_the_noise_is_left_out_and_a_strong_one_kept() {
        let mut f = fit_of(&[(15_000.0, 2500.0, 0.5), (20_000.0, 2500.0, 0.002)]);
        let ctx = Context {
            noise: Some(0.001),
            spacing: 50.0,
            range: [10_000.0, 24_950.0],
        };
        mark(&mut f, &ctx);
        assert_eq!(f.bands[0].left_out, None);
        assert_eq!(f.bands[1].left_out, Some(LeftOut::BelowNoise));
    }

    #[test]
    fn a_band_of_two_points_is_narrower_than_the_spacing_allows() {
        let mut f = fit_of(&[(15_000.0, 2500.0, 0.5), (20_000.0, 100.0, 0.3)]);
        let ctx = Context {
            noise: Some(0.001),
            spacing: 50.0,
            range: [10_000.0, 24_950.0],
        };
        mark(&mut f, &ctx);
        assert_eq!(f.bands[1].left_out, Some(LeftOut::NarrowerThanSpacing));
    }

    #[test]
    fn a_band_centred_beyond_the_range_is_left_out() {
        let mut f = fit_of(&[(15_000.0, 2500.0, 0.5), (24_000.0, 3000.0, 0.3)]);
        let ctx = Context {
            noise: None,
            spacing: 50.0,
            range: [10_000.0, 23_000.0],
        };
        mark(&mut f, &ctx);
        assert_eq!(f.bands[1].left_out, Some(LeftOut::OutsideRange));
    }
}
