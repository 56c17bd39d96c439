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
//! This is the one least-squares solver of the crate: the band fit
//! (`bands`), the ligand-field fit (`lf_fit`) and the NIST StRD checks
//! (`tests/bands_nist.rs`) all run through [`solve`].
//!
//! The state of a solve lives in one struct (`Solver`); its `minimize` is a
//! short loop over named steps (`before_iteration`, then `iterate`: active
//! set, scaling, gradient test, damped step, `propose`, `evaluate_trial`,
//! `accept` or `reject`), each pure step tested beside it.
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
    pub fn was_successful(self) -> bool {
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
pub fn solve(
    problem: &dyn LeastSquares,
    x0: &[f64],
    opts: &LmOptions,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<LmReport, LmError> {
    Ok(Solver::new(problem, x0, opts)?.minimize(progress))
}

/// The box [lower, upper] of `opts` for n parameters (unbounded when empty),
/// checked against the start `x0`.
fn checked_bounds(opts: &LmOptions, x0: &[f64]) -> Result<(Vec<f64>, Vec<f64>), LmError> {
    let n = x0.len();
    let or_default = |b: &[f64], v: f64| if b.is_empty() { vec![v; n] } else { b.to_vec() };
    let lower = or_default(&opts.lower, f64::NEG_INFINITY);
    let upper = or_default(&opts.upper, f64::INFINITY);
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
    Ok((lower, upper))
}

/// A proposed step, clamped into the box, with the numbers that judge it.
struct Trial {
    x: Vec<f64>,
    /// ‖D^½ δ‖ of the clamped step δ.
    scaled_step: f64,
    /// ‖D^½ x‖ at the current point.
    scaled_x: f64,
    /// Reduction of χ² the linear model predicts: −2gᵀδ − δᵀAδ.
    predicted: f64,
}

/// The whole state of one solve: the current point, its residuals and
/// Jacobian, the normal equations, the damping and the counters.
struct Solver<'a> {
    problem: &'a dyn LeastSquares,
    opts: &'a LmOptions,
    m: usize,
    n: usize,
    lower: Vec<f64>,
    upper: Vec<f64>,
    x: Vec<f64>,
    r: Vec<f64>,
    jac: Vec<f64>,
    r_trial: Vec<f64>,
    jac_trial: Vec<f64>,
    chi2: f64,
    /// JᵀJ at `x`.
    a: DMatrix<f64>,
    /// Jᵀr at `x`.
    g: DVector<f64>,
    /// Running maximum of diag(JᵀJ) (Marquardt scaling).
    diag: Vec<f64>,
    lambda: f64,
    nu: f64,
    iterations: usize,
    evaluations: usize,
}

impl<'a> Solver<'a> {
    /// Checks the setup and evaluates the start (nudged inside the box).
    fn new(
        problem: &'a dyn LeastSquares,
        x0: &[f64],
        opts: &'a LmOptions,
    ) -> Result<Self, LmError> {
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
        let (lower, upper) = checked_bounds(opts, x0)?;
        let x: Vec<f64> = (0..n)
            .map(|j| start_inside(x0[j], lower[j], upper[j]))
            .collect();
        let mut r = vec![0.0; m];
        let mut jac = vec![0.0; m * n];
        if !problem.evaluate(&x, &mut r, Some(&mut jac)) || !all_finite(&r) || !all_finite(&jac) {
            return Err(LmError::StartNotFinite);
        }
        let chi2 = dot(&r, &r);
        let (a, g) = normal_equations(&jac, &r, m, n);
        if !chi2.is_finite() || !system_finite(&a, &g) {
            return Err(LmError::Overflow);
        }
        let diag = (0..n).map(|j| a[(j, j)]).collect();
        Ok(Solver {
            problem,
            opts,
            m,
            n,
            lower,
            upper,
            x,
            r_trial: vec![0.0; m],
            jac_trial: vec![0.0; m * n],
            r,
            jac,
            chi2,
            a,
            g,
            diag,
            lambda: 1e-3,
            nu: 2.0,
            iterations: 0,
            evaluations: 1,
        })
    }

    /// Iterates until a stop reason appears and returns the best point.
    fn minimize(mut self, progress: &mut dyn FnMut(Progress) -> bool) -> LmReport {
        let stop = loop {
            if let Some(stop) = self.before_iteration(progress) {
                break stop;
            }
            if let Some(stop) = self.iterate() {
                break stop;
            }
        };
        self.report(stop)
    }

    /// The stops checked before an iteration: exact fit, cancellation, limit.
    fn before_iteration(
        &mut self,
        progress: &mut dyn FnMut(Progress) -> bool,
    ) -> Option<StopReason> {
        if self.chi2 == 0.0 {
            return Some(StopReason::ExactFit);
        }
        let report = Progress {
            iteration: self.iterations,
            evaluations: self.evaluations,
            chi2: self.chi2,
        };
        if !progress(report) {
            return Some(StopReason::Cancelled);
        }
        (self.iterations >= self.opts.max_iterations).then_some(StopReason::IterationLimit)
    }

    /// One iteration: build the damped system, take a step, evaluate it,
    /// accept or reject it (updating the damping), test for convergence.
    fn iterate(&mut self) -> Option<StopReason> {
        self.iterations += 1;
        let free = free_parameters(&self.x, &self.g, &self.lower, &self.upper);
        let scale = marquardt_scale(&self.diag);
        if gradient_cosine(&self.a, &self.g, &free, self.chi2) <= self.opts.gtol {
            return Some(StopReason::ConvergedGradient);
        }
        let Some(raw) = damped_step(&self.a, &self.g, &scale, self.lambda, &free) else {
            return Some(StopReason::NoProgress);
        };
        let trial = self.propose(&raw, &scale);
        let (ok, chi2_trial) = self.evaluate_trial(&trial.x);
        let actual = self.chi2 - chi2_trial;
        let small_step = step_converged(trial.scaled_step, trial.scaled_x, self.opts.xtol);
        let trial_system = (ok && actual > 0.0 && trial.predicted > 0.0)
            .then(|| normal_equations(&self.jac_trial, &self.r_trial, self.m, self.n))
            .filter(|(a_t, g_t)| system_finite(a_t, g_t));
        match trial_system {
            Some(system) => {
                let old_chi2 = self.chi2;
                let rho = actual / trial.predicted;
                self.accept(trial.x, chi2_trial, system, rho);
                let ftol = self.opts.ftol * old_chi2;
                if actual <= ftol && trial.predicted <= ftol {
                    Some(StopReason::ConvergedCost)
                } else {
                    small_step.then_some(StopReason::ConvergedStep)
                }
            }
            None if small_step && ok => Some(StopReason::ConvergedStep),
            None => self.reject(),
        }
    }

    /// The clamped trial point of the raw step and its predicted reduction.
    fn propose(&self, raw: &[f64], scale: &[f64]) -> Trial {
        let n = self.n;
        let x: Vec<f64> = (0..n)
            .map(|j| (self.x[j] + raw[j]).clamp(self.lower[j], self.upper[j]))
            .collect();
        let step: Vec<f64> = (0..n).map(|j| x[j] - self.x[j]).collect();
        let scaled_step = (0..n)
            .map(|j| scale[j] * step[j] * step[j])
            .sum::<f64>()
            .sqrt();
        let scaled_x = (0..n)
            .map(|j| scale[j] * self.x[j] * self.x[j])
            .sum::<f64>()
            .sqrt();
        Trial {
            x,
            scaled_step,
            scaled_x,
            predicted: predicted_reduction(&self.a, &self.g, &step),
        }
    }

    /// Evaluates the model at the trial point into the trial buffers: whether
    /// it is finite, and its χ² (infinite when it is not).
    fn evaluate_trial(&mut self, x_trial: &[f64]) -> (bool, f64) {
        self.evaluations += 1;
        let ok = self
            .problem
            .evaluate(x_trial, &mut self.r_trial, Some(&mut self.jac_trial))
            && all_finite(&self.r_trial)
            && all_finite(&self.jac_trial);
        let chi2 = if ok {
            dot(&self.r_trial, &self.r_trial)
        } else {
            f64::INFINITY
        };
        (ok, chi2)
    }

    /// Moves to the trial point and relaxes the damping by Nielsen's rule.
    fn accept(&mut self, x: Vec<f64>, chi2: f64, system: (DMatrix<f64>, DVector<f64>), rho: f64) {
        self.x = x;
        std::mem::swap(&mut self.r, &mut self.r_trial);
        std::mem::swap(&mut self.jac, &mut self.jac_trial);
        self.chi2 = chi2;
        (self.a, self.g) = system;
        for j in 0..self.n {
            self.diag[j] = self.diag[j].max(self.a[(j, j)]);
        }
        self.lambda = damping_after_success(self.lambda, rho);
        self.nu = 2.0;
    }

    /// Stays put and raises the damping; gives up when it explodes.
    fn reject(&mut self) -> Option<StopReason> {
        (self.lambda, self.nu) = damping_after_failure(self.lambda, self.nu);
        (self.lambda > 1e20 || !self.lambda.is_finite()).then_some(StopReason::NoProgress)
    }

    fn report(self, stop: StopReason) -> LmReport {
        let at_bound = (0..self.n)
            .map(|j| self.x[j] <= self.lower[j] || self.x[j] >= self.upper[j])
            .collect();
        LmReport {
            x: self.x,
            chi2: self.chi2,
            residuals: self.r,
            jacobian: self.jac,
            iterations: self.iterations,
            evaluations: self.evaluations,
            stop,
            at_bound,
        }
    }
}

/// The active set: a parameter on a bound whose descent direction points out
/// of the box is frozen (false) for this iteration.
fn free_parameters(x: &[f64], g: &DVector<f64>, lower: &[f64], upper: &[f64]) -> Vec<bool> {
    (0..x.len())
        .map(|j| !((x[j] <= lower[j] && g[j] > 0.0) || (x[j] >= upper[j] && g[j] < 0.0)))
        .collect()
}

/// The damping scale D: the running diagonal, floored at 1e-15 of its
/// largest entry (and above zero) so no parameter goes undamped.
fn marquardt_scale(diag: &[f64]) -> Vec<f64> {
    let max_diag = diag.iter().copied().fold(0.0, f64::max);
    diag.iter()
        .map(|&d| d.max(max_diag * 1e-15).max(f64::MIN_POSITIVE))
        .collect()
}

/// Moré's gradient test: the largest |gⱼ| / √(Aⱼⱼ χ²) over the free parameters.
fn gradient_cosine(a: &DMatrix<f64>, g: &DVector<f64>, free: &[bool], chi2: f64) -> f64 {
    (0..free.len())
        .filter(|&j| free[j] && a[(j, j)] > 0.0)
        .map(|j| g[j].abs() / (a[(j, j)] * chi2).sqrt())
        .fold(0.0, f64::max)
}

/// Predicted reduction of ‖r + Jδ‖²: −2gᵀδ − δᵀAδ.
fn predicted_reduction(a: &DMatrix<f64>, g: &DVector<f64>, step: &[f64]) -> f64 {
    let n = step.len();
    let mut quad = 0.0;
    for i in 0..n {
        for j in 0..n {
            quad += step[i] * a[(i, j)] * step[j];
        }
    }
    -2.0 * (0..n).map(|j| g[j] * step[j]).sum::<f64>() - quad
}

/// Moré's step test: ‖D^½ δ‖ ≤ xtol · (‖D^½ x‖ + xtol).
fn step_converged(scaled_step: f64, scaled_x: f64, xtol: f64) -> bool {
    scaled_step <= xtol * (scaled_x + xtol)
}

/// Nielsen's rule after an accepted step with gain ratio ρ.
fn damping_after_success(lambda: f64, rho: f64) -> f64 {
    lambda * (1.0 - (2.0 * rho - 1.0).powi(3)).max(1.0 / 3.0)
}

/// Nielsen's rule after a rejected step: λ·ν, and ν doubles.
fn damping_after_failure(lambda: f64, nu: f64) -> (f64, f64) {
    (lambda * nu, nu * 2.0)
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
// The expected values below are exact in binary floating point by construction.
#[allow(clippy::float_cmp)]
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

    /// r = (x₀ − 1, 10·(x₁ − 2)): a linear problem, so the linear model is exact.
    struct Line;

    impl LeastSquares for Line {
        fn residual_count(&self) -> usize {
            2
        }
        fn parameter_count(&self) -> usize {
            2
        }
        fn evaluate(&self, x: &[f64], r: &mut [f64], jac: Option<&mut [f64]>) -> bool {
            r[0] = x[0] - 1.0;
            r[1] = 10.0 * (x[1] - 2.0);
            if let Some(j) = jac {
                j.copy_from_slice(&[1.0, 0.0, 0.0, 10.0]);
            }
            true
        }
    }

    #[test]
    fn a_parameter_on_its_bound_with_the_gradient_pointing_out_is_frozen() {
        let g = DVector::from_vec(vec![1.0, -1.0, 1.0]);
        let free = free_parameters(&[0.0, 0.0, 0.5], &g, &[0.0, 0.0, 0.0], &[1.0, 1.0, 1.0]);
        // Descent is −g: outward for the first, inward for the second.
        assert_eq!(free, vec![false, true, true]);
    }

    #[test]
    fn the_damping_scale_never_drops_below_a_tiny_share_of_its_largest_entry() {
        let scale = marquardt_scale(&[4.0, 0.0, 1e-20]);
        assert_eq!(scale[0], 4.0);
        assert_eq!(scale[1], 4e-15);
        assert_eq!(scale[2], 4e-15);
        assert!(marquardt_scale(&[0.0]).iter().all(|&d| d > 0.0));
    }

    #[test]
    fn the_gradient_cosine_skips_frozen_parameters() {
        let a = DMatrix::from_diagonal(&DVector::from_vec(vec![4.0, 1.0]));
        let g = DVector::from_vec(vec![2.0, 3.0]);
        // |g₀|/√(A₀₀ χ²) = 2/√(4·1) = 1; |g₁|/√(1·1) = 3.
        assert_eq!(gradient_cosine(&a, &g, &[true, true], 1.0), 3.0);
        assert_eq!(gradient_cosine(&a, &g, &[true, false], 1.0), 1.0);
    }

    #[test]
    fn the_predicted_reduction_is_exact_for_a_linear_problem() {
        let x = [0.0, 0.0];
        let mut r = [0.0; 2];
        let mut jac = [0.0; 4];
        Line.evaluate(&x, &mut r, Some(&mut jac));
        let (a, g) = normal_equations(&jac, &r, 2, 2);
        let step = [0.3, 1.5];
        let mut r_new = [0.0; 2];
        Line.evaluate(&step, &mut r_new, None);
        let actual = dot(&r, &r) - dot(&r_new, &r_new);
        let predicted = predicted_reduction(&a, &g, &step);
        assert!((predicted - actual).abs() <= 1e-12 * actual.abs());
    }

    #[test]
    fn a_step_is_small_relative_to_the_scaled_parameters_plus_xtol() {
        assert!(step_converged(1e-11, 1.0, 1e-10));
        assert!(!step_converged(1e-9, 1.0, 1e-10));
        // At x = 0 the test still ends on a step of order xtol².
        assert!(step_converged(1e-21, 0.0, 1e-10));
    }

    /// Nielsen (1999): ρ = 1 gives the largest cut (÷3), ρ = ½ leaves λ alone.
    #[test]
    fn the_damping_follows_nielsens_rule() {
        assert!((damping_after_success(3.0, 1.0) - 1.0).abs() < 1e-15);
        assert_eq!(damping_after_success(3.0, 0.5), 3.0);
        assert_eq!(damping_after_failure(1.0, 2.0), (2.0, 4.0));
        assert_eq!(damping_after_failure(2.0, 4.0), (8.0, 8.0));
    }

    #[test]
    fn a_linear_problem_is_solved_and_the_stop_was_successful() {
        let report = solve(&Line, &[0.0, 0.0], &LmOptions::default(), &mut |_| true).unwrap();
        assert!(report.stop.was_successful(), "{}", report.stop);
        assert!((report.x[0] - 1.0).abs() < 1e-9 && (report.x[1] - 2.0).abs() < 1e-9);
    }

    #[test]
    fn a_bound_holds_the_solution_and_is_reported() {
        let opts = LmOptions {
            upper: vec![0.5, f64::INFINITY],
            ..LmOptions::default()
        };
        let report = solve(&Line, &[0.0, 0.0], &opts, &mut |_| true).unwrap();
        assert_eq!(report.x[0], 0.5);
        assert_eq!(report.at_bound, vec![true, false]);
        assert!((report.x[1] - 2.0).abs() < 1e-9);
    }

    #[test]
    fn the_iteration_limit_and_a_cancellation_are_reported_with_the_best_point() {
        let opts = LmOptions {
            max_iterations: 0,
            ..LmOptions::default()
        };
        let report = solve(&Line, &[0.0, 0.0], &opts, &mut |_| true).unwrap();
        assert_eq!(report.stop, StopReason::IterationLimit);
        assert!(!report.stop.was_successful());
        let report = solve(&Line, &[0.0, 0.0], &LmOptions::default(), &mut |_| false).unwrap();
        assert_eq!(
            (report.stop, report.evaluations),
            (StopReason::Cancelled, 1)
        );
    }

    #[test]
    fn bad_bounds_and_a_short_start_are_refused_with_a_sentence() {
        let opts = LmOptions {
            lower: vec![1.0, 0.0],
            upper: vec![0.0, 1.0],
            ..LmOptions::default()
        };
        let err = checked_bounds(&opts, &[0.5, 0.5]).unwrap_err();
        assert!(err.to_string().contains("lower bound exceeds"));
        let err = solve(&Line, &[0.0], &LmOptions::default(), &mut |_| true).unwrap_err();
        assert!(err
            .to_string()
            .contains("1 starting values for 2 parameters"));
    }
}
