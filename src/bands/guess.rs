//! Starting values for a band fit from the data alone.
//!
//! 1. The spectrum is interpolated onto a uniform wavenumber grid (the
//!    Savitzky–Golay filter assumes even spacing; SciPy `savgol_filter` docs).
//! 2. Its second derivative is taken with a quadratic Savitzky–Golay filter
//!    (Savitzky & Golay 1964; coefficients from the least-squares fit of a
//!    polynomial, computed here). Band centres are its deepest minima.
//! 3. For a Gaussian d²G/dν̃² ∝ (u² − 1)G, u = (ν̃ − ν̃₀)/σ, so the zero
//!    crossings either side of a minimum are ±σ: FWHM = 2√(2 ln 2)·σ (CALC).
//! 4. Heights come from non-negative least squares (Lawson & Hanson 1974)
//!    with centres and widths fixed and a free constant offset.

use super::{BandSpec, Shape};
use crate::preprocess::savgol;
use nalgebra::{DMatrix, DVector};

/// Starting bands (Gaussian) for `n` bands, or as many as the data suggest.
/// Returns an empty list when the data are too short or not finite.
pub fn guess(x: &[f64], y: &[f64], n: Option<usize>) -> Vec<BandSpec> {
    let mut pts = finite_sorted(x, y);
    pts.dedup_by(|a, b| a.0.total_cmp(&b.0).is_eq()); // exactly repeated x only
    if pts.len() < 7 || n == Some(0) {
        return Vec::new();
    }
    let (x0, x1) = (pts[0].0, pts[pts.len() - 1].0);
    let m = pts.len().min(2000);
    let dx = (x1 - x0) / (m - 1) as f64;
    let mut grid_y = Vec::with_capacity(m);
    let mut seg = 0;
    for i in 0..m {
        let xi = x0 + i as f64 * dx;
        while seg + 2 < pts.len() && pts[seg + 1].0 < xi {
            seg += 1;
        }
        let (a, b) = (pts[seg], pts[seg + 1]);
        let t = ((xi - a.0) / (b.0 - a.0)).clamp(0.0, 1.0);
        grid_y.push(a.1 + t * (b.1 - a.1));
    }
    let half = (m / 25).max(3).min((m - 1) / 2);
    let Ok(d2) = savgol(&grid_y, 2 * half + 1, 2, 2) else {
        return Vec::new();
    };
    let mut minima: Vec<(usize, f64)> = (half + 1..m.saturating_sub(half + 1))
        .filter(|&i| d2[i] < 0.0 && d2[i] <= d2[i - 1] && d2[i] < d2[i + 1])
        .map(|i| (i, -d2[i]))
        .collect();
    minima.sort_by(|a, b| b.1.total_cmp(&a.1));
    let deepest = minima.first().map_or(0.0, |p| p.1);
    let wanted = n.unwrap_or_else(|| {
        minima
            .iter()
            .filter(|p| p.1 >= 0.05 * deepest)
            .count()
            .max(1)
    });
    // Deepest minima first; a minimum inside an already chosen band's
    // zero-crossing interval is noise on that band and is skipped.
    let mut taken: Vec<(usize, usize)> = Vec::new();
    let mut chosen: Vec<(f64, f64)> = Vec::new();
    for &(i, _) in &minima {
        if chosen.len() >= wanted {
            break;
        }
        if taken.iter().any(|&(l, r)| i >= l && i <= r) {
            continue;
        }
        let mut l = i;
        while l > half && d2[l] < 0.0 {
            l -= 1;
        }
        let mut r = i;
        while r + half + 1 < m && d2[r] < 0.0 {
            r += 1;
        }
        taken.push((l, r));
        let sigma = 0.5 * (r - l) as f64 * dx;
        chosen.push((
            x0 + i as f64 * dx,
            (2.354_820_045 * sigma).clamp(3.0 * dx, x1 - x0),
        ));
    }
    // Too few minima: spread the missing bands evenly.
    let span = x1 - x0;
    while chosen.len() < wanted {
        let k = chosen.len();
        chosen.push((
            x0 + span * (k as f64 + 0.5) / wanted as f64,
            span / (2.0 * wanted as f64),
        ));
    }
    chosen.sort_by(|a, b| a.0.total_cmp(&b.0));
    let heights = nnls_heights(&pts, &chosen);
    chosen
        .iter()
        .zip(heights)
        .map(|(&(centre, fwhm), height)| BandSpec {
            shape: Shape::Gaussian,
            centre,
            fwhm,
            height: if height > 0.0 {
                height
            } else {
                1e-3 * span_of(&pts)
            },
            extra: None,
            fixed: Vec::new(),
        })
        .collect()
}

