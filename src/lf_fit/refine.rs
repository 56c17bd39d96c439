//! Least-squares refinement of one assignment, its uncertainties, derived
//! numbers, predictions and plausibility checks; and the ranking.
//!
//! The refinement is the crate's one Levenberg–Marquardt solver
//! ([`crate::solver::solve`], the one the band fit and the NIST StRD checks
//! use): an assignment implements [`LeastSquares`], and θ = (Dq, B, C) is
//! kept in the physical region θ > 0 by the solver's projected lower bounds.
//! An assignment without a minimum there (B running to zero) ends on that
//! bound and is reported with its χ², never as a solution with B ≤ 0.

use super::search::{is_candidate, keys, start_index, Tuple};
use super::{
    Assigned, Derived, Held, LfFitError, Parameters, Predicted, Problem, Solution, SpinState,
};
use crate::estimate::Estimate;
use crate::ligand_field::{check_params, model, spin_change, Geometry, Level, Params};
use crate::solver::{self, LeastSquares, LmOptions};
use crate::stats::{self, Covariance, ErrorScale};
use nalgebra::{DMatrix, DVector};

/// Which parameters are free.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Free {
    /// Dq only; B held at the value given (or irrelevant when `b_matters` is false).
    Dq { b: f64, b_matters: bool },
    /// Dq and B, C = γB.
    DqB,
    /// Dq, B and C.
    DqBC,
}

impl Free {
    fn count(self) -> usize {
        match self {
            Free::Dq { .. } => 1,
            Free::DqB => 2,
            Free::DqBC => 3,
        }
    }

    fn names(self) -> Vec<String> {
        ["Dq", "B", "C"]
            .iter()
            .take(self.count())
            .map(|s| (*s).to_string())
            .collect()
    }
}

fn params(free: Free, theta: &[f64], gamma: f64) -> Params {
    match free {
        Free::Dq { b, .. } => Params {
            dq: theta[0],
            b,
            c: gamma * b,
        },
        Free::DqB => Params {
            dq: theta[0],
            b: theta[1],
            c: gamma * theta[1],
        },
        Free::DqBC => Params {
            dq: theta[0],
            b: theta[1],
            c: theta[2],
        },
    }
}

/// Transition energy and its θ-gradient from level `i0` to level `j`.
fn transition(levels: &[Level], i0: usize, j: usize, free: Free, gamma: f64) -> (f64, Vec<f64>) {
    let (a, b) = (&levels[j], &levels[i0]);
    let (ddq, db, dc) = (a.d_dq - b.d_dq, a.d_b - b.d_b, a.d_c - b.d_c);
    let grad = match free {
        Free::Dq { .. } => vec![ddq],
        Free::DqB => vec![ddq, db + gamma * dc],
        Free::DqBC => vec![ddq, db, dc],
    };
    (a.energy - b.energy, grad)
}

struct Eval {
    levels: Vec<Level>,
    start: usize,
    finals: Vec<usize>,
    residual: DVector<f64>,
    jacobian: DMatrix<f64>,
}

fn evaluate(p: &Problem, t: &Tuple, free: Free, theta: &[f64]) -> Option<Eval> {
    if theta.iter().any(|v| !v.is_finite() || *v <= 0.0) {
        return None;
    }
    let pr = params(free, theta, p.gamma);
    check_params(&pr).ok()?;
    let levels = model(p.n, p.geometry).ok()?.levels(&pr).ok()?;
    let ks = keys(&levels);
    let start = start_index(&levels, t.start_multiplicity)?;
    let finals: Option<Vec<usize>> = t
        .finals
        .iter()
        .map(|k| ks.iter().position(|q| q == k))
        .collect();
    let finals = finals?;
    let k = finals.len();
    let mut residual = DVector::zeros(k);
    let mut jacobian = DMatrix::zeros(k, free.count());
    for (i, &j) in finals.iter().enumerate() {
        let (e, g) = transition(&levels, start, j, free, p.gamma);
        residual[i] = (e - p.bands[i].energy) / p.sigmas[i];
        for (c, gv) in g.iter().enumerate() {
            jacobian[(i, c)] = gv / p.sigmas[i];
        }
    }
    Some(Eval {
        levels,
        start,
        finals,
        residual,
        jacobian,
    })
}

