//! Ligand-field parameters from observed band maxima.
//!
//! Given band maxima (cm⁻¹, with uncertainties) of a dⁿ ion in a cubic site,
//! this module finds which transitions they are and the Dq, B (and C) that
//! reproduce them, with honest uncertainties:
//!
//! 1. **Candidates** (`search`): the transitions from the ground level —
//!    for d⁴–d⁷ from both the high-spin and the low-spin ground level — to
//!    every level of the same spin (spin-allowed) and, on request, of spin
//!    differing by one (spin-forbidden, ΔS = ±1).
//! 2. **Assignments**: every order-preserving assignment of the observed
//!    bands to candidates at some field strength. Each is scored by a scan
//!    over Δ/B at fixed C/B where B enters linearly (energies scale with B at
//!    fixed Δ/B and C/B), so the best B at each Δ/B is a weighted linear
//!    least-squares solution.
//! 3. **Fit** (`refine`): the best-scoring assignments are refined by
//!    Levenberg–Marquardt on (Dq, B) with C = (C/B)·B, or on (Dq, B, C) when at
//!    least three bands are assigned and C is freed, using the engine's
//!    Hellmann–Feynman derivatives. The covariance is (JᵀJ)⁻¹ of the weighted
//!    Jacobian, scaled by χ²/(k − p) when over-determined and propagated from
//!    the band uncertainties when exactly determined.
//! 4. **Ranking**: plausible solutions before implausible ones (β > 1.05 or
//!    < 0.3, Dq/B outside 0.2–6, an intensity that does not fit the
//!    assignment, a spin state inconsistent with the fitted field where the
//!    bands determine B), then by χ² plus a small penalty for each lower
//!    spin-allowed transition left unobserved inside the measured range
//!    (from [`DEFAULT_OBSERVED_FROM`] unless given; common practice: the
//!    lowest spin-allowed bands are the ones seen; higher ones hide under
//!    charge transfer) plus the soft priors of [`chem`] (typical β, a held B,
//!    broad bands read as spin-forbidden). Ties the band positions cannot
//!    break are reported with what broke them.
//!
//! The closed forms this reproduces (tested): ν1 = 10Dq for octahedral d³/d⁸,
//! B = (ν2² + 2ν1² − 3ν1ν2)/(15ν2 − 27ν1) (Lever 1984, from memory), and the
//! Underhill–Billing relations (Nature 210 (1966) 834).

pub mod chem;
pub mod global;
mod rank;
mod refine;
mod search;

use crate::estimate::Estimate;
use crate::ions;
use crate::ligand_field::{Geometry, LfError};
use serde::{Deserialize, Serialize};
use std::fmt;

/// A band maximum seen in the spectrum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct ObservedBand {
    /// Band maximum, cm⁻¹.
    pub energy: f64,
    /// Standard uncertainty, cm⁻¹ (default 1 % of the energy).
    #[serde(default)]
    pub sigma: Option<f64>,
    /// Molar absorptivity at the maximum, L mol⁻¹ cm⁻¹, when known.
    #[serde(default)]
    pub epsilon: Option<f64>,
    /// Full width at half maximum, cm⁻¹, when known.
    #[serde(default)]
    pub fwhm: Option<f64>,
    /// The user marked this band as not d–d (charge transfer, ligand, impurity).
    #[serde(default)]
    pub not_dd: bool,
    /// The user forced this band onto a state ("4T1g(P)" or "⁴T₁g(P)").
    #[serde(default)]
    pub assign: Option<String>,
}

impl ObservedBand {
    pub fn at(energy: f64) -> Self {
        ObservedBand {
            energy,
            ..Default::default()
        }
    }
}