/// Points in the running mean that [`residual_band`] smooths the residual with.
const RESIDUAL_WINDOW: usize = 5;

/// One more band where a fit leaves the most signal: the largest positive
/// residual `r` (after a running mean over `RESIDUAL_WINDOW` points, so one
/// noisy point does not win), its width from where the smoothed residual
/// falls to half of that (at least `min_fwhm`), its height that maximum.
/// Growing a band count this way keeps the bands already found and catches
/// what a second-derivative start smooths away: a sharp line, the weaker half
/// of a close pair. `None` when no residual is positive.
pub fn residual_band(x: &[f64], r: &[f64], min_fwhm: f64) -> Option<BandSpec> {
    let pts = finite_sorted(x, r);
    let m = pts.len();
    if m < RESIDUAL_WINDOW {
        return None;
    }
    let half = RESIDUAL_WINDOW / 2;
    let smooth: Vec<f64> = (0..m)
        .map(|i| {
            let (lo, hi) = (i.saturating_sub(half), (i + half).min(m - 1));
            pts[lo..=hi].iter().map(|p| p.1).sum::<f64>() / (hi - lo + 1) as f64
        })
        .collect();
    let (top, &peak) = smooth
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))?;
    if peak.is_nan() || peak <= 0.0 {
        return None;
    }
    let mut l = top;
    while l > 0 && smooth[l] > 0.5 * peak {
        l -= 1;
    }
    let mut h = top;
    while h + 1 < m && smooth[h] > 0.5 * peak {
        h += 1;
    }
    // A half-maximum outside the range: mirror the side that was found.
    let width = match (smooth[l] > 0.5 * peak, smooth[h] > 0.5 * peak) {
        (false, false) => pts[h].0 - pts[l].0,
        (true, false) => 2.0 * (pts[h].0 - pts[top].0),
        (false, true) => 2.0 * (pts[top].0 - pts[l].0),
        (true, true) => pts[m - 1].0 - pts[0].0,
    };
    Some(BandSpec {
        shape: Shape::Gaussian,
        centre: pts[top].0,
        fwhm: width.max(min_fwhm),
        height: peak,
        extra: None,
        fixed: Vec::new(),
    })
}

/// The finite (x, y) pairs in ascending x.
fn finite_sorted(x: &[f64], y: &[f64]) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = x
        .iter()
        .copied()
        .zip(y.iter().copied())
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    pts
}

fn span_of(pts: &[(f64, f64)]) -> f64 {
    let (lo, hi) = pts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.1), hi.max(p.1))
        });
    (hi - lo).max(f64::MIN_POSITIVE)
}

/// Non-negative band heights with a free offset (as a ± column pair).
fn nnls_heights(pts: &[(f64, f64)], bands: &[(f64, f64)]) -> Vec<f64> {
    let k = bands.len() + 2;
    let a = DMatrix::from_fn(pts.len(), k, |i, j| {
        let x = pts[i].0;
        match j.checked_sub(bands.len()) {
            None => {
                let (c, w) = bands[j];
                (-4.0 * std::f64::consts::LN_2 * (x - c).powi(2) / (w * w)).exp()
            }
            Some(0) => 1.0,
            Some(_) => -1.0,
        }
    });
    let b = DVector::from_iterator(pts.len(), pts.iter().map(|p| p.1));
    let sol = nnls(&a, &b);
    sol.iter().take(bands.len()).copied().collect()
}

