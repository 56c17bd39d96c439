//! The global fit: the whole spectrum fitted with the ligand-field model itself.
//!
//! Absorbance(ν̃) = baseline + Σ_k band_k(ν̃; centre E_k(θ), fwhm_k, height_k),
//! where E_k(θ) is the engine's transition energy from the ground level to the
//! state assigned to band k, θ = (Dq, B) with C = γB, or (Dq, B, C), exactly
//! as the two-step fit chose. Bands the two-step result left unassigned
//! (charge transfer, set aside) keep a free centre. Widths follow a
//! [`WidthRule`]: each its own, one width per family (spin-allowed bands;
//! spin-forbidden lines), or spin-allowed widths in proportion to the level's
//! slope |∂E_k/∂Δ| (the usual argument for why transitions to steep levels are
//! broad: the spread of Δ over the sample's sites is mapped onto the energy by
//! the slope; Lever, *Inorganic Electronic Spectroscopy*, 1984, from memory).
//! Spin-forbidden lines always keep widths of their own.
//!
//! The fit is the crate's one Levenberg–Marquardt solver ([`crate::solver`])
//! with the analytic Jacobian: ∂band/∂centre · ∂E_k/∂θ, the latter from the
//! Hellmann–Feynman derivatives on every level, and for the slope rule the
//! second derivatives of [`crate::ligand_field::level_curvature`]. It starts
//! from the two-step result (θ, and the band fit's widths, heights and
//! baseline). The baseline's coefficients are refitted on its band-fit basis:
//! polynomial coefficients in t = (ν̃ − ν̃_mid)/half-range, and for the
//! scattering and charge-transfer-tail baselines the amplitude terms, with
//! their shape (exponent n; tail centre and width) held at the band fit's
//! values.
//!
//! Uncertainties: C = s²(JᵀJ)⁺ from the final Jacobian ([`crate::stats`]) with
//! s² = χ²/(N − P), the residual variance (no separate noise estimate is used),
//! and every reported number propagated from it. The BIC, N ln(χ²/N) + P ln N
//! (lmfit's definition, as for the band fit), compares assignments on the same
//! points: [`fit_outcome`] fits each one and ranks them by it.

use super::{Derived, Parameters, Solution};
use crate::bands::shapes::{self, Shape};
use crate::bands::{BandFit, BaselineModel, BaselineResult, StopReason};
use crate::estimate::Estimate;
use crate::ligand_field::{self, level_curvature, Geometry, Level, Model, Params};
use crate::solver::{self, LeastSquares, LmOptions, Progress};
use crate::stats::{self, Covariance, ErrorScale};
use serde::{Deserialize, Serialize};
use std::fmt;

/// How the band widths of the global fit are tied.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum WidthRule {
    /// Every band has its own width.
    #[default]
    Free,
    /// One width for the spin-allowed bands, one for the spin-forbidden lines.
    Equal,
    /// Spin-allowed widths ∝ |∂E/∂Δ| of their state (one factor); spin-forbidden
    /// lines keep their own.
    Slope,
}

impl std::str::FromStr for WidthRule {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_ascii_lowercase().as_str() {
            "free" => Ok(WidthRule::Free),
            "equal" => Ok(WidthRule::Equal),
            "slope" => Ok(WidthRule::Slope),
            other => Err(format!(
                "unknown width rule '{other}'; use free, equal or slope"
            )),
        }
    }
}

/// The global fit's options (in the document's ligand-field options).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(default)]
pub struct GlobalOptions {
    pub widths: WidthRule,
    /// Also fit the two-step result's plausible alternative assignments and
    /// rank all by BIC (at most [`MAX_ALTERNATIVES`] more).
    pub compare_assignments: bool,
}

/// At most this many alternative assignments are fitted for the BIC table.
pub const MAX_ALTERNATIVES: usize = 3;

/// One band of the global fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GlobalBand {
    pub shape: Shape,
    pub centre: Estimate,
    pub fwhm: Estimate,
    pub height: Estimate,
    pub extra: Option<Estimate>,
    /// The assigned state ("4T1g(P)"); `None` for a band with a free centre.
    pub state: Option<String>,
    pub typeset: Option<String>,
}

/// One assignment's global fit, for the BIC comparison.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AssignmentBic {
    /// The assigned states, in band order.
    pub states: Vec<String>,
    pub chi2: f64,
    pub bic: Option<f64>,
}

