//! Spectrum import and units (preprocessing lives in [`crate::preprocess`]).
//!
//! `import` turns the bytes of a spectrum file into one or more [`Spectrum`]s on
//! the internal axis: vacuum wavenumber in cm⁻¹, ascending. The work is split:
//!
//! - [`text`] decodes the bytes (UTF-8 with or without BOM, UTF-16 by BOM,
//!   Latin-1 fallback) into numbered lines;
//! - [`delimited`] reads CSV/TXT tables (comma, semicolon, tab, whitespace,
//!   decimal comma, Cary-style column pairs, metadata before or after);
//! - [`jcamp`] and [`asdf`] read JCAMP-DX 4.24/5.x (AFFN and ASDF compression);
//! - [`units`] converts the x axis (nm, µm, cm⁻¹, eV, optional air→vacuum) and
//!   the y quantity (T, %T, log ε → A or ε);
//! - `assemble` sorts, averages duplicate x, flags saturation;
//! - [`csv`] writes the text cells of ddlens's CSV exports (formula starts
//!   neutralised);
//!
//! Readers produce [`RawSpectrum`]s in file units; `assemble` makes them
//! [`Spectrum`]s. Nothing here panics on any input: every failure is an
//! [`ImportError`] naming the line where possible.
//!
//! ## Limits
//!
//! Every imported number is finite and bounded, checked after each step
//! (reading, duplicate averaging, unit conversion, division by c·l); a point
//! that fails is dropped with a warning naming its rows:
//!
//! - wavenumbers lie in [`WAVENUMBER_RANGE`] (10⁻⁶ … 10¹² cm⁻¹);
//! - ordinates satisfy |y| ≤ [`MAX_MAGNITUDE`] (10¹⁰⁰), so spans, sums of squares
//!   over [`MAX_POINTS`] points and plot ranges stay finite.
//!
//! Work is bounded: a spectrum holds at most [`MAX_POINTS`] points, a file at most
//! [`MAX_SPECTRA`] spectra and [`MAX_FILE_POINTS`] points in all (JCAMP-DX DUP
//! counts included); a larger file is refused with [`ImportError::TooLarge`].
//! Names and metadata lose their control characters (they are not allowed in XML,
//! so an SVG export carrying them would be invalid).

pub mod asdf;
mod assemble;
pub mod csv;
pub mod delimited;
mod error;
pub mod jcamp;
pub mod noise;
pub mod saturation;
pub mod text;
pub mod units;

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

pub use error::ImportError;
pub use units::{Quantity, XUnit};

/// Most points one spectrum may hold.
pub const MAX_POINTS: usize = 2_000_000;
/// Most spectra one file may hold.
pub const MAX_SPECTRA: usize = 1_000;
/// Most points one file may hold over all its spectra.
pub const MAX_FILE_POINTS: usize = 5_000_000;
/// Largest absolute ordinate kept at import.
pub const MAX_MAGNITUDE: f64 = 1e100;
/// Smallest and largest wavenumber (cm⁻¹) kept at import.
pub const WAVENUMBER_RANGE: [f64; 2] = [1e-6, 1e12];

/// Refuses a count above its limit with a sentence naming both.
pub(crate) fn check_limit(found: usize, limit: usize, what: &str) -> Result<(), ImportError> {
    if found > limit {
        return Err(ImportError::TooLarge(format!(
            "the file holds more than {limit} {what}, the most ddlens reads"
        )));
    }
    Ok(())
}

/// Text without control characters (not allowed in XML), for names and metadata.
/// Tabs and line breaks become blanks unless `keep_lines` keeps `\n` and `\t`.
pub fn clean_text(text: &str, keep_lines: bool) -> String {
    let invalid = |c: char| c.is_control() || matches!(c, '\u{FFFE}' | '\u{FFFF}');
    if !text.chars().any(invalid) {
        return text.to_string();
    }
    text.chars()
        .filter_map(|c| match c {
            '\n' | '\t' if keep_lines => Some(c),
            '\n' | '\t' | '\r' => Some(' '),
            c if invalid(c) => None,
            c => Some(c),
        })
        .collect()
}

/// One spectrum on the internal axis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spectrum {
    /// Sample name from the file (column header, Cary sample row, JCAMP TITLE).
    pub name: String,
    /// Vacuum wavenumber in cm⁻¹, strictly ascending.
    pub wavenumber: Vec<f64>,
    /// The ordinate, in `quantity`.
    pub values: Vec<f64>,
    /// What `values` hold after conversion (T and %T become absorbance).
    pub quantity: Quantity,
    /// The x unit found in (or forced onto) the file.
    pub x_unit_read: XUnit,
    /// Wavenumber ranges `[low, high]` where the detector was saturated.
    pub saturated: Vec<[f64; 2]>,
    /// Header and trailer lines of the file, as key → value.
    pub metadata: BTreeMap<String, String>,
    /// Everything the reader had to guess, skip or repair.
    pub warnings: Vec<Warning>,
}

/// A note about the file, with the 1-based line it concerns when known.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Warning {
    pub line: Option<usize>,
    pub message: String,
}

impl Warning {
    pub fn new(line: Option<usize>, message: impl Into<String>) -> Self {
        Warning {
            line,
            message: message.into(),
        }
    }
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.line {
            Some(line) => write!(f, "line {line}: {}", self.message),
            None => f.write_str(&self.message),
        }
    }
}

