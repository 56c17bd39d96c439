//! Raw spectrum (file units, file order) → [`Spectrum`] on the internal axis.
//!
//! Order of work: decide the x unit and y quantity (option, then label, then a
//! range-based guess with a warning); convert x to vacuum cm⁻¹ and y to
//! absorbance (T, %T) or ε (log ε); sort ascending; average duplicate x;
//! flag saturation on absorbance; divide by c·l when both are given.

use super::saturation;
use super::units::{air_to_vacuum_nm, Quantity, XUnit, YLabel, CIDDOR_VALID_NM};
use super::{ImportError, ImportOptions, RawSpectrum, Spectrum, Warning};

#[expect(
    clippy::too_many_lines,
    reason = "over the ~100-line limit; to be split into named steps (issue 15)"
)]
pub(super) fn assemble(raw: RawSpectrum, opts: &ImportOptions) -> Result<Spectrum, ImportError> {
    let mut warnings = raw.warnings;
    let mut metadata = raw.metadata;
    let x_unit = x_unit(
        &raw.x,
        raw.x_label.as_deref(),
        opts,
        &raw.name,
        &mut warnings,
    )?;
    let y_label = y_label(&raw.y, raw.y_label.as_deref(), opts, &mut warnings);
    metadata.insert("x unit in file".into(), x_unit.symbol().into());
    metadata.insert(
        "y quantity in file".into(),
        match y_label {
            YLabel::Quantity(q) => q.describe().into(),
            YLabel::LogMolarAbsorptivity => "log₁₀ ε".into(),
        },
    );

    if opts.air_to_vacuum && !x_unit.is_wavelength() {
        warnings.push(Warning::new(
            None,
            format!("air-to-vacuum correction applies to wavelengths only; the {} axis was left as it is", x_unit.symbol()),
        ));
    }
    let correct_air = opts.air_to_vacuum && x_unit.is_wavelength();
    let nm_per_unit = if x_unit == XUnit::Micrometre {
        1e3
    } else {
        1.0
    };

    let mut points: Vec<(f64, f64, usize)> = Vec::with_capacity(raw.x.len());
    let (mut bad_x, mut first_bad_x) = (0usize, None);
    let (mut opaque, mut first_opaque) = (0usize, None);
    let mut outside_ciddor = false;
    let mut opaque_ranges = Vec::new();
    for (i, (&x, &y)) in raw.x.iter().zip(&raw.y).enumerate() {
        let line = raw.lines.get(i).copied().unwrap_or(0);
        let wavenumber = if correct_air && x > 0.0 {
            let nm = x * nm_per_unit;
            outside_ciddor |= !(CIDDOR_VALID_NM[0]..=CIDDOR_VALID_NM[1]).contains(&nm);
            XUnit::Nanometre.to_wavenumber(air_to_vacuum_nm(nm))
        } else {
            x_unit.to_wavenumber(x)
        };
        let Some(wavenumber) = wavenumber.filter(|w| w.is_finite()) else {
            bad_x += 1;
            first_bad_x.get_or_insert(line);
            continue;
        };
        let value = match y_label {
            YLabel::LogMolarAbsorptivity => Some(10f64.powf(y)).filter(|v| v.is_finite()),
            YLabel::Quantity(q @ (Quantity::Transmittance | Quantity::PercentTransmittance)) => {
                q.to_absorbance(y)
            }
            YLabel::Quantity(_) => Some(y),
        };
        if let Some(v) = value {
            points.push((wavenumber, v, line));
        } else {
            opaque += 1;
            first_opaque.get_or_insert(line);
            opaque_ranges.push([wavenumber, wavenumber]);
        }
    }
    if bad_x > 0 {
        warnings.push(Warning::new(
            first_bad_x,
            format!(
                "{bad_x} points with an x value that is zero or negative in {} were skipped",
                x_unit.symbol()
            ),
        ));
    }
    if opaque > 0 {
        warnings.push(Warning::new(
            first_opaque,
            format!("{opaque} points with transmittance zero or below (no finite absorbance) were skipped and flagged as saturated"),
        ));
    }
    if outside_ciddor {
        warnings.push(Warning::new(
            None,
            "some wavelengths lie outside 230–1690 nm, where the Ciddor (1996) air index is stated valid",
        ));
    }

    points.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (wavenumber, mut values) = average_duplicates(&points, &mut warnings);
    if wavenumber.len() < 2 {
        return Err(ImportError::NoData);
    }

    let quantity = match y_label {
        YLabel::LogMolarAbsorptivity => Quantity::MolarAbsorptivity,
        YLabel::Quantity(Quantity::Transmittance | Quantity::PercentTransmittance) => {
            Quantity::Absorbance
        }
        YLabel::Quantity(q) => q,
    };
    let mut saturated = opaque_ranges;
    if quantity == Quantity::Absorbance {
        saturated.extend(saturation::detect(&wavenumber, &values));
    }
    let saturated = saturation::merge(saturated);
    if !saturated.is_empty() {
        warnings.push(Warning::new(
            None,
            format!("{} saturated range(s) flagged (absorbance at the detector ceiling or clipped flat)", saturated.len()),
        ));
    }

    let quantity = match (opts.concentration_mol_l, opts.path_length_cm) {
        (None, None) => quantity,
        (Some(c), Some(l)) => {
            if !(c > 0.0 && c.is_finite() && l > 0.0 && l.is_finite()) {
                return Err(ImportError::BadOption(format!(
                    "concentration ({c} mol/L) and path length ({l} cm) must both be positive"
                )));
            }
            metadata.insert("concentration (mol/L)".into(), c.to_string());
            metadata.insert("path length (cm)".into(), l.to_string());
            if quantity == Quantity::Absorbance {
                let cl = c * l;
                for v in &mut values {
                    *v /= cl;
                }
                Quantity::MolarAbsorptivity
            } else {
                warnings.push(Warning::new(
                    None,
                    format!("concentration and path length were ignored: the values are {}, not absorbance", quantity.describe()),
                ));
                quantity
            }
        }
        _ => {
            warnings.push(Warning::new(
                None,
                "ε needs both the concentration and the path length; only one was given, so the values stay absorbance",
            ));
            quantity
        }
    };

    Ok(Spectrum {
        name: raw.name,
        wavenumber,
        values,
        quantity,
        x_unit_read: x_unit,
        saturated,
        metadata,
        warnings,
    })
}

