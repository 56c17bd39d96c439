//! The band model as a least-squares problem: parameter layout, ties and bounds.
//!
//! Model parameters p (per band: centre, fwhm, height and, for three shapes,
//! extra; then the baseline coefficients) are a linear map of the free
//! parameters q: p = A q + b. Every row of A has at most one non-zero entry
//! (a fixed parameter has none, a free one a 1, a tied one its factor), which
//! covers equal widths (w₂ = w₁), fixed spacing (ν̃₂ = ν̃₁ + Δ) and fixed
//! height ratios (h₂ = r·h₁). The Jacobian in q is J·A.
//!
//! Baselines use t = (ν̃ − ν̃_mid)/half-range ∈ [−1, 1] for conditioning:
//! constant a₀, linear a₀ + a₁t, polynomial Σaₖtᵏ, scattering
//! a₀ + k·(ν̃/ν̃_max)ⁿ (Rayleigh n = 4 for small particles, n free in
//! [0, 6]), and a charge-transfer tail a₀ + a Gaussian whose centre is held
//! above the highest wavenumber of the data.

use super::shapes::{self, Shape};
use super::BaselineModel;
use crate::solver::LeastSquares;

/// One model parameter: its name, bounds and how it derives from q.
#[derive(Debug, Clone)]
pub(crate) struct ParamDef {
    pub name: String,
    pub value: f64,
    pub lower: f64,
    pub upper: f64,
    /// Index into q and factor, or None when fixed (value is then the offset).
    pub source: Option<(usize, f64)>,
    pub offset: f64,
}

/// A compiled band model bound to its data.
pub(crate) struct Compiled<'a> {
    pub x: &'a [f64],
    pub y: &'a [f64],
    pub sqrt_w: Vec<f64>,
    pub shapes: Vec<Shape>,
    /// Index into p of each band's first parameter.
    pub band_start: Vec<usize>,
    pub baseline: BaselineModel,
    pub baseline_start: usize,
    pub params: Vec<ParamDef>,
    pub free_count: usize,
    /// For each free slot k, the index into p of the parameter that owns it
    /// (the untied parameter whose value starts q[k]).
    pub free_owner: Vec<usize>,
    pub x_mid: f64,
    pub x_half: f64,
    pub x_max: f64,
}

impl Compiled<'_> {
    /// Model parameters from free parameters.
    pub fn expand(&self, q: &[f64]) -> Vec<f64> {
        self.params
            .iter()
            .map(|d| match d.source {
                Some((k, f)) => f * q.get(k).copied().unwrap_or(0.0) + d.offset,
                None => d.value,
            })
            .collect()
    }

    /// Model value and ∂f/∂p at one point (written into `grad`).
    fn point(&self, p: &[f64], xi: f64, grad: &mut [f64]) -> f64 {
        let mut f = 0.0;
        for (&shape, &s) in self.shapes.iter().zip(&self.band_start) {
            let extra = if shape.has_extra() { p[s + 3] } else { 0.0 };
            let v = shapes::eval(shape, xi, p[s], p[s + 1], p[s + 2], extra);
            f += v.value;
            grad[s] = v.d_centre;
            grad[s + 1] = v.d_fwhm;
            grad[s + 2] = v.d_height;
            if shape.has_extra() {
                grad[s + 3] = v.d_extra;
            }
        }
        let s = self.baseline_start;
        let t = (xi - self.x_mid) / self.x_half;
        match self.baseline {
            BaselineModel::None => {}
            BaselineModel::Constant | BaselineModel::Linear | BaselineModel::Polynomial(_) => {
                let mut tk = 1.0;
                for k in 0..self.params.len() - s {
                    f += p[s + k] * tk;
                    grad[s + k] = tk;
                    tk *= t;
                }
            }
            BaselineModel::Scattering => {
                let u = xi / self.x_max;
                let pow = u.powf(p[s + 2]);
                f += p[s] + p[s + 1] * pow;
                grad[s] = 1.0;
                grad[s + 1] = pow;
                grad[s + 2] = p[s + 1] * pow * u.ln();
            }
            BaselineModel::ChargeTransferTail => {
                let v = shapes::eval(Shape::Gaussian, xi, p[s + 1], p[s + 2], p[s + 3], 0.0);
                f += p[s] + v.value;
                grad[s] = 1.0;
                grad[s + 1] = v.d_centre;
                grad[s + 2] = v.d_fwhm;
                grad[s + 3] = v.d_height;
            }
        }
        f
    }

    /// The model (bands + baseline), its components and baseline, at `x`.
    pub fn curves(&self, p: &[f64], x: &[f64]) -> (Vec<f64>, Vec<Vec<f64>>, Vec<f64>) {
        let mut grad = vec![0.0; p.len()];
        let total: Vec<f64> = x.iter().map(|&xi| self.point(p, xi, &mut grad)).collect();
        let components: Vec<Vec<f64>> = self
            .shapes
            .iter()
            .zip(&self.band_start)
            .map(|(&shape, &s)| {
                let extra = if shape.has_extra() { p[s + 3] } else { 0.0 };
                x.iter()
                    .map(|&xi| shapes::eval(shape, xi, p[s], p[s + 1], p[s + 2], extra).value)
                    .collect()
            })
            .collect();
        let baseline = total
            .iter()
            .enumerate()
            .map(|(i, t)| t - components.iter().map(|c| c[i]).sum::<f64>())
            .collect();
        (total, components, baseline)
    }
}