/// Choices the user can force instead of the reader's detection.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ImportOptions {
    /// The x unit of the file, overriding headers and labels.
    pub x_unit: Option<XUnit>,
    /// The y quantity of the file, overriding headers and labels.
    pub y_quantity: Option<Quantity>,
    /// Treat wavelengths as measured in standard air and correct them to vacuum (Ciddor 1996).
    pub air_to_vacuum: bool,
    /// Concentration in mol L⁻¹; with `path_length_cm` turns absorbance into ε.
    pub concentration_mol_l: Option<f64>,
    /// Cell path length in cm.
    pub path_length_cm: Option<f64>,
}

/// What `import` found in one file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ImportReport {
    /// "delimited text" or "JCAMP-DX".
    pub format: String,
    pub spectra: Vec<Spectrum>,
    /// Notes about the file as a whole (not about one spectrum).
    pub warnings: Vec<Warning>,
}

/// A spectrum as the file states it: x in the file's unit, y in the file's
/// quantity, in file order, before any conversion.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct RawSpectrum {
    pub name: String,
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// The 1-based file line of each point.
    #[serde(skip)]
    pub lines: Vec<usize>,
    /// Text that names the x unit (a column header or XUNITS), if any.
    pub x_label: Option<String>,
    /// Text that names the y quantity (a column header or YUNITS), if any.
    pub y_label: Option<String>,
    pub metadata: BTreeMap<String, String>,
    pub warnings: Vec<Warning>,
}

/// All raw spectra of a file, before unit conversion.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct RawReport {
    pub format: String,
    pub spectra: Vec<RawSpectrum>,
    pub warnings: Vec<Warning>,
}

/// Reads a file's spectra in file units, without conversion or sorting.
pub fn read_raw(bytes: &[u8], file_name: &str) -> Result<RawReport, ImportError> {
    let decoded = text::decode(bytes);
    let mut warnings = decoded.warnings;
    let body = decoded.text.trim_start();
    if body.is_empty() {
        return Err(ImportError::Empty);
    }
    if body.starts_with('{') {
        return match serde_json::from_str::<serde_json::Value>(body) {
            Ok(value) => {
                let schema = crate::analysis::schema_of(&value)
                    .map_err(|e| ImportError::Project(e.to_string()))?;
                Err(ImportError::ProjectFile { schema })
            }
            Err(_) => Err(ImportError::Malformed {
                line: None,
                message: format!("'{file_name}' starts like JSON but is not valid JSON"),
            }),
        };
    }
    let mut report = if jcamp::looks_like_jcamp(&decoded.text) {
        jcamp::read(&decoded.text)?
    } else {
        delimited::read(&decoded.text, file_name)?
    };
    check_limit(report.spectra.len(), MAX_SPECTRA, "spectra")?;
    let total = report.spectra.iter().map(|s| s.x.len()).sum();
    check_limit(total, MAX_FILE_POINTS, "points in all")?;
    for s in &mut report.spectra {
        check_limit(s.x.len(), MAX_POINTS, "points in one spectrum")?;
        s.name = clean_text(&s.name, false);
        s.metadata = std::mem::take(&mut s.metadata)
            .into_iter()
            .map(|(k, v)| (clean_text(&k, false), clean_text(&v, true)))
            .collect();
    }
    warnings.append(&mut report.warnings);
    report.warnings = warnings;
    Ok(report)
}

/// Reads a spectrum file and converts every spectrum to the internal axis.
///
/// A CSV in wavelength becomes vacuum wavenumbers, ascending, ν̃ = 10⁷/λ(nm):
///
/// ```
/// use ddlens::spectrum::{import, ImportOptions, Quantity, XUnit};
///
/// let csv = b"Wavelength (nm),Abs\n400,0.20\n500,0.10\n625,0.05\n";
/// let report = import(csv, "sample.csv", &ImportOptions::default())?;
/// let s = &report.spectra[0];
/// assert_eq!(s.x_unit_read, XUnit::Nanometre);
/// assert_eq!(s.quantity, Quantity::Absorbance);
/// assert_eq!((s.wavenumber.len(), s.values.len()), (3, 3));
/// // 625 nm, 500 nm and 400 nm are 16 000, 20 000 and 25 000 cm⁻¹.
/// for (got, want) in s.wavenumber.iter().zip([16_000.0, 20_000.0, 25_000.0]) {
///     assert!((got - want).abs() < 1e-9, "{got} cm⁻¹");
/// }
/// assert!((s.values[0] - 0.05).abs() < 1e-12 && (s.values[2] - 0.20).abs() < 1e-12);
/// # Ok::<(), ddlens::spectrum::ImportError>(())
/// ```
pub fn import(
    bytes: &[u8],
    file_name: &str,
    opts: &ImportOptions,
) -> Result<ImportReport, ImportError> {
    let raw = read_raw(bytes, file_name)?;
    let mut spectra = Vec::with_capacity(raw.spectra.len());
    for spectrum in raw.spectra {
        spectra.push(assemble::assemble(spectrum, opts)?);
    }
    Ok(ImportReport {
        format: raw.format,
        spectra,
        warnings: raw.warnings,
    })
}