/// The result of a global fit: the same card fields as the two-step fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GlobalFit {
    pub parameters: Parameters,
    pub derived: Derived,
    /// Names of the fitted ligand-field parameters.
    pub free: Vec<String>,
    pub ground: String,
    pub bands: Vec<GlobalBand>,
    pub baseline: Vec<Estimate>,
    pub widths: WidthRule,
    /// Weighted χ² over the points.
    pub chi2: f64,
    pub reduced_chi2: Option<f64>,
    pub bic: Option<f64>,
    pub points: usize,
    /// Number of fitted parameters (ligand field, widths, heights, baseline …).
    pub parameter_count: usize,
    pub iterations: usize,
    pub stopped: StopReason,
    /// Where the σ come from.
    pub uncertainty: String,
    /// The assignments tried, lowest BIC first (empty unless asked for).
    #[serde(default)]
    pub assignments: Vec<AssignmentBic>,
    pub warnings: Vec<String>,
}

/// Why a global fit could not be made.
#[derive(Debug, Clone, PartialEq)]
pub enum GlobalFitError {
    /// The two-step result assigns no band.
    NoAssignment,
    /// A state of the two-step result is not a level of the engine at its parameters.
    UnknownState(String),
    /// The points and the band fit do not match (lengths, or no bands).
    BadData(String),
    /// The ligand-field engine refused the input.
    Model(ligand_field::LfError),
    /// The solver refused the problem.
    Solver(solver::LmError),
}

impl fmt::Display for GlobalFitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GlobalFitError::NoAssignment => f.write_str(
                "the two-step fit assigns no band, so there is nothing to tie to the model",
            ),
            GlobalFitError::UnknownState(s) => write!(
                f,
                "the state '{s}' of the two-step fit is not a level of the model at its parameters"
            ),
            GlobalFitError::BadData(m) => write!(f, "the global fit cannot use these data: {m}"),
            GlobalFitError::Model(e) => e.fmt(f),
            GlobalFitError::Solver(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for GlobalFitError {}

/// The points to fit: wavenumber, value and weight of each (as the band fit used them).
pub struct Points<'a> {
    pub x: &'a [f64],
    pub y: &'a [f64],
    /// Weights (`None`: all 1).
    pub w: Option<&'a [f64]>,
}

/// Which ligand-field parameters are fitted.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Theta {
    /// Dq only; B and C held.
    Dq { b: f64, c: f64 },
    /// Dq and B, C = γB.
    DqB { gamma: f64 },
    /// Dq, B and C.
    DqBC,
}

impl Theta {
    fn count(self) -> usize {
        match self {
            Theta::Dq { .. } => 1,
            Theta::DqB { .. } => 2,
            Theta::DqBC => 3,
        }
    }

    fn params(self, t: &[f64]) -> Params {
        match self {
            Theta::Dq { b, c } => Params { dq: t[0], b, c },
            Theta::DqB { gamma } => Params {
                dq: t[0],
                b: t[1],
                c: gamma * t[1],
            },
            Theta::DqBC => Params {
                dq: t[0],
                b: t[1],
                c: t[2],
            },
        }
    }

    /// A gradient in (Dq, B, C) as a gradient in θ.
    fn chain(self, d: [f64; 3]) -> [f64; 3] {
        match self {
            Theta::Dq { .. } => [d[0], 0.0, 0.0],
            Theta::DqB { gamma } => [d[0], d[1] + gamma * d[2], 0.0],
            Theta::DqBC => d,
        }
    }
}

/// Where a band's centre comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Centre {
    /// E of transition `k`.
    Transition(usize),
    /// Its own free parameter.
    Free(usize),
}

/// Where a band's width comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Width {
    /// The free parameter `q` (its own, or shared by a family).
    Param(usize),
    /// q·|∂E_k/∂Δ| of transition `k`.
    Slope { q: usize, k: usize },
}

#[derive(Debug, Clone)]
struct Term {
    shape: Shape,
    centre: Centre,
    width: Width,
    height: usize,
    extra: Option<usize>,
}

/// The baseline as fixed basis functions with free coefficients.
struct Baseline {
    /// One column per coefficient, on the points.
    basis: Vec<Vec<f64>>,
    /// Index of the first coefficient in q.
    start: usize,
}

/// The global fit as a least-squares problem: the whole state one solve needs.
struct Problem<'a> {
    model: &'a Model,
    theta: Theta,
    x: &'a [f64],
    y: &'a [f64],
    sqrt_w: Vec<f64>,
    start_label: String,
    final_labels: Vec<String>,
    terms: Vec<Term>,
    baseline: Baseline,
    q_count: usize,
    slope_rule: bool,
}

/// One transition at θ: energy, θ-gradient, slope ∂E/∂Δ and its θ-gradient.
#[derive(Debug, Clone, Copy, Default)]
struct TransitionValue {
    energy: f64,
    grad: [f64; 3],
    slope: f64,
    slope_grad: [f64; 3],
}

