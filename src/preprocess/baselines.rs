//! Polynomial, rubber-band and scattering baselines.
//!
//! - Polynomial: least squares on the chosen regions, x mapped to [−1, 1], solved by SVD.
//! - Rubber band: the lower convex hull of (x, y) in real x (Andrew's monotone chain),
//!   interpolated linearly between hull vertices (as pybaselines `rubberband`, one segment).
//! - Scattering: apparent absorbance of Rayleigh-type scattering k·ν̃ⁿ (n = 4 for particles
//!   much smaller than the wavelength; smaller n for larger particles). The curve is fitted
//!   under the spectrum by asymmetric least squares (weights p = 0.01 above, 1 − p below),
//!   k linear; a free n is found by golden-section search on [0, 6].

use super::PreprocessError;
use nalgebra::{DMatrix, DVector};

/// The highest polynomial baseline order accepted (x is mapped to [−1, 1], so the
/// Vandermonde matrix stays well conditioned well past it).
pub const MAX_POLYNOMIAL_ORDER: usize = 20;

pub(super) fn polynomial(
    x: &[f64],
    y: &[f64],
    order: usize,
    regions: &[[f64; 2]],
) -> Result<Vec<f64>, PreprocessError> {
    let inside = |v: f64| {
        regions.is_empty()
            || regions
                .iter()
                .any(|r| v >= r[0].min(r[1]) && v <= r[0].max(r[1]))
    };
    if order > MAX_POLYNOMIAL_ORDER {
        return Err(PreprocessError::BadParameter(format!(
            "the polynomial baseline order may be at most {MAX_POLYNOMIAL_ORDER}, found {order}"
        )));
    }
    let chosen: Vec<usize> = (0..x.len()).filter(|&i| inside(x[i])).collect();
    if chosen.len() < order + 1 {
        return Err(PreprocessError::TooFewPoints {
            needed: order + 1,
            found: chosen.len(),
        });
    }
    let (lo, hi) = chosen
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &i| {
            (a.min(x[i]), b.max(x[i]))
        });
    let mid = 0.5 * (lo + hi);
    let half = if hi > lo { 0.5 * (hi - lo) } else { 1.0 };
    let t = |v: f64| (v - mid) / half;
    let a = DMatrix::from_fn(chosen.len(), order + 1, |r, k| {
        t(x[chosen[r]]).powi(k as i32)
    });
    let b = DVector::from_iterator(chosen.len(), chosen.iter().map(|&i| y[i]));
    let coef = a
        .svd(true, true)
        .solve(&b, 1e-12)
        .map_err(|_| PreprocessError::Singular)?;
    Ok(x.iter()
        .map(|&v| (0..=order).map(|k| coef[k] * t(v).powi(k as i32)).sum())
        .collect())
}

pub(super) fn rubber_band(x: &[f64], y: &[f64]) -> Result<Vec<f64>, PreprocessError> {
    let n = x.len();
    if n < 2 {
        return Err(PreprocessError::TooFewPoints {
            needed: 2,
            found: n,
        });
    }
    if x.windows(2).any(|w| w[1] <= w[0]) {
        return Err(PreprocessError::BadParameter(
            "the rubber band needs strictly ascending x".into(),
        ));
    }
    let cross = |o: usize, a: usize, b: usize| {
        (x[a] - x[o]) * (y[b] - y[o]) - (y[a] - y[o]) * (x[b] - x[o])
    };
    let mut hull: Vec<usize> = Vec::new();
    for i in 0..n {
        while hull.len() >= 2 && cross(hull[hull.len() - 2], hull[hull.len() - 1], i) <= 0.0 {
            hull.pop();
        }
        hull.push(i);
    }
    let mut out = vec![0.0; n];
    for seg in hull.windows(2) {
        let (a, b) = (seg[0], seg[1]);
        for i in a..=b {
            let t = (x[i] - x[a]) / (x[b] - x[a]);
            out[i] = y[a] + t * (y[b] - y[a]);
        }
    }
    Ok(out)
}

const SCATTER_P: f64 = 0.01;

/// Best k for k·(x/x_max)ⁿ under the data, and the asymmetric cost.
fn scatter_fit(x: &[f64], y: &[f64], n: f64) -> (f64, f64) {
    let x_max = x.iter().copied().fold(f64::MIN_POSITIVE, f64::max);
    let basis: Vec<f64> = x.iter().map(|&v| (v / x_max).powf(n)).collect();
    let mut w = vec![1.0; x.len()];
    let mut k = 0.0;
    for _ in 0..50 {
        let num: f64 = (0..x.len()).map(|i| w[i] * basis[i] * y[i]).sum();
        let den: f64 = (0..x.len()).map(|i| w[i] * basis[i] * basis[i]).sum();
        k = if den > 0.0 { num / den } else { 0.0 };
        let next: Vec<f64> = (0..x.len())
            .map(|i| {
                if y[i] > k * basis[i] {
                    SCATTER_P
                } else {
                    1.0 - SCATTER_P
                }
            })
            .collect();
        if next == w {
            break;
        }
        w = next;
    }
    let cost = (0..x.len())
        .map(|i| w[i] * (y[i] - k * basis[i]).powi(2))
        .sum();
    (k, cost)
}

pub(super) fn scattering(
    x: &[f64],
    y: &[f64],
    exponent: Option<f64>,
) -> Result<Vec<f64>, PreprocessError> {
    if x.len() < 3 {
        return Err(PreprocessError::TooFewPoints {
            needed: 3,
            found: x.len(),
        });
    }
    if x.iter().any(|&v| v <= 0.0) {
        return Err(PreprocessError::BadParameter(
            "scattering needs positive wavenumbers".into(),
        ));
    }
    let n = match exponent {
        Some(n) if n.is_finite() => n,
        Some(n) => {
            return Err(PreprocessError::BadParameter(format!(
                "the scattering exponent must be finite, found {n}"
            )))
        }
        None => {
            let (mut a, mut b) = (0.0f64, 6.0f64);
            let g = 0.5 * (5f64.sqrt() - 1.0);
            for _ in 0..60 {
                let c = b - g * (b - a);
                let d = a + g * (b - a);
                if scatter_fit(x, y, c).1 < scatter_fit(x, y, d).1 {
                    b = d;
                } else {
                    a = c;
                }
            }
            0.5 * (a + b)
        }
    };
    let (k, _) = scatter_fit(x, y, n);
    let x_max = x.iter().copied().fold(f64::MIN_POSITIVE, f64::max);
    Ok(x.iter().map(|&v| k * (v / x_max).powf(n)).collect())
}
