//! The analysis document: everything one analysis rests on and produces, and
//! the project file that holds several of them.
//!
//! A [`Document`] is one analysis of one sample: the sample and where it came
//! from, the cleaning [`Step`]s in order, the band setup (with the user's band
//! model when there is one), the ligand-field options with the per-band
//! choices, and — once computed — the [`Results`] with the version that
//! computed them. It is the one schema of `ddlens analyze --json`, the wasm
//! API, project files, autosave and share links.
//!
//! A [`Project`] is a workspace of documents plus the page's view state. It is
//! read by [`Project::from_json`], which checks everything before returning
//! (schema, fields, finite numbers, equal lengths, band models against their
//! spectra, forced states against the ion) and migrates the page's first
//! project format (schema 1) with a notice; [`Project::to_json`] writes it.

use super::{AnalysisError, Deconvolution, ImportSummary};
use crate::bands::{BandModel, BaselineModel, Shape};
use crate::lf_fit::global::{GlobalFit, GlobalOptions};
use crate::lf_fit::{FitOutcome, FitRequest, ObservedBand};
use crate::ligand_field::Geometry;
use crate::preprocess::Step;
use crate::spectrum::{ImportOptions, Quantity, Spectrum, XUnit};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The project schema this build writes (and the newest it reads).
pub const SCHEMA: u32 = 2;

/// The key whose value is the schema version of a project.
pub const ENVELOPE_KEY: &str = "ddlens_project";

/// A workspace of samples, as a project file, autosave or share link holds it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Project {
    /// The schema version ([`SCHEMA`] when written by this build).
    pub ddlens_project: u32,
    /// "ddlens 0.x.y": the program that saved the project.
    #[serde(default)]
    pub program: String,
    /// When it was saved (ISO 8601), when known.
    #[serde(default)]
    pub saved: Option<String>,
    pub samples: Vec<Document>,
    /// Index into `samples` of the sample the page shows.
    #[serde(default)]
    pub active: Option<usize>,
    #[serde(default)]
    pub page: PageState,
}

/// What the page shows, apart from the samples. Every field is optional.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct PageState {
    pub view: View,
    pub series_sort: SeriesSort,
}

/// The spectrum plot's zoom and axis choices.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct View {
    /// Wavenumber range shown, cm⁻¹ (`None`: the data's range).
    pub x: Option<[f64; 2]>,
    /// Ordinate range shown (`None`: the data's range).
    pub y: Option<[f64; 2]>,
    /// Wavelength (nm) axis along the bottom instead of wavenumber.
    pub nm_bottom: bool,
    /// What the ordinate shows: "a" (as imported) or the page's other modes.
    pub y_mode: String,
}

impl Default for View {
    fn default() -> Self {
        View {
            x: None,
            y: None,
            nm_bottom: false,
            y_mode: "a".into(),
        }
    }
}

/// The order of the series table: the column it is sorted by and the direction.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct SeriesSort {
    /// Column index, `None` for the samples' own order.
    pub key: Option<usize>,
    /// 1 ascending, −1 descending.
    pub dir: i8,
}

impl Default for SeriesSort {
    fn default() -> Self {
        SeriesSort { key: None, dir: 1 }
    }
}

/// One analysis of one sample.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Document {
    pub sample: Sample,
    /// Cleaning steps, applied in order to the imported data.
    #[serde(default)]
    pub steps: Vec<Step>,
    pub bands: BandSetup,
    /// The ligand-field options; `None` stops the analysis after the band fit.
    #[serde(default)]
    pub ligand_field: Option<LigandFieldOptions>,
    /// What the analysis found (`None` until computed).
    #[serde(default)]
    pub results: Option<Results>,
    /// "ddlens 0.x.y": the version that computed `results`.
    #[serde(default)]
    pub program: String,
    /// What loading or migrating the document changed or ignored.
    #[serde(default)]
    pub notices: Vec<String>,
}

