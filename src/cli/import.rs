//! `ddlens import FILE`: reads a spectrum file and reports what was found.
//!
//! Options: `--x-unit nm|um|cm-1|eV`, `--y-quantity absorbance|transmittance|%T|epsilon|arbitrary`,
//! `--air-to-vacuum`, `--concentration M`, `--path-length CM`, `--export-csv FILE`,
//! and the cleaning steps `--crop LO-HI`, `--smooth savgol:W:O`, `--subtract-baseline METHOD`.
//! Hidden options for the reference checks (tests/reference/):
//! - `--raw`: print x and y in file units and file order, no conversion (JSON only);
//! - `--savgol-coeffs W,O,D` (no FILE): the Savitzky–Golay coefficients for window W,
//!   polynomial order O and derivative D, in correlation ("dot") order.

use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::preprocess;
use ddlens::spectrum::{self, ImportOptions, Spectrum, Warning};
use serde::Serialize;
use std::collections::BTreeMap;

const HEADER: &str = "\
ddlens import FILE — read a spectrum file (CSV/TXT, JCAMP-DX) and report what was found

FILE must be a regular file of at most 256 MiB (no directory, device or pipe).
";

pub(super) const FLAGS: [&Flag; 13] = [
    &flags::X_UNIT,
    &flags::Y_QUANTITY,
    &flags::AIR_TO_VACUUM,
    &flags::CONCENTRATION,
    &flags::PATH_LENGTH,
    &flags::EXPORT_CSV,
    &flags::CROP,
    &flags::SMOOTH,
    &flags::SUBTRACT_BASELINE,
    &flags::RAW,
    &flags::SAVGOL_COEFFS,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "import")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    let json = p.json;
    if let Some([window, order, deriv]) = p.savgol_coeffs {
        super::no_positionals(&p)?;
        return savgol_coeffs(window, order, deriv, json);
    }
    let opts = ImportOptions {
        x_unit: p.x_unit,
        y_quantity: p.y_quantity,
        air_to_vacuum: p.air_to_vacuum,
        concentration_mol_l: p.concentration,
        path_length_cm: p.path_length,
    };
    let file = super::one_file(&p, "import")?;
    let bytes = super::read_input(&file)?;

    if p.raw {
        let report =
            spectrum::read_raw(&bytes, &file).map_err(|e| CliError::Failed(e.to_string()))?;
        return json_text(&report);
    }
    let mut report =
        spectrum::import(&bytes, &file, &opts).map_err(|e| CliError::Failed(e.to_string()))?;
    let steps = super::cleaning_steps(&p);
    if !steps.is_empty() {
        for s in &mut report.spectra {
            let (mut clean, notes) = preprocess::apply_steps(s, &steps)
                .map_err(|e| CliError::Failed(format!("{}: the cleaning failed: {e}", s.name)))?;
            clean.warnings.extend(notes);
            *s = clean;
        }
    }
    if let Some(path) = &p.export_csv {
        std::fs::write(path, to_csv(&report.spectra)).map_err(|e| {
            CliError::Failed(format!("cannot write '{}': {e}", super::args::shown(path)))
        })?;
    }
    let summaries: Vec<Summary> = report.spectra.iter().map(Summary::of).collect();
    if json {
        return json_text(&serde_json::json!({
            "format": report.format,
            "spectra": summaries,
            "warnings": report.warnings,
        }));
    }
    let mut out = String::new();
    let plural = if summaries.len() == 1 {
        "spectrum"
    } else {
        "spectra"
    };
    outln!(
        out,
        "{file}: {} ({} {plural})",
        report.format,
        summaries.len()
    );
    for w in &report.warnings {
        outln!(out, "  warning: {w}");
    }
    for s in &summaries {
        outln!(
        out,
            "\n{}\n  points     {}\n  range      {:.1}–{:.1} cm⁻¹ ({:.1}–{:.1} nm)\n  x in file  {}\n  quantity   {}",
            s.name, s.points, s.x_range_cm[0], s.x_range_cm[1], s.x_range_nm[0], s.x_range_nm[1],
            s.x_unit_read.symbol(), s.quantity.describe()
        );
        for r in s.saturated {
            outln!(out, "  saturated  {:.1}–{:.1} cm⁻¹", r[0], r[1]);
        }
        for w in s.warnings {
            outln!(out, "  warning: {w}");
        }
    }
    Ok(out)
}

/// What `import` prints per spectrum (the data arrays are left out).
#[derive(Serialize)]
struct Summary<'a> {
    name: &'a str,
    points: usize,
    x_range_cm: [f64; 2],
    x_range_nm: [f64; 2],
    x_unit_read: spectrum::XUnit,
    quantity: spectrum::Quantity,
    saturated: &'a [[f64; 2]],
    metadata: &'a BTreeMap<String, String>,
    warnings: &'a [Warning],
}

impl<'a> Summary<'a> {
    fn of(s: &'a Spectrum) -> Summary<'a> {
        let lo = s.wavenumber.first().copied().unwrap_or(f64::NAN);
        let hi = s.wavenumber.last().copied().unwrap_or(f64::NAN);
        let round = |v: f64| (v * 10.0).round() / 10.0;
        Summary {
            name: &s.name,
            points: s.wavenumber.len(),
            x_range_cm: [round(lo), round(hi)],
            x_range_nm: [round(1e7 / hi), round(1e7 / lo)],
            x_unit_read: s.x_unit_read,
            quantity: s.quantity,
            saturated: &s.saturated,
            metadata: &s.metadata,
            warnings: &s.warnings,
        }
    }
}

/// Column pairs `name cm-1,name <quantity>`; shorter spectra leave empty cells.
/// Header cells are text cells ([`spectrum::csv::text_cell`]: a name such as
/// `=1+1` cannot become a spreadsheet formula).
fn to_csv(spectra: &[Spectrum]) -> String {
    let header: Vec<String> = spectra
        .iter()
        .map(|s| {
            let x = spectrum::csv::text_cell(&format!("{} cm-1", s.name));
            let y = spectrum::csv::text_cell(&format!("{} {:?}", s.name, s.quantity));
            format!("{x},{y}")
        })
        .collect();
    let mut out = header.join(",");
    out.push('\n');
    let rows = spectra
        .iter()
        .map(|s| s.wavenumber.len())
        .max()
        .unwrap_or(0);
    for i in 0..rows {
        let cells: Vec<String> = spectra
            .iter()
            .map(|s| match (s.wavenumber.get(i), s.values.get(i)) {
                (Some(x), Some(y)) => format!("{x},{y}"),
                _ => ",".to_string(),
            })
            .collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

/// The hidden `--savgol-coeffs W,O,D` option.
fn savgol_coeffs(
    window: usize,
    order: usize,
    deriv: usize,
    json: bool,
) -> Result<String, CliError> {
    let coefficients = preprocess::savgol_coeffs(window, order, deriv)
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        json_text(&serde_json::json!({
            "window": window, "order": order, "deriv": deriv, "coefficients": coefficients,
        }))
    } else {
        let text: Vec<String> = coefficients.iter().map(|c| format!("{c:.12e}")).collect();
        Ok(format!("{}\n", text.join(" ")))
    }
}