/// What to fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitRequest {
    /// n of dⁿ; taken from `ion` when that is given.
    #[serde(default)]
    pub n: u8,
    pub geometry: Geometry,
    /// "Cr3+": gives n, B₀ for β and the default C/B.
    #[serde(default)]
    pub ion: Option<String>,
    #[serde(default)]
    pub bands: Vec<ObservedBand>,
    /// C/B held fixed (default: the ion's free-ion C₀/B₀, else 4.5).
    #[serde(default)]
    pub c_over_b: Option<f64>,
    /// Fit C as a free parameter (needs at least three assigned bands).
    #[serde(default)]
    pub free_c: bool,
    /// Also consider spin-forbidden (ΔS = ±1) transitions.
    #[serde(default)]
    pub spin_forbidden: bool,
    /// Which free-ion table to take B₀ from (see [`crate::ions`]).
    #[serde(default)]
    pub b0_source: Option<String>,
    /// Predict transitions up to this energy, cm⁻¹ (default [`DEFAULT_MAX_PREDICTION`]).
    #[serde(default)]
    pub max_prediction: Option<f64>,
    /// The ligand (one kind), for Jørgensen's estimates shown next to the fit.
    #[serde(default)]
    pub ligand: Option<String>,
    /// The lowest energy the spectrum covers, cm⁻¹: transitions below it cannot
    /// have been seen, so leaving them unassigned costs nothing in the ranking.
    #[serde(default)]
    pub observed_from: Option<f64>,
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
            max_prediction: None,
            ligand: None,
            observed_from: None,
        }
    }
}

/// Fitted parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Parameters {
    pub dq: Estimate,
    /// `None` where B does not enter the bands (d¹, d⁹, a B-independent single band).
    pub b: Option<Estimate>,
    pub c: Option<Estimate>,
}

/// Numbers derived from the parameters, each with its propagated uncertainty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Derived {
    /// Δ = 10Dq.
    pub delta: Estimate,
    /// β = B/B₀, when a free-ion B₀ is known.
    pub beta: Option<Estimate>,
    /// The B₀ used for β and its source.
    pub b0: Option<f64>,
    pub b0_source: Option<String>,
    pub dq_over_b: Option<Estimate>,
    pub delta_over_b: Option<Estimate>,
    pub c_over_b: Option<Estimate>,
}

/// One observed band and the transition assigned to it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Assigned {
    pub observed: f64,
    pub sigma: f64,
    pub state: String,
    pub typeset: String,
    pub calculated: f64,
    pub residual: f64,
}

/// A calculated transition from the ground level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Predicted {
    pub state: String,
    pub typeset: String,
    pub energy: f64,
    pub sigma: Option<f64>,
    pub spin_allowed: bool,
    /// An observed band is assigned to it.
    pub observed: bool,
}

/// The ground state's spin and its distance to the spin-change point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpinState {
    /// "high-spin", "low-spin" or "only one spin state" for dⁿ without a crossover.
    pub state: String,
    /// Δ/B where the ground state changes spin at the fitted C/B.
    pub spin_change_delta_over_b: Option<f64>,
    /// Fitted Δ/B minus that point (negative: on the high-spin side).
    pub margin: Option<f64>,
}

/// A parameter the assigned bands do not determine, held at a stated value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Held {
    /// "B" or "C".
    pub parameter: String,
    /// The value it was held at, cm⁻¹.
    pub value: f64,
    /// Why, as a sentence.
    pub reason: String,
}

/// One assignment and its fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Solution {
    pub parameters: Parameters,
    pub derived: Derived,
    /// The level the transitions start from.
    pub ground: String,
    pub ground_typeset: String,
    pub spin: SpinState,
    pub assignment: Vec<Assigned>,
    pub predicted: Vec<Predicted>,
    pub chi2: f64,
    /// Bands minus free parameters.
    pub degrees_of_freedom: i64,
    /// Names of the fitted parameters, in the order of `correlation`.
    pub free: Vec<String>,
    pub correlation: Vec<Vec<f64>>,
    /// χ² above the best solution's.
    pub delta_chi2: f64,
    /// False when a plausibility rule failed; `warnings` say which.
    pub plausible: bool,
    pub warnings: Vec<String>,
    /// Further observations: Jahn–Teller splitting, ²E/⁴T₂ crossing, Δt vs Δo.
    pub notes: Vec<String>,
    /// Ranking score: χ² plus the penalty for unobserved lower bands (saved
    /// with the result, so a reloaded project ranks and compares the same).
    #[serde(default)]
    pub score: f64,
    /// Parameters the bands do not determine, held at a stated value (their
    /// estimates have `determined: false`); empty when every one was fitted.
    #[serde(default)]
    pub held: Vec<Held>,
}

