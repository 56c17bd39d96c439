//! The band fit: data checks, the parameter layout (ties, fixed
//! parameters, bounds) compiled for [`crate::solver`], the solve, and the
//! report of bands, baseline and statistics from the solver's result.

use super::model::{baseline_params, Compiled, ParamDef};
use super::{
    band_class, lm, shapes, stats, BandFit, BandFitError, BandModel, BandResult, BaselineResult,
    Coefficient, FitOptions, Progress, Shape, Statistics, Tie, OSCILLATOR_CONSTANT,
};
use crate::estimate::Estimate;
use crate::stats::Covariance;

/// Checks the data: lengths, finiteness, weights, non-constant y.
pub(super) fn validate(x: &[f64], y: &[f64], weights: Option<&[f64]>) -> Result<(), BandFitError> {
    if x.len() != y.len() || weights.is_some_and(|w| w.len() != x.len()) {
        return Err(BandFitError::LengthMismatch);
    }
    if let Some(index) = x
        .iter()
        .zip(y)
        .position(|(a, b)| !a.is_finite() || !b.is_finite())
    {
        return Err(BandFitError::NotFinite { index });
    }
    if let Some(index) = weights.and_then(|w| w.iter().position(|v| !v.is_finite() || *v < 0.0)) {
        return Err(BandFitError::BadWeight { index });
    }
    if let Some(&first) = y.first() {
        if y.iter().all(|&v| v - first == 0.0) {
            return Err(BandFitError::ConstantData);
        }
    }
    Ok(())
}

/// The spacing of the data points: the median distance between neighbours
/// on the sorted axis (on a grid even in wavelength it varies along the axis;
/// the median is the typical one). Zero for fewer than two distinct points.
pub fn data_spacing(x: &[f64]) -> f64 {
    let mut sorted: Vec<f64> = x.iter().copied().filter(|v| v.is_finite()).collect();
    sorted.sort_by(f64::total_cmp);
    let mut gaps: Vec<f64> = sorted
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|g| *g > 0.0)
        .collect();
    if gaps.is_empty() {
        return 0.0;
    }
    let mid = gaps.len() / 2;
    *gaps.select_nth_unstable_by(mid, f64::total_cmp).1
}

/// Builds the parameter layout: names, bounds, ties → q.
fn compile<'a>(
    x: &'a [f64],
    y: &'a [f64],
    weights: Option<&[f64]>,
    model: &BandModel,
) -> Result<Compiled<'a>, BandFitError> {
    let x_min = x.iter().copied().fold(f64::INFINITY, f64::min);
    let x_max = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let span = (x_max - x_min).max(f64::MIN_POSITIVE);
    let min_fwhm = data_spacing(x).max(1e-4 * span);
    let (mut params, band_start) = band_params(model, [x_min, x_max], min_fwhm)?;
    let baseline_start = params.len();
    for (name, value, lo, hi) in baseline_params(&model.baseline, x, y) {
        push(&mut params, format!("baseline.{name}"), value, lo, hi);
    }
    let tied = tie_targets(model, &band_start, &params)?;
    let fixed = fixed_params(model, &band_start, params.len())?;
    let (free_count, free_owner) = link_free(&mut params, &tied, &fixed);
    let sqrt_w = match weights {
        Some(w) => w.iter().map(|v| v.sqrt()).collect(),
        None => vec![1.0; x.len()],
    };
    Ok(Compiled {
        x,
        y,
        sqrt_w,
        shapes: model.bands.iter().map(|b| b.shape).collect(),
        band_start,
        baseline: model.baseline,
        baseline_start,
        params,
        free_count,
        free_owner,
        x_mid: 0.5 * (x_min + x_max),
        x_half: 0.5 * span,
        x_max,
    })
}

/// Appends one parameter, free and untied so far.
fn push(params: &mut Vec<ParamDef>, name: String, value: f64, lower: f64, upper: f64) {
    params.push(ParamDef {
        name,
        value,
        lower,
        upper,
        source: None,
        offset: 0.0,
    });
}

