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
//! s² = max(σ²_noise, χ²/(N − P)) when the noise σ of the spectrum is known
//! ([`crate::spectrum::noise`], estimated before smoothing), else
//! s² = χ²/(N − P): a misfit larger than the noise widens the σ, and a fit
//! that follows smoothed data more closely than the noise allows never
//! narrows it (the Birge-ratio rule of [`crate::stats::ErrorScale::AtLeastStated`],
//! with the noise as the stated σ; the point weights are relative spacings of
//! mean 1, so the noise applies to them as it stands). Every reported number
//! is propagated from C. A ligand-field parameter the spectrum does not
//! determine (σ above a third of its value, the two-step fit's rule, or a
//! singular matrix) is not reported with a huge σ: the fit is made again with
//! it held (C at the two-step C/B, then B at the two-step B), and it is listed
//! in [`GlobalFit::held`] and marked held. The BIC, N ln(χ²/N) + P ln N
//! (lmfit's definition, as for the band fit), compares assignments on the same
//! points: [`fit_outcome`] fits each one and ranks them by it.

use super::refine::{mark_held, C_DETERMINED};
use super::{Derived, Held, Parameters, Solution};
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
    /// Ligand-field parameters the spectrum does not determine, held at a
    /// stated value (the two-step fit's held ones, and any the global fit
    /// could not determine); their estimates have `determined: false`.
    #[serde(default)]
    pub held: Vec<Held>,
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
    /// The noise σ of `y` (`None`: unknown; the residual scatter is used alone).
    pub noise: Option<f64>,
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
    /// The noise σ of the points, when known (finite, positive).
    noise: Option<f64>,
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
fn compile<'a>(
    start: &Start<'_>,
    points: &Points<'a>,
    theta: Theta,
    t0: Vec<f64>,
) -> Result<Compiled<'a>, GlobalFitError> {
    check_inputs(start, points)?;
    let (fit, m) = (start.band_fit, points.x.len());
    let model = ligand_field::model(start.n, start.geometry).map_err(GlobalFitError::Model)?;
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
        noise: points.noise.filter(|s| s.is_finite() && *s > 0.0),
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
///
/// A ligand-field parameter the spectrum does not determine is held and the
/// fit made again (see the module docs); at most two refits.
pub fn fit(
    start: &Start<'_>,
    points: &Points<'_>,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<GlobalFit, GlobalFitError> {
    let (mut theta, mut t0) = theta_of(start.solution);
    let mut held = start.solution.held.clone();
    let mut first = None;
    loop {
        let c = compile(start, points, theta, t0)?;
        let opts = LmOptions {
            lower: c.lower.clone(),
            upper: c.upper.clone(),
            max_iterations: 400,
            ..LmOptions::default()
        };
        let report =
            solver::solve(&c.problem, &c.q0, &opts, progress).map_err(GlobalFitError::Solver)?;
        let cov = covariance(&c.problem, &report, c.noise);
        let two_step = TwoStep {
            b: start.solution.parameters.b.map(|e| e.value),
            c_over_b: start.solution.derived.c_over_b.map(|e| e.value),
        };
        let Some((next, h)) = hold_undetermined(theta, &report.x, cov.as_ref(), two_step) else {
            // Holding did not make the matrix regular: the singularity lies
            // elsewhere (widths, a free centre), so the first fit stands, with
            // nothing held beyond the two-step fit's and no σ.
            if let (None, Some((c, report, _))) = (&cov, first) {
                let held = start.solution.held.clone();
                return Ok(build(start, &c, &report, None, held));
            }
            return Ok(build(start, &c, &report, cov.as_ref(), held));
        };
        t0 = report.x[..next.count()].to_vec();
        theta = next;
        held.push(h);
        first.get_or_insert((c, report, cov));
    }
}

