//! Whittaker smoother and the AsLS / arPLS baselines built on it.
//!
//! Minimises Σ wᵢ(yᵢ − zᵢ)² + λ Σ (Δ²zᵢ)², i.e. solves (W + λ DᵀD) z = W y with D the
//! second-difference matrix (P. H. C. Eilers, Anal. Chem. 75 (2003) 3631). The matrix is
//! symmetric pentadiagonal; it is solved by a banded LDLᵀ factorisation in O(N).
//! The penalty acts on point indices, so λ grows as N⁴ for the same smoothness
//! (pybaselines documentation); λ given by the user refers to [`REFERENCE_POINTS`]
//! points and is scaled by (N/REFERENCE_POINTS)⁴. Resample to an even grid first.
//!
//! - AsLS: weights p above the baseline, 1 − p below (Eilers & Boelens 2005).
//! - arPLS: wᵢ = 1/(1 + exp(2(dᵢ − (2σ⁻ − m⁻))/σ⁻)), dᵢ = yᵢ − zᵢ, m⁻ and σ⁻ the mean and
//!   standard deviation of the negative dᵢ (Baek, Park, Ahn, Choo, Analyst 140 (2015) 250).

use super::PreprocessError;

/// The point count that a user's λ refers to.
pub const REFERENCE_POINTS: f64 = 1000.0;
/// The largest λ accepted (per [`REFERENCE_POINTS`] points); beyond it the baseline is a
/// straight line to working precision and the banded factorisation loses every digit.
pub const MAX_LAMBDA: f64 = 1e12;
/// Reweighting rounds of AsLS and arPLS (each one banded solve).
pub const MAX_ITERATIONS: usize = 50;
const TOLERANCE: f64 = 1e-3;

fn scaled_lambda(lambda: f64, n: usize) -> Result<f64, PreprocessError> {
    if !(lambda > 0.0 && lambda <= MAX_LAMBDA) {
        return Err(PreprocessError::BadParameter(format!(
            "λ must be a positive number up to {MAX_LAMBDA:e}, found {lambda}"
        )));
    }
    if n < 3 {
        return Err(PreprocessError::TooFewPoints {
            needed: 3,
            found: n,
        });
    }
    Ok(lambda * (n as f64 / REFERENCE_POINTS).powi(4))
}

/// Solves (W + λ DᵀD) z = W y for second differences; λ is used as given (not scaled).
pub fn whittaker_smooth(y: &[f64], w: &[f64], lambda: f64) -> Result<Vec<f64>, PreprocessError> {
    let n = y.len();
    if n < 3 || w.len() != n {
        return Err(PreprocessError::TooFewPoints {
            needed: 3,
            found: n.min(w.len()),
        });
    }
    // Bands of DᵀD for second differences: main, first and second off-diagonals.
    let mut d0 = vec![0.0; n];
    let mut d1 = vec![0.0; n];
    let mut d2 = vec![0.0; n];
    for k in 0..n - 2 {
        // Row k of D is (1, −2, 1) at columns k, k+1, k+2.
        let c = [1.0, -2.0, 1.0];
        for a in 0..3 {
            d0[k + a] += lambda * c[a] * c[a];
        }
        d1[k] += lambda * c[0] * c[1];
        d1[k + 1] += lambda * c[1] * c[2];
        d2[k] += lambda * c[0] * c[2];
    }
    for i in 0..n {
        d0[i] += w[i];
    }
    // LDLᵀ with unit lower L having two sub-diagonals l1, l2.
    let mut dd = vec![0.0; n];
    let mut l1 = vec![0.0; n];
    let mut l2 = vec![0.0; n];
    for i in 0..n {
        let mut di = d0[i];
        if i >= 1 {
            di -= l1[i - 1] * l1[i - 1] * dd[i - 1];
        }
        if i >= 2 {
            di -= l2[i - 2] * l2[i - 2] * dd[i - 2];
        }
        if !(di.is_finite() && di > 0.0) {
            return Err(PreprocessError::Singular);
        }
        dd[i] = di;
        if i + 1 < n {
            let mut v = d1[i];
            if i >= 1 {
                v -= l2[i - 1] * l1[i - 1] * dd[i - 1];
            }
            l1[i] = v / di;
        }
        if i + 2 < n {
            l2[i] = d2[i] / di;
        }
    }
    let mut z: Vec<f64> = (0..n).map(|i| w[i] * y[i]).collect();
    for i in 0..n {
        if i >= 1 {
            z[i] -= l1[i - 1] * z[i - 1];
        }
        if i >= 2 {
            z[i] -= l2[i - 2] * z[i - 2];
        }
    }
    for i in 0..n {
        z[i] /= dd[i];
    }
    for i in (0..n).rev() {
        if i + 1 < n {
            z[i] -= l1[i] * z[i + 1];
        }
        if i + 2 < n {
            z[i] -= l2[i] * z[i + 2];
        }
    }
    Ok(z)
}

pub(super) fn asls(y: &[f64], lambda: f64, p: f64) -> Result<Vec<f64>, PreprocessError> {
    let lambda = scaled_lambda(lambda, y.len())?;
    if !(p > 0.0 && p < 1.0) {
        return Err(PreprocessError::BadParameter(format!(
            "AsLS asymmetry p must lie between 0 and 1, found {p}"
        )));
    }
    let mut w = vec![1.0; y.len()];
    let mut z = whittaker_smooth(y, &w, lambda)?;
    for _ in 0..MAX_ITERATIONS {
        let next: Vec<f64> = y
            .iter()
            .zip(&z)
            .map(|(yi, zi)| if yi > zi { p } else { 1.0 - p })
            .collect();
        if next == w {
            break;
        }
        w = next;
        z = whittaker_smooth(y, &w, lambda)?;
    }
    Ok(z)
}

pub(super) fn arpls(y: &[f64], lambda: f64) -> Result<Vec<f64>, PreprocessError> {
    let lambda = scaled_lambda(lambda, y.len())?;
    let mut w = vec![1.0; y.len()];
    let mut z = whittaker_smooth(y, &w, lambda)?;
    for _ in 0..MAX_ITERATIONS {
        let d: Vec<f64> = y.iter().zip(&z).map(|(a, b)| a - b).collect();
        let negative: Vec<f64> = d.iter().copied().filter(|&v| v < 0.0).collect();
        if negative.len() < 2 {
            break;
        }
        let m = negative.iter().sum::<f64>() / negative.len() as f64;
        let s =
            (negative.iter().map(|v| (v - m).powi(2)).sum::<f64>() / negative.len() as f64).sqrt();
        if s <= 0.0 {
            break;
        }
        let next: Vec<f64> = d
            .iter()
            .map(|&di| {
                let arg = (2.0 * (di - (2.0 * s - m)) / s).min(700.0);
                1.0 / (1.0 + arg.exp())
            })
            .collect();
        let change = next
            .iter()
            .zip(&w)
            .map(|(a, b)| (a - b).powi(2))
            .sum::<f64>()
            .sqrt();
        let size = w.iter().map(|v| v * v).sum::<f64>().sqrt();
        w = next;
        z = whittaker_smooth(y, &w, lambda)?;
        if change / size.max(f64::MIN_POSITIVE) < TOLERANCE {
            break;
        }
    }
    Ok(z)
}