/// Centre, width, height (and the shape's extra) of every band with their
/// bounds; and where each band's parameters start.
///
/// A width may not fall below `min_fwhm`, the data spacing: a band narrower
/// than the distance between points is not resolved (it fits one point).
fn band_params(
    model: &BandModel,
    [x_min, x_max]: [f64; 2],
    min_fwhm: f64,
) -> Result<(Vec<ParamDef>, Vec<usize>), BandFitError> {
    let inf = f64::INFINITY;
    let span = (x_max - x_min).max(f64::MIN_POSITIVE);
    let mut params: Vec<ParamDef> = Vec::new();
    let mut band_start = Vec::new();
    for (b, spec) in model.bands.iter().enumerate() {
        if !(spec.centre >= x_min && spec.centre <= x_max) {
            return Err(BandFitError::BandOutsideRange {
                band: b,
                centre: spec.centre,
            });
        }
        if !(spec.fwhm.is_finite() && spec.fwhm > 0.0 && spec.height.is_finite()) {
            return Err(BandFitError::BadStart(format!(
                "band {} needs a positive width and a finite height",
                b + 1
            )));
        }
        band_start.push(params.len());
        let n = b + 1;
        push(
            &mut params,
            format!("band{n}.centre"),
            spec.centre,
            x_min - 0.1 * span,
            x_max + 0.1 * span,
        );
        push(
            &mut params,
            format!("band{n}.fwhm"),
            spec.fwhm,
            min_fwhm.min(3.0 * span),
            3.0 * span,
        );
        push(
            &mut params,
            format!("band{n}.height"),
            spec.height.max(0.0),
            0.0,
            inf,
        );
        if spec.shape.has_extra() {
            let extra = spec
                .extra
                .unwrap_or_else(|| spec.shape.default_extra(spec.fwhm));
            let (lo, hi) = match spec.shape {
                Shape::PseudoVoigt => (0.0, 1.0),
                Shape::Voigt => (1e-4 * span, 3.0 * span),
                _ => (-20.0, 20.0),
            };
            if !extra.is_finite() {
                return Err(BandFitError::BadStart(format!(
                    "band {}: the extra shape parameter is not finite",
                    b + 1
                )));
            }
            push(
                &mut params,
                format!("band{n}.{}", spec.shape.extra_name().unwrap_or("extra")),
                extra.clamp(lo, hi),
                lo,
                hi,
            );
        }
    }
    Ok((params, band_start))
}

/// A tie of one parameter: (target parameter, factor, offset), value = factor·target + offset.
type TieLink = (usize, f64, f64);

/// For each parameter, the link it is tied by, if any.
fn tie_targets(
    model: &BandModel,
    band_start: &[usize],
    params: &[ParamDef],
) -> Result<Vec<Option<TieLink>>, BandFitError> {
    let mut tied: Vec<Option<TieLink>> = vec![None; params.len()];
    for tie in &model.ties {
        let (band, to, slot, factor, offset) = match *tie {
            Tie::EqualFwhm { band, to } => (band, to, 1, 1.0, 0.0),
            Tie::Spacing { band, to, spacing } => (band, to, 0, 1.0, spacing),
            Tie::HeightRatio { band, to, ratio } => (band, to, 2, ratio, 0.0),
        };
        let (Some(&sb), Some(&st)) = (band_start.get(band), band_start.get(to)) else {
            return Err(BandFitError::BadTie(format!(
                "band {} or {} does not exist",
                band + 1,
                to + 1
            )));
        };
        if band == to || !factor.is_finite() || !offset.is_finite() {
            return Err(BandFitError::BadTie(
                "a band cannot be tied to itself, and factors must be finite".into(),
            ));
        }
        tied[sb + slot] = Some((st + slot, factor, offset));
    }
    for (i, t) in tied.iter().enumerate() {
        if let Some((target, _, _)) = t {
            if tied[*target].is_some() {
                return Err(BandFitError::BadTie(format!(
                    "{} is tied to a tied parameter",
                    params[i].name
                )));
            }
        }
    }
    Ok(tied)
}

