//! The checks of one document that its types cannot express: finite
//! numbers, equal lengths, an ascending axis, a band model that fits inside
//! its spectrum, choices that name states of the ion.

use super::document::{Document, SampleData};
use super::load::range;
use super::DocumentError;
use crate::bands::{BandModel, Tie};
use crate::lf_fit::names_state;
use crate::preprocess::{BaselineMethod, Step};

/// Checks one document; `at` is its path in the project ("samples[2]").
pub fn document(d: &Document, at: &str) -> Result<(), DocumentError> {
    let span = match &d.sample.data {
        Some(data) => Some(data_span(data, &format!("{at}.sample.data"))?),
        None => None,
    };
    for (name, v) in [
        ("concentration", d.sample.concentration),
        ("path_length", d.sample.path_length),
    ] {
        if v.is_some_and(|v| !v.is_finite() || v <= 0.0) {
            return Err(DocumentError::field(
                format!("{at}.sample.{name}"),
                "should be a positive number",
            ));
        }
    }
    for (k, step) in d.steps.iter().enumerate() {
        step_numbers(step, &format!("{at}.steps[{k}]"))?;
    }
    let bands = format!("{at}.bands");
    if let Some(r) = &d.bands.range {
        range(r, &format!("{bands}.range"))?;
    }
    if let Some(m) = &d.bands.model {
        model(m, span, &format!("{bands}.model"))?;
    }
    if let Some(lf) = &d.ligand_field {
        let at = format!("{at}.ligand_field");
        if lf.c_over_b.is_some_and(|g| !g.is_finite()) {
            return Err(DocumentError::field(
                format!("{at}.c_over_b"),
                "is not a finite number",
            ));
        }
        let n = match &lf.ion {
            Some(ion) => {
                crate::ions::ion(ion)
                    .ok_or_else(|| {
                        DocumentError::field(
                            format!("{at}.ion"),
                            format!("'{ion}' is not an ion ddlens knows"),
                        )
                    })?
                    .d_electrons
            }
            None => lf.n,
        };
        for (k, c) in lf.choices.iter().enumerate() {
            let path = format!("{at}.choices[{k}]");
            if !c.energy.is_finite() || c.energy <= 0.0 {
                return Err(DocumentError::field(
                    format!("{path}.energy"),
                    "should be a positive number of cm⁻¹",
                ));
            }
            if let Some(state) = c.assign.as_deref().filter(|_| !c.not_dd) {
                if !names_state(n, lf.geometry, state) {
                    return Err(DocumentError::field(
                        format!("{path}.assign"),
                        format!("'{state}' is no state of d{n} {}", lf.geometry),
                    ));
                }
            }
        }
    }
    Ok(())
}

/// The wavenumber span of sample data, after checking it is whole.
fn data_span(data: &SampleData, at: &str) -> Result<[f64; 2], DocumentError> {
    let (x, y) = (&data.wavenumber, &data.values);
    if x.len() != y.len() {
        return Err(DocumentError::field(
            format!("{at}.values"),
            format!("holds {} numbers but wavenumber holds {}", y.len(), x.len()),
        ));
    }
    if x.len() > crate::spectrum::MAX_POINTS {
        return Err(DocumentError::field(
            format!("{at}.wavenumber"),
            format!(
                "holds {} points, more than the {} a spectrum may hold",
                x.len(),
                crate::spectrum::MAX_POINTS
            ),
        ));
    }
    if x.len() < 2 {
        return Err(DocumentError::field(
            format!("{at}.wavenumber"),
            "holds fewer than two points",
        ));
    }
    if let Some(j) = x.windows(2).position(|w| w[1] <= w[0]) {
        return Err(DocumentError::field(
            format!("{at}.wavenumber[{}]", j + 1),
            "does not rise above the point before it (the axis must be ascending)",
        ));
    }
    for (k, r) in data.saturated.iter().enumerate() {
        range(r, &format!("{at}.saturated[{k}]"))?;
    }
    Ok([x[0], x[x.len() - 1]])
}

/// The numbers a cleaning step carries are finite.
fn step_numbers(step: &Step, at: &str) -> Result<(), DocumentError> {
    let numbers: Vec<f64> = match step {
        Step::Crop { low, high } => vec![*low, *high],
        Step::Smooth { .. } => Vec::new(),
        Step::SubtractBaseline { method } => match method {
            BaselineMethod::Polynomial { regions, .. } => {
                regions.iter().flatten().copied().collect()
            }
            BaselineMethod::Asls { lambda, p } => vec![*lambda, *p],
            BaselineMethod::Arpls { lambda } => vec![*lambda],
            BaselineMethod::RubberBand => Vec::new(),
            BaselineMethod::Scattering { exponent } => exponent.iter().copied().collect(),
        },
    };
    if numbers.iter().any(|v| !v.is_finite()) {
        return Err(DocumentError::field(
            at,
            "holds a number that is not finite",
        ));
    }
    Ok(())
}

/// A band model whose numbers are finite, whose ties name its bands and whose
/// bands lie inside the spectrum.
fn model(m: &BandModel, span: Option<[f64; 2]>, at: &str) -> Result<(), DocumentError> {
    for (k, b) in m.bands.iter().enumerate() {
        let path = format!("{at}.bands[{k}]");
        for (name, v) in [("centre", b.centre), ("fwhm", b.fwhm), ("height", b.height)] {
            if !v.is_finite() {
                return Err(DocumentError::field(
                    format!("{path}.{name}"),
                    "is not a finite number",
                ));
            }
        }
        if b.fwhm <= 0.0 {
            return Err(DocumentError::field(
                format!("{path}.fwhm"),
                "should be a positive width",
            ));
        }
        if let Some([lo, hi]) = span {
            if b.centre < lo || b.centre > hi {
                return Err(DocumentError::field(
                    format!("{path}.centre"),
                    format!(
                        "{:.0} cm⁻¹ lies outside the spectrum ({lo:.0}–{hi:.0} cm⁻¹): the band model does not belong to this sample",
                        b.centre
                    ),
                ));
            }
        }
    }
    let n = m.bands.len();
    for (k, t) in m.ties.iter().enumerate() {
        let (band, to, value) = match t {
            Tie::EqualFwhm { band, to } => (*band, *to, 1.0),
            Tie::Spacing { band, to, spacing } => (*band, *to, *spacing),
            Tie::HeightRatio { band, to, ratio } => (*band, *to, *ratio),
        };
        if band >= n || to >= n || band == to || !value.is_finite() {
            return Err(DocumentError::field(
                format!("{at}.ties[{k}]"),
                format!(
                    "should tie two different bands of the {n} in the model, with a finite number"
                ),
            ));
        }
    }
    Ok(())
}
