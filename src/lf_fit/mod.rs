//! Ligand-field parameters (Dq, B; C = (C/B)·B) from observed band maxima.
//!
//! Candidate transitions go from the ground level to the spin-allowed levels
//! (and, on request, all levels); for d4–d7 both the high-spin and low-spin
//! grounds are tried. Every order-preserving assignment of the observed bands
//! to candidates is fitted by a Levenberg–Marquardt least-squares fit of
//! Σ((E_calc − ν)/σ)², with the Jacobian from the engine's Hellmann–Feynman
//! derivatives (∂E/∂Dq, ∂E/∂B + (C/B)·∂E/∂C). σ defaults to 1 % of the band.
//! The covariance is (JᵀJ)⁻¹, scaled by the reduced χ² when over-determined.
//! Solutions are ranked by χ² plus plausibility penalties (β outside 0.3–1.05,
//! B above every free-ion value when no ion is given) with the reasons given
//! as warnings, and a small preference for the lowest candidate states.
//! With `free_c` and ≥ 3 bands, C/B is also fitted by a χ² profile (golden-section
//! search over C/B = 2…8, each point a (Dq, B) fit); σ(C) from the profile curvature.

use crate::estimate::Estimate;
use crate::ions::ion;
use crate::ligand_field::{model, Geometry, Level, LfError, Params};
use serde::Serialize;
use std::fmt;

/// One observed band maximum.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
pub struct ObservedBand {
    pub energy: f64,
    pub sigma: Option<f64>,
    pub epsilon: Option<f64>,
    pub fwhm: Option<f64>,
    pub not_dd: bool,
}

/// What to fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitRequest {
    pub n: u8,
    pub geometry: Geometry,
    pub ion: Option<String>,
    pub bands: Vec<ObservedBand>,
    pub c_over_b: Option<f64>,
    pub free_c: bool,
    pub spin_forbidden: bool,
    pub b0_source: Option<String>,
}

impl Default for FitRequest {
    fn default() -> Self {
        FitRequest {
            n: 3,
            geometry: Geometry::Octahedral,
            ion: None,
            bands: Vec::new(),
            c_over_b: None,
            free_c: false,
            spin_forbidden: false,
            b0_source: None,
        }
    }
}

/// Why a fit was refused.
#[derive(Debug, Clone, PartialEq)]
pub enum LfFitError {
    /// No usable band (all missing, non-finite, non-positive or marked not d–d).
    NoBands,
    /// More bands than candidate transitions.
    TooManyBands { bands: usize, candidates: usize },
    /// The ion is unknown or its d count differs from the configuration.
    Ion(String),
    /// The ligand-field engine refused the input.
    Engine(LfError),
    /// No assignment could be fitted.
    NoSolution,
}

impl fmt::Display for LfFitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LfFitError::NoBands => f.write_str("no usable d–d band was given (energies must be positive cm⁻¹)"),
            LfFitError::TooManyBands { bands, candidates } => write!(
                f,
                "{bands} bands were given but only {candidates} transitions are possible; mark extra bands as not d–d or allow spin-forbidden transitions"
            ),
            LfFitError::Ion(m) => f.write_str(m),
            LfFitError::Engine(e) => write!(f, "{e}"),
            LfFitError::NoSolution => f.write_str("no assignment of the bands could be fitted"),
        }
    }
}

impl std::error::Error for LfFitError {}