/// One assignment as a least-squares problem for [`crate::solver`]:
/// residuals (E_calc − E_obs)/σ per assigned band, analytic θ-gradients from
/// the level derivatives (Hellmann–Feynman, in `ligand_field::model`).
struct AssignmentProblem<'a> {
    problem: &'a Problem,
    tuple: &'a Tuple,
    free: Free,
}

impl LeastSquares for AssignmentProblem<'_> {
    fn residual_count(&self) -> usize {
        self.tuple.finals.len()
    }

    fn parameter_count(&self) -> usize {
        self.free.count()
    }

    fn evaluate(&self, x: &[f64], residuals: &mut [f64], jacobian: Option<&mut [f64]>) -> bool {
        let Some(ev) = evaluate(self.problem, self.tuple, self.free, x) else {
            return false;
        };
        residuals.copy_from_slice(ev.residual.as_slice());
        if let Some(jac) = jacobian {
            // nalgebra stores matrices column-major, the layout the solver wants.
            jac.copy_from_slice(ev.jacobian.as_slice());
        }
        true
    }
}

/// Smallest value the solver may give Dq, B or C (cm⁻¹): the physical region
/// is θ > 0, and a step that would cross zero is projected onto this bound.
const THETA_FLOOR: f64 = 1e-6;

/// Refines θ from `theta` by the crate's one least-squares solver, kept inside
/// θ > 0 by its projected bounds; None when the start cannot be evaluated.
fn solve(p: &Problem, t: &Tuple, free: Free, theta: &[f64]) -> Option<(Vec<f64>, Eval)> {
    let problem = AssignmentProblem {
        problem: p,
        tuple: t,
        free,
    };
    let options = LmOptions {
        ftol: 1e-15,
        xtol: 1e-12,
        lower: vec![THETA_FLOOR; free.count()],
        upper: Vec::new(),
        ..LmOptions::default()
    };
    let report = solver::solve(&problem, theta, &options, &mut |_| true).ok()?;
    let ev = evaluate(p, t, free, &report.x)?;
    Some((report.x, ev))
}

/// C counts as determined by the bands when its σ from the band positions
/// alone is below a third of its value: C resolved at 3σ (common practice
/// for calling a fitted parameter significant).
pub(super) const C_DETERMINED: f64 = 1.0 / 3.0;

/// Fits one assignment and builds its solution.
///
/// Dq and B are fitted with C = γB; then C is freed whenever the assigned
/// bands determine it ([`C_DETERMINED`]; asked for or not). A parameter the
/// bands do not determine is held and listed in [`Solution::held`]. The
/// ranking score uses the χ² at C = γB for every assignment, so a C freed
/// by three bands (χ² = 0) does not outrank the rest for its extra parameter.
pub(crate) fn fit_assignment(p: &Problem, t: &Tuple) -> Result<Solution, LfFitError> {
    let k = p.bands.len();
    let b_start = t.b.max(1.0);
    let dq_start = t.delta_over_b * b_start / 10.0;
    let mut warnings = Vec::new();
    let mut held = Vec::new();
    let free = if p.n == 1 || p.n == 9 {
        Free::Dq {
            b: b_start,
            b_matters: false,
        }
    } else if k == 1 {
        hold_b(
            p,
            t,
            dq_start,
            "one band cannot fix both Dq and B",
            &mut warnings,
            &mut held,
        )
    } else {
        Free::DqB
    };
    let theta0: Vec<f64> = match free {
        Free::Dq { b, .. } => vec![if p.n == 1 || p.n == 9 {
            p.bands[0].energy / 10.0
        } else {
            t.delta_over_b * b / 10.0
        }],
        _ => vec![dq_start, b_start],
    };
    let left = || {
        LfFitError::NoFit(
            "the fit left the physical range (a parameter became zero or negative)".into(),
        )
    };
    let (mut free, mut theta, mut ev) = solve(p, t, free, &theta0)
        .map(|(th, ev)| (free, th, ev))
        .ok_or_else(left)?;
    let rank_chi2 = ev.residual.norm_squared();
    // A fit that ran to the bound has no minimum with B > 0: it stays as it
    // is (and is not listed), rather than becoming a fit at a held B.
    let on_bound = theta.iter().any(|v| *v <= super::rank::ON_BOUND);
    if free == Free::DqB && !on_bound && covariance(&ev, k, 2).is_none() {
        let f = hold_b(
            p,
            t,
            theta[0],
            "these bands do not determine B",
            &mut warnings,
            &mut held,
        );
        (theta, ev) = solve(p, t, f, &[theta[0]]).ok_or_else(left)?;
        free = f;
    } else if free == Free::DqB {
        if let Some((th, e)) = free_c(p, t, &theta, &mut warnings, &mut held) {
            (free, theta, ev) = (Free::DqBC, th, e);
        }
    }
    let mut solution = build(p, free, &theta, &ev, warnings, held, rank_chi2);
    if free == Free::DqBC && !p.free_c {
        solution.notes.push(format!(
            "C was fitted because the assigned bands determine it (C/B = {:.2}; free-ion or default C/B {:.2})",
            theta[2] / theta[1],
            p.gamma
        ));
    }
    if free == Free::DqB && k >= 3 {
        if let Some((lo, hi)) = pairwise_b(p, t, &theta) {
            if hi - lo > 0.1 * 0.5 * (hi + lo) {
                solution.warnings.push(format!(
                    "the bands are not consistent with one B: pairs of bands give B from {lo:.0} to {hi:.0} cm⁻¹ (spin–orbit mixing, a low-symmetry splitting or a wrong assignment can cause this)"
                ));
            }
        }
    }
    Ok(solution)
}