/// C = s²(JᵀJ)⁺ with s² = max(σ²_noise, χ²/(N − P)), or χ²/(N − P) when the
/// noise is unknown; `None` when singular.
fn covariance(
    p: &Problem<'_>,
    report: &solver::LmReport,
    noise: Option<f64>,
) -> Option<Covariance> {
    let (m, n) = (p.x.len(), p.q_count);
    let include = vec![true; n];
    // With the noise: J/σ and χ²/σ² under the stated-σ rule, which gives
    // σ²·max(1, χ²/(σ²(N − P)))·(JᵀJ)⁻¹ = max(σ², χ²/(N − P))·(JᵀJ)⁻¹.
    let cov = if let Some(sigma) = noise {
        let scaled: Vec<f64> = report.jacobian.iter().map(|v| v / sigma).collect();
        let scale = ErrorScale::AtLeastStated {
            chi2: report.chi2 / (sigma * sigma),
            points: m,
            parameters: n,
        };
        stats::covariance(&scaled, m, n, &include, scale)
    } else {
        let scale = ErrorScale::ReducedChi2 {
            chi2: report.chi2,
            points: m,
            parameters: n,
        };
        stats::covariance(&report.jacobian, m, n, &include, scale)
    };
    cov.filter(|c| !c.rank_deficient)
}

/// The two-step values a held parameter is held at.
#[derive(Debug, Clone, Copy)]
struct TwoStep {
    b: Option<f64>,
    c_over_b: Option<f64>,
}