impl Problem<'_> {
    /// The transitions at θ; `None` when a state is missing or θ is refused.
    fn transitions(&self, t: &[f64]) -> Option<Vec<TransitionValue>> {
        if t.iter().any(|v| !v.is_finite() || *v <= 0.0) {
            return None;
        }
        let p = self.theta.params(t);
        let levels = self.model.levels(&p).ok()?;
        let find = |label: &str| levels.iter().find(|l| l.label == label);
        let start = find(&self.start_label)?;
        let start_curv = if self.slope_rule {
            Some(level_curvature(self.model, &p, &self.start_label)?)
        } else {
            None
        };
        self.final_labels
            .iter()
            .map(|label| {
                let level: &Level = find(label)?;
                let d = [
                    level.d_dq - start.d_dq,
                    level.d_b - start.d_b,
                    level.d_c - start.d_c,
                ];
                let mut value = TransitionValue {
                    energy: level.energy - start.energy,
                    grad: self.theta.chain(d),
                    slope: d[0] / 10.0,
                    slope_grad: [0.0; 3],
                };
                if let Some(sc) = start_curv {
                    let fc = level_curvature(self.model, &p, label)?;
                    let row = [
                        (fc[0][0] - sc[0][0]) / 10.0,
                        (fc[0][1] - sc[0][1]) / 10.0,
                        (fc[0][2] - sc[0][2]) / 10.0,
                    ];
                    value.slope_grad = self.theta.chain(row);
                }
                Some(value)
            })
            .collect()
    }

    /// Each band's (centre, fwhm, height, extra) and their q-gradients.
    fn band_values(&self, q: &[f64], tr: &[TransitionValue]) -> Vec<BandValue> {
        let nt = self.theta.count();
        self.terms
            .iter()
            .map(|term| {
                let mut v = BandValue::new(self.q_count);
                match term.centre {
                    Centre::Transition(k) => {
                        v.centre = tr[k].energy;
                        v.d_centre[..nt].copy_from_slice(&tr[k].grad[..nt]);
                    }
                    Centre::Free(i) => {
                        v.centre = q[i];
                        v.d_centre[i] = 1.0;
                    }
                }
                match term.width {
                    Width::Param(i) => {
                        v.fwhm = q[i];
                        v.d_fwhm[i] = 1.0;
                    }
                    Width::Slope { q: i, k } => {
                        let s = tr[k].slope;
                        v.fwhm = q[i] * s.abs();
                        v.d_fwhm[i] = s.abs();
                        for a in 0..nt {
                            v.d_fwhm[a] = q[i] * s.signum() * tr[k].slope_grad[a];
                        }
                    }
                }
                v.height = q[term.height];
                v.extra = term.extra.map_or(0.0, |i| q[i]);
                v
            })
            .collect()
    }

    /// The model at q on the points and, when asked, its q-Jacobian
    /// (column-major, unweighted). `None` when the model cannot be evaluated.
    fn model_values(&self, q: &[f64], mut jac: Option<&mut [f64]>) -> Option<Vec<f64>> {
        let tr = self.transitions(&q[..self.theta.count()])?;
        let bands = self.band_values(q, &tr);
        let m = self.x.len();
        let mut f = vec![0.0; m];
        if let Some(j) = jac.as_deref_mut() {
            j.fill(0.0);
        }
        for (b, term) in bands.iter().zip(&self.terms) {
            let nonzero_centre: Vec<usize> = nonzero(&b.d_centre);
            let nonzero_width: Vec<usize> = nonzero(&b.d_fwhm);
            for i in 0..m {
                let s = shapes::eval(term.shape, self.x[i], b.centre, b.fwhm, b.height, b.extra);
                f[i] += s.value;
                if let Some(j) = jac.as_deref_mut() {
                    for &a in &nonzero_centre {
                        j[a * m + i] += s.d_centre * b.d_centre[a];
                    }
                    for &a in &nonzero_width {
                        j[a * m + i] += s.d_fwhm * b.d_fwhm[a];
                    }
                    j[term.height * m + i] += s.d_height;
                    if let Some(e) = term.extra {
                        j[e * m + i] += s.d_extra;
                    }
                }
            }
        }
        for (c, phi) in self.baseline.basis.iter().enumerate() {
            let col = self.baseline.start + c;
            for i in 0..m {
                f[i] += q[col] * phi[i];
            }
            if let Some(j) = jac.as_deref_mut() {
                j[col * m..(col + 1) * m].copy_from_slice(phi);
            }
        }
        Some(f)
    }
}

fn nonzero(v: &[f64]) -> Vec<usize> {
    (0..v.len()).filter(|&i| v[i] != 0.0).collect()
}