/// The best solution and the ranked alternatives.
///
/// Order: assignments that pass every plausibility check first, then by
/// `score`. Listed are only physical fits (B > 0, β ≤ 1.1, no parameter on
/// its bound, every number finite), each assignment once, and no two with
/// the same parameters within their σ; `delta_chi2` is measured from the
/// smallest χ² among the best and the alternatives, so it is never negative.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitOutcome {
    pub best: Solution,
    pub alternatives: Vec<Solution>,
    /// About the search as a whole (e.g. the data cannot tell assignments apart).
    pub warnings: Vec<String>,
    /// Jørgensen's rule-of-thumb Δ and β for the ion and ligand, when both are known.
    pub jorgensen: Option<ions::JorgensenEstimate>,
}

/// Why no fit could be made.
#[derive(Debug, Clone, PartialEq)]
pub enum LfFitError {
    /// No band was given, or every band is marked as not d–d.
    NoBands,
    /// A band energy or uncertainty is not a finite positive number.
    BadBand { index: usize, message: String },
    /// Two bands are at the same energy.
    DuplicateBand(f64),
    /// The ion is not in the table.
    UnknownIon(String),
    /// C/B is not between 1 and 20.
    BadCOverB(f64),
    /// No transition can take the bands (e.g. d⁵ high-spin without spin-forbidden bands).
    NoCandidates(String),
    /// A forced assignment names a state that does not exist for this dⁿ.
    UnknownState(String),
    /// No assignment could be fitted.
    NoFit(String),
    /// The ligand-field engine refused the input.
    Model(LfError),
    /// Freeing C was asked for, but no assigned band depends on C.
    CNotDetermined(String),
}

impl fmt::Display for LfFitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LfFitError::NoBands => {
                f.write_str("no d–d band to fit: give at least one band maximum")
            }
            LfFitError::BadBand { index, message } => write!(f, "band {}: {message}", index + 1),
            LfFitError::DuplicateBand(e) => write!(f, "the band at {e} cm⁻¹ is given twice"),
            LfFitError::UnknownIon(s) => {
                write!(f, "unknown ion '{s}': write it like Cr3+ or Ni(II)")
            }
            LfFitError::BadCOverB(v) => write!(f, "C/B = {v} is outside the accepted range 1–20"),
            LfFitError::NoCandidates(m) | LfFitError::NoFit(m) => f.write_str(m),
            LfFitError::UnknownState(s) => write!(
                f,
                "no state '{s}' exists for this configuration and geometry"
            ),
            LfFitError::Model(e) => e.fmt(f),
            LfFitError::CNotDetermined(states) => write!(
                f,
                "C cannot be fitted: no assigned band ({states}) depends on C, so C/B is held; leave out free C or assign a band that depends on C (a spin-forbidden one)"
            ),
        }
    }
}

impl std::error::Error for LfFitError {}

impl From<LfError> for LfFitError {
    fn from(e: LfError) -> Self {
        LfFitError::Model(e)
    }
}

/// The reason a held C gives when no assigned band depends on C.
pub const NO_BAND_DEPENDS_ON_C: &str = "no assigned band depends on C";

impl FitOutcome {
    /// Refuses a fit that asked for C free when no band of the best
    /// assignment depends on C (`ddlens fit --free-c`): the answer would
    /// present C/B as fitted while it is only the value given.
    pub fn refuse_unfittable_c(&self) -> Result<(), LfFitError> {
        let no_band = |h: &Held| h.parameter == "C" && h.reason.starts_with(NO_BAND_DEPENDS_ON_C);
        if self.best.held.iter().any(no_band) {
            let states: Vec<&str> = self
                .best
                .assignment
                .iter()
                .map(|a| a.state.as_str())
                .collect();
            return Err(LfFitError::CNotDetermined(states.join(", ")));
        }
        Ok(())
    }
}

/// Default C/B when the ion gives none (common practice for first-row ions).
pub const DEFAULT_C_OVER_B: f64 = 4.5;

/// Transitions are predicted up to this energy, cm⁻¹, unless asked otherwise
/// (common practice: d–d spectra are rarely measured beyond 50 000 cm⁻¹, 200 nm).
pub const DEFAULT_MAX_PREDICTION: f64 = 50_000.0;

/// Where a spectrum is taken to start when the request does not say, cm⁻¹
/// (2 000 nm; common practice: solution spectra rarely reach further into the
/// near infrared, where solvent overtones and cell windows absorb). A
/// transition below it cannot have been seen, so leaving it unassigned costs
/// nothing in the ranking.
pub const DEFAULT_OBSERVED_FROM: f64 = 5000.0;

