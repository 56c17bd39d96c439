//! The fitted or edited model evaluated on an axis: total, one curve per
//! band, and the baseline.

use super::model::{Compiled, ParamDef};
use super::{BandFit, BandModel, BandSpec, BaselineModel, BaselineResult};

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