/// Which parameters the user fixed.
fn fixed_params(
    model: &BandModel,
    band_start: &[usize],
    count: usize,
) -> Result<Vec<bool>, BandFitError> {
    let mut fixed = vec![false; count];
    for (b, spec) in model.bands.iter().enumerate() {
        for name in &spec.fixed {
            let slot = match name.as_str() {
                "centre" | "center" => 0,
                "fwhm" => 1,
                "height" => 2,
                "extra" if spec.shape.has_extra() => 3,
                other => {
                    return Err(BandFitError::BadStart(format!(
                        "band {}: cannot fix '{other}'",
                        b + 1
                    )))
                }
            };
            fixed[band_start[b] + slot] = true;
        }
    }
    Ok(fixed)
}

/// Gives every free parameter its slot in q and every tied one its target's
/// slot (factor and offset included); returns the free count and owners.
fn link_free(
    params: &mut [ParamDef],
    tied: &[Option<TieLink>],
    fixed: &[bool],
) -> (usize, Vec<usize>) {
    let mut free_owner = Vec::new();
    for i in 0..params.len() {
        if tied[i].is_none() && !fixed[i] {
            params[i].source = Some((free_owner.len(), 1.0));
            free_owner.push(i);
        }
    }
    for i in 0..params.len() {
        if let Some((target, factor, offset)) = tied[i] {
            let (tv, ts, to) = (
                params[target].value,
                params[target].source,
                params[target].offset,
            );
            match ts {
                Some((k, f)) => {
                    params[i].source = Some((k, factor * f));
                    params[i].offset = factor * to + offset;
                }
                None => params[i].value = factor * tv + offset,
            }
        }
    }
    (free_owner.len(), free_owner)
}

/// Bounds and start of the free parameters q, from the parameters they drive.
fn free_bounds(c: &Compiled) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut lower = vec![f64::NEG_INFINITY; c.free_count];
    let mut upper = vec![f64::INFINITY; c.free_count];
    let mut start = vec![0.0; c.free_count];
    for d in &c.params {
        if let Some((k, f)) = d.source {
            let (a, b) = ((d.lower - d.offset) / f, (d.upper - d.offset) / f);
            let (lo, hi) = if f > 0.0 { (a, b) } else { (b, a) };
            lower[k] = lower[k].max(lo);
            upper[k] = upper[k].min(hi);
        }
    }
    for (k, &owner) in c.free_owner.iter().enumerate() {
        start[k] = c.params[owner].value;
    }
    for k in 0..c.free_count {
        if lower[k] > upper[k] {
            upper[k] = lower[k];
        }
        start[k] = start[k].clamp(lower[k], upper[k]);
    }
    (lower, upper, start)
}

/// Fits `model` to (x, y); x in cm⁻¹. `weights` multiply the squared residuals.
pub fn fit(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    model: &BandModel,
    opts: &FitOptions,
    progress: &mut dyn FnMut(Progress) -> bool,
) -> Result<BandFit, BandFitError> {
    validate(x, y, weights)?;
    let compiled = compile(x, y, weights, model)?;
    let (lower, upper, start) = free_bounds(&compiled);
    let n = compiled.free_count;
    if x.len() <= n {
        return Err(BandFitError::TooFewPoints {
            points: x.len(),
            parameters: n,
        });
    }
    let lm_opts = lm::LmOptions {
        max_iterations: opts.max_iterations,
        lower,
        upper,
        ..lm::LmOptions::default()
    };
    let report = lm::solve(&compiled, &start, &lm_opts, progress).map_err(BandFitError::Solver)?;
    Ok(report_fit(&compiled, &report, opts))
}