/// Lawson–Hanson active-set NNLS: min ‖Ax − b‖ subject to x ≥ 0.
fn nnls(a: &DMatrix<f64>, b: &DVector<f64>) -> Vec<f64> {
    let n = a.ncols();
    let mut x = DVector::<f64>::zeros(n);
    let mut passive = vec![false; n];
    let ata = a.transpose() * a;
    let atb = a.transpose() * b;
    if ata.iter().chain(atb.iter()).any(|v| !v.is_finite()) {
        // Overflowing data (e.g. wavenumbers spanning 1e-300…1e300): no heights, no SVD.
        return vec![0.0; n];
    }
    let tol = 1e-12 * ata.diagonal().amax().max(f64::MIN_POSITIVE);
    for _ in 0..3 * n {
        let w = &atb - &ata * &x;
        let Some((j, wj)) = (0..n)
            .filter(|&j| !passive[j])
            .map(|j| (j, w[j]))
            .max_by(|a, b| a.1.total_cmp(&b.1))
        else {
            break;
        };
        if wj <= tol {
            break;
        }
        passive[j] = true;
        for _ in 0..3 * n {
            let idx: Vec<usize> = (0..n).filter(|&j| passive[j]).collect();
            if idx.is_empty() {
                // Every passive height was driven to zero: nothing left to solve (an SVD of a
                // 0×0 matrix panics in nalgebra).
                break;
            }
            let sub = DMatrix::from_fn(idx.len(), idx.len(), |r, c| ata[(idx[r], idx[c])]);
            let rhs = DVector::from_iterator(idx.len(), idx.iter().map(|&r| atb[r]));
            let svd = sub.try_svd(true, true, f64::EPSILON, 10_000);
            let Some(z) = svd.and_then(|d| d.solve(&rhs, 1e-14).ok()) else {
                return x.iter().copied().collect();
            };
            if z.iter().all(|&v| v > 0.0) {
                for (r, &i) in idx.iter().enumerate() {
                    x[i] = z[r];
                }
                break;
            }
            let mut alpha = 1.0_f64;
            for (r, &i) in idx.iter().enumerate() {
                if z[r] <= 0.0 {
                    alpha = alpha.min(x[i] / (x[i] - z[r]));
                }
            }
            for (r, &i) in idx.iter().enumerate() {
                x[i] += alpha * (z[r] - x[i]);
                if x[i] <= 1e-15 {
                    x[i] = 0.0;
                    passive[i] = false;
                }
            }
        }
    }
    x.iter().copied().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_residual_start_finds_a_sharp_line_beside_a_broad_hump() {
        // The residual of a broad-band fit: a 150 cm⁻¹ line of height 0.01 at
        // 14 000 cm⁻¹ on a slow ±0.004 ripple, 20 cm⁻¹ spacing.
        let x: Vec<f64> = (0..600).map(|i| 10_000.0 + 20.0 * f64::from(i)).collect();
        let r: Vec<f64> = x
            .iter()
            .map(|v| {
                0.004 * (v / 2000.0).sin()
                    + 0.01
                        * (-4.0 * std::f64::consts::LN_2 * ((v - 14_000.0) / 150.0).powi(2)).exp()
            })
            .collect();
        let b = residual_band(&x, &r, 20.0).unwrap();
        assert!((b.centre - 14_000.0).abs() <= 20.0, "centre {}", b.centre);
        assert!(b.fwhm > 60.0 && b.fwhm < 400.0, "fwhm {}", b.fwhm);
    }

    #[test]
    fn a_residual_that_is_nowhere_positive_gives_no_start() {
        let x: Vec<f64> = (0..20).map(f64::from).collect();
        assert!(residual_band(&x, &[-1.0; 20], 1.0).is_none());
    }

    #[test]
    fn wavenumbers_spanning_1e_minus_300_to_1e300_give_bands_or_nothing_without_a_panic() {
        // Issue 20: NNLS reached an SVD of a 0×0 matrix here (the process aborted).
        let x: Vec<f64> = (0..40)
            .map(|i| 10f64.powf(-300.0 + 600.0 * f64::from(i) / 39.0))
            .collect();
        let y: Vec<f64> = (0..40).map(|i| (f64::from(i) * 0.7).sin().abs()).collect();
        for n in [None, Some(1), Some(3)] {
            let bands = guess(&x, &y, n);
            assert!(bands
                .iter()
                .all(|b| b.centre.is_finite() && b.fwhm.is_finite() && b.height.is_finite()));
        }
    }
}