/// A band's values at q with their q-gradients.
struct BandValue {
    centre: f64,
    fwhm: f64,
    height: f64,
    extra: f64,
    d_centre: Vec<f64>,
    d_fwhm: Vec<f64>,
}

impl BandValue {
    fn new(n: usize) -> Self {
        BandValue {
            centre: 0.0,
            fwhm: 0.0,
            height: 0.0,
            extra: 0.0,
            d_centre: vec![0.0; n],
            d_fwhm: vec![0.0; n],
        }
    }
}

impl LeastSquares for Problem<'_> {
    fn residual_count(&self) -> usize {
        self.x.len()
    }
    fn parameter_count(&self) -> usize {
        self.q_count
    }
    fn evaluate(&self, q: &[f64], r: &mut [f64], jac: Option<&mut [f64]>) -> bool {
        let m = self.x.len();
        let mut jac = jac;
        let Some(f) = self.model_values(q, jac.as_deref_mut()) else {
            return false;
        };
        for i in 0..m {
            r[i] = self.sqrt_w[i] * (f[i] - self.y[i]);
        }
        if let Some(j) = jac {
            for col in j.chunks_exact_mut(m) {
                for (v, w) in col.iter_mut().zip(&self.sqrt_w) {
                    *v *= w;
                }
            }
        }
        true
    }
}

/// The setup a global fit is built from: the engine's model, the two-step
/// solution and the band fit it rests on.
pub struct Start<'a> {
    /// n of dⁿ.
    pub n: u8,
    pub geometry: Geometry,
    pub band_fit: &'a BandFit,
    pub solution: &'a Solution,
    pub options: GlobalOptions,
}

/// A compiled problem with its start vector, bounds and parameter names.
struct Compiled<'a> {
    problem: Problem<'a>,
    q0: Vec<f64>,
    lower: Vec<f64>,
    upper: Vec<f64>,
    /// For each band, the index of its transition (`None`: free centre).
    transition_of_band: Vec<Option<usize>>,
    typesets: Vec<String>,
}

/// Which θ the two-step solution fitted, and its start values.
fn theta_of(solution: &Solution) -> (Theta, Vec<f64>) {
    let p = &solution.parameters;
    let b = p.b.map_or(0.0, |e| e.value);
    let c = p.c.map_or(0.0, |e| e.value);
    let has = |name: &str| solution.free.iter().any(|f| f == name);
    if has("C") {
        (Theta::DqBC, vec![p.dq.value, b, c])
    } else if has("B") {
        let gamma = solution
            .derived
            .c_over_b
            .map_or(if b > 0.0 { c / b } else { 0.0 }, |e| e.value);
        (Theta::DqB { gamma }, vec![p.dq.value, b])
    } else {
        (Theta::Dq { b, c }, vec![p.dq.value])
    }
}

/// The band index each assigned band maximum belongs to (nearest maximum).
fn band_of_assignment(fit: &BandFit, observed: f64) -> Option<usize> {
    fit.bands
        .iter()
        .enumerate()
        .map(|(i, b)| (i, (b.maximum.unwrap_or(b.centre.value) - observed).abs()))
        .filter(|(_, d)| d.is_finite())
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(i, _)| i)
}

/// The baseline's basis on the points, its start coefficients and their names.
fn baseline_basis(bl: &BaselineResult, x: &[f64]) -> (Vec<Vec<f64>>, Vec<f64>) {
    let coefficient = |i: usize| bl.coefficients.get(i).map_or(0.0, |c| c.value);
    let half = if bl.x_half.is_finite() && bl.x_half != 0.0 {
        bl.x_half
    } else {
        1.0
    };
    let ones = vec![1.0; x.len()];
    match bl.model {
        BaselineModel::None => (Vec::new(), Vec::new()),
        BaselineModel::Constant | BaselineModel::Linear | BaselineModel::Polynomial(_) => {
            let count = bl.coefficients.len();
            let basis = (0..count)
                .map(|k| {
                    x.iter()
                        .map(|&xi| ((xi - bl.x_mid) / half).powi(k as i32))
                        .collect()
                })
                .collect();
            (basis, (0..count).map(coefficient).collect())
        }
        BaselineModel::Scattering => {
            let x_max = if bl.x_max > 0.0 { bl.x_max } else { 1.0 };
            let exponent = coefficient(2);
            let power = x.iter().map(|&xi| (xi / x_max).powf(exponent)).collect();
            (vec![ones, power], vec![coefficient(0), coefficient(1)])
        }
        BaselineModel::ChargeTransferTail => {
            let (centre, fwhm) = (coefficient(1), coefficient(2));
            let tail = x
                .iter()
                .map(|&xi| shapes::eval(Shape::Gaussian, xi, centre, fwhm, 1.0, 0.0).value)
                .collect();
            (vec![ones, tail], vec![coefficient(0), coefficient(3)])
        }
    }
}