/// Turns the solver report into per-band results, statistics and warnings.
fn report_fit(c: &Compiled, report: &lm::LmReport, opts: &FitOptions) -> BandFit {
    let m = c.x.len();
    let n = c.free_count;
    let mut warnings = Vec::new();
    let u = Uncertainty {
        c,
        report,
        cov: fit_covariance(c, report, opts, &mut warnings),
        p: c.expand(&report.x),
    };
    let (p, cov) = (&u.p, &u.cov);
    if !report.stop.was_successful() {
        warnings.push(format!("the fit did not converge: {}", report.stop));
    }
    let bands: Vec<BandResult> = c
        .shapes
        .iter()
        .zip(&c.band_start)
        .map(|(&shape, &s)| band_result(&u, shape, s, opts, &mut warnings))
        .collect();
    let coefficients = (c.baseline_start..p.len())
        .map(|i| Coefficient {
            name: c.params[i].name.trim_start_matches("baseline.").to_string(),
            value: p[i],
            sigma: u.sigma_of(i),
        })
        .collect();
    let g = stats::goodness(report.chi2, m, n, weighted_deviation(c));
    let correlation = cov
        .as_ref()
        .map(super::super::stats::Covariance::correlation)
        .unwrap_or_default();
    let free_parameters = free_names(c);
    correlation_warnings(&correlation, &free_parameters, &mut warnings);
    sampling_warning(c, &bands, &mut warnings);
    BandFit {
        bands,
        baseline: BaselineResult {
            model: c.baseline,
            coefficients,
            x_mid: c.x_mid,
            x_half: c.x_half,
            x_max: c.x_max,
        },
        statistics: Statistics {
            chi2: g.chi2,
            reduced_chi2: g.reduced_chi2,
            r2: g.r2,
            aic: g.aic,
            bic: g.bic,
            points: m,
            parameters: n,
            evaluations: report.evaluations,
            iterations: report.iterations,
            stopped: report.stop,
            condition: cov.as_ref().map(|c| c.condition),
        },
        free_parameters,
        correlation,
        warnings,
    }
}

/// The covariance of the free parameters (parameters on a bound left out),
/// with a warning when it cannot be computed or is rank-deficient.
fn fit_covariance(
    c: &Compiled,
    report: &lm::LmReport,
    opts: &FitOptions,
    warnings: &mut Vec<String>,
) -> Option<Covariance> {
    let (m, n) = (c.x.len(), c.free_count);
    let include: Vec<bool> = report.at_bound.iter().map(|b| !b).collect();
    let scale = if opts.absolute_sigma {
        stats::ErrorScale::Absolute
    } else {
        stats::ErrorScale::ReducedChi2 {
            chi2: report.chi2,
            points: m,
            parameters: n,
        }
    };
    let cov = stats::covariance(&report.jacobian, m, n, &include, scale);
    if cov.is_none() {
        warnings
            .push("the covariance matrix could not be computed; no uncertainties are given".into());
    }
    if cov.as_ref().is_some_and(|c| c.rank_deficient) {
        warnings.push(
            "some parameters are redundant (singular Jacobian); their uncertainties are not given"
                .into(),
        );
    }
    cov
}

/// The expanded parameters p with what is needed to give each its σ.
struct Uncertainty<'a> {
    c: &'a Compiled<'a>,
    report: &'a lm::LmReport,
    cov: Option<Covariance>,
    p: Vec<f64>,
}

impl Uncertainty<'_> {
    /// A gradient in p carried to the free parameters q.
    fn grad_q(&self, gp: &[f64]) -> Vec<f64> {
        let mut g = vec![0.0; self.c.free_count];
        for (d, v) in self.c.params.iter().zip(gp) {
            if let Some((k, f)) = d.source {
                g[k] += v * f;
            }
        }
        g
    }

    /// σ of model parameter i; None when it is fixed or drives a parameter on a bound.
    fn sigma_of(&self, i: usize) -> Option<f64> {
        let (k, _) = self.c.params[i].source?;
        if self.report.at_bound.get(k).copied().unwrap_or(true) {
            return None;
        }
        let mut gp = vec![0.0; self.p.len()];
        gp[i] = 1.0;
        self.cov.as_ref()?.propagate(&self.grad_q(&gp))
    }

    fn est(&self, i: usize) -> Estimate {
        match self.sigma_of(i) {
            Some(s) => Estimate::new(self.p[i], s),
            None => Estimate::exact(self.p[i]),
        }
    }
}

