//! `ddlens import FILE`: reads a spectrum file and reports what was found.
//!
//! Options: `--x-unit nm|um|cm-1|eV`, `--y-quantity absorbance|transmittance|%T|epsilon|arbitrary`,
//! `--air-to-vacuum`, `--concentration M`, `--path-length CM`, `--export-csv FILE`.
//! Hidden options for the reference checks (tests/reference/):
//! - `--raw`: print x and y in file units and file order, no conversion (JSON only);
//! - `--savgol-coeffs W,O,D` (no FILE): the Savitzky–Golay coefficients for window W,
//!   polynomial order O and derivative D, in correlation ("dot") order.

use super::{print_json, Args, CliError};
use crate::preprocess;
use crate::spectrum::{self, ImportOptions, Spectrum, Warning};
use serde::Serialize;
use std::collections::BTreeMap;

const HELP: &str = "\
ddlens import FILE — read a spectrum file (CSV/TXT, JCAMP-DX) and report what was found

OPTIONS:
    --x-unit UNIT          the file's x unit: nm, um, cm-1 or eV (default: from the file)
    --y-quantity Q         absorbance, transmittance, %T, epsilon or arbitrary (default: from the file)
    --air-to-vacuum        wavelengths were measured in air: correct them to vacuum (Ciddor 1996)
    --concentration M      concentration in mol/L; with --path-length gives ε = A/(c·l)
    --path-length CM       cell path length in cm
    --export-csv FILE      write the converted spectra (cm⁻¹, ascending) as CSV
    --json                 machine-readable output
";

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") || args.flag("-h") {
        print!("{HELP}");
        return Ok(());
    }
    if let Some(spec) = args.value("--savgol-coeffs")? {
        args.finish()?;
        return savgol_coeffs(&spec, json);
    }
    let raw = args.flag("--raw");
    let opts = ImportOptions {
        x_unit: parse_option(args.value("--x-unit")?)?,
        y_quantity: parse_option(args.value("--y-quantity")?)?,
        air_to_vacuum: args.flag("--air-to-vacuum"),
        concentration_mol_l: args.number("--concentration")?,
        path_length_cm: args.number("--path-length")?,
    };
    let export = args.value("--export-csv")?;
    let file = args
        .next_positional()
        .ok_or_else(|| CliError::Usage("import needs a FILE; see `ddlens import --help`".into()))?;
    args.finish()?;
    let bytes =
        std::fs::read(&file).map_err(|e| CliError::Failed(format!("cannot read '{file}': {e}")))?;

    if raw {
        let report =
            spectrum::read_raw(&bytes, &file).map_err(|e| CliError::Failed(e.to_string()))?;
        return print_json(&report);
    }
    let report =
        spectrum::import(&bytes, &file, &opts).map_err(|e| CliError::Failed(e.to_string()))?;
    if let Some(path) = export {
        std::fs::write(&path, to_csv(&report.spectra))
            .map_err(|e| CliError::Failed(format!("cannot write '{path}': {e}")))?;
    }
    let summaries: Vec<Summary> = report.spectra.iter().map(Summary::of).collect();
    if json {
        return print_json(&serde_json::json!({
            "format": report.format,
            "spectra": summaries,
            "warnings": report.warnings,
        }));
    }
    let plural = if summaries.len() == 1 {
        "spectrum"
    } else {
        "spectra"
    };
    println!("{file}: {} ({} {plural})", report.format, summaries.len());
    for w in &report.warnings {
        println!("  warning: {w}");
    }
    for s in &summaries {
        println!(
            "\n{}\n  points     {}\n  range      {:.1}–{:.1} cm⁻¹ ({:.1}–{:.1} nm)\n  x in file  {}\n  quantity   {}",
            s.name, s.points, s.x_range_cm[0], s.x_range_cm[1], s.x_range_nm[0], s.x_range_nm[1],
            s.x_unit_read.symbol(), s.quantity.describe()
        );
        for r in s.saturated {
            println!("  saturated  {:.1}–{:.1} cm⁻¹", r[0], r[1]);
        }
        for w in s.warnings {
            println!("  warning: {w}");
        }
    }
    Ok(())
}

fn parse_option<T: std::str::FromStr<Err = String>>(
    v: Option<String>,
) -> Result<Option<T>, CliError> {
    v.map(|s| s.parse::<T>().map_err(CliError::Usage))
        .transpose()
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
fn to_csv(spectra: &[Spectrum]) -> String {
    let clean = |s: &str| s.replace([',', '\n', '\r'], " ");
    let header: Vec<String> = spectra
        .iter()
        .map(|s| {
            format!(
                "{} cm-1,{} {:?}",
                clean(&s.name),
                clean(&s.name),
                s.quantity
            )
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
fn savgol_coeffs(spec: &str, json: bool) -> Result<(), CliError> {
    let parts: Vec<usize> = spec
        .split(',')
        .map(|p| p.trim().parse::<usize>())
        .collect::<Result<_, _>>()
        .map_err(|_| {
            CliError::Usage(format!(
                "--savgol-coeffs: expected W,O,D as whole numbers, found '{spec}'"
            ))
        })?;
    let [window, order, deriv] = parts[..] else {
        return Err(CliError::Usage(format!(
            "--savgol-coeffs: expected three numbers W,O,D, found '{spec}'"
        )));
    };
    let coefficients = preprocess::savgol_coeffs(window, order, deriv)
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        print_json(&serde_json::json!({
            "window": window, "order": order, "deriv": deriv, "coefficients": coefficients,
        }))
    } else {
        let text: Vec<String> = coefficients.iter().map(|c| format!("{c:.12e}")).collect();
        println!("{}", text.join(" "));
        Ok(())
    }
}