/// Refuses points and results the global fit cannot use.
fn check_inputs(start: &Start<'_>, points: &Points<'_>) -> Result<(), GlobalFitError> {
    let m = points.x.len();
    if points.y.len() != m || points.w.is_some_and(|w| w.len() != m) || m == 0 {
        return Err(GlobalFitError::BadData(
            "the x, y and weight columns differ in length or are empty".into(),
        ));
    }
    if start.band_fit.bands.is_empty() {
        return Err(GlobalFitError::BadData("the band fit has no bands".into()));
    }
    if start.solution.assignment.is_empty() {
        return Err(GlobalFitError::NoAssignment);
    }
    Ok(())
}

/// The two-step assignment tied to the band fit's bands.
struct Links {
    ground: String,
    /// For each band, the index of its transition (`None`: free centre).
    transition_of_band: Vec<Option<usize>>,
    final_labels: Vec<String>,
    typesets: Vec<String>,
    spin_allowed: Vec<bool>,
    /// ∂E/∂Δ of each transition at the start.
    slopes: Vec<f64>,
}

/// Each assigned state tied to the band whose maximum it was fitted to.
fn links(start: &Start<'_>, levels: &[Level]) -> Result<Links, GlobalFitError> {
    let (fit, solution) = (start.band_fit, start.solution);
    let level = |label: &str| {
        levels
            .iter()
            .find(|l| l.label == label)
            .ok_or_else(|| GlobalFitError::UnknownState(label.to_string()))
    };
    let ground = level(&solution.ground)?;
    let mut out = Links {
        ground: ground.label.clone(),
        transition_of_band: vec![None; fit.bands.len()],
        final_labels: Vec::new(),
        typesets: Vec::new(),
        spin_allowed: Vec::new(),
        slopes: Vec::new(),
    };
    for a in &solution.assignment {
        let l = level(&a.state)?;
        if let Some(i) = band_of_assignment(fit, a.observed) {
            if out.transition_of_band[i].is_none() {
                out.transition_of_band[i] = Some(out.final_labels.len());
                out.final_labels.push(l.label.clone());
                out.typesets.push(l.typeset.clone());
                out.spin_allowed.push(l.multiplicity == ground.multiplicity);
                out.slopes.push((l.d_dq - ground.d_dq) / 10.0);
            }
        }
    }
    Ok(out)
}

/// Lays out q: θ, widths, heights, extras, free centres, baseline.
fn compile<'a>(start: &Start<'_>, points: &Points<'a>) -> Result<Compiled<'a>, GlobalFitError> {
    check_inputs(start, points)?;
    let (fit, m) = (start.band_fit, points.x.len());
    let model = ligand_field::model(start.n, start.geometry).map_err(GlobalFitError::Model)?;
    let (theta, t0) = theta_of(start.solution);
    let levels = model
        .levels(&theta.params(&t0))
        .map_err(GlobalFitError::Model)?;
    let links = links(start, &levels)?;
    let mut layout = Layout {
        lower: t0.iter().map(|v| v * 1e-3).collect(),
        upper: vec![f64::INFINITY; t0.len()],
        q0: t0,
    };
    let x_lo = points.x.iter().copied().fold(f64::INFINITY, f64::min);
    let x_hi = points.x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let span = (x_hi - x_lo).abs().max(1.0);
    let widths = width_terms(start, &links, &mut layout, span);
    let mut terms = Vec::with_capacity(fit.bands.len());
    for (i, b) in fit.bands.iter().enumerate() {
        let height = layout.push(b.height.value, f64::NEG_INFINITY, f64::INFINITY);
        let extra = b.shape.has_extra().then(|| {
            let e = b
                .extra
                .map_or_else(|| b.shape.default_extra(b.fwhm.value), |e| e.value);
            let (lo, hi) = match b.shape {
                Shape::PseudoVoigt => (0.0, 1.0),
                Shape::Voigt => (0.0, 10.0 * span),
                _ => (f64::NEG_INFINITY, f64::INFINITY),
            };
            layout.push(e, lo, hi)
        });
        let centre = match links.transition_of_band[i] {
            Some(k) => Centre::Transition(k),
            None => Centre::Free(layout.push(b.centre.value, x_lo - span, x_hi + span)),
        };
        terms.push(Term {
            shape: b.shape,
            centre,
            width: widths[i],
            height,
            extra,
        });
    }
    let (basis, coefficients) = baseline_basis(&fit.baseline, points.x);
    let baseline_start = layout.q0.len();
    for c in coefficients {
        layout.push(c, f64::NEG_INFINITY, f64::INFINITY);
    }
    let sqrt_w = match points.w {
        Some(w) => w.iter().map(|v| v.max(0.0).sqrt()).collect(),
        None => vec![1.0; m],
    };
    let q_count = layout.q0.len();
    Ok(Compiled {
        problem: Problem {
            model,
            theta,
            x: points.x,
            y: points.y,
            sqrt_w,
            start_label: links.ground,
            final_labels: links.final_labels,
            terms,
            baseline: Baseline {
                basis,
                start: baseline_start,
            },
            q_count,
            slope_rule: start.options.widths == WidthRule::Slope,
        },
        q0: layout.q0,
        lower: layout.lower,
        upper: layout.upper,
        transition_of_band: links.transition_of_band,
        typesets: links.typesets,
    })
}