/// The next θ and the held parameter when the fit at θ leaves its last
/// ligand-field parameter (C, then B) undetermined: σ above
/// [`C_DETERMINED`] of its value, or no covariance. `None`: keep this fit.
fn hold_undetermined(
    theta: Theta,
    q: &[f64],
    cov: Option<&Covariance>,
    two_step: TwoStep,
) -> Option<(Theta, Held)> {
    let last = theta.count() - 1;
    if last == 0 {
        return None;
    }
    let sigma = cov.and_then(|c| c.sigma(last));
    if sigma.is_some_and(|s| s <= C_DETERMINED * q[last].abs()) {
        return None;
    }
    let why = match sigma {
        Some(_) => "the spectrum does not determine it to better than a third of its value",
        None => "the spectrum does not determine every parameter (singular matrix)",
    };
    match theta {
        Theta::DqBC => {
            let gamma = two_step.c_over_b.unwrap_or(q[2] / q[1]);
            Some((
                Theta::DqB { gamma },
                Held {
                    parameter: "C".into(),
                    value: gamma * q[1],
                    reason: format!(
                        "in the global fit {why}: held at the two-step C/B = {gamma:.2}"
                    ),
                },
            ))
        }
        Theta::DqB { gamma } => {
            let b = two_step.b.unwrap_or(q[1]);
            Some((
                Theta::Dq { b, c: gamma * b },
                Held {
                    parameter: "B".into(),
                    value: b,
                    reason: format!(
                        "in the global fit {why}: held at the two-step B = {b:.0} cm⁻¹"
                    ),
                },
            ))
        }
        Theta::Dq { .. } => None,
    }
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
fn build(
    start: &Start<'_>,
    c: &Compiled<'_>,
    report: &solver::LmReport,
    cov: Option<&Covariance>,
    held: Vec<Held>,
) -> GlobalFit {
    let problem = &c.problem;
    let (m, n) = (problem.x.len(), problem.q_count);
    let q = &report.x;
    let mut warnings = Vec::new();
    if cov.is_none() {
        warnings.push("the spectrum does not determine every parameter of the global fit (singular matrix): no uncertainties".into());
    }
    if !report.stop.was_successful() {
        warnings.push(format!("the global fit {}", report.stop));
    }
    let cv = cov;
    let (mut parameters, mut derived) =
        ligand_field_estimates(problem.theta, q, start.solution, cv);
    mark_held(&held, &mut parameters, &mut derived);
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
        uncertainty: if c.noise.is_some() {
            "σ from max(noise σ², χ²/(N − P)) times (JᵀJ)⁻¹".into()
        } else {
            "residual scatter: σ from χ²/(N − P) times (JᵀJ)⁻¹ (noise unknown)".into()
        },
        assignments: Vec::new(),
        held,
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

#[cfg(test)]
mod tests {
    use super::*;

    /// A problem on `labels` (ground first) with one Gaussian band per
    /// transition, the last with the slope width rule, the rest with their
    /// own widths, one band with a free centre, and a linear baseline.
    fn problem(n: u8, theta: Theta, labels: &[&str], x: &[f64]) -> (Problem<'static>, usize) {
        let model = ligand_field::model(n, Geometry::Octahedral).expect("model");
        let nt = theta.count();
        let k = labels.len() - 1;
        let mut q = nt;
        let mut next = || {
            q += 1;
            q - 1
        };
        let mut terms: Vec<Term> = (0..k)
            .map(|i| Term {
                shape: Shape::Gaussian,
                centre: Centre::Transition(i),
                width: if i + 1 == k {
                    Width::Slope { q: next(), k: i }
                } else {
                    Width::Param(next())
                },
                height: next(),
                extra: None,
            })
            .collect();
        terms.push(Term {
            shape: Shape::Gaussian,
            centre: Centre::Free(next()),
            width: Width::Param(next()),
            height: next(),
            extra: None,
        });
        let start = next();
        let x: &'static [f64] = Box::leak(x.to_vec().into_boxed_slice());
        let y: &'static [f64] = Box::leak(vec![0.0; x.len()].into_boxed_slice());
        let basis = vec![vec![1.0; x.len()], x.iter().map(|v| v / 20_000.0).collect()];
        let q_count = start + basis.len();
        let p = Problem {
            model,
            theta,
            x,
            y,
            sqrt_w: vec![1.0; x.len()],
            start_label: labels[0].to_string(),
            final_labels: labels[1..].iter().map(|s| (*s).to_string()).collect(),
            terms,
            baseline: Baseline { basis, start },
            q_count,
            slope_rule: true,
        };
        (p, q_count)
    }

    /// The analytic q-Jacobian of the model (band centres from the
    /// Hellmann–Feynman derivatives of the engine, slope widths from the
    /// level curvature, heights, widths, free centres, baseline) equals a
    /// central finite difference of the model values, column by column, for
    /// each way of fitting the ligand field (Dq; Dq, B with C = γB; Dq, B, C).
    #[test]
    fn every_model_derivative_matches_a_finite_difference() {
        let x: Vec<f64> = (0..120).map(|i| 6_000.0 + 200.0 * f64::from(i)).collect();
        let cases: [(u8, Theta, &[&str], &[f64]); 3] = [
            (
                3,
                Theta::Dq {
                    b: 700.0,
                    c: 3_000.0,
                },
                &["4A2g", "4T2g", "4T1g(F)"],
                &[1_750.0],
            ),
            (
                8,
                Theta::DqBC,
                &["3A2g", "3T2g", "3T1g(F)", "1Eg(D)", "3T1g(P)"],
                &[860.0, 880.0, 3_900.0],
            ),
            (
                7,
                Theta::DqB { gamma: 4.4 },
                &["4T1g(F)", "4T2g", "4A2g", "4T1g(P)"],
                &[930.0, 840.0],
            ),
        ];
        for (n, theta, labels, t) in cases {
            let (p, count) = problem(n, theta, labels, &x);
            let mut q = vec![0.0; count];
            q[..t.len()].copy_from_slice(t);
            for (i, term) in p.terms.iter().enumerate() {
                let w = 2_000.0 + 100.0 * i as f64;
                match term.width {
                    Width::Param(j) => q[j] = w,
                    Width::Slope { q: j, .. } => q[j] = 0.25,
                }
                if let Centre::Free(j) = term.centre {
                    q[j] = 27_000.0;
                }
                q[term.height] = 0.2 + 0.05 * i as f64;
            }
            q[count - 2..].copy_from_slice(&[0.01, 0.002]);
            assert_eq!(q.len(), count, "d{n}: parameter layout");
            let m = x.len();
            let mut jac = vec![0.0; m * count];
            p.model_values(&q, Some(&mut jac))
                .expect("the model evaluates");
            for a in 0..count {
                let h = 1e-6 * q[a].abs().max(1.0);
                let (mut up, mut down) = (q.clone(), q.clone());
                up[a] += h;
                down[a] -= h;
                let fu = p.model_values(&up, None).expect("up");
                let fd = p.model_values(&down, None).expect("down");
                let scale = (0..m).map(|i| jac[a * m + i].abs()).fold(1e-12, f64::max);
                for i in 0..m {
                    let numeric = (fu[i] - fd[i]) / (2.0 * h);
                    let analytic = jac[a * m + i];
                    assert!(
                        (numeric - analytic).abs() <= 1e-5 * scale,
                        "d{n} parameter {a} at x = {}: analytic {analytic}, finite difference {numeric}",
                        x[i]
                    );
                }
            }
        }
    }

    /// Each transition's θ-gradient (the band centre's derivative) equals the
    /// central finite difference of its energy, and the θ-gradient of its slope
    /// ∂E/∂Δ (the slope width rule's, from the level curvature) that of its
    /// slope, for every ligand-field parameter.
    #[test]
    fn every_band_centre_and_slope_derivative_matches_a_finite_difference() {
        let (p, _) = problem(
            8,
            Theta::DqBC,
            &["3A2g", "3T2g", "3T1g(F)", "1Eg(D)", "1A1g(G)", "3T1g(P)"],
            &[10_000.0],
        );
        let t = [860.0, 880.0, 3_900.0];
        let at = |t: &[f64]| p.transitions(t).expect("transitions");
        for (k, tr) in at(&t).iter().enumerate() {
            for a in 0..3 {
                let h = 1e-3;
                let (mut up, mut down) = (t, t);
                up[a] += h;
                down[a] -= h;
                let (u, d) = (at(&up)[k], at(&down)[k]);
                let numeric = (u.energy - d.energy) / (2.0 * h);
                assert!(
                    (numeric - tr.grad[a]).abs() <= 1e-6 * (1.0 + tr.grad[a].abs()),
                    "transition {k}, parameter {a}: analytic {}, finite difference {numeric}",
                    tr.grad[a]
                );
                let numeric = (u.slope - d.slope) / (2.0 * h);
                assert!(
                    (numeric - tr.slope_grad[a]).abs() <= 1e-6 * tr.slope_grad[a].abs().max(1e-6),
                    "slope of transition {k}, parameter {a}: analytic {}, finite difference {numeric}",
                    tr.slope_grad[a]
                );
            }
        }
    }

    /// A parameter whose σ is above a third of its value is held (C first),
    /// at the two-step value, and said to be held; a well-determined one is kept.
    #[test]
    fn an_undetermined_parameter_is_held_at_the_two_step_value() {
        let cov = |sigmas: &[f64]| Covariance {
            matrix: nalgebra::DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
                sigmas.len(),
                sigmas.iter().map(|s| s * s),
            )),
            condition: 1.0,
            rank_deficient: false,
        };
        let two_step = TwoStep {
            b: Some(850.0),
            c_over_b: Some(4.4),
        };
        let q = [930.0, 840.0, 3_700.0];
        assert!(
            hold_undetermined(Theta::DqBC, &q, Some(&cov(&[1.0, 5.0, 50.0])), two_step).is_none()
        );
        let (next, held) =
            hold_undetermined(Theta::DqBC, &q, Some(&cov(&[1.0, 5.0, 2_000.0])), two_step)
                .expect("C is held");
        assert_eq!(held.parameter, "C");
        assert_eq!(next, Theta::DqB { gamma: 4.4 });
        let (next, held) = hold_undetermined(Theta::DqB { gamma: 4.4 }, &q[..2], None, two_step)
            .expect("B is held when the matrix is singular");
        assert_eq!(held.parameter, "B");
        assert_eq!(
            next,
            Theta::Dq {
                b: 850.0,
                c: 4.4 * 850.0
            }
        );
        assert!(held.reason.contains("singular"), "{}", held.reason);
        assert!(hold_undetermined(next, &q[..1], None, two_step).is_none());
    }

    /// The warning comes when the values differ by more than √(σ₁² + σ₂²),
    /// and not when they are closer or a σ is unknown.
    #[test]
    fn a_disagreement_beyond_the_combined_sigma_is_said() {
        let (g, t) = (Estimate::new(900.0, 3.0), Estimate::new(894.0, 4.0));
        // Combined σ = 5: 6 apart is a disagreement, 4 apart is not.
        let w = disagreement("B", g, t).expect("a warning");
        assert!(w.contains("disagree on B") && w.contains("(5 cm⁻¹)"), "{w}");
        assert!(disagreement("B", g, Estimate::new(896.0, 4.0)).is_none());
        assert!(disagreement("B", g, Estimate::exact(800.0)).is_none());
    }
}