/// A Δ further than this fraction from Jørgensen's f·g (×4/9 tetrahedral) is
/// pointed out (common practice: the rule holds to some 10–20 %).
pub const JORGENSEN_TOLERANCE: f64 = 0.4;

/// The checked problem every later stage works on.
pub(crate) struct Problem {
    pub n: u8,
    pub geometry: Geometry,
    /// Observed d–d bands, ascending, with their σ.
    pub bands: Vec<ObservedBand>,
    pub sigmas: Vec<f64>,
    pub gamma: f64,
    pub free_c: bool,
    pub spin_forbidden: bool,
    pub b0: Option<(f64, String)>,
    pub max_prediction: f64,
    pub observed_from: f64,
    pub warnings: Vec<String>,
}

/// The d–d bands of the request, checked, ascending.
fn checked_bands(req: &FitRequest) -> Result<Vec<ObservedBand>, LfFitError> {
    let mut bands: Vec<ObservedBand> = Vec::new();
    for (index, b) in req.bands.iter().enumerate() {
        if !b.energy.is_finite() || b.energy <= 0.0 || b.energy > 100_000.0 {
            return Err(LfFitError::BadBand {
                index,
                message: format!(
                    "{} cm⁻¹ is not a band energy between 0 and 100 000 cm⁻¹",
                    b.energy
                ),
            });
        }
        if let Some(s) = b.sigma {
            if !s.is_finite() || s <= 0.0 {
                return Err(LfFitError::BadBand {
                    index,
                    message: format!("the uncertainty {s} cm⁻¹ must be a positive number"),
                });
            }
        }
        if !b.not_dd {
            bands.push(b.clone());
        }
    }
    if bands.is_empty() {
        return Err(LfFitError::NoBands);
    }
    bands.sort_by(|a, b| a.energy.total_cmp(&b.energy));
    if let Some(w) = bands
        .windows(2)
        .find(|w| (w[1].energy - w[0].energy).abs() < 1e-9 * w[0].energy)
    {
        return Err(LfFitError::DuplicateBand(w[0].energy));
    }
    Ok(bands)
}

fn check(req: &FitRequest) -> Result<Problem, LfFitError> {
    let ion = match &req.ion {
        Some(s) => Some(ions::ion(s).ok_or_else(|| LfFitError::UnknownIon(s.clone()))?),
        None => None,
    };
    let mut warnings = Vec::new();
    let n = match &ion {
        Some(i) => {
            if req.n != 0 && req.n != i.d_electrons {
                warnings.push(format!(
                    "{} is d{}: the configuration d{} given was replaced",
                    i.symbol, i.d_electrons, req.n
                ));
            }
            i.d_electrons
        }
        None => req.n,
    };
    crate::ligand_field::model(n, req.geometry)?;
    let bands = checked_bands(req)?;
    if bands
        .iter()
        .any(|b| b.energy < 2000.0 || b.energy > 60_000.0)
    {
        warnings.push(
            "a band lies outside 2 000–60 000 cm⁻¹, where d–d bands of cubic complexes are found"
                .into(),
        );
    }
    let sigmas = bands
        .iter()
        .map(|b| b.sigma.unwrap_or(0.01 * b.energy))
        .collect();
    let gamma = match (req.c_over_b, &ion) {
        (Some(g), _) => g,
        (None, Some(i)) => i.free_c_over_b().unwrap_or(DEFAULT_C_OVER_B),
        (None, None) => DEFAULT_C_OVER_B,
    };
    if !gamma.is_finite() || !(1.0..=20.0).contains(&gamma) {
        return Err(LfFitError::BadCOverB(gamma));
    }
    let b0 = ion.as_ref().and_then(|i| {
        let f = i.free_ion(req.b0_source.as_deref())?;
        Some((f.b0, format!("{} ({})", f.source, i.symbol)))
    });
    if ion.is_some() && req.b0_source.is_some() && b0.is_none() {
        warnings.push(format!(
            "no free-ion B₀ from '{}' for this ion: β is not reported",
            req.b0_source.as_deref().unwrap_or("")
        ));
    }
    let max_prediction = req
        .max_prediction
        .filter(|v| v.is_finite() && *v > 0.0)
        .unwrap_or(DEFAULT_MAX_PREDICTION);
    let observed_from = req
        .observed_from
        .filter(|v| v.is_finite())
        .unwrap_or(DEFAULT_OBSERVED_FROM);
    let (spin_forbidden, free_c) = d5_defaults(n, req, bands.len(), &mut warnings);
    let mut problem = Problem {
        n,
        geometry: req.geometry,
        bands,
        sigmas,
        gamma,
        free_c,
        spin_forbidden,
        b0,
        max_prediction,
        observed_from,
        warnings,
    };
    let notes: Vec<String> = (0..problem.bands.len())
        .filter_map(|i| chem::forbidden_only_reason(&problem, i))
        .collect();
    problem.warnings.extend(notes);
    Ok(problem)
}