/// The start vector and bounds of q as they are laid out.
struct Layout {
    q0: Vec<f64>,
    lower: Vec<f64>,
    upper: Vec<f64>,
}

impl Layout {
    fn push(&mut self, v: f64, lo: f64, hi: f64) -> usize {
        self.q0.push(v);
        self.lower.push(lo);
        self.upper.push(hi);
        self.q0.len() - 1
    }
}

/// Each band's width by the rule: its own, a family's, or a slope factor's.
fn width_terms(start: &Start<'_>, links: &Links, layout: &mut Layout, span: f64) -> Vec<Width> {
    let fit = start.band_fit;
    let family = |i: usize| links.transition_of_band[i].map(|k| links.spin_allowed[k]);
    let mut shared: [Option<usize>; 2] = [None, None];
    let mut widths = Vec::with_capacity(fit.bands.len());
    for (i, b) in fit.bands.iter().enumerate() {
        let w0 = b.fwhm.value.abs().max(1.0);
        let width = match (start.options.widths, family(i)) {
            (WidthRule::Slope, Some(true)) => {
                let k = links.transition_of_band[i].unwrap_or(0);
                let slot = *shared[0].get_or_insert_with(|| {
                    let ratio = mean_width_ratio(
                        fit,
                        &links.transition_of_band,
                        &links.slopes,
                        &links.spin_allowed,
                    );
                    layout.push(ratio, 1e-6, f64::INFINITY)
                });
                Width::Slope { q: slot, k }
            }
            (WidthRule::Equal, Some(allowed)) => {
                let f = usize::from(!allowed);
                let slot = *shared[f].get_or_insert_with(|| {
                    let mean = mean_width(fit, |j| family(j) == Some(allowed));
                    layout.push(mean, 1e-3 * span, 10.0 * span)
                });
                Width::Param(slot)
            }
            _ => Width::Param(layout.push(w0, 1e-3 * span, 10.0 * span)),
        };
        widths.push(width);
    }
    widths
}

/// Mean FWHM of the bands with `take(i)`.
fn mean_width(fit: &BandFit, take: impl Fn(usize) -> bool) -> f64 {
    let widths: Vec<f64> = (0..fit.bands.len())
        .filter(|&i| take(i))
        .map(|i| fit.bands[i].fwhm.value.abs())
        .collect();
    (widths.iter().sum::<f64>() / widths.len().max(1) as f64).max(1.0)
}

/// Mean of fwhm/|∂E/∂Δ| over the spin-allowed assigned bands.
fn mean_width_ratio(
    fit: &BandFit,
    transition_of_band: &[Option<usize>],
    slopes: &[f64],
    spin_allowed: &[bool],
) -> f64 {
    let ratios: Vec<f64> = transition_of_band
        .iter()
        .enumerate()
        .filter_map(|(i, k)| k.map(|k| (i, k)))
        .filter(|&(_, k)| spin_allowed[k] && slopes[k].abs() > 1e-6)
        .map(|(i, k)| fit.bands[i].fwhm.value.abs() / slopes[k].abs())
        .collect();
    (ratios.iter().sum::<f64>() / ratios.len().max(1) as f64).max(1e-3)
}

/// Fits the spectrum with the model, started from `start.solution`.
///
/// Noiseless Gaussian bands placed by the engine at Dq = 860, B = 880 cm⁻¹
/// (Ni²⁺, octahedral) come back exactly from a start 2 % off; see
/// `tests/global_fit.rs` for the checks.
pub fn fit(
    start: &Start<'_>,
    points: &Points<'_>,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<GlobalFit, GlobalFitError> {
    let c = compile(start, points)?;
    let opts = LmOptions {
        lower: c.lower.clone(),
        upper: c.upper.clone(),
        max_iterations: 400,
        ..LmOptions::default()
    };
    let report =
        solver::solve(&c.problem, &c.q0, &opts, progress).map_err(GlobalFitError::Solver)?;
    Ok(build(start, &c, &report))
}

