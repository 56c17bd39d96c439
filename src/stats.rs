//! Fit statistics: covariance, correlation and information criteria.
//!
//! * Covariance C = s²·(JᵀJ)⁺, the pseudo-inverse taken from the SVD of J
//!   itself (not of JᵀJ, which squares the condition number), discarding
//!   singular values s ≤ ε·max(m, n)·s_max as SciPy `curve_fit` does.
//!   s² = χ²/(N − P) (errors scaled by the reduced χ², lmfit
//!   `scale_covar=True`, SciPy `absolute_sigma=False`) unless the weights
//!   are absolute 1/σ², then s² = 1. This is also how NIST StRD certifies
//!   its standard deviations (residual standard deviation² × (JᵀJ)⁻¹).
//!   When the weights are the stated uncertainties of the data and the
//!   scatter may only widen them, s² = max(1, χ²/(N − P)), and 1 with no
//!   degrees of freedom left: the Birge ratio rule (R. T. Birge, Phys. Rev.
//!   40, 207 (1932); the Particle Data Group's scale factor S = √(χ²/(N − 1))
//!   applied only when S > 1, from memory). A χ²_ν below 1 says the data
//!   agree better than their σ claim, which is no evidence for a smaller σ.
//! * χ², χ²_ν = χ²/(N − P), R² = 1 − χ²/Σw(y − ȳ)², and the lmfit
//!   definitions AIC = N ln(χ²/N) + 2P, BIC = N ln(χ²/N) + ln(N)·P.

//!
//! Non-finite Jacobians (or ones whose QR overflows, entries beyond about
//! 1e154) give no covariance rather than reaching the SVD, and the SVD is
//! iteration-bounded.

use nalgebra::DMatrix;

/// Iteration cap of the SVD (nalgebra's `try_svd`).
const SVD_MAX_ITERATIONS: usize = 1000;

/// The parameter covariance of a least-squares fit.
#[derive(Debug, Clone)]
pub struct Covariance {
    /// n×n; rows and columns of excluded parameters are zero.
    pub matrix: DMatrix<f64>,
    /// Ratio of the largest to the smallest singular value kept.
    pub condition: f64,
    /// True when some singular values were discarded (redundant parameters).
    pub rank_deficient: bool,
}

impl Covariance {
    /// Standard error of parameter `j`, or None when it is not estimable.
    pub fn sigma(&self, j: usize) -> Option<f64> {
        let v = *self.matrix.get((j, j))?;
        (v.is_finite() && v > 0.0).then(|| v.sqrt())
    }

    /// σ² of a derived quantity g with gradient ∇g: ∇gᵀ C ∇g.
    pub fn propagate(&self, gradient: &[f64]) -> Option<f64> {
        let n = self.matrix.nrows();
        if gradient.len() != n {
            return None;
        }
        let mut var = 0.0;
        for i in 0..n {
            for j in 0..n {
                var += gradient[i] * self.matrix[(i, j)] * gradient[j];
            }
        }
        (var.is_finite() && var >= 0.0).then(|| var.sqrt())
    }

    /// Correlation ρᵢⱼ = Cᵢⱼ/√(CᵢᵢCⱼⱼ); zero where a variance is missing.
    pub fn correlation(&self) -> Vec<Vec<f64>> {
        let n = self.matrix.nrows();
        (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| {
                        let d = self.matrix[(i, i)] * self.matrix[(j, j)];
                        if d > 0.0 {
                            self.matrix[(i, j)] / d.sqrt()
                        } else {
                            0.0
                        }
                    })
                    .collect()
            })
            .collect()
    }
}

/// How the covariance is scaled: the s² in C = s²·(JᵀJ)⁺.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ErrorScale {
    /// s² = χ²/(N − P): errors scaled by the reduced χ² (lmfit
    /// `scale_covar=True`, SciPy `absolute_sigma=False`, NIST StRD). With no
    /// degrees of freedom left, s² = 1.
    ReducedChi2 {
        chi2: f64,
        points: usize,
        parameters: usize,
    },
    /// s² = max(1, χ²/(N − P)), 1 when N ≤ P: the weights are the data's
    /// stated uncertainties, and a scatter larger than they allow widens
    /// the result while a smaller one never narrows it (the Birge ratio rule).
    AtLeastStated {
        chi2: f64,
        points: usize,
        parameters: usize,
    },
    /// s² = 1: the weights are absolute 1/σ².
    Absolute,
}

impl ErrorScale {
    /// The factor s².
    pub fn s2(self) -> f64 {
        match self {
            ErrorScale::ReducedChi2 {
                chi2,
                points,
                parameters,
            } if points > parameters => chi2 / (points - parameters) as f64,
            ErrorScale::AtLeastStated {
                chi2,
                points,
                parameters,
            } if points > parameters => (chi2 / (points - parameters) as f64).max(1.0),
            _ => 1.0,
        }
    }
}