/// Dq alone with B held at 0.8·B₀ (or a typical 800 cm⁻¹), listed as held
/// when the bands depend on B at all.
fn hold_b(
    p: &Problem,
    t: &Tuple,
    dq: f64,
    why: &str,
    warnings: &mut Vec<String>,
    held: &mut Vec<Held>,
) -> Free {
    let b = p.b0.as_ref().map_or(800.0, |(b0, _)| 0.8 * b0);
    let probe = evaluate(p, t, Free::DqB, &[dq.max(1.0), b]);
    let b_matters = probe.is_some_and(|e| e.jacobian.column(1).amax() > 1e-9);
    if b_matters {
        let source = if p.b0.is_some() {
            "0.8 × B₀"
        } else {
            "a typical value"
        };
        warnings.push(format!(
            "{why}: B was held at {b:.0} cm⁻¹ ({source}), and Δ depends on that choice"
        ));
        held.push(Held {
            parameter: "B".into(),
            value: b,
            reason: format!("{why}: held at {source}"),
        });
    }
    Free::Dq { b, b_matters }
}

/// From the (Dq, B) fit `theta`: the (Dq, B, C) fit when the bands
/// determine C; otherwise None, and C is listed as held if freeing it was asked for.
fn free_c(
    p: &Problem,
    t: &Tuple,
    theta: &[f64],
    warnings: &mut Vec<String>,
    held: &mut Vec<Held>,
) -> Option<(Vec<f64>, Eval)> {
    let k = p.bands.len();
    let c0 = p.gamma * theta[1];
    let start = [theta[0], theta[1], c0];
    let probe = evaluate(p, t, Free::DqBC, &start)?;
    let depends = probe.jacobian.column(2).amax() > 1e-9;
    let determined = k >= 3
        && covariance(&probe, k, 3)
            .and_then(|c| c.sigma(2))
            .is_some_and(|s| s < C_DETERMINED * c0);
    let fitted = determined
        .then(|| solve(p, t, Free::DqBC, &start))
        .flatten();
    if fitted.is_none() && p.free_c {
        let reason = if !depends {
            super::NO_BAND_DEPENDS_ON_C.to_string()
        } else if k < 3 {
            "freeing C needs at least three bands".to_string()
        } else {
            "the assigned bands do not determine C to better than a third of its value".to_string()
        };
        warnings.push(format!("{reason}: C/B was held at {:.2}", p.gamma));
        held.push(Held {
            parameter: "C".into(),
            value: c0,
            reason: format!("{reason}: held at C/B = {:.2}", p.gamma),
        });
    }
    fitted
}