/// The global fit of the two-step best assignment and, when the options ask,
/// of up to [`MAX_ALTERNATIVES`] plausible alternatives, all on the same
/// points; the assignments are listed lowest BIC first and a warning says when
/// an alternative's BIC is lower by more than 2 (positive evidence on the scale
/// of Kass & Raftery, J. Am. Stat. Assoc. 90 (1995) 773, from memory).
pub fn fit_outcome(
    start: &Start<'_>,
    alternatives: &[Solution],
    points: &Points<'_>,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<GlobalFit, GlobalFitError> {
    let mut best = fit(start, points, progress)?;
    if !start.options.compare_assignments {
        return Ok(best);
    }
    let states = |s: &Solution| s.assignment.iter().map(|a| a.state.clone()).collect();
    let mut table = vec![AssignmentBic {
        states: states(start.solution),
        chi2: best.chi2,
        bic: best.bic,
    }];
    for alt in alternatives
        .iter()
        .filter(|a| a.plausible)
        .take(MAX_ALTERNATIVES)
    {
        let other = Start {
            solution: alt,
            ..*start
        };
        if let Ok(g) = fit(&other, points, progress) {
            table.push(AssignmentBic {
                states: states(alt),
                chi2: g.chi2,
                bic: g.bic,
            });
        }
    }
    let key = |a: &AssignmentBic| a.bic.unwrap_or(f64::INFINITY);
    if let (Some(own), Some(better)) = (
        best.bic,
        table[1..]
            .iter()
            .filter(|a| key(a) < key(&table[0]) - 2.0)
            .min_by(|a, b| key(a).total_cmp(&key(b))),
    ) {
        best.warnings.push(format!(
            "the global fit prefers the assignment ({}) by BIC ({:.1} against {own:.1} for the two-step choice)",
            better.states.join(", "),
            key(better)
        ));
    }
    table.sort_by(|a, b| key(a).total_cmp(&key(b)));
    best.assignments = table;
    Ok(best)
}

/// A value with its σ propagated from the covariance along `grad`.
fn estimate(cov: Option<&Covariance>, value: f64, grad: &[f64]) -> Estimate {
    cov.and_then(|c| c.propagate(grad))
        .map_or(Estimate::exact(value), |s| Estimate::new(value, s))
}

fn unit(n: usize, i: usize) -> Vec<f64> {
    let mut g = vec![0.0; n];
    g[i] = 1.0;
    g
}

/// Dq, B, C and the derived numbers at the solution, with their σ.
fn ligand_field_estimates(
    theta: Theta,
    q: &[f64],
    solution: &Solution,
    cov: Option<&Covariance>,
) -> (Parameters, Derived) {
    let n = q.len();
    let p = theta.params(q);
    let scaled = |g: Vec<f64>, f: f64| g.into_iter().map(|v| v * f).collect::<Vec<f64>>();
    let dq = estimate(cov, p.dq, &unit(n, 0));
    let (b, c, c_over_b) = match theta {
        Theta::Dq { .. } => (
            solution.parameters.b.map(|_| Estimate::exact(p.b)),
            solution.parameters.c.map(|_| Estimate::exact(p.c)),
            solution.derived.c_over_b,
        ),
        Theta::DqB { gamma } => (
            Some(estimate(cov, p.b, &unit(n, 1))),
            Some(estimate(cov, p.c, &scaled(unit(n, 1), gamma))),
            Some(Estimate::exact(gamma)),
        ),
        Theta::DqBC => {
            let mut g = vec![0.0; n];
            g[1] = -p.c / (p.b * p.b);
            g[2] = 1.0 / p.b;
            (
                Some(estimate(cov, p.b, &unit(n, 1))),
                Some(estimate(cov, p.c, &unit(n, 2))),
                Some(estimate(cov, p.c / p.b, &g)),
            )
        }
    };
    let b_fitted = !matches!(theta, Theta::Dq { .. });
    let dq_over_b = b.filter(|b| b.value > 0.0).map(|_| {
        let mut g = vec![0.0; n];
        g[0] = 1.0 / p.b;
        if b_fitted {
            g[1] = -p.dq / (p.b * p.b);
        }
        estimate(cov, p.dq / p.b, &g)
    });
    let beta = match (b, solution.derived.b0) {
        (Some(bv), Some(b0)) if b_fitted && b0 > 0.0 => Some(bv.scaled(1.0 / b0)),
        _ => None,
    };
    let derived = Derived {
        delta: dq.scaled(10.0),
        beta,
        b0: solution.derived.b0,
        b0_source: solution.derived.b0_source.clone(),
        dq_over_b,
        delta_over_b: dq_over_b.map(|e| e.scaled(10.0)),
        c_over_b,
    };
    (Parameters { dq, b, c }, derived)
}