impl LeastSquares for Compiled<'_> {
    fn residual_count(&self) -> usize {
        self.x.len()
    }
    fn parameter_count(&self) -> usize {
        self.free_count
    }
    fn evaluate(&self, q: &[f64], r: &mut [f64], jac: Option<&mut [f64]>) -> bool {
        let p = self.expand(q);
        let m = self.x.len();
        let mut grad = vec![0.0; p.len()];
        let mut jac = jac;
        if let Some(j) = jac.as_deref_mut() {
            j.fill(0.0);
        }
        for i in 0..m {
            let f = self.point(&p, self.x[i], &mut grad);
            let w = self.sqrt_w[i];
            r[i] = w * (f - self.y[i]);
            if let Some(j) = jac.as_deref_mut() {
                for (d, g) in self.params.iter().zip(&grad) {
                    if let Some((k, factor)) = d.source {
                        j[k * m + i] += w * factor * g;
                    }
                }
            }
        }
        true
    }
}

/// Default bounds and names of the baseline parameters.
pub(crate) fn baseline_params(
    model: &BaselineModel,
    x: &[f64],
    y: &[f64],
) -> Vec<(String, f64, f64, f64)> {
    let inf = f64::INFINITY;
    let y_min = y.iter().copied().fold(inf, f64::min);
    let x_max = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let x_min = x.iter().copied().fold(inf, f64::min);
    let span = (x_max - x_min).max(1.0);
    let y_span = y.iter().copied().fold(f64::NEG_INFINITY, f64::max) - y_min;
    let start = if y_min.is_finite() { y_min } else { 0.0 };
    match model {
        BaselineModel::None => vec![],
        BaselineModel::Constant => vec![("a0".into(), start, -inf, inf)],
        BaselineModel::Linear => vec![
            ("a0".into(), start, -inf, inf),
            ("a1".into(), 0.0, -inf, inf),
        ],
        BaselineModel::Polynomial(order) => (0..=*order)
            .map(|k| (format!("a{k}"), if k == 0 { start } else { 0.0 }, -inf, inf))
            .collect(),
        BaselineModel::Scattering => vec![
            ("a0".into(), start, -inf, inf),
            ("k".into(), 0.1 * y_span.max(0.0), 0.0, inf),
            ("n".into(), 4.0, 0.0, 6.0),
        ],
        BaselineModel::ChargeTransferTail => vec![
            ("a0".into(), start, -inf, inf),
            (
                "ct_centre".into(),
                x_max + 0.3 * span,
                x_max,
                x_max + 5.0 * span,
            ),
            ("ct_fwhm".into(), 0.5 * span, 1e-3 * span, 10.0 * span),
            ("ct_height".into(), y_span.max(1e-9), 0.0, inf),
        ],
    }
}