/// B fitted to every pair of the assigned bands (with Dq), as a consistency check.
fn pairwise_b(p: &Problem, t: &Tuple, theta: &[f64]) -> Option<(f64, f64)> {
    let k = p.bands.len();
    let mut bs = Vec::new();
    for i in 0..k {
        for j in i + 1..k {
            let sub = Problem {
                bands: vec![p.bands[i].clone(), p.bands[j].clone()],
                sigmas: vec![p.sigmas[i], p.sigmas[j]],
                warnings: Vec::new(),
                b0: p.b0.clone(),
                ..*p
            };
            let st = Tuple {
                finals: vec![t.finals[i].clone(), t.finals[j].clone()],
                ..t.clone()
            };
            if let Some((th, _)) = solve(&sub, &st, Free::DqB, theta) {
                bs.push(th[1]);
            }
        }
    }
    let lo = bs.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = bs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (bs.len() >= 2).then_some((lo, hi))
}

/// The covariance of θ: (JᵀJ)⁺ from [`crate::stats`], scaled by
/// max(1, χ²/(k − p)) (1 when exactly determined): never smaller than the
/// band-position σ alone give (the Birge ratio rule). A rank-deficient
/// J, or one with condition above 1/√ε (so JᵀJ has no digit left), gives
/// None: those bands do not determine every parameter.
fn covariance(ev: &Eval, points: usize, parameters: usize) -> Option<Covariance> {
    let scale = ErrorScale::AtLeastStated {
        chi2: ev.residual.norm_squared(),
        points,
        parameters,
    };
    let include = vec![true; parameters];
    stats::covariance(ev.jacobian.as_slice(), points, parameters, &include, scale)
        .filter(|c| !c.rank_deficient && c.condition < f64::EPSILON.sqrt().recip())
}

/// The value with its propagated σ, or exact when σ cannot be estimated.
fn propagate(cov: Option<&Covariance>, value: f64, grad: &[f64]) -> Estimate {
    match cov.and_then(|c| c.propagate(grad)) {
        Some(sigma) => Estimate::new(value, sigma),
        None => Estimate::exact(value),
    }
}

/// The solution of a finished fit; `rank_chi2` is the χ² its score starts from.
fn build(
    p: &Problem,
    free: Free,
    theta: &[f64],
    ev: &Eval,
    mut warnings: Vec<String>,
    held: Vec<Held>,
    rank_chi2: f64,
) -> Solution {
    let k = p.bands.len();
    let np = free.count();
    let dof = k as i64 - np as i64;
    let chi2 = ev.residual.norm_squared();
    let cov = covariance(ev, k, np);
    if cov.is_none() {
        warnings.push(
            "these bands do not determine the parameters (singular matrix): no uncertainties"
                .into(),
        );
    }
    let c = cov.as_ref();
    let pr = params(free, theta, p.gamma);
    let (mut parameters, mut derived) = estimates(p, free, pr, c);
    mark_held(&held, &mut parameters, &mut derived);
    let start = &ev.levels[ev.start];
    let assignment = assigned(p, ev);
    let predicted = predictions(p, ev, free, c);
    let plausible = plausibility(p, ev, free, pr, &derived, &mut warnings);
    consistency_warnings(&assignment, chi2, dof, &mut warnings);
    let skipped = skipped_lower(p, ev, &assignment);
    let spin = spin_state(p, ev, free, pr, derived.delta_over_b.map(|e| e.value));
    let notes = notes(p, pr, free, &derived);
    Solution {
        parameters,
        derived,
        ground: start.label.clone(),
        ground_typeset: start.typeset.clone(),
        spin,
        assignment,
        predicted,
        chi2,
        degrees_of_freedom: dof,
        free: free.names(),
        correlation: c.map(Covariance::correlation).unwrap_or_default(),
        delta_chi2: 0.0,
        plausible,
        warnings,
        notes,
        score: rank_chi2 + 4.0 * skipped as f64,
        held,
    }
}

