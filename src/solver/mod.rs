//! A lean Levenberg–Marquardt least-squares solver with box bounds.
//!
//! Method (Moré 1977 for the scaling and tests; Nielsen 1999 / Madsen,
//! Nielsen & Tingleff, "Methods for non-linear least squares problems", 2004,
//! for the damping update):
//!
//! * the problem supplies residuals and the analytic Jacobian in one fused
//!   call, the Jacobian stored parameter-major (column j contiguous);
//! * each iteration solves (JᵀJ + λ·D) δ = −Jᵀr, where D holds the running
//!   maximum of diag(JᵀJ) (Marquardt scaling, so centres in cm⁻¹ and heights
//!   in absorbance are treated alike), by Cholesky, falling back to an SVD
//!   pseudo-solve when the matrix is not positive definite;
//! * λ is updated by Nielsen's rule: on success λ·max(1/3, 1 − (2ρ − 1)³),
//!   on failure λ·ν with ν doubling.
//!
//! Bounds are handled by **projection**, not by variable transforms: a
//! parameter sitting on a bound whose gradient points outward is frozen for
//! that iteration (its row and column removed from the system), and the
//! trial point is clamped into the box. This keeps the analytic Jacobian
//! untouched (no chain-rule factor that vanishes at the bound, the known
//! flaw of sin/sqrt transforms) and lets a parameter leave a bound again.
//! A start exactly on a bound is nudged inside by 1e-10 of the box width.
//!
//! Before every Cholesky or SVD the normal equations are checked for NaN and
//! infinity (a Jacobian of ±1e300 overflows JᵀJ): at the start that is the
//! typed error [`LmError::Overflow`]; later, a trial point whose system
//! overflows is rejected like one that raises χ². The SVD fallback is
//! iteration-bounded.
//!
//! This is the one least-squares solver of the crate: the band fit and the
//! NIST StRD checks run through [`solve`].
//!
//! The solver always returns the best point found, with the reason it stopped
//! and the number of model evaluations; it never turns an iteration limit or
//! a cancellation into an error.

use nalgebra::{DMatrix, DVector};
use serde::{Deserialize, Serialize};
use std::fmt;

/// A nonlinear least-squares problem: minimise Σ rᵢ(x)².
pub trait LeastSquares {
    /// Number of residuals m.
    fn residual_count(&self) -> usize;
    /// Number of parameters n.
    fn parameter_count(&self) -> usize;
    /// Fills `residuals` (length m) and, when given, `jacobian` (length m·n,
    /// column-major: `jacobian[j * m + i]` = ∂rᵢ/∂xⱼ). Returns false when the
    /// model cannot be evaluated at `x`.
    fn evaluate(&self, x: &[f64], residuals: &mut [f64], jacobian: Option<&mut [f64]>) -> bool;
}

/// Solver settings; the defaults suit both band fits and the NIST problems.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LmOptions {
    /// Upper limit on iterations (each costs one fused evaluation).
    pub max_iterations: usize,
    /// Stop when actual and predicted relative reductions of χ² are below this.
    pub ftol: f64,
    /// Stop when the scaled step is below this relative to the scaled parameters.
    pub xtol: f64,
    /// Stop when every gradient component's cosine with the residual is below this.
    pub gtol: f64,
    /// Lower bounds (−∞ for none); empty means unbounded.
    pub lower: Vec<f64>,
    /// Upper bounds (+∞ for none); empty means unbounded.
    pub upper: Vec<f64>,
}

impl Default for LmOptions {
    fn default() -> Self {
        LmOptions {
            max_iterations: 200,
            ftol: 1e-12,
            xtol: 1e-10,
            gtol: 1e-12,
            lower: Vec::new(),
            upper: Vec::new(),
        }
    }
}

