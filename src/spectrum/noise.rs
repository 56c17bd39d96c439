//! The noise of a spectrum: the standard deviation σ of its point-to-point
//! scatter, estimated from the data alone.
//!
//! Method: pseudo-residuals of Gasser, Sroka & Jennen-Steinmetz (1986,
//! *Biometrika* 73, 625–633). Each inner point is compared with the straight
//! line through its two neighbours,
//! ε̃ᵢ = (yᵢ − aᵢ yᵢ₋₁ − bᵢ yᵢ₊₁) / √(1 + aᵢ² + bᵢ²),
//! aᵢ = (xᵢ₊₁ − xᵢ)/(xᵢ₊₁ − xᵢ₋₁), bᵢ = 1 − aᵢ, so that for white noise of
//! variance σ² each ε̃ᵢ has variance σ² whatever the spacing (on an even grid
//! this is Rice's second difference divided by √6). A smooth signal cancels to
//! second order: for bands many points wide what is left is the noise. The
//! scale of the ε̃ᵢ is taken robustly, as 1.4826 × the median of |ε̃ᵢ| (the
//! median absolute deviation about zero with its consistency factor for a
//! normal distribution, Hampel 1974, *JASA* 69, 383–393), so that a few
//! spikes or a sharp line do not inflate it.
//!
//! Smoothing correlates neighbouring points, and the estimate then falls far
//! below the noise of the measurement: estimate on the data before smoothing.

use serde::{Deserialize, Serialize};

/// 1/Φ⁻¹(3/4): the MAD of a normal distribution times this is its σ.
const MAD_TO_SIGMA: f64 = 1.482_602_218_505_602;

/// Fewest points an estimate is made from.
const MIN_POINTS: usize = 5;

/// The method's name as the results state it.
pub const METHOD: &str =
    "1.4826 × median |pseudo-residual| of each point against its two neighbours (Gasser, Sroka & Jennen-Steinmetz 1986)";

/// A noise estimate: σ in the units of the data, and how it was made.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Noise {
    /// Standard deviation of the point-to-point scatter.
    pub sigma: f64,
    /// The points it rests on.
    pub points: usize,
    /// How it was estimated.
    pub method: String,
}

/// The noise of (x, y) (any order of x; non-finite points are skipped), or
/// `None` with fewer than five usable points or repeated x.
pub fn estimate(x: &[f64], y: &[f64]) -> Option<Noise> {
    let mut pts: Vec<(f64, f64)> = x
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    if pts.len() < MIN_POINTS {
        return None;
    }
    let mut scaled: Vec<f64> = pts
        .windows(3)
        .filter_map(|w| {
            let (l, m, r) = (w[0], w[1], w[2]);
            let span = r.0 - l.0;
            if span.is_nan() || span <= 0.0 {
                return None;
            }
            let a = (r.0 - m.0) / span;
            let b = 1.0 - a;
            let e = (m.1 - a * l.1 - b * r.1) / (1.0 + a * a + b * b).sqrt();
            e.is_finite().then_some(e.abs())
        })
        .collect();
    if scaled.len() + 2 < MIN_POINTS {
        return None;
    }
    let mid = scaled.len() / 2;
    let (_, median, _) = scaled.select_nth_unstable_by(mid, f64::total_cmp);
    let sigma = MAD_TO_SIGMA * *median;
    sigma.is_finite().then(|| Noise {
        sigma,
        points: pts.len(),
        method: METHOD.into(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A seeded normal deviate stream (splitmix64, Box–Muller), for tests only.
    fn normals(seed: u64, n: usize) -> Vec<f64> {
        let mut s = seed;
        let mut next = || {
            s = s.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = s;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            (((z ^ (z >> 31)) >> 11) as f64 + 1.0) / (1u64 << 53) as f64
        };
        (0..n)
            .map(|_| {
                let (u1, u2) = (next(), next());
                (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
            })
            .collect()
    }

    #[test]
    fn white_noise_on_a_broad_band_is_found_within_its_sampling_spread() {
        // 2 000 points over 10 000–30 000 cm⁻¹ on an uneven (wavelength-even)
        // grid, a 3 000 cm⁻¹ band of height 1 and noise σ = 0.01. The MAD's
        // relative standard error is ≈ 1.17/√n (its asymptotic efficiency
        // for a normal, 37 %: Rousseeuw & Croux 1993), 2.6 % here: allow 4 of them.
        let x: Vec<f64> = (0..2000)
            .map(|i| 1e7 / (333.0 + 667.0 * f64::from(i) / 1999.0))
            .collect();
        let e = normals(7, x.len());
        let y: Vec<f64> = x
            .iter()
            .zip(&e)
            .map(|(v, n)| {
                (-4.0 * std::f64::consts::LN_2 * ((v - 20_000.0) / 3000.0).powi(2)).exp() + 0.01 * n
            })
            .collect();
        let noise = estimate(&x, &y).unwrap();
        assert!(
            (noise.sigma / 0.01 - 1.0).abs() < 4.0 * 1.17 / 2000f64.sqrt(),
            "σ = {}",
            noise.sigma
        );
    }

    #[test]
    fn a_noiseless_straight_line_has_no_noise() {
        let x: Vec<f64> = (0..50).map(|i| 1000.0 + 10.0 * f64::from(i)).collect();
        let y: Vec<f64> = x.iter().map(|v| 0.2 + 1e-4 * v).collect();
        assert!(estimate(&x, &y).unwrap().sigma < 1e-12);
    }

    #[test]
    fn four_points_or_repeated_x_give_no_estimate() {
        assert!(estimate(&[1.0, 2.0, 3.0, 4.0], &[0.0, 1.0, 0.0, 1.0]).is_none());
        assert!(estimate(&[1.0; 9], &[0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0]).is_none());
    }
}