/// One band's result: parameters, area (σ by central differences of the
/// analytic area), position in nm, oscillator strength and class.
fn band_result(
    u: &Uncertainty,
    shape: Shape,
    s: usize,
    opts: &FitOptions,
    warnings: &mut Vec<String>,
) -> BandResult {
    let p = &u.p;
    let extra = if shape.has_extra() { p[s + 3] } else { 0.0 };
    let area = shapes::area(shape, p[s + 1], p[s + 2], extra);
    let mut gp = vec![0.0; p.len()];
    for (slot, idx) in [(1usize, s + 1), (2, s + 2), (3, s + 3)] {
        if slot == 3 && !shape.has_extra() {
            continue;
        }
        let mut q = [p[s + 1], p[s + 2], extra];
        let h = 1e-6 * q[slot - 1].abs().max(1e-9);
        q[slot - 1] += h;
        let up = shapes::area(shape, q[0], q[1], q[2]);
        q[slot - 1] -= 2.0 * h;
        let down = shapes::area(shape, q[0], q[1], q[2]);
        gp[idx] = (up - down) / (2.0 * h);
    }
    let area_sigma = u.cov.as_ref().and_then(|cv| {
        let touches_bound = u.c.params[s..s + 3]
            .iter()
            .any(|d| d.source.is_some_and(|(k, _)| u.report.at_bound[k]));
        if touches_bound {
            None
        } else {
            cv.propagate(&u.grad_q(&gp))
        }
    });
    let area_est = area_sigma.map_or(Estimate::exact(area), |sg| Estimate::new(area, sg));
    let centre = u.est(s);
    let centre_nm = if centre.value > 0.0 {
        let nm = 1e7 / centre.value;
        centre.sigma.map_or(Estimate::exact(nm), |sg| {
            Estimate::new(nm, nm * sg / centre.value)
        })
    } else {
        Estimate::exact(0.0)
    };
    let at_bound: Vec<String> = u.c.params[s..s + if shape.has_extra() { 4 } else { 3 }]
        .iter()
        .filter(|d| d.source.is_some_and(|(k, _)| u.report.at_bound[k]))
        .map(|d| d.name.clone())
        .collect();
    for name in &at_bound {
        warnings.push(format!("{name} ended on its bound; it has no uncertainty"));
    }
    let height = p[s + 2];
    let (oscillator_strength, class) = if opts.molar_absorptivity {
        let fval = OSCILLATOR_CONSTANT * area;
        let f_est = area_est.sigma.map_or(Estimate::exact(fval), |sg| {
            Estimate::new(fval, OSCILLATOR_CONSTANT * sg)
        });
        (Some(f_est), Some(band_class(height).to_string()))
    } else {
        (None, None)
    };
    BandResult {
        shape,
        centre,
        centre_nm,
        fwhm: u.est(s + 1),
        height: u.est(s + 2),
        extra: shape.has_extra().then(|| u.est(s + 3)),
        area: area_est,
        maximum: (shape == Shape::SkewGaussian)
            .then(|| shapes::skew_maximum(p[s], p[s + 1], p[s + 2], extra).0),
        oscillator_strength,
        class,
        at_bound,
        left_out: None,
    }
}

/// Σ w (y − ȳ)² with the weighted mean ȳ (for R²).
fn weighted_deviation(c: &Compiled) -> f64 {
    let wsum: f64 = c.sqrt_w.iter().map(|w| w * w).sum();
    let ybar = if wsum > 0.0 {
        c.y.iter()
            .zip(&c.sqrt_w)
            .map(|(y, w)| w * w * y)
            .sum::<f64>()
            / wsum
    } else {
        0.0
    };
    c.y.iter()
        .zip(&c.sqrt_w)
        .map(|(y, w)| w * w * (y - ybar).powi(2))
        .sum()
}

/// The name of each free parameter: the first parameter it drives unscaled.
fn free_names(c: &Compiled) -> Vec<String> {
    let mut names = vec![String::new(); c.free_count];
    for d in &c.params {
        if let Some((k, f)) = d.source {
            if f.to_bits() == 1f64.to_bits() && d.offset == 0.0 && names[k].is_empty() {
                names[k].clone_from(&d.name);
            }
        }
    }
    names
}

/// A warning for each pair of free parameters with |ρ| > 0.95.
fn correlation_warnings(correlation: &[Vec<f64>], names: &[String], warnings: &mut Vec<String>) {
    for i in 0..correlation.len() {
        for j in 0..i {
            if correlation[i][j].abs() > 0.95 {
                warnings.push(format!(
                    "{} and {} are strongly correlated (ρ = {:.3})",
                    names[i], names[j], correlation[i][j]
                ));
            }
        }
    }
}