/// Every estimate that rests on a held parameter is marked as held: B
/// (with C = γB, β, Dq/B, Δ/B), or C (with C/B).
pub(super) fn mark_held(held: &[Held], parameters: &mut Parameters, derived: &mut Derived) {
    let hold = |e: &mut Option<Estimate>| {
        if let Some(v) = e {
            *v = Estimate::held(v.value);
        }
    };
    for h in held {
        if h.parameter == "B" {
            hold(&mut parameters.b);
            hold(&mut derived.beta);
            hold(&mut derived.dq_over_b);
            hold(&mut derived.delta_over_b);
        }
        hold(&mut parameters.c);
        hold(&mut derived.c_over_b);
    }
}

/// Dq, B, C with their σ, and the derived Δ, β, Dq/B, Δ/B and C/B.
fn estimates(p: &Problem, free: Free, pr: Params, c: Option<&Covariance>) -> (Parameters, Derived) {
    let np = free.count();
    let z = |i: usize| {
        let mut g = vec![0.0; np];
        if i < np {
            g[i] = 1.0;
        }
        g
    };
    let dq = propagate(c, pr.dq, &z(0));
    let b_known = !matches!(
        free,
        Free::Dq {
            b_matters: false,
            ..
        }
    );
    let (b, cc, c_over_b, dq_over_b) = match free {
        Free::Dq { .. } => {
            let b = b_known.then(|| Estimate::exact(pr.b));
            let cc = b_known.then(|| Estimate::exact(pr.c));
            (
                b,
                cc,
                b_known.then(|| Estimate::exact(p.gamma)),
                b_known.then(|| propagate(c, pr.dq / pr.b, &[1.0 / pr.b])),
            )
        }
        Free::DqB => (
            Some(propagate(c, pr.b, &z(1))),
            Some(propagate(c, pr.c, &[0.0, p.gamma])),
            Some(Estimate::exact(p.gamma)),
            Some(propagate(
                c,
                pr.dq / pr.b,
                &[1.0 / pr.b, -pr.dq / (pr.b * pr.b)],
            )),
        ),
        Free::DqBC => (
            Some(propagate(c, pr.b, &z(1))),
            Some(propagate(c, pr.c, &z(2))),
            Some(propagate(
                c,
                pr.c / pr.b,
                &[0.0, -pr.c / (pr.b * pr.b), 1.0 / pr.b],
            )),
            Some(propagate(
                c,
                pr.dq / pr.b,
                &[1.0 / pr.b, -pr.dq / (pr.b * pr.b), 0.0],
            )),
        ),
    };
    let scale_est = |e: Estimate, f: f64| e.scaled(f);
    let beta = match (&b, &p.b0) {
        (Some(bv), Some((b0, _))) if matches!(free, Free::DqB | Free::DqBC) => {
            Some(scale_est(*bv, 1.0 / b0))
        }
        _ => None,
    };
    let derived = Derived {
        delta: scale_est(dq, 10.0),
        beta,
        b0: p.b0.as_ref().map(|(v, _)| *v),
        b0_source: p.b0.as_ref().map(|(_, s)| s.clone()),
        dq_over_b,
        delta_over_b: dq_over_b.map(|e| scale_est(e, 10.0)),
        c_over_b,
    };

    (Parameters { dq, b, c: cc }, derived)
}

/// Each assigned band with its state and calculated position.
fn assigned(p: &Problem, ev: &Eval) -> Vec<Assigned> {
    let k = p.bands.len();
    let start = &ev.levels[ev.start];
    let mut assignment = Vec::with_capacity(k);
    for (i, &j) in ev.finals.iter().enumerate() {
        let calculated = ev.levels[j].energy - start.energy;
        assignment.push(Assigned {
            observed: p.bands[i].energy,
            sigma: p.sigmas[i],
            state: ev.levels[j].label.clone(),
            typeset: ev.levels[j].typeset.clone(),
            calculated,
            residual: p.bands[i].energy - calculated,
        });
    }
    assignment
}