impl Document {
    /// A document for spectrum `source.spectrum` of a file, with its data,
    /// no cleaning steps and no ligand-field options; the import's warnings
    /// become its notices.
    pub fn import(
        bytes: &[u8],
        file_name: &str,
        source: Source,
        bands: BandSetup,
    ) -> Result<Document, AnalysisError> {
        let s = super::pick_spectrum(bytes, file_name, &source)?;
        let base = file_name.rsplit(['/', '\\']).next().unwrap_or(file_name);
        let notices = s
            .warnings
            .iter()
            .map(|w| match w.line {
                Some(l) => format!("line {l}: {}", w.message),
                None => w.message.clone(),
            })
            .collect();
        Ok(Document {
            sample: Sample {
                name: s.name.clone(),
                concentration: source.import.concentration_mol_l,
                path_length: source.import.path_length_cm,
                source: Source {
                    file_name: Some(base.to_string()),
                    ..source
                },
                metadata: s.metadata.clone(),
                display: Display::default(),
                data: Some(SampleData::of(&s)),
            },
            steps: Vec::new(),
            bands,
            ligand_field: None,
            results: None,
            program: String::new(),
            notices,
        })
    }
}

/// The sample: its name, its source and its imported data.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Sample {
    pub name: String,
    #[serde(default)]
    pub source: Source,
    /// Concentration, mol L⁻¹.
    #[serde(default)]
    pub concentration: Option<f64>,
    /// Cell path length, cm.
    #[serde(default)]
    pub path_length: Option<f64>,
    /// Header and trailer lines of the file, as key → value.
    #[serde(default)]
    pub metadata: BTreeMap<String, String>,
    #[serde(default)]
    pub display: Display,
    /// The imported (uncleaned) spectrum. Projects always carry it; the CLI's
    /// `--json` leaves it out, since the source file reproduces it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub data: Option<SampleData>,
}

/// Where a sample's data came from.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Source {
    /// The file's name (no directory), when known.
    pub file_name: Option<String>,
    /// Which spectrum of the file (0 = first).
    pub spectrum: usize,
    /// The import settings and per-file overrides.
    pub import: ImportOptions,
}

/// How the page draws a sample.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Display {
    /// CSS colour; `None` takes the next colour of the palette.
    pub colour: Option<String>,
    pub visible: bool,
}

impl Default for Display {
    fn default() -> Self {
        Display {
            colour: None,
            visible: true,
        }
    }
}

/// An imported spectrum, before cleaning.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SampleData {
    /// Vacuum wavenumber, cm⁻¹, ascending.
    pub wavenumber: Vec<f64>,
    pub values: Vec<f64>,
    pub quantity: Quantity,
    /// The x unit the file was read in.
    pub x_unit_read: XUnit,
    /// Wavenumber ranges `[low, high]` where the detector was saturated.
    #[serde(default)]
    pub saturated: Vec<[f64; 2]>,
}

impl SampleData {
    /// The data of an imported spectrum.
    pub fn of(s: &Spectrum) -> Self {
        SampleData {
            wavenumber: s.wavenumber.clone(),
            values: s.values.clone(),
            quantity: s.quantity,
            x_unit_read: s.x_unit_read,
            saturated: s.saturated.clone(),
        }
    }

    /// The data as a spectrum named `name` with `metadata`.
    pub fn spectrum(&self, name: &str, metadata: &BTreeMap<String, String>) -> Spectrum {
        Spectrum {
            name: name.to_string(),
            wavenumber: self.wavenumber.clone(),
            values: self.values.clone(),
            quantity: self.quantity,
            x_unit_read: self.x_unit_read,
            saturated: self.saturated.clone(),
            metadata: metadata.clone(),
            warnings: Vec::new(),
        }
    }
}

/// How many bands to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum BandCount {
    /// Chosen by BIC among 1…max.
    Auto(usize),
    Fixed(usize),
}

/// The band fit's settings, and the user's band model when there is one.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandSetup {
    pub count: BandCount,
    pub shape: Shape,
    /// The baseline under the bands; `None` chooses between a linear and a
    /// scattering baseline by BIC.
    #[serde(default)]
    pub baseline: Option<BaselineModel>,
    pub max_iterations: usize,
    /// Fit only this wavenumber range, cm⁻¹.
    #[serde(default)]
    pub range: Option<[f64; 2]>,
    /// The user's band model (starting values, bounds, locks, ties); `None`
    /// runs the automatic deconvolution.
    #[serde(default)]
    pub model: Option<BandModel>,
}