/// The card of a solved global fit.
fn build(start: &Start<'_>, c: &Compiled<'_>, report: &solver::LmReport) -> GlobalFit {
    let problem = &c.problem;
    let (m, n) = (problem.x.len(), problem.q_count);
    let q = &report.x;
    let scale = ErrorScale::ReducedChi2 {
        chi2: report.chi2,
        points: m,
        parameters: n,
    };
    let cov = stats::covariance(&report.jacobian, m, n, &vec![true; n], scale)
        .filter(|c| !c.rank_deficient);
    let mut warnings = Vec::new();
    if cov.is_none() {
        warnings.push("the spectrum does not determine every parameter of the global fit (singular matrix): no uncertainties".into());
    }
    if !report.stop.was_successful() {
        warnings.push(format!("the global fit {}", report.stop));
    }
    let cv = cov.as_ref();
    let (parameters, derived) = ligand_field_estimates(problem.theta, q, start.solution, cv);
    let transitions = problem
        .transitions(&q[..problem.theta.count()])
        .unwrap_or_default();
    let values = if transitions.len() == problem.final_labels.len() {
        problem.band_values(q, &transitions)
    } else {
        Vec::new()
    };
    let bands = values
        .iter()
        .zip(&problem.terms)
        .zip(&c.transition_of_band)
        .map(|((v, term), k)| GlobalBand {
            shape: term.shape,
            centre: estimate(cv, v.centre, &v.d_centre),
            fwhm: estimate(cv, v.fwhm, &v.d_fwhm),
            height: estimate(cv, v.height, &unit(n, term.height)),
            extra: term.extra.map(|e| estimate(cv, q[e], &unit(n, e))),
            state: k.map(|k| problem.final_labels[k].clone()),
            typeset: k.map(|k| c.typesets[k].clone()),
        })
        .collect();
    let baseline = (0..problem.baseline.basis.len())
        .map(|j| {
            let i = problem.baseline.start + j;
            estimate(cv, q[i], &unit(n, i))
        })
        .collect();
    let two = &start.solution.parameters;
    for (name, g, t) in [
        ("Dq", Some(parameters.dq), Some(two.dq)),
        ("B", parameters.b, two.b),
        ("C", parameters.c, two.c),
    ] {
        if let Some(w) = g.zip(t).and_then(|(g, t)| disagreement(name, g, t)) {
            warnings.push(w);
        }
    }
    let goodness = stats::goodness(report.chi2, m, n, weighted_deviation(problem));
    GlobalFit {
        parameters,
        derived,
        free: ["Dq", "B", "C"][..problem.theta.count()]
            .iter()
            .map(|s| (*s).to_string())
            .collect(),
        ground: problem.start_label.clone(),
        bands,
        baseline,
        widths: start.options.widths,
        chi2: report.chi2,
        reduced_chi2: goodness.reduced_chi2,
        bic: goodness.bic,
        points: m,
        parameter_count: n,
        iterations: report.iterations,
        stopped: report.stop,
        uncertainty: "residual scatter: σ from χ²/(N − P) times (JᵀJ)⁻¹".into(),
        assignments: Vec::new(),
        warnings,
    }
}

/// Σw(y − ȳ)² with the weighted mean ȳ.
fn weighted_deviation(p: &Problem<'_>) -> f64 {
    let w: Vec<f64> = p.sqrt_w.iter().map(|s| s * s).collect();
    let total: f64 = w.iter().sum();
    if total <= 0.0 {
        return 0.0;
    }
    let mean = p.y.iter().zip(&w).map(|(y, w)| y * w).sum::<f64>() / total;
    p.y.iter()
        .zip(&w)
        .map(|(y, w)| w * (y - mean).powi(2))
        .sum()
}

/// A warning when the global and two-step values of `name` differ by more
/// than their combined σ, √(σ₁² + σ₂²).
fn disagreement(name: &str, global: Estimate, two_step: Estimate) -> Option<String> {
    let combined = global.sigma?.hypot(two_step.sigma?);
    ((global.value - two_step.value).abs() > combined).then(|| {
        format!(
            "the global fit and the two-step fit disagree on {name}: {global} against {two_step} cm⁻¹, more than their combined σ ({combined:.0} cm⁻¹)"
        )
    })
}