/// A warning when the narrowest band spans more than ten points.
fn sampling_warning(c: &Compiled, bands: &[BandResult], warnings: &mut Vec<String>) {
    let m = c.x.len();
    let narrowest = bands
        .iter()
        .map(|b| b.fwhm.value)
        .fold(f64::INFINITY, f64::min);
    let spacing = 2.0 * c.x_half / (m.max(2) - 1) as f64;
    if narrowest.is_finite() && narrowest / spacing > 10.0 {
        warnings.push(format!(
            "about {:.0} points per band width: neighbouring residuals are correlated, so the error bars are optimistic",
            narrowest / spacing
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bands::{BandSpec, BaselineModel};
    use lm::LeastSquares;

    /// Issue 14: the free slot of a width tie belongs to the target band, so
    /// the fit starts from the target's FWHM, not from the tied band's own.
    #[test]
    fn a_width_tie_starts_from_its_targets_width() {
        let x: Vec<f64> = (0..40).map(|i| 10_000.0 + 500.0 * f64::from(i)).collect();
        let y = vec![1.0; x.len()];
        let band = |centre: f64, fwhm: f64| BandSpec {
            shape: Shape::Gaussian,
            centre,
            fwhm,
            height: 1.0,
            extra: None,
            fixed: Vec::new(),
        };
        let model = BandModel {
            bands: vec![band(15_000.0, 2_000.0), band(22_000.0, 3_500.0)],
            baseline: BaselineModel::None,
            ties: vec![Tie::EqualFwhm { band: 1, to: 0 }],
        };
        let c = compile(&x, &y, None, &model).unwrap();
        let (_, _, start) = free_bounds(&c);
        let (k, _) = c.params[c.band_start[0] + 1].source.unwrap();
        assert!((start[k] - 2_000.0).abs() < 1e-9, "started at {}", start[k]);
    }

    /// The tied, fixed and baseline Jacobian (J·A) against central differences.
    #[test]
    fn compiled_jacobian_matches_finite_differences() {
        let x: Vec<f64> = (0..60).map(|i| 10_000.0 + 300.0 * f64::from(i)).collect();
        let y: Vec<f64> = x.iter().map(|v| (v / 4000.0).sin() + 2.0).collect();
        for baseline in [
            BaselineModel::Polynomial(3),
            BaselineModel::Scattering,
            BaselineModel::ChargeTransferTail,
        ] {
            let band = |shape, c: f64, extra| BandSpec {
                shape,
                centre: c,
                fwhm: 3_000.0,
                height: 0.7,
                extra,
                fixed: Vec::new(),
            };
            let model = BandModel {
                bands: vec![
                    band(Shape::Voigt, 14_000.0, Some(800.0)),
                    band(Shape::SkewGaussian, 19_000.0, Some(1.5)),
                    band(Shape::PseudoVoigt, 24_000.0, Some(0.3)),
                ],
                baseline,
                ties: vec![
                    Tie::Spacing {
                        band: 2,
                        to: 1,
                        spacing: 5_000.0,
                    },
                    Tie::HeightRatio {
                        band: 1,
                        to: 0,
                        ratio: 0.8,
                    },
                ],
            };
            let c = compile(&x, &y, None, &model).unwrap();
            let (_, _, q) = free_bounds(&c);
            let (m, n) = (x.len(), c.free_count);
            let mut r = vec![0.0; m];
            let mut jac = vec![0.0; m * n];
            assert!(c.evaluate(&q, &mut r, Some(&mut jac)));
            for k in 0..n {
                let h = 1e-6 * q[k].abs().max(1e-3);
                let (mut up, mut down) = (q.clone(), q.clone());
                up[k] += h;
                down[k] -= h;
                let (mut ru, mut rd) = (vec![0.0; m], vec![0.0; m]);
                c.evaluate(&up, &mut ru, None);
                c.evaluate(&down, &mut rd, None);
                for i in 0..m {
                    let fd = (ru[i] - rd[i]) / (2.0 * h);
                    let an = jac[k * m + i];
                    assert!(
                        (fd - an).abs() <= 1e-5 * (1.0 + an.abs()),
                        "{baseline:?} q{k} point {i}: {an} vs {fd}"
                    );
                }
            }
        }
    }
}