/// Every transition up to `max_prediction` with its propagated σ.
fn predictions(p: &Problem, ev: &Eval, free: Free, c: Option<&Covariance>) -> Vec<Predicted> {
    let start = &ev.levels[ev.start];
    let mut predicted = Vec::new();
    for j in 0..ev.levels.len() {
        if j == ev.start {
            continue;
        }
        let (e, g) = transition(&ev.levels, ev.start, j, free, p.gamma);
        if e <= 0.0 || e > p.max_prediction {
            continue;
        }
        predicted.push(Predicted {
            state: ev.levels[j].label.clone(),
            typeset: ev.levels[j].typeset.clone(),
            energy: e,
            sigma: propagate(c, e, &g).sigma,
            spin_allowed: ev.levels[j].multiplicity == start.multiplicity,
            observed: ev.finals.contains(&j),
        });
    }

    predicted
}

/// The plausibility checks (common practice unless stated): spin state,
/// β, Dq/B and band intensities. False when one fails; each adds a warning.
fn plausibility(
    p: &Problem,
    ev: &Eval,
    free: Free,
    pr: Params,
    derived: &Derived,
    warnings: &mut Vec<String>,
) -> bool {
    let start = &ev.levels[ev.start];
    let (beta, dq_over_b) = (derived.beta, derived.dq_over_b);
    // Plausibility (common practice unless stated).
    let mut plausible = true;
    let mut flag = |text: String, w: &mut Vec<String>| {
        plausible = false;
        w.push(text);
    };
    let b_determined = matches!(free, Free::DqB | Free::DqBC);
    if b_determined && ev.levels[0].multiplicity != start.multiplicity {
        flag(format!("at the fitted field the ground state is {}, not {}: this spin state is inconsistent", ev.levels[0].typeset, start.typeset), warnings);
    }
    if let Some(bt) = beta {
        if bt.value > 1.05 {
            flag(format!("β = {:.2} is above 1.05: a B larger than the free ion's is not physical (a wrong assignment?)", bt.value), warnings);
        } else if bt.value < 0.3 {
            flag(
                format!(
                    "β = {:.2} is below 0.3: implausibly strong covalency",
                    bt.value
                ),
                warnings,
            );
        }
    } else if matches!(free, Free::DqB | Free::DqBC) && pr.b > 1300.0 {
        flag(
            format!(
                "B = {:.0} cm⁻¹ is above every first-row free-ion value (≈ 1240 cm⁻¹ at most)",
                pr.b
            ),
            warnings,
        );
    }
    if let Some(r) = dq_over_b {
        if !(0.2..=6.0).contains(&r.value) {
            flag(
                format!(
                    "Dq/B = {:.2} lies outside the range 0.2–6 met in cubic complexes",
                    r.value
                ),
                warnings,
            );
        }
    }
    for (i, &j) in ev.finals.iter().enumerate() {
        let Some(eps) = p.bands[i].epsilon else {
            continue;
        };
        let allowed = ev.levels[j].multiplicity == start.multiplicity;
        if allowed && p.geometry == Geometry::Octahedral && eps > 1000.0 {
            flag(format!("the band at {:.0} cm⁻¹ (ε = {eps:.0}) is too intense for a Laporte-forbidden octahedral d–d band: charge transfer?", p.bands[i].energy), warnings);
        } else if p.geometry == Geometry::Octahedral
            && eps > super::chem::OCTAHEDRAL_EPSILON_WARNING
        {
            warnings.push(format!("the band at {:.0} cm⁻¹ has ε = {eps:.0}, above the few hundred M⁻¹cm⁻¹ of octahedral d–d bands: charge transfer, or a tetrahedral site?", p.bands[i].energy));
        } else if !allowed && eps > 10.0 {
            flag(format!("the band at {:.0} cm⁻¹ (ε = {eps:.0}) is too intense for a spin-forbidden transition", p.bands[i].energy), warnings);
        }
    }
    plausible
}

/// Warnings for bands far from their calculated positions and for a
/// reduced χ² above 4 (common practice).
fn consistency_warnings(assignment: &[Assigned], chi2: f64, dof: i64, warnings: &mut Vec<String>) {
    for a in assignment {
        if a.residual.abs() > 3.0 * a.sigma {
            warnings.push(format!(
                "the band at {:.0} cm⁻¹ is {:.0} cm⁻¹ from its calculated position ({:.1} σ)",
                a.observed,
                a.residual,
                a.residual.abs() / a.sigma
            ));
        }
    }
    if dof > 0 && chi2 / dof as f64 > 4.0 {
        warnings.push(format!(
            "the bands are not consistent with one set of parameters (reduced χ² = {:.1}): B depends on which bands are used; spin–orbit mixing, a low-symmetry splitting or a wrong assignment can cause this",
            chi2 / dof as f64
        ));
    }
}