/// High-spin d⁵ has no spin-allowed d–d transition: spin-forbidden (sextet →
/// quartet) candidates are enabled, and C is fitted when three or more bands
/// can determine it (unless C/B was given). Returns (spin_forbidden, free_c).
fn d5_defaults(n: u8, req: &FitRequest, bands: usize, warnings: &mut Vec<String>) -> (bool, bool) {
    if n != 5 {
        return (req.spin_forbidden, req.free_c);
    }
    if !req.spin_forbidden {
        warnings.push("high-spin d5 has no spin-allowed d–d band: spin-forbidden (sextet → quartet) transitions were considered".into());
    }
    let free_c = req.free_c || (bands >= 3 && req.c_over_b.is_none());
    if free_c && !req.free_c {
        warnings
            .push("C was fitted with Dq and B: the spin-forbidden bands of d5 depend on C".into());
    }
    (true, free_c)
}

/// Whether `name` ("4T1g(P)", "⁴T₁g(P)" or "4T1g") names a state of dⁿ in
/// `geometry` that a band can be forced onto.
pub fn names_state(n: u8, geometry: Geometry, name: &str) -> bool {
    crate::ligand_field::model(n, geometry)
        .is_ok_and(|m| search::names_state(m, DEFAULT_C_OVER_B, name))
}

/// Finds the assignment and fits Dq, B (and C) to the observed bands.
///
/// The two lowest spin-allowed bands of octahedral d³, computed by the exact
/// engine at Dq = 1 750, B = 700 cm⁻¹ and C/B = 4.5, give those parameters
/// back, assigned to ⁴T₂g and ⁴T₁g(F):
///
/// ```
/// use ddlens::lf_fit::{fit, FitRequest, ObservedBand};
/// use ddlens::ligand_field::{model, Geometry, Params};
///
/// let levels = model(3, Geometry::Octahedral)?.levels(&Params { dq: 1_750.0, b: 700.0, c: 3_150.0 })?;
/// let at = |label: &str| levels.iter().find(|l| l.label == label).unwrap().energy;
/// let request = FitRequest {
///     n: 3,
///     geometry: Geometry::Octahedral,
///     c_over_b: Some(4.5),
///     bands: vec![ObservedBand::at(at("4T2g")), ObservedBand::at(at("4T1g(F)"))],
///     ..FitRequest::default()
/// };
/// let best = fit(&request).unwrap().best;
/// assert!((best.parameters.dq.value - 1_750.0).abs() < 1e-3);
/// assert!((best.parameters.b.unwrap().value - 700.0).abs() < 1e-3);
/// let labels: Vec<&str> = best.assignment.iter().map(|a| a.state.as_str()).collect();
/// assert_eq!(labels, ["4T2g", "4T1g(F)"]);
/// # Ok::<(), ddlens::ligand_field::LfError>(())
/// ```
pub fn fit(req: &FitRequest) -> Result<FitOutcome, LfFitError> {
    let problem = check(req)?;
    let mut solutions = candidate_solutions(&problem)?;
    for s in &mut solutions {
        chem::apply_priors(&problem, s);
    }
    let solutions = rank::rank(solutions);
    let mut warnings = problem.warnings.clone();
    let mut iter = solutions.into_iter();
    let Some(best) = iter.next() else {
        return Err(LfFitError::NoFit(
            "no assignment of these bands could be fitted".into(),
        ));
    };
    let alternatives: Vec<Solution> = iter.take(9).collect();
    if !best.plausible {
        warnings.push("no assignment passes every plausibility check: read the warnings of each before using any".into());
    }
    if let Some(alt) = alternatives.iter().find(|a| a.plausible) {
        if best.plausible && (alt.chi2 - best.chi2).abs() < 1.0 {
            warnings.push(tie_warning(&problem, &best, alt));
        }
    }
    let jorgensen = jorgensen_estimate(req, &best, &mut warnings);
    Ok(FitOutcome {
        best,
        alternatives,
        warnings,
        jorgensen,
    })
}