/// Why the solver stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum StopReason {
    /// χ² no longer decreases (relative change below `ftol`).
    ConvergedCost,
    /// The step became negligible (below `xtol`).
    ConvergedStep,
    /// The gradient vanished (below `gtol`).
    ConvergedGradient,
    /// The residuals are exactly zero.
    ExactFit,
    /// The iteration limit was reached; the result is the best point so far.
    IterationLimit,
    /// The progress callback asked to stop; the result is the best point so far.
    Cancelled,
    /// No step could reduce χ² any more although no test was met.
    NoProgress,
}

impl StopReason {
    /// True for the stop reasons that mean a minimum was reached.
    pub fn converged(self) -> bool {
        matches!(
            self,
            StopReason::ConvergedCost
                | StopReason::ConvergedStep
                | StopReason::ConvergedGradient
                | StopReason::ExactFit
        )
    }
}

impl fmt::Display for StopReason {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            StopReason::ConvergedCost => "converged (χ² stopped changing)",
            StopReason::ConvergedStep => "converged (parameters stopped changing)",
            StopReason::ConvergedGradient => "converged (gradient vanished)",
            StopReason::ExactFit => "converged (exact fit)",
            StopReason::IterationLimit => {
                "stopped at the iteration limit; the result is the best so far"
            }
            StopReason::Cancelled => "cancelled; the result is the best so far",
            StopReason::NoProgress => "stopped: no step reduced χ² further",
        })
    }
}

/// Reported to the progress callback once per iteration.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Progress {
    pub iteration: usize,
    pub evaluations: usize,
    pub chi2: f64,
}

/// The outcome of a solve: always the best point found.
#[derive(Debug, Clone)]
pub struct LmReport {
    pub x: Vec<f64>,
    /// Σ rᵢ² at `x`.
    pub chi2: f64,
    pub residuals: Vec<f64>,
    /// Column-major Jacobian at `x` (m·n).
    pub jacobian: Vec<f64>,
    pub iterations: usize,
    pub evaluations: usize,
    pub stop: StopReason,
    /// Parameters that ended on a bound.
    pub at_bound: Vec<bool>,
}

/// Problems that stop the solver before it can start.
#[derive(Debug, Clone, PartialEq)]
pub enum LmError {
    /// Fewer residuals than parameters: the problem is underdetermined.
    TooFewResiduals { residuals: usize, parameters: usize },
    /// The start vector or the bounds have the wrong length, or a bound is inverted.
    BadSetup(String),
    /// The model gives NaN or infinity at the starting point.
    StartNotFinite,
    /// χ² or JᵀJ overflows at the starting point (residuals or derivatives
    /// beyond about 1e150).
    Overflow,
}

impl fmt::Display for LmError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LmError::TooFewResiduals { residuals, parameters } => write!(
                f,
                "{residuals} data points cannot determine {parameters} parameters; use more points or fewer parameters"
            ),
            LmError::BadSetup(m) => write!(f, "the fit is set up wrongly: {m}"),
            LmError::StartNotFinite => f.write_str(
                "the model cannot be evaluated at the starting values (NaN or infinity); change the starting values",
            ),
            LmError::Overflow => f.write_str(
                "the residuals or their derivatives are too large to fit (χ² overflows); rescale the data or change the starting values",
            ),
        }
    }
}

impl std::error::Error for LmError {}

/// Dot product with four accumulators (vectorises; order fixed, so deterministic).
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    let mut acc = [0.0; 4];
    let chunks_a = a.chunks_exact(4);
    let chunks_b = b.chunks_exact(4);
    let (rest_a, rest_b) = (chunks_a.remainder(), chunks_b.remainder());
    for (ca, cb) in chunks_a.zip(chunks_b) {
        for k in 0..4 {
            acc[k] += ca[k] * cb[k];
        }
    }
    let tail: f64 = rest_a.iter().zip(rest_b).map(|(x, y)| x * y).sum();
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// JᵀJ and Jᵀr from a column-major Jacobian.
fn normal_equations(jac: &[f64], r: &[f64], m: usize, n: usize) -> (DMatrix<f64>, DVector<f64>) {
    let mut a = DMatrix::zeros(n, n);
    let mut g = DVector::zeros(n);
    for j in 0..n {
        let cj = &jac[j * m..(j + 1) * m];
        g[j] = dot(cj, r);
        for k in 0..=j {
            let v = dot(cj, &jac[k * m..(k + 1) * m]);
            a[(j, k)] = v;
            a[(k, j)] = v;
        }
    }
    (a, g)
}

