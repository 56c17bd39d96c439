//! Raw spectrum (file units, file order) → [`Spectrum`] on the internal axis.
//!
//! Order of work: decide the x unit and y quantity (option, then label, then a
//! range-based guess with a warning); convert x to vacuum cm⁻¹ and y to
//! absorbance (T, %T) or ε (log ε); sort ascending; average duplicate x;
//! flag saturation on absorbance; divide by c·l when both are given.

use super::saturation;
use super::units::{air_to_vacuum_nm, Quantity, XUnit, YLabel, CIDDOR_VALID_NM};
use super::{ImportError, ImportOptions, RawSpectrum, Spectrum, Warning};
use super::{MAX_MAGNITUDE, WAVENUMBER_RANGE};

/// Points as (wavenumber, value, file line).
type Points = Vec<(f64, f64, usize)>;

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

    let (mut points, opaque_ranges) = convert_points(
        &raw.x,
        &raw.y,
        &raw.lines,
        x_unit,
        y_label,
        opts,
        &mut warnings,
    );
    points.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (mut wavenumber, mut values, mut lines) = average_duplicates(&points, &mut warnings);
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

    let quantity = divide_by_cl(
        quantity,
        opts,
        (&mut wavenumber, &mut values, &mut lines),
        &mut metadata,
        &mut warnings,
    )?;

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