/// C = s²·(JᵀJ)⁺ over the columns with `include[j]`; J column-major m×n.
pub fn covariance(
    jacobian: &[f64],
    m: usize,
    n: usize,
    include: &[bool],
    scale: ErrorScale,
) -> Option<Covariance> {
    let s2 = scale.s2();
    let cols: Vec<usize> = (0..n)
        .filter(|&j| include.get(j).copied().unwrap_or(false))
        .collect();
    let k = cols.len();
    if k == 0 || jacobian.len() != m * n || m < k {
        return None;
    }
    if !s2.is_finite() || !jacobian.iter().all(|v| v.is_finite()) {
        return None;
    }
    let j_sub = DMatrix::from_fn(m, k, |i, c| jacobian[cols[c] * m + i]);
    // QR first: the SVD of the small R has the singular values of J.
    let r = j_sub.qr().r();
    if !r.iter().all(|v| v.is_finite()) {
        return None;
    }
    let svd = r.try_svd(false, true, f64::EPSILON, SVD_MAX_ITERATIONS)?;
    let v_t = svd.v_t?;
    let s_max = svd.singular_values.max();
    if s_max.is_nan() || s_max <= 0.0 || !s_max.is_finite() {
        return None;
    }
    let cutoff = f64::EPSILON * m.max(k) as f64 * s_max;
    let mut inv = DMatrix::<f64>::zeros(k, k);
    let mut s_min = s_max;
    let mut rank_deficient = false;
    for (idx, &s) in svd.singular_values.iter().enumerate() {
        if s <= cutoff {
            rank_deficient = true;
            continue;
        }
        s_min = s_min.min(s);
        let v = v_t.row(idx);
        for a in 0..k {
            for b in 0..k {
                inv[(a, b)] += v[a] * v[b] / (s * s);
            }
        }
    }
    let mut matrix = DMatrix::zeros(n, n);
    for (a, &ja) in cols.iter().enumerate() {
        for (b, &jb) in cols.iter().enumerate() {
            matrix[(ja, jb)] = s2 * inv[(a, b)];
        }
    }
    Some(Covariance {
        matrix,
        condition: s_max / s_min,
        rank_deficient,
    })
}

/// Goodness-of-fit numbers of a weighted fit.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GoodnessOfFit {
    pub chi2: f64,
    /// χ²/(N − P); None when N ≤ P.
    pub reduced_chi2: Option<f64>,
    /// None when the data are constant.
    pub r2: Option<f64>,
    /// None for an exact fit (χ² = 0), where ln χ² is undefined.
    pub aic: Option<f64>,
    pub bic: Option<f64>,
}

/// χ², reduced χ², R², AIC, BIC; `weighted_y_dev` = Σw(y − ȳ)².
pub fn goodness(chi2: f64, points: usize, parameters: usize, weighted_y_dev: f64) -> GoodnessOfFit {
    let n = points as f64;
    let p = parameters as f64;
    let reduced_chi2 = (points > parameters).then(|| chi2 / (n - p));
    let r2 = (weighted_y_dev > 0.0).then(|| 1.0 - chi2 / weighted_y_dev);
    let log_term = (chi2 > 0.0 && points > 0).then(|| n * (chi2 / n).ln());
    GoodnessOfFit {
        chi2,
        reduced_chi2,
        r2,
        aic: log_term.map(|l| l + 2.0 * p),
        bic: log_term.map(|l| l + n.ln() * p),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Issue 20: 40 rows of ±1e300 used to spin in the SVD.
    #[test]
    fn a_jacobian_of_1e300_has_no_covariance() {
        let jac: Vec<f64> = (0..80)
            .map(|i| if i % 2 == 0 { 1e300 } else { -1e300 })
            .collect();
        assert!(covariance(&jac, 40, 2, &[true, true], ErrorScale::Absolute).is_none());
        let mut nan = vec![1.0; 80];
        nan[3] = f64::NAN;
        assert!(covariance(&nan, 40, 2, &[true, true], ErrorScale::Absolute).is_none());
    }

    /// J = [[1, 0], [0, 2], [0, 0]]: (JᵀJ)⁻¹ = diag(1, 1/4) by hand.
    #[test]
    fn a_diagonal_jacobian_gives_the_inverse_squares() {
        let jac = [1.0, 0.0, 0.0, 0.0, 2.0, 0.0];
        let c = covariance(&jac, 3, 2, &[true, true], ErrorScale::Absolute).unwrap();
        assert!((c.sigma(0).unwrap() - 1.0).abs() < 1e-15);
        assert!((c.sigma(1).unwrap() - 0.5).abs() < 1e-15);
    }

    #[test]
    // Exact comparison meant: small integer ratios are exact in f64.
    #[allow(clippy::float_cmp)]
    fn the_reduced_chi2_scale_divides_by_the_degrees_of_freedom() {
        let scale = |points| ErrorScale::ReducedChi2 {
            chi2: 12.0,
            points,
            parameters: 2,
        };
        assert_eq!(scale(6).s2(), 3.0);
        assert_eq!(scale(2).s2(), 1.0);
        assert_eq!(ErrorScale::Absolute.s2(), 1.0);
    }

    /// The Birge ratio rule (Birge 1932; PDG scale factor): s² = max(1, χ²_ν).
    #[test]
    // Exact comparison meant: small integer ratios are exact in f64.
    #[allow(clippy::float_cmp)]
    fn the_stated_scale_widens_for_a_large_chi2_and_never_narrows() {
        let scale = |chi2, points| ErrorScale::AtLeastStated {
            chi2,
            points,
            parameters: 2,
        };
        assert_eq!(scale(12.0, 6).s2(), 3.0);
        assert_eq!(scale(0.04, 6).s2(), 1.0);
        assert_eq!(scale(0.0, 2).s2(), 1.0);
        assert_eq!(scale(12.0, 2).s2(), 1.0);
    }
}