/// True when JᵀJ and Jᵀr hold only finite numbers.
fn system_finite(a: &DMatrix<f64>, g: &DVector<f64>) -> bool {
    a.iter().chain(g.iter()).all(|v| v.is_finite())
}

/// Iteration cap of the SVD fallback (nalgebra's `try_svd`).
const SVD_MAX_ITERATIONS: usize = 1000;

/// Solves the damped system on the free parameters; frozen ones get δ = 0.
/// None when the damped matrix is not finite or its SVD does not converge.
fn damped_step(
    a: &DMatrix<f64>,
    g: &DVector<f64>,
    diag: &[f64],
    lambda: f64,
    free: &[bool],
) -> Option<Vec<f64>> {
    let idx: Vec<usize> = (0..free.len()).filter(|&j| free[j]).collect();
    let k = idx.len();
    let mut step = vec![0.0; free.len()];
    if k == 0 {
        return Some(step);
    }
    let mut mat = DMatrix::zeros(k, k);
    let mut rhs = DVector::zeros(k);
    for (p, &i) in idx.iter().enumerate() {
        rhs[p] = -g[i];
        for (q, &j) in idx.iter().enumerate() {
            mat[(p, q)] = a[(i, j)];
        }
        mat[(p, p)] += lambda * diag[i];
    }
    if !system_finite(&mat, &rhs) {
        return None;
    }
    let solution = if let Some(ch) = mat.clone().cholesky() {
        ch.solve(&rhs)
    } else {
        let svd = mat.try_svd(true, true, f64::EPSILON, SVD_MAX_ITERATIONS)?;
        let tol = f64::EPSILON * k as f64 * svd.singular_values.max();
        svd.solve(&rhs, tol).unwrap_or_else(|_| DVector::zeros(k))
    };
    for (p, &i) in idx.iter().enumerate() {
        step[i] = if solution[p].is_finite() {
            solution[p]
        } else {
            0.0
        };
    }
    Some(step)
}

