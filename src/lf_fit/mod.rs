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
//!    assignment, a spin state inconsistent with the fitted field), then by
//!    χ² plus a small penalty for each lower spin-allowed transition left
//!    unobserved (common practice: the lowest spin-allowed bands are the ones
//!    seen; higher ones hide under charge transfer).
//!
//! The closed forms this reproduces (tested): ν1 = 10Dq for octahedral d³/d⁸,
//! B = (ν2² + 2ν1² − 3ν1ν2)/(15ν2 − 27ν1) (Lever 1984, from memory), and the
//! Underhill–Billing relations (Nature 210 (1966) 834).

pub mod global;
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
}

/// The best solution and the ranked alternatives.
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
        }
    }
}

impl std::error::Error for LfFitError {}

impl From<LfError> for LfFitError {
    fn from(e: LfError) -> Self {
        LfFitError::Model(e)
    }
}

/// Default C/B when the ion gives none (common practice for first-row ions).
pub const DEFAULT_C_OVER_B: f64 = 4.5;

/// Transitions are predicted up to this energy, cm⁻¹, unless asked otherwise
/// (common practice: d–d spectra are rarely measured beyond 50 000 cm⁻¹, 200 nm).
pub const DEFAULT_MAX_PREDICTION: f64 = 50_000.0;

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
    let observed_from = req.observed_from.filter(|v| v.is_finite()).unwrap_or(0.0);
    Ok(Problem {
        n,
        geometry: req.geometry,
        bands,
        sigmas,
        gamma,
        free_c: req.free_c,
        spin_forbidden: req.spin_forbidden,
        b0,
        max_prediction,
        observed_from,
        warnings,
    })
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
    let mut solutions = if let Some(single) = refine::single_state(&problem)? {
        vec![single]
    } else {
        let tuples = search::assignments(&problem)?;
        let mut out = Vec::new();
        let mut last_error = None;
        for t in &tuples {
            match refine::fit_assignment(&problem, t) {
                Ok(s) => out.push(s),
                Err(e) => last_error = Some(e),
            }
        }
        if out.is_empty() {
            return Err(last_error.unwrap_or_else(|| {
                LfFitError::NoFit("no assignment of these bands could be fitted".into())
            }));
        }
        out
    };
    refine::rank(&mut solutions);
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
        if best.plausible && alt.delta_chi2 < 1.0 {
            let names = |s: &Solution| {
                s.assignment
                    .iter()
                    .map(|a| a.state.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            warnings.push(format!(
                "the band positions cannot tell apart the best assignment ({}) and ({}) (Δχ² = {:.2}); the ranking prefers the one that leaves no lower spin-allowed band unobserved — intensities, widths or more bands would decide",
                names(&best), names(alt), alt.delta_chi2
            ));
        }
    }
    let jorgensen = match (&req.ion, &req.ligand) {
        (Some(i), Some(l)) => match (ions::ion(i), ions::ligand(l)) {
            (Some(i), Some(l)) => Some(ions::jorgensen(&i, &l)),
            (_, None) => {
                warnings.push(format!(
                    "ligand '{l}' is not in Jørgensen's table: no estimate"
                ));
                None
            }
            _ => None,
        },
        _ => None,
    };
    Ok(FitOutcome {
        best,
        alternatives,
        warnings,
        jorgensen,
    })
}