impl From<LfError> for LfFitError {
    fn from(e: LfError) -> Self {
        LfFitError::Engine(e)
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Parameters {
    pub dq: Estimate,
    pub b: Estimate,
    pub c: Estimate,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Derived {
    pub delta: Estimate,
    pub beta: Option<Estimate>,
    pub b0: Option<f64>,
    pub b0_source: Option<String>,
    pub dq_over_b: f64,
    pub c_over_b: f64,
    /// Correlation coefficient of the fitted Dq and B (None when B was held fixed).
    pub correlation_dq_b: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Assigned {
    pub observed: f64,
    pub state: String,
    pub calculated: f64,
    pub residual: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Predicted {
    pub state: String,
    pub energy: f64,
    pub sigma: Option<f64>,
    pub spin_allowed: bool,
}

/// One fitted assignment.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Solution {
    pub parameters: Parameters,
    pub derived: Derived,
    pub ground: String,
    pub assignment: Vec<Assigned>,
    pub predicted: Vec<Predicted>,
    pub chi2: f64,
    /// χ² plus plausibility penalties, the ranking key.
    pub score: f64,
    pub delta_chi2: f64,
    pub warnings: Vec<String>,
    /// Plain remarks on the result: spin state and margin to the spin change,
    /// the d3 ²E/⁴T2 order, the tetrahedral Δt ↔ (4/9)Δo comparison.
    pub notes: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitOutcome {
    pub best: Solution,
    pub alternatives: Vec<Solution>,
}

/// Order-preserving choices of `k` of `m` candidates.
fn combinations(m: usize, k: usize) -> Vec<Vec<usize>> {
    fn extend(start: usize, m: usize, k: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if cur.len() == k {
            out.push(cur.clone());
            return;
        }
        for i in start..m {
            cur.push(i);
            extend(i + 1, m, k, cur, out);
            cur.pop();
        }
    }
    let mut out = Vec::new();
    extend(0, m, k, &mut Vec::new(), &mut out);
    out
}

fn energy_of<'a>(levels: &'a [Level], label: &str) -> Option<&'a Level> {
    levels.iter().find(|l| l.label == label)
}

/// (Dq, B, χ², JᵀJ) of one fit at fixed C/B.
type PointFit = (f64, f64, f64, [[f64; 2]; 2]);

/// Fits (Dq, B) for one assignment by Levenberg–Marquardt; returns (Dq, B, χ², JᵀJ).
fn fit_assignment(
    m: &crate::ligand_field::Model,
    states: &[String],
    ground: &str,
    bands: &[(f64, f64)],
    r: f64,
    start: (f64, f64),
    fix_b: bool,
) -> Option<PointFit> {
    let eval = |dq: f64, b: f64| -> Option<(Vec<f64>, Vec<[f64; 2]>)> {
        let levels = m.levels(&Params { dq, b, c: r * b }).ok()?;
        if levels.first()?.label != ground {
            return None;
        }
        let mut res = Vec::new();
        let mut jac = Vec::new();
        for (s, &(nu, sigma)) in states.iter().zip(bands) {
            let l = energy_of(&levels, s)?;
            res.push((l.energy - nu) / sigma);
            jac.push([
                l.d_dq / sigma,
                if fix_b {
                    0.0
                } else {
                    (l.d_b + r * l.d_c) / sigma
                },
            ]);
        }
        Some((res, jac))
    };
    let (mut dq, mut b) = start;
    let (mut res, mut jac) = eval(dq, b)?;
    let mut chi2: f64 = res.iter().map(|x| x * x).sum();
    let mut lambda = 1e-3;
    for _ in 0..100 {
        let mut a = [[0.0; 2]; 2];
        let mut g = [0.0; 2];
        for (ri, ji) in res.iter().zip(&jac) {
            for p in 0..2 {
                g[p] += ji[p] * ri;
                for q in 0..2 {
                    a[p][q] += ji[p] * ji[q];
                }
            }
        }
        if fix_b {
            a[1][1] = 1.0;
        }
        let a00 = a[0][0] * (1.0 + lambda);
        let a11 = a[1][1] * (1.0 + lambda);
        let det = a00 * a11 - a[0][1] * a[1][0];
        if det.abs() < 1e-300 {
            break;
        }
        let step0 = -(a11 * g[0] - a[0][1] * g[1]) / det;
        let step1 = -(a00 * g[1] - a[1][0] * g[0]) / det;
        let (ndq, nb) = (dq + step0, (b + step1).max(1.0));
        match eval(ndq, nb) {
            Some((nres, njac)) if nres.iter().map(|x| x * x).sum::<f64>() <= chi2 => {
                let new_chi2: f64 = nres.iter().map(|x| x * x).sum();
                let converged = (chi2 - new_chi2).abs() < 1e-12 * (1.0 + chi2);
                dq = ndq;
                b = nb;
                res = nres;
                jac = njac;
                chi2 = new_chi2;
                lambda = (lambda * 0.3).max(1e-12);
                if converged && step0.abs() < 1e-9 * dq.abs().max(1.0) {
                    break;
                }
            }
            _ => lambda *= 10.0,
        }
        if lambda > 1e12 {
            break;
        }
    }
    let mut a = [[0.0; 2]; 2];
    for ji in &jac {
        for p in 0..2 {
            for q in 0..2 {
                a[p][q] += ji[p] * ji[q];
            }
        }
    }
    Some((dq, b, chi2, a))
}

/// C free: the χ² profile over C/B (golden-section search on 2…8, each point a
/// (Dq, B) fit). σ(C/B) from the profile curvature, scaled by the reduced χ²
/// when over-determined; returns (C/B, σ).
fn profile_c_over_b(
    fit_at: &dyn Fn(f64) -> Option<PointFit>,
    n_bands: usize,
) -> Option<(f64, Option<f64>)> {
    let chi2 = |r: f64| fit_at(r).map_or(f64::INFINITY, |f| f.2);
    let golden = (5f64.sqrt() - 1.0) / 2.0;
    let (mut lo, mut hi) = (2.0, 8.0);
    let mut x1 = hi - golden * (hi - lo);
    let mut x2 = lo + golden * (hi - lo);
    let (mut f1, mut f2) = (chi2(x1), chi2(x2));
    for _ in 0..40 {
        if f1 <= f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - golden * (hi - lo);
            f1 = chi2(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + golden * (hi - lo);
            f2 = chi2(x2);
        }
    }
    let r = 0.5 * (lo + hi);
    let f0 = chi2(r);
    if !f0.is_finite() {
        return None;
    }
    let h = 0.01 * r;
    let curvature = (chi2(r + h) + chi2(r - h) - 2.0 * f0) / (h * h);
    let dof = n_bands.saturating_sub(3);
    let scale = if dof > 0 {
        (f0 / dof as f64).max(1e-300)
    } else {
        1.0
    };
    let sigma = (curvature > 0.0).then(|| (2.0 * scale / curvature).sqrt());
    Some((r, sigma))
}

/// Fits every assignment and ranks the solutions.
pub fn fit(req: &FitRequest) -> Result<FitOutcome, LfFitError> {
    let m = model(req.n, req.geometry)?;
    let bands: Vec<(f64, f64)> = {
        let mut v: Vec<(f64, f64)> = req
            .bands
            .iter()
            .filter(|b| !b.not_dd && b.energy.is_finite() && b.energy > 0.0)
            .map(|b| {
                let s = b
                    .sigma
                    .filter(|s| s.is_finite() && *s > 0.0)
                    .unwrap_or(0.01 * b.energy);
                (b.energy, s)
            })
            .collect();
        v.sort_by(|a, b| a.0.total_cmp(&b.0));
        v
    };
    if bands.is_empty() {
        return Err(LfFitError::NoBands);
    }
    let mut notes = Vec::new();
    // d1/d9 have one d–d transition: two bands are taken as its Jahn–Teller-split pair.
    let bands = match bands.as_slice() {
        [(lo, _), (hi, _)] if req.n == 1 || req.n == 9 => {
            // The main maximum (larger ε, else the band given first) is taken as Δ,
            // as usual for Ti³⁺ and Cu²⁺; the barycentre and splitting are reported.
            let usable = req.bands.iter().filter(|b| !b.not_dd && b.energy > 0.0);
            let mut main = usable.clone().next().map_or(*hi, |b| b.energy);
            let mut best_eps = f64::NEG_INFINITY;
            for b in usable {
                if let Some(e) = b.epsilon.filter(|e| *e > best_eps) {
                    best_eps = e;
                    main = b.energy;
                }
            }
            notes.push(format!(
                "the two bands are taken as one Jahn–Teller-split transition: main maximum {main:.0} cm⁻¹ used as Δ; barycentre {:.0} cm⁻¹, splitting {:.0} cm⁻¹",
                0.5 * (lo + hi),
                hi - lo
            ));
            vec![(main, 0.01 * main)]
        }
        _ => bands,
    };
    let ion_entry = match &req.ion {
        Some(symbol) => {
            let i =
                ion(symbol).ok_or_else(|| LfFitError::Ion(format!("unknown ion '{symbol}'")))?;
            if i.d_electrons != req.n {
                return Err(LfFitError::Ion(format!(
                    "{} is d{}, not d{}",
                    i.symbol, i.d_electrons, req.n
                )));
            }
            Some(i)
        }
        None => None,
    };
    let free = ion_entry.and_then(|i| i.free_ion_from(req.b0_source.as_deref()));
    let free_ratio = ion_entry.and_then(|i| i.free_ion.iter().find_map(|f| f.c0.map(|c| c / f.b0)));
    let r = match (req.c_over_b, free_ratio) {
        (Some(r), _) if r.is_finite() && r > 0.0 => r,
        (_, Some(r)) => {
            notes.push(format!("C/B fixed at {r:.2} from the free-ion C₀/B₀"));
            r
        }
        _ => {
            notes.push(
                "C/B fixed at 4.5 (no free-ion C₀/B₀ known); pass --c-over-b to change".to_string(),
            );
            4.5
        }
    };
    let free_c = req.free_c && bands.len() >= 3;
    if req.free_c && !free_c {
        notes.push("C can be freed only with three or more bands; C/B was held fixed".to_string());
    }
    let b_start = free.map_or(800.0, |f| 0.8 * f.b0);
    // Starting field strengths: weak and strong, so both HS and LS grounds are tried.
    let nu1 = bands[0].0;
    let starts: Vec<f64> = [
        nu1 / 10.0,
        nu1 / 20.0,
        nu1 / 5.0,
        2.5 * b_start,
        4.0 * b_start,
    ]
    .into_iter()
    .collect();
    let fix_b = req.n == 1 || req.n == 9 || bands.len() == 1;
    let mut solutions: Vec<Solution> = Vec::new();
    let mut tried: Vec<(String, Vec<String>)> = Vec::new();
    for &dq0 in &starts {
        let p0 = Params {
            dq: dq0,
            b: b_start,
            c: r * b_start,
        };
        let levels = m.levels(&p0)?;
        let Some(ground) = levels.first() else {
            continue;
        };
        let candidates: Vec<&Level> = levels[1..]
            .iter()
            .filter(|l| req.spin_forbidden || l.multiplicity == ground.multiplicity)
            .collect();
        if bands.len() > candidates.len() {
            if solutions.is_empty() && dq0 == starts[starts.len() - 1] {
                return Err(LfFitError::TooManyBands {
                    bands: bands.len(),
                    candidates: candidates.len(),
                });
            }
            continue;
        }
        let limit = candidates.len().min(bands.len() + 3);
        for combo in combinations(limit, bands.len()) {
            let states: Vec<String> = combo.iter().map(|&i| candidates[i].label.clone()).collect();
            let key = (ground.label.clone(), states.clone());
            if tried.contains(&key) {
                continue;
            }
            tried.push(key);
            let fit_at = |ratio: f64| {
                fit_assignment(
                    m,
                    &states,
                    &ground.label,
                    &bands,
                    ratio,
                    (dq0, b_start),
                    fix_b,
                )
            };
            let (r, r_sigma) = if free_c {
                match profile_c_over_b(&fit_at, bands.len()) {
                    Some(found) => found,
                    None => continue,
                }
            } else {
                (r, None)
            };
            let Some((dq, b, chi2, a)) = fit_at(r) else {
                continue;
            };
            solutions.push(solution(
                m,
                req,
                &states,
                &ground.label,
                &bands,
                r,
                dq,
                b,
                chi2,
                a,
                fix_b,
                free,
                &notes,
                r_sigma,
            ));
        }
    }
    solutions.sort_by(|a, b| a.score.total_cmp(&b.score));
    let mut it = solutions.into_iter();
    let best = it.next().ok_or(LfFitError::NoSolution)?;
    let mut alternatives: Vec<Solution> = it.take(5).collect();
    for alt in &mut alternatives {
        alt.delta_chi2 = alt.chi2 - best.chi2;
    }
    let mut best = best;
    if let Some(second) = alternatives.first() {
        if second.score - best.score < 1.0 {
            best.warnings.push(format!(
                "the data cannot distinguish this assignment from the next one ({}; Δχ² = {:.2})",
                second
                    .assignment
                    .iter()
                    .map(|a| a.state.as_str())
                    .collect::<Vec<_>>()
                    .join(", "),
                second.delta_chi2
            ));
        }
    }
    Ok(FitOutcome { best, alternatives })
}

#[allow(clippy::too_many_arguments)]
fn solution(
    m: &crate::ligand_field::Model,
    req: &FitRequest,
    states: &[String],
    ground: &str,
    bands: &[(f64, f64)],
    r: f64,
    dq: f64,
    b: f64,
    chi2: f64,
    a: [[f64; 2]; 2],
    fix_b: bool,
    free: Option<&crate::ions::FreeIon>,
    notes: &[String],
    r_sigma: Option<f64>,
) -> Solution {
    let free_params = if fix_b { 1 } else { 2 } + usize::from(r_sigma.is_some());
    let dof = bands.len().saturating_sub(free_params);
    let scale = if dof > 0 {
        (chi2 / dof as f64).max(1e-300)
    } else {
        1.0
    };
    let (var_dq, var_b, cov) = if fix_b {
        (
            if a[0][0] > 0.0 {
                scale / a[0][0]
            } else {
                f64::NAN
            },
            f64::NAN,
            0.0,
        )
    } else {
        let det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
        if det.abs() > 0.0 {
            (
                scale * a[1][1] / det,
                scale * a[0][0] / det,
                -scale * a[0][1] / det,
            )
        } else {
            (f64::NAN, f64::NAN, 0.0)
        }
    };
    let (s_dq, s_b) = (var_dq.sqrt(), var_b.sqrt());
    let p = Params { dq, b, c: r * b };
    let levels = m.levels(&p).unwrap_or_default();
    let ground_mult = levels.first().map_or(0, |l| l.multiplicity);
    let mut warnings: Vec<String> = notes.to_vec();
    // Tie-break: observed bands usually go to the lowest candidate states at the
    // fitted parameters, so each skipped candidate costs 0.01 in the ranking score.
    let candidates: Vec<&str> = levels
        .iter()
        .skip(1)
        .filter(|l| req.spin_forbidden || l.multiplicity == ground_mult)
        .map(|l| l.label.as_str())
        .collect();
    let skipped: usize = states
        .iter()
        .enumerate()
        .map(|(i, s)| {
            candidates
                .iter()
                .position(|c| c == s)
                .map_or(candidates.len(), |p| p.saturating_sub(i))
        })
        .sum();
    let mut penalty = 0.01 * skipped as f64;
    let beta = free.map(|f| Estimate::new(b / f.b0, s_b / f.b0));
    if let Some(beta) = beta {
        if beta.value > 1.05 {
            penalty += 100.0;
            warnings.push(format!(
                "β = {:.2} is above 1: B cannot exceed the free-ion value; the assignment is probably wrong",
                beta.value
            ));
        } else if beta.value < 0.3 {
            penalty += 100.0;
            warnings.push(format!("β = {:.2} is implausibly small", beta.value));
        }
    } else if !fix_b && b > 1300.0 {
        penalty += 100.0;
        warnings.push(format!(
            "B = {b:.0} cm⁻¹ is above every first-row free-ion value: the assignment is probably wrong"
        ));
    }
    if dof > 0 && chi2 / dof as f64 > 2.0 {
        warnings.push(format!(
            "the bands are not consistent with one (Dq, B) within their uncertainties (reduced χ² = {:.1})",
            chi2 / dof as f64
        ));
    }
    let assignment = states
        .iter()
        .zip(bands)
        .map(|(s, &(nu, _))| {
            let calc = energy_of(&levels, s).map_or(f64::NAN, |l| l.energy);
            Assigned {
                observed: nu,
                state: s.clone(),
                calculated: calc,
                residual: nu - calc,
            }
        })
        .collect();
    let top = bands.last().map_or(0.0, |b| b.0) * 1.6;
    let predicted = levels
        .iter()
        .skip(1)
        .filter(|l| l.energy <= top && (req.spin_forbidden || l.multiplicity == ground_mult))
        .map(|l| {
            let db = l.d_b + r * l.d_c;
            let var = l.d_dq * l.d_dq * var_dq.max(0.0)
                + if fix_b {
                    0.0
                } else {
                    db * db * var_b + 2.0 * l.d_dq * db * cov
                };
            Predicted {
                state: l.label.clone(),
                energy: l.energy,
                sigma: var.is_finite().then(|| var.max(0.0).sqrt()),
                spin_allowed: l.multiplicity == ground_mult,
            }
        })
        .collect();
    Solution {
        parameters: Parameters {
            dq: Estimate::new(dq, s_dq),
            b: if fix_b {
                Estimate::exact(b)
            } else {
                Estimate::new(b, s_b)
            },
            c: match (fix_b, r_sigma) {
                (true, _) => Estimate::exact(r * b),
                (false, Some(sr)) => {
                    Estimate::new(r * b, ((b * sr).powi(2) + (r * s_b).powi(2)).sqrt())
                }
                (false, None) => Estimate::new(r * b, r * s_b),
            },
        },
        derived: Derived {
            delta: Estimate::new(10.0 * dq, 10.0 * s_dq),
            beta,
            b0: free.map(|f| f.b0),
            b0_source: free.map(|f| f.source.to_string()),
            dq_over_b: dq / b,
            c_over_b: r,
            correlation_dq_b: (!fix_b)
                .then(|| cov / (var_dq * var_b).sqrt())
                .filter(|x| x.is_finite()),
        },
        ground: ground.to_string(),
        assignment,
        predicted,
        chi2,
        score: chi2 + penalty,
        delta_chi2: 0.0,
        warnings,
        notes: remarks(req, &levels, dq, b, r),
    }
}

/// Remarks on the fitted point (see [`Solution::notes`]).
fn remarks(req: &FitRequest, levels: &[Level], dq: f64, b: f64, r: f64) -> Vec<String> {
    let mut notes = Vec::new();
    let delta_over_b = 10.0 * dq / b;
    if let (Some(ground), Ok(Some(cross))) = (
        levels.first(),
        crate::ligand_field::spin_change(req.n, req.geometry, r),
    ) {
        let side = if delta_over_b < cross {
            "high-spin"
        } else {
            "low-spin"
        };
        notes.push(format!(
            "ground {} is {side} (S = {}): Δ/B = {delta_over_b:.1}, spin change at Δ/B = {cross:.2} (margin {:.1})",
            ground.label,
            f64::from(ground.multiplicity - 1) / 2.0,
            (delta_over_b - cross).abs()
        ));
    }
    if req.n == 3 && req.geometry == Geometry::Octahedral {
        if let (Some(e2), Some(t2)) = (energy_of(levels, "2Eg(G)"), energy_of(levels, "4T2g")) {
            let order = if e2.energy < t2.energy {
                "²Eg lies below ⁴T2g (strong field: sharp ²Eg emission expected)"
            } else {
                "⁴T2g lies below ²Eg (weak field: broad ⁴T2g emission expected)"
            };
            notes.push(format!(
                "{order}; gap {:.0} cm⁻¹",
                (t2.energy - e2.energy).abs()
            ));
        }
    }
    if req.geometry == Geometry::Tetrahedral {
        notes.push(format!(
            "Δt = {:.0} cm⁻¹; with Δt ≈ (4/9)Δo the same ligands would give Δo ≈ {:.0} cm⁻¹",
            10.0 * dq,
            22.5 * dq
        ));
    }
    notes
}