/// Minimises Σ r(x)² from `x0`; see the module documentation for the method.
#[expect(
    clippy::too_many_lines,
    reason = "over the ~100-line limit; to be split into named steps (issue 15)"
)]
pub fn solve(
    problem: &dyn LeastSquares,
    x0: &[f64],
    opts: &LmOptions,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<LmReport, LmError> {
    let m = problem.residual_count();
    let n = problem.parameter_count();
    if x0.len() != n {
        return Err(LmError::BadSetup(format!(
            "{} starting values for {n} parameters",
            x0.len()
        )));
    }
    if m < n {
        return Err(LmError::TooFewResiduals {
            residuals: m,
            parameters: n,
        });
    }
    let lower = if opts.lower.is_empty() {
        vec![f64::NEG_INFINITY; n]
    } else {
        opts.lower.clone()
    };
    let upper = if opts.upper.is_empty() {
        vec![f64::INFINITY; n]
    } else {
        opts.upper.clone()
    };
    if lower.len() != n || upper.len() != n {
        return Err(LmError::BadSetup(
            "bounds do not match the parameters".into(),
        ));
    }
    if (0..n).any(|j| {
        lower[j].is_nan() || upper[j].is_nan() || lower[j] > upper[j] || !x0[j].is_finite()
    }) {
        return Err(LmError::BadSetup(
            "a lower bound exceeds its upper bound, or a start value is not finite".into(),
        ));
    }
    let mut x: Vec<f64> = (0..n)
        .map(|j| start_inside(x0[j], lower[j], upper[j]))
        .collect();

    let mut r = vec![0.0; m];
    let mut jac = vec![0.0; m * n];
    let mut r_trial = vec![0.0; m];
    let mut jac_trial = vec![0.0; m * n];
    let mut evaluations = 1;
    if !problem.evaluate(&x, &mut r, Some(&mut jac)) || !all_finite(&r) || !all_finite(&jac) {
        return Err(LmError::StartNotFinite);
    }
    let mut chi2 = dot(&r, &r);
    let (mut a, mut g) = normal_equations(&jac, &r, m, n);
    if !chi2.is_finite() || !system_finite(&a, &g) {
        return Err(LmError::Overflow);
    }
    let mut diag: Vec<f64> = (0..n).map(|j| a[(j, j)]).collect();
    let mut lambda = 1e-3;
    let mut nu = 2.0;
    let mut iterations = 0;

    let stop = loop {
        if chi2 == 0.0 {
            break StopReason::ExactFit;
        }
        if !progress(Progress {
            iteration: iterations,
            evaluations,
            chi2,
        }) {
            break StopReason::Cancelled;
        }
        if iterations >= opts.max_iterations {
            break StopReason::IterationLimit;
        }
        iterations += 1;
        // Active set: a parameter on a bound with the descent direction pointing out is frozen.
        let free: Vec<bool> = (0..n)
            .map(|j| !((x[j] <= lower[j] && g[j] > 0.0) || (x[j] >= upper[j] && g[j] < 0.0)))
            .collect();
        let max_diag = diag.iter().copied().fold(0.0, f64::max);
        let scale: Vec<f64> = diag
            .iter()
            .map(|&d| d.max(max_diag * 1e-15).max(f64::MIN_POSITIVE))
            .collect();
        let gradient_cosine = (0..n)
            .filter(|&j| free[j] && a[(j, j)] > 0.0)
            .map(|j| g[j].abs() / (a[(j, j)] * chi2).sqrt())
            .fold(0.0, f64::max);
        if gradient_cosine <= opts.gtol {
            break StopReason::ConvergedGradient;
        }
        let Some(raw) = damped_step(&a, &g, &scale, lambda, &free) else {
            break StopReason::NoProgress;
        };
        let x_trial: Vec<f64> = (0..n)
            .map(|j| (x[j] + raw[j]).clamp(lower[j], upper[j]))
            .collect();
        let step: Vec<f64> = (0..n).map(|j| x_trial[j] - x[j]).collect();
        let scaled_step = (0..n)
            .map(|j| scale[j] * step[j] * step[j])
            .sum::<f64>()
            .sqrt();
        let scaled_x = (0..n).map(|j| scale[j] * x[j] * x[j]).sum::<f64>().sqrt();
        // Predicted reduction of ‖r + Jδ‖²: −2gᵀδ − δᵀAδ.
        let mut quad = 0.0;
        for i in 0..n {
            for j in 0..n {
                quad += step[i] * a[(i, j)] * step[j];
            }
        }
        let predicted = -2.0 * (0..n).map(|j| g[j] * step[j]).sum::<f64>() - quad;

        evaluations += 1;
        let ok = problem.evaluate(&x_trial, &mut r_trial, Some(&mut jac_trial))
            && all_finite(&r_trial)
            && all_finite(&jac_trial);
        let chi2_trial = if ok {
            dot(&r_trial, &r_trial)
        } else {
            f64::INFINITY
        };
        let actual = chi2 - chi2_trial;
        let trial_system = (ok && actual > 0.0 && predicted > 0.0)
            .then(|| normal_equations(&jac_trial, &r_trial, m, n))
            .filter(|(a_t, g_t)| system_finite(a_t, g_t));
        if let Some(system) = trial_system {
            let rho = actual / predicted;
            let old_chi2 = chi2;
            x = x_trial;
            std::mem::swap(&mut r, &mut r_trial);
            std::mem::swap(&mut jac, &mut jac_trial);
            chi2 = chi2_trial;
            (a, g) = system;
            for j in 0..n {
                diag[j] = diag[j].max(a[(j, j)]);
            }
            lambda *= (1.0 - (2.0 * rho - 1.0).powi(3)).max(1.0 / 3.0);
            nu = 2.0;
            if actual <= opts.ftol * old_chi2 && predicted <= opts.ftol * old_chi2 {
                break StopReason::ConvergedCost;
            }
            if scaled_step <= opts.xtol * (scaled_x + opts.xtol) {
                break StopReason::ConvergedStep;
            }
        } else {
            if scaled_step <= opts.xtol * (scaled_x + opts.xtol) && ok {
                break StopReason::ConvergedStep;
            }
            lambda *= nu;
            nu *= 2.0;
            if lambda > 1e20 || !lambda.is_finite() {
                break StopReason::NoProgress;
            }
        }
    };
    let at_bound = (0..n)
        .map(|j| x[j] <= lower[j] || x[j] >= upper[j])
        .collect();
    Ok(LmReport {
        x,
        chi2,
        residuals: r,
        jacobian: jac,
        iterations,
        evaluations,
        stop,
        at_bound,
    })
}

fn all_finite(v: &[f64]) -> bool {
    v.iter().all(|x| x.is_finite())
}

/// Moves a start value that sits on (or outside) a bound strictly inside.
fn start_inside(x: f64, lo: f64, hi: f64) -> f64 {
    let width = hi - lo;
    let nudge = if width.is_finite() {
        1e-10 * width
    } else {
        1e-10 * x.abs().max(1.0)
    };
    if width == 0.0 {
        lo
    } else if x <= lo {
        (lo + nudge).min(hi)
    } else if x >= hi {
        (hi - nudge).max(lo)
    } else {
        x
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::{Duration, Instant};

    /// rᵢ = ±scale·(x − shift): 40 rows, one parameter.
    struct Huge {
        scale: f64,
        shift: f64,
    }

    impl LeastSquares for Huge {
        fn residual_count(&self) -> usize {
            40
        }
        fn parameter_count(&self) -> usize {
            1
        }
        fn evaluate(&self, x: &[f64], r: &mut [f64], jac: Option<&mut [f64]>) -> bool {
            let sign = |i: usize| if i % 2 == 0 { 1.0 } else { -1.0 };
            for (i, v) in r.iter_mut().enumerate() {
                *v = sign(i) * self.scale * (x[0] - self.shift);
            }
            if let Some(j) = jac {
                for (i, v) in j.iter_mut().enumerate() {
                    *v = sign(i) * self.scale;
                }
            }
            true
        }
    }

    /// Issue 20: ±1e300 residuals or derivatives overflow χ² or JᵀJ.
    #[test]
    fn a_jacobian_of_1e300_ends_within_a_second_with_a_message() {
        for shift in [0.0, 1.0] {
            let started = Instant::now();
            let problem = Huge {
                scale: 1e300,
                shift,
            };
            let result = solve(&problem, &[1.0], &LmOptions::default(), &mut |_| true);
            assert!(started.elapsed() < Duration::from_secs(1));
            let err = result.unwrap_err();
            assert_eq!(err, LmError::Overflow);
            assert!(err.to_string().contains("too large"));
        }
    }

    #[test]
    fn a_damped_system_that_is_not_finite_gives_no_step() {
        let a = DMatrix::from_element(1, 1, f64::INFINITY);
        let g = DVector::from_element(1, 1.0);
        assert_eq!(damped_step(&a, &g, &[1.0], 1e-3, &[true]), None);
        let a = DMatrix::from_element(1, 1, 4.0);
        let step = damped_step(&a, &g, &[1.0], 0.0, &[true]).unwrap();
        assert_eq!(step, vec![-0.25]);
    }
}