/// Lower spin-allowed transitions the assignment skips (for the score).
fn skipped_lower(p: &Problem, ev: &Eval, assignment: &[Assigned]) -> usize {
    let start = &ev.levels[ev.start];
    let top = assignment.iter().map(|a| a.calculated).fold(0.0, f64::max);
    (0..ev.levels.len())
        .filter(|&j| {
            j != ev.start
                && !ev.finals.contains(&j)
                && is_candidate(start.multiplicity, ev.levels[j].multiplicity, false)
        })
        .filter(|&j| (p.observed_from..top).contains(&(ev.levels[j].energy - start.energy)))
        .count()
}

/// The spin state at the fitted field; where the bands do not determine B
/// (one band, B held), the state is the assignment's own and is not tested.
fn spin_state(
    p: &Problem,
    ev: &Eval,
    free: Free,
    pr: Params,
    delta_over_b: Option<f64>,
) -> SpinState {
    let gamma = if pr.b > 0.0 { pr.c / pr.b } else { p.gamma };
    let crossing = spin_change(p.n, p.geometry, gamma).ok().flatten();
    let max_mult = p.n.min(10 - p.n) + 1;
    let b_determined = matches!(free, Free::DqB | Free::DqBC);
    let ground = if b_determined {
        &ev.levels[0]
    } else {
        &ev.levels[ev.start]
    };
    let name = if ground.multiplicity == max_mult {
        "high-spin"
    } else {
        "low-spin"
    };
    let state = match crossing {
        None => "only one spin state".to_string(),
        Some(_) if b_determined => name.into(),
        Some(_) => format!("{name} (B not determined)"),
    };
    SpinState {
        state,
        spin_change_delta_over_b: crossing,
        margin: if b_determined {
            crossing.zip(delta_over_b).map(|(x, d)| d - x)
        } else {
            None
        },
    }
}

/// Dq/B where ²E and ⁴T₂ of octahedral d³ cross, at C/B = γ.
pub(crate) fn d3_crossing(gamma: f64) -> Option<f64> {
    let m = model(3, Geometry::Octahedral).ok()?;
    let gap = |x: f64| -> Option<f64> {
        let ls = m
            .levels(&Params {
                dq: x,
                b: 1.0,
                c: gamma,
            })
            .ok()?;
        let e2 = ls
            .iter()
            .find(|l| l.multiplicity == 2 && l.irrep == "Eg")?
            .energy;
        let t2 = ls
            .iter()
            .find(|l| l.multiplicity == 4 && l.irrep == "T2g")?
            .energy;
        Some(e2 - t2)
    };
    let (mut a, mut b) = (0.3, 6.0);
    let (ga, gb) = (gap(a)?, gap(b)?);
    if ga.signum() == gb.signum() {
        return None;
    }
    for _ in 0..60 {
        let mid = 0.5 * (a + b);
        if gap(mid)?.signum() == ga.signum() {
            a = mid;
        } else {
            b = mid;
        }
    }
    Some(0.5 * (a + b))
}

fn notes(p: &Problem, pr: Params, free: Free, d: &Derived) -> Vec<String> {
    let mut out = Vec::new();
    if p.n == 3 && p.geometry == Geometry::Octahedral && matches!(free, Free::DqB | Free::DqBC) {
        if let (Some(x), Some(r)) = (d3_crossing(pr.c / pr.b), d.dq_over_b) {
            let side = if r.value > x {
                "²E is the lowest excited state: narrow-line (²E) emission expected"
            } else {
                "⁴T₂ is the lowest excited state: broad-band (⁴T₂) emission expected"
            };
            out.push(format!(
                "Dq/B = {:.2} against the ²E/⁴T₂ crossing at Dq/B = {x:.2}: {side}",
                r.value
            ));
        }
    }
    if p.geometry == Geometry::Tetrahedral {
        out.push(format!(
            "Δt = {:.0} cm⁻¹; an octahedral site with the same ligands would have Δo ≈ 9/4 · Δt = {:.0} cm⁻¹ (Δt ≈ 4/9 Δo, common practice)",
            d.delta.value,
            2.25 * d.delta.value
        ));
    }
    if matches!(
        free,
        Free::Dq {
            b_matters: false,
            ..
        }
    ) && (p.n == 1 || p.n == 9)
    {
        out.push("a single-term ion (d¹/d⁹): Δ is the band maximum; B and C do not enter".into());
    }
    out
}