/// The user's choice for the band near `energy`: a forced state, or not d–d.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Choice {
    /// cm⁻¹; matched to the nearest band found within the choice-matching tolerance.
    pub energy: f64,
    /// The state the band is forced onto ("4T1g(P)" or "⁴T₁g(P)").
    #[serde(default)]
    pub assign: Option<String>,
    /// The band is not d–d (charge transfer, ligand, impurity).
    #[serde(default)]
    pub not_dd: bool,
}

/// What the ligand-field fit is asked (a [`FitRequest`] without the fields the
/// analysis fills in from the band fit and the spectrum).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LigandFieldOptions {
    /// "Cr3+": gives n, B₀ for β and the default C/B.
    #[serde(default)]
    pub ion: Option<String>,
    /// n of dⁿ, when no ion is given (0: taken from the ion).
    #[serde(default)]
    pub n: u8,
    pub geometry: Geometry,
    /// C/B held fixed (default: the ion's free-ion C₀/B₀, else the fallback of [`super::defaults`]).
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
    /// The ligand (one kind), for Jørgensen's estimates.
    #[serde(default)]
    pub ligand: Option<String>,
    /// Predict transitions up to this energy, cm⁻¹.
    #[serde(default)]
    pub max_prediction: Option<f64>,
    /// Per-band choices.
    #[serde(default)]
    pub choices: Vec<Choice>,
    /// Also fit the spectrum with the model itself (`None`: the two-step fit only).
    #[serde(default)]
    pub global: Option<GlobalOptions>,
}

impl From<FitRequest> for LigandFieldOptions {
    /// The options of a fit request; its bands become the choices (those
    /// with neither a forced state nor "not d–d" are dropped).
    fn from(r: FitRequest) -> Self {
        LigandFieldOptions {
            ion: r.ion,
            n: r.n,
            geometry: r.geometry,
            c_over_b: r.c_over_b,
            free_c: r.free_c,
            spin_forbidden: r.spin_forbidden,
            b0_source: r.b0_source,
            ligand: r.ligand,
            max_prediction: r.max_prediction,
            choices: r
                .bands
                .into_iter()
                .filter(|b| b.not_dd || b.assign.is_some())
                .map(|b| Choice {
                    energy: b.energy,
                    assign: b.assign,
                    not_dd: b.not_dd,
                })
                .collect(),
            global: None,
        }
    }
}

impl LigandFieldOptions {
    /// The fit request, with the choices as its bands (the analysis replaces
    /// them with the bands found, the choices applied).
    pub fn request(&self) -> FitRequest {
        FitRequest {
            n: self.n,
            geometry: self.geometry,
            ion: self.ion.clone(),
            bands: self
                .choices
                .iter()
                .map(|c| ObservedBand {
                    energy: c.energy,
                    assign: c.assign.clone(),
                    not_dd: c.not_dd,
                    ..ObservedBand::default()
                })
                .collect(),
            c_over_b: self.c_over_b,
            free_c: self.free_c,
            spin_forbidden: self.spin_forbidden,
            b0_source: self.b0_source.clone(),
            max_prediction: self.max_prediction,
            ligand: self.ligand.clone(),
            observed_from: None,
        }
    }
}

/// What an analysis found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Results {
    /// The imported spectrum, as `ddlens import` reports it.
    pub import: ImportSummary,
    /// The band fit (with its fitted baseline, values with σ, statistics and BIC table).
    pub bands: Deconvolution,
    /// The band maxima handed to the ligand-field fit, with the choices applied.
    pub observed: Vec<ObservedBand>,
    /// The ligand-field fit, when asked for and possible.
    #[serde(default)]
    pub fit: Option<FitOutcome>,
    /// Why there is no ligand-field fit, when one was asked for.
    #[serde(default)]
    pub fit_error: Option<String>,
    /// The global fit of the spectrum with the model, when asked for and possible.
    #[serde(default)]
    pub global: Option<GlobalFit>,
    /// What the cleaning and the analysis chose or noticed.
    #[serde(default)]
    pub warnings: Vec<String>,
    /// The noise of the spectrum (before smoothing), when it could be estimated.
    #[serde(default)]
    pub noise: Option<crate::spectrum::noise::Noise>,
    /// What the ligand-field analysis came to, when one was asked for.
    #[serde(default)]
    pub outcome: Option<super::Outcome>,
    /// The outcome as a plain sentence.
    #[serde(default)]
    pub outcome_text: Option<String>,
}