/// The x unit: the option, else the label, else a guess from the range.
fn x_unit(
    x: &[f64],
    label: Option<&str>,
    opts: &ImportOptions,
    name: &str,
    warnings: &mut Vec<Warning>,
) -> Result<XUnit, ImportError> {
    if let Some(unit) = opts.x_unit.or_else(|| label.and_then(XUnit::detect)) {
        return Ok(unit);
    }
    let (lo, hi) = x
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let guess = if lo >= 150.0 && hi <= 3500.0 {
        Some(XUnit::Nanometre)
    } else if lo >= 3000.0 && hi <= 100_000.0 {
        Some(XUnit::Wavenumber)
    } else {
        None
    };
    match guess {
        Some(unit) => {
            warnings.push(Warning::new(
                None,
                format!("the file does not name the x unit; {lo}–{hi} was taken as {} (use --x-unit to change)", unit.symbol()),
            ));
            Ok(unit)
        }
        None => Err(ImportError::UnknownXUnit(format!(
            "'{name}': the file does not name the x unit and the range {lo}–{hi} fits none clearly; give it with --x-unit nm, um, cm-1 or eV"
        ))),
    }
}

/// The y quantity: the option, else the label, else absorbance or arbitrary by range.
fn y_label(
    y: &[f64],
    label: Option<&str>,
    opts: &ImportOptions,
    warnings: &mut Vec<Warning>,
) -> YLabel {
    let max = y.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if let Some(q) = opts.y_quantity {
        return YLabel::Quantity(q);
    }
    match label.and_then(Quantity::detect) {
        Some(YLabel::Quantity(Quantity::Transmittance)) if max > 1.5 => {
            warnings.push(Warning::new(
                None,
                format!("transmittance up to {max} cannot be on a 0–1 scale; read as percent"),
            ));
            YLabel::Quantity(Quantity::PercentTransmittance)
        }
        Some(YLabel::Quantity(Quantity::PercentTransmittance)) if max <= 1.0 => {
            // Some JCAMP writers label a 0–1 transmittance as %T (research notes, SBO.jdx).
            warnings.push(Warning::new(
                None,
                format!("the file says %T but values stay at or below {max}; read as transmittance on a 0–1 scale"),
            ));
            YLabel::Quantity(Quantity::Transmittance)
        }
        Some(found) => found,
        None if max <= 10.0 => {
            warnings.push(Warning::new(
                None,
                "the file does not name the y quantity; read as absorbance (use --y-quantity to change)",
            ));
            YLabel::Quantity(Quantity::Absorbance)
        }
        None => {
            warnings.push(Warning::new(
                None,
                format!("the file does not name the y quantity and values reach {max}; read as arbitrary units"),
            ));
            YLabel::Quantity(Quantity::Arbitrary)
        }
    }
}

/// Averages points with equal wavenumber (input sorted), with one warning.
fn average_duplicates(
    points: &[(f64, f64, usize)],
    warnings: &mut Vec<Warning>,
) -> (Vec<f64>, Vec<f64>) {
    let mut xs = Vec::with_capacity(points.len());
    let mut ys = Vec::with_capacity(points.len());
    let (mut merged, mut first_line) = (0usize, None);
    let mut i = 0;
    while i < points.len() {
        let (x, _, line) = points[i];
        let mut j = i;
        let mut sum = 0.0;
        while j < points.len() && points[j].0.total_cmp(&x).is_eq() {
            sum += points[j].1;
            j += 1;
        }
        if j - i > 1 {
            merged += j - i - 1;
            let min_line = points[i..j].iter().map(|p| p.2).max().unwrap_or(line);
            first_line = Some(first_line.map_or(min_line, |l: usize| l.min(min_line)));
        }
        xs.push(x);
        ys.push(sum / (j - i) as f64);
        i = j;
    }
    if merged > 0 {
        warnings.push(Warning::new(
            first_line,
            format!("{merged} repeated x values were averaged with the point(s) at the same x (the first repeat is on this line)"),
        ));
    }
    (xs, ys)
}