/// d¹/d⁹, and high-spin d⁴/d⁶, with two bands: one spin-allowed transition
/// split by a Jahn–Teller (or low-symmetry) distortion; Δ is the barycentre.
/// A pair that does not look like one (see `chem::not_a_jahn_teller_pair`)
/// is kept for d¹/d⁹ (it has no other reading) but marked implausible, and
/// dropped for d⁴/d⁶. Returns `None` for every other case.
pub(crate) fn single_state(p: &Problem) -> Result<Option<Solution>, LfFitError> {
    if !matches!(p.n, 1 | 4 | 6 | 9) || p.bands.len() != 2 {
        return Ok(None);
    }
    let not_pair = super::chem::not_a_jahn_teller_pair(p);
    if not_pair.is_some() && matches!(p.n, 4 | 6) {
        return Ok(None);
    }
    // At Δ/B = 10 every one of these configurations is high-spin.
    let levels = model(p.n, p.geometry)?.levels(&Params {
        dq: 1000.0,
        b: 1000.0,
        c: 4000.0,
    })?;
    let Some(g) = levels.first() else {
        return Ok(None);
    };
    let Some(e) = levels
        .iter()
        .skip(1)
        .find(|l| l.multiplicity == g.multiplicity)
    else {
        return Ok(None);
    };
    let (n1, n2) = (p.bands[0].energy, p.bands[1].energy);
    let (s1, s2) = (p.sigmas[0], p.sigmas[1]);
    let delta = 0.5 * (n1 + n2);
    let sigma = 0.5 * (s1 * s1 + s2 * s2).sqrt();
    let split = n2 - n1;
    let dq = Estimate::new(delta / 10.0, sigma / 10.0);
    let predicted = vec![Predicted {
        state: e.label.clone(),
        typeset: e.typeset.clone(),
        energy: delta,
        sigma: Some(sigma),
        spin_allowed: true,
        observed: true,
    }];
    let assignment = p
        .bands
        .iter()
        .zip(&p.sigmas)
        .map(|(b, s)| Assigned {
            observed: b.energy,
            sigma: *s,
            state: e.label.clone(),
            typeset: e.typeset.clone(),
            calculated: delta,
            residual: b.energy - delta,
        })
        .collect();
    Ok(Some(Solution {
        parameters: Parameters { dq, b: None, c: None },
        derived: Derived { delta: Estimate::new(delta, sigma), beta: None, b0: None, b0_source: None, dq_over_b: None, delta_over_b: None, c_over_b: None },
        ground: g.label.clone(),
        ground_typeset: g.typeset.clone(),
        spin: SpinState {
            state: if matches!(p.n, 4 | 6) { "high-spin (B not determined)" } else { "only one spin state" }.into(),
            spin_change_delta_over_b: None,
            margin: None,
        },
        assignment,
        predicted,
        chi2: 0.0,
        degrees_of_freedom: 0,
        free: vec!["Dq".into()],
        correlation: vec![vec![1.0]],
        delta_chi2: 0.0,
        plausible: not_pair.is_none(),
        warnings: not_pair.into_iter().collect(),
        notes: vec![format!(
            "the two bands are read as one {} transition split by a Jahn–Teller (or low-symmetry) distortion: Δ = barycentre {delta:.0} cm⁻¹, splitting {split:.0} cm⁻¹{}",
            e.typeset,
            if matches!(p.n, 4 | 6) { "; B does not enter, so the spin state is not tested by the bands" } else { "" }
        )],
        score: 0.0,
        held: Vec::new(),
    }))
}