/// With both a concentration and a path length, absorbance becomes ε = A/(c·l)
/// (Beer–Lambert), the points that leave the bounds are dropped, and the two
/// settings are noted in the metadata; with one of them only, a warning.
fn divide_by_cl(
    quantity: Quantity,
    opts: &ImportOptions,
    columns: (&mut Vec<f64>, &mut Vec<f64>, &mut Vec<usize>),
    metadata: &mut std::collections::BTreeMap<String, String>,
    warnings: &mut Vec<Warning>,
) -> Result<Quantity, ImportError> {
    let (wavenumber, values, lines) = columns;
    Ok(match (opts.concentration_mol_l, opts.path_length_cm) {
        (None, None) => quantity,
        (Some(c), Some(l)) => {
            if !(c > 0.0 && c.is_finite() && l > 0.0 && l.is_finite()) {
                return Err(ImportError::BadOption(format!(
                    "concentration ({c} mol/L) and path length ({l} cm) must both be positive"
                )));
            }
            metadata.insert("concentration (mol/L)".into(), c.to_string());
            metadata.insert("path length (cm)".into(), l.to_string());
            let cl = c * l;
            if !(cl > 0.0 && cl.is_finite()) {
                return Err(ImportError::BadOption(format!(
                    "concentration × path length ({c} mol/L × {l} cm) is not a usable positive number"
                )));
            }
            if quantity == Quantity::Absorbance {
                for v in values.iter_mut() {
                    *v /= cl;
                }
                drop_unbounded(wavenumber, values, lines, warnings);
                if wavenumber.len() < 2 {
                    return Err(ImportError::BadOption(format!(
                        "dividing by concentration × path length ({cl:e} mol L⁻¹ cm) leaves fewer than two finite points"
                    )));
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
    })
}

/// Converts each point to (vacuum wavenumber, absorbance or ε, file line),
/// dropping those that give no finite, bounded value (each class with one
/// warning naming its rows); also returns the opaque points as ranges to flag.
fn convert_points(
    x_values: &[f64],
    y_values: &[f64],
    lines: &[usize],
    x_unit: XUnit,
    y_label: YLabel,
    opts: &ImportOptions,
    warnings: &mut Vec<Warning>,
) -> (Points, Vec<[f64; 2]>) {
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

    let mut points: Vec<(f64, f64, usize)> = Vec::with_capacity(x_values.len());
    let (mut bad_x, mut bad_y, mut opaque) = (Vec::new(), Vec::new(), Vec::new());
    let mut outside_ciddor = false;
    let mut opaque_ranges = Vec::new();
    for (i, (&x, &y)) in x_values.iter().zip(y_values).enumerate() {
        let line = lines.get(i).copied().unwrap_or(0);
        let wavenumber = if correct_air && x > 0.0 {
            let nm = x * nm_per_unit;
            outside_ciddor |= !(CIDDOR_VALID_NM[0]..=CIDDOR_VALID_NM[1]).contains(&nm);
            XUnit::Nanometre.to_wavenumber(air_to_vacuum_nm(nm))
        } else {
            x_unit.to_wavenumber(x)
        };
        let Some(wavenumber) = wavenumber.filter(|&w| wavenumber_in_range(w)) else {
            bad_x.push(line);
            continue;
        };
        let value = match y_label {
            YLabel::LogMolarAbsorptivity => Some(10f64.powf(y)),
            YLabel::Quantity(q @ (Quantity::Transmittance | Quantity::PercentTransmittance)) => {
                q.to_absorbance(y)
            }
            YLabel::Quantity(_) => Some(y),
        };
        match value {
            Some(v) if bounded(v) => points.push((wavenumber, v, line)),
            Some(_) => bad_y.push(line),
            None => {
                opaque.push(line);
                opaque_ranges.push([wavenumber, wavenumber]);
            }
        }
    }
    if !bad_x.is_empty() {
        warnings.push(Warning::new(
            bad_x.first().copied(),
            format!(
                "{} points whose x in {} is zero, negative or gives a wavenumber outside {:e}–{:e} cm⁻¹ were skipped ({})",
                bad_x.len(),
                x_unit.symbol(),
                WAVENUMBER_RANGE[0],
                WAVENUMBER_RANGE[1],
                rows(&bad_x)
            ),
        ));
    }
    if !bad_y.is_empty() {
        warnings.push(Warning::new(
            bad_y.first().copied(),
            format!(
                "{} points whose value is not finite or beyond ±{MAX_MAGNITUDE:e} after conversion were skipped ({})",
                bad_y.len(),
                rows(&bad_y)
            ),
        ));
    }
    if !opaque.is_empty() {
        warnings.push(Warning::new(
            opaque.first().copied(),
            format!("{} points with transmittance zero or below (no finite absorbance) were skipped and flagged as saturated ({})", opaque.len(), rows(&opaque)),
        ));
    }
    if outside_ciddor {
        warnings.push(Warning::new(
            None,
            "some wavelengths lie outside 230–1690 nm, where the Ciddor (1996) air index is stated valid",
        ));
    }

    (points, opaque_ranges)
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

/// Is `w` a wavenumber the import keeps (finite, inside [`WAVENUMBER_RANGE`])?
fn wavenumber_in_range(w: f64) -> bool {
    (WAVENUMBER_RANGE[0]..=WAVENUMBER_RANGE[1]).contains(&w)
}

/// Is `v` an ordinate the import keeps (finite, |v| ≤ [`MAX_MAGNITUDE`])?
fn bounded(v: f64) -> bool {
    v.abs() <= MAX_MAGNITUDE
}

/// "line 4" or "lines 4, 9, 12 and 3 more": the file rows a warning is about.
fn rows(lines: &[usize]) -> String {
    const SHOWN: usize = 5;
    let listed: Vec<String> = lines.iter().take(SHOWN).map(ToString::to_string).collect();
    let more = lines.len().saturating_sub(SHOWN);
    let head = if lines.len() == 1 { "line" } else { "lines" };
    match more {
        0 => format!("{head} {}", listed.join(", ")),
        n => format!("{head} {} and {n} more", listed.join(", ")),
    }
}

/// Drops points whose value left the bounds (after a division), with a warning naming the rows.
fn drop_unbounded(
    wavenumber: &mut Vec<f64>,
    values: &mut Vec<f64>,
    lines: &mut Vec<usize>,
    warnings: &mut Vec<Warning>,
) {
    let bad: Vec<usize> = (0..values.len()).filter(|&i| !bounded(values[i])).collect();
    if bad.is_empty() {
        return;
    }
    let bad_lines: Vec<usize> = bad.iter().map(|&i| lines[i]).collect();
    let keep: Vec<bool> = values.iter().map(|&v| bounded(v)).collect();
    let mut k = keep.iter();
    wavenumber.retain(|_| *k.next().unwrap_or(&false));
    let mut k = keep.iter();
    values.retain(|_| *k.next().unwrap_or(&false));
    let mut k = keep.iter();
    lines.retain(|_| *k.next().unwrap_or(&false));
    warnings.push(Warning::new(
        bad_lines.first().copied(),
        format!(
            "{} points exceed ±{MAX_MAGNITUDE:e} after dividing by concentration × path length and were skipped ({})",
            bad.len(),
            rows(&bad_lines)
        ),
    ));
}

/// Averages points with equal wavenumber (input sorted) by a running mean, which
/// cannot overflow for finite inputs (1.7e308 and 1.7e308 average to 1.7e308);
/// one warning. Returns the axis, the values and each point's first file line.
fn average_duplicates(
    points: &[(f64, f64, usize)],
    warnings: &mut Vec<Warning>,
) -> (Vec<f64>, Vec<f64>, Vec<usize>) {
    let mut xs = Vec::with_capacity(points.len());
    let mut ys = Vec::with_capacity(points.len());
    let mut lines = Vec::with_capacity(points.len());
    let mut repeated = Vec::new();
    let mut i = 0;
    while i < points.len() {
        let (x, _, _) = points[i];
        let mut j = i;
        let mut mean = 0.0;
        while j < points.len() && points[j].0.total_cmp(&x).is_eq() {
            mean += (points[j].1 - mean) / (j - i + 1) as f64;
            j += 1;
        }
        let group = &points[i..j];
        let first = group.iter().map(|p| p.2).min().unwrap_or(0);
        if group.len() > 1 {
            let mut group_lines: Vec<usize> = group.iter().map(|p| p.2).collect();
            group_lines.sort_unstable();
            repeated.extend_from_slice(&group_lines[1..]);
        }
        xs.push(x);
        ys.push(mean);
        lines.push(first);
        i = j;
    }
    if !repeated.is_empty() {
        repeated.sort_unstable();
        warnings.push(Warning::new(
            repeated.first().copied(),
            format!(
                "{} repeated x values were averaged with the point(s) at the same x ({})",
                repeated.len(),
                rows(&repeated)
            ),
        ));
    }
    (xs, ys, lines)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn averaging_two_of_the_largest_doubles_gives_the_same_double_not_infinity() {
        let points = [
            (400.0, 1.7e308, 2),
            (400.0, 1.7e308, 3),
            (500.0, -1.7e308, 4),
        ];
        let mut warnings = Vec::new();
        let (x, y, lines) = average_duplicates(&points, &mut warnings);
        assert_eq!(x, [400.0, 500.0]);
        assert_eq!(y, [1.7e308, -1.7e308]);
        assert_eq!(lines, [2, 4]);
        assert_eq!(warnings[0].line, Some(3));
    }

    #[test]
    fn rows_are_listed_up_to_five_then_counted() {
        assert_eq!(rows(&[7]), "line 7");
        assert_eq!(
            rows(&[1, 2, 3, 4, 5, 6, 9]),
            "lines 1, 2, 3, 4, 5 and 2 more"
        );
    }
}