/// Every fitted assignment: the Jahn–Teller reading of a band pair (alone for
/// d¹/d⁹, beside the searched assignments for high-spin d⁴/d⁶) and the
/// searched ones.
fn candidate_solutions(problem: &Problem) -> Result<Vec<Solution>, LfFitError> {
    let single = refine::single_state(problem)?;
    if problem.n == 1 || problem.n == 9 {
        if let Some(s) = single {
            return Ok(vec![s]);
        }
    }
    let tuples = match search::assignments(problem) {
        Ok(t) => t,
        Err(e) => return single.map(|s| vec![s]).ok_or(e),
    };
    let mut out: Vec<Solution> = single.into_iter().collect();
    let mut last_error = None;
    for t in &tuples {
        match refine::fit_assignment(problem, t) {
            Ok(s) => out.push(s),
            Err(e) => last_error = Some(e),
        }
    }
    if out.is_empty() {
        return Err(last_error.unwrap_or_else(|| {
            LfFitError::NoFit("no assignment of these bands could be fitted".into())
        }));
    }
    Ok(out)
}

/// The sentence for two assignments the band positions cannot tell apart:
/// the measured range and what broke the tie.
fn tie_warning(p: &Problem, best: &Solution, alt: &Solution) -> String {
    let names = |s: &Solution| {
        s.assignment
            .iter()
            .map(|a| a.state.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    };
    let unobserved = |s: &Solution| s.score - s.chi2 - chem::prior_cost(p, s) > 1e-9;
    let mut reasons: Vec<String> = chem::priors(p, alt)
        .into_iter()
        .map(|(r, _)| format!("for ({}) {r}", names(alt)))
        .collect();
    if unobserved(alt) && !unobserved(best) {
        reasons.push(format!(
            "({}) leaves a lower spin-allowed band inside the measured range unobserved",
            names(alt)
        ));
    }
    let decided = if reasons.is_empty() {
        "nothing separates them: the order is arbitrary".to_string()
    } else {
        format!("the ranking decided by: {}", reasons.join("; "))
    };
    format!(
        "a tie: the band positions fit ({}) and ({}) equally well (Δχ² = {:.2}); the measured range is taken to start at {:.0} cm⁻¹ (a band below it could not be seen); {decided} — intensities, widths or more bands would settle it",
        names(best),
        names(alt),
        (alt.chi2 - best.chi2).abs(),
        p.observed_from
    )
}

/// Jørgensen's estimate for the ion and ligand, and a warning when the
/// fitted Δ lies more than [`JORGENSEN_TOLERANCE`] from it.
fn jorgensen_estimate(
    req: &FitRequest,
    best: &Solution,
    warnings: &mut Vec<String>,
) -> Option<ions::JorgensenEstimate> {
    let (i, l) = (req.ion.as_ref()?, req.ligand.as_ref()?);
    let estimate = match (ions::ion(i), ions::ligand(l)) {
        (Some(i), Some(l)) => ions::jorgensen(&i, &l, req.geometry),
        (_, None) => {
            warnings.push(format!(
                "ligand '{l}' is not in Jørgensen's table: no estimate"
            ));
            return None;
        }
        _ => return None,
    };
    let delta = best.derived.delta.value;
    if let Some(e) = estimate.delta.filter(|e| *e > 0.0) {
        if ((delta - e) / e).abs() > JORGENSEN_TOLERANCE {
            warnings.push(format!(
                "the fitted Δ = {delta:.0} cm⁻¹ differs by {:.0} % from Jørgensen's estimate {e:.0} cm⁻¹ (f·g{}): check the assignment, the ion's oxidation state and the geometry",
                100.0 * (delta - e) / e,
                if req.geometry == Geometry::Tetrahedral { " × 4/9" } else { "" }
            ));
        }
    }
    Some(estimate)
}
