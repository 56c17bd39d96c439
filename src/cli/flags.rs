//! Every command-line option, defined once as data.
//!
//! Parsing runs in two stages, in one direction: [`parse`] turns the words
//! into typed flags (one [`Parsed`] value, each option's `update` checking
//! and storing its own value), and each command then turns `Parsed` into the
//! engine's options (`AnalysisOptions`, `FitRequest`, …). A command's `--help`
//! is generated from the same definitions, so the text cannot drift from what
//! is parsed.
//!
//! # Adding an option
//! 1. Add its field to [`Parsed`].
//! 2. Add one `pub const NAME: Flag = Flag::takes("--name", "VALUE", "help", update)`
//!    (or `Flag::switch` for a switch) below, with its `update` (use
//!    [`number`], [`whole`] or `FromStr` as the existing ones do) and a test
//!    right under it; `.more(…)`, `.repeatable()`, `.hidden()` adjust it.
//! 3. List the constant in the `FLAGS` of each command that accepts it, and
//!    read the field in that command's `run`.

use super::args::{parse_number, shown, CliError};
use ddlens::analysis::BandCount;
use ddlens::bands::{BaselineModel, Shape};
use ddlens::lf_fit::ObservedBand;
use ddlens::ligand_field::{parse_configuration, Geometry};
use ddlens::preprocess::BaselineMethod;
use ddlens::spectrum::{Quantity, XUnit};
use std::fmt::Write as _;

/// One option: its spelling, its value, its help and how it updates [`Parsed`].
pub struct Flag {
    /// The long name, with its dashes (`--range`).
    pub name: &'static str,
    /// A one-letter alias (`-h`), if any.
    pub short: Option<&'static str>,
    /// The value's placeholder in help (`LO:HI`); `None` for a switch.
    pub value: Option<&'static str>,
    /// The first help line.
    pub help: &'static str,
    /// Further help lines (may be empty).
    pub long: &'static str,
    /// May be given more than once.
    pub repeat: bool,
    /// Left out of `--help` (reference checks only).
    pub hidden: bool,
    /// Checks the value and stores it; `None` for a switch.
    pub update: fn(&mut Parsed, Option<&str>) -> Result<(), CliError>,
}

impl Flag {
    /// An option that takes a value, e.g. `--range LO:HI`.
    pub const fn takes(
        name: &'static str,
        value: &'static str,
        help: &'static str,
        update: fn(&mut Parsed, Option<&str>) -> Result<(), CliError>,
    ) -> Flag {
        Flag {
            name,
            short: None,
            value: Some(value),
            help,
            long: "",
            repeat: false,
            hidden: false,
            update,
        }
    }

    /// A switch without a value, e.g. `--json`.
    pub const fn switch(
        name: &'static str,
        help: &'static str,
        update: fn(&mut Parsed, Option<&str>) -> Result<(), CliError>,
    ) -> Flag {
        Flag {
            value: None,
            ..Flag::takes(name, "", help, update)
        }
    }

    /// Also spelt `short` (e.g. `-h`).
    pub const fn or_short(self, short: &'static str) -> Flag {
        Flag {
            short: Some(short),
            ..self
        }
    }

    /// Further help lines.
    pub const fn more(self, long: &'static str) -> Flag {
        Flag { long, ..self }
    }

    /// May be given more than once.
    pub const fn repeatable(self) -> Flag {
        Flag {
            repeat: true,
            ..self
        }
    }

    /// Left out of `--help`.
    pub const fn hidden(self) -> Flag {
        Flag {
            hidden: true,
            ..self
        }
    }
}

/// The typed flags of one command line (stage one's result).
// One field per command-line switch: the bools are the switches themselves, not a hidden state machine.
#[allow(clippy::struct_excessive_bools)]
#[derive(Debug, Default)]
pub struct Parsed {
    pub positionals: Vec<String>,
    pub help: bool,
    pub json: bool,
    pub config: Option<u8>,
    pub ion: Option<String>,
    pub geometry: Option<Geometry>,
    pub dq: Option<f64>,
    /// `levels --geometry`: also tetragonal or trigonal.
    pub site_geometry: Option<SiteGeometry>,
    pub ds: Option<f64>,
    pub dt: Option<f64>,
    pub dsigma: Option<f64>,
    pub dtau: Option<f64>,
    pub zeta: Option<f64>,
    pub ligands: Option<String>,
    pub b: Option<f64>,
    pub c: Option<f64>,
    pub dump_ck: bool,
    pub c_over_b: Option<f64>,
    pub max: Option<f64>,
    pub points: Option<usize>,
    pub svg: Option<String>,
    pub csv: Option<String>,
    pub free_c: bool,
    pub spin_forbidden: bool,
    /// `analyze --global`: also fit the spectrum with the ligand-field model.
    pub global: bool,
    pub b0_source: Option<String>,
    pub ligand: Option<String>,
    pub bands: Vec<ObservedBand>,
    pub observed_from: Option<f64>,
    pub max_prediction: Option<f64>,
    pub x_unit: Option<XUnit>,
    pub y_quantity: Option<Quantity>,
    pub air_to_vacuum: bool,
    pub concentration: Option<f64>,
    pub path_length: Option<f64>,
    pub export_csv: Option<String>,
    pub raw: bool,
    pub savgol_coeffs: Option<[usize; 3]>,
    pub band_count: Option<BandCount>,
    pub shape: Option<Shape>,
    pub baseline: Option<BaselineModel>,
    pub range: Option<[f64; 2]>,
    pub epsilon: bool,
    pub max_iterations: Option<usize>,
    pub spectrum: Option<usize>,
    pub crop: Option<[f64; 2]>,
    pub smooth: Option<[usize; 2]>,
    pub subtract_baseline: Option<BaselineMethod>,
    pub save_project: Option<String>,
    pub project: Option<String>,
}

/// The value of an option that takes one (stage one guarantees it is there).
fn given(v: Option<&str>) -> &str {
    v.unwrap_or_default()
}

/// A finite number.
pub fn number(name: &str, v: Option<&str>) -> Result<f64, CliError> {
    parse_number(name, given(v))
}

/// A whole number within `lo..=hi`.
pub fn whole(name: &str, v: Option<&str>, lo: usize, hi: usize) -> Result<usize, CliError> {
    let text = given(v);
    text.trim()
        .parse::<usize>()
        .ok()
        .filter(|n| (lo..=hi).contains(n))
        .ok_or_else(|| {
            CliError::Usage(format!(
                "{name}: '{}' is not a whole number from {lo} to {hi}",
                shown(text)
            ))
        })
}

fn usage<T, E: ToString>(r: Result<T, E>) -> Result<T, CliError> {
    r.map_err(|e| CliError::Usage(e.to_string()))
}

/// Reads `E[:S][:STATE]` or `E:x`.
pub fn parse_band(text: &str) -> Result<ObservedBand, CliError> {
    let mut parts = text.split(':');
    let energy = parse_number("--band", parts.next().unwrap_or(""))?;
    let mut band = ObservedBand::at(energy);
    for part in parts {
        if part.eq_ignore_ascii_case("x") {
            band.not_dd = true;
        } else if let Ok(s) = part.parse::<f64>() {
            band.sigma = Some(s);
        } else {
            band.assign = Some(part.to_string());
        }
    }
    Ok(band)
}

/// Reads `LO:HI` in cm⁻¹ with LO < HI.
pub fn parse_range(text: &str) -> Result<[f64; 2], CliError> {
    let bad = || {
        CliError::Usage(format!(
            "--range: '{}' should be LO:HI in cm⁻¹, e.g. 8000:30000",
            shown(text)
        ))
    };
    let (a, b) = text.split_once(':').ok_or_else(bad)?;
    let lo = parse_number("--range", a)?;
    let hi = parse_number("--range", b)?;
    if lo >= hi {
        return Err(bad());
    }
    Ok([lo, hi])
}

/// The most bands `--bands N` accepts.
pub const MAX_BANDS: usize = ddlens::analysis::defaults::MAX_BANDS;
/// The most curve points `diagram --points` accepts.
pub const MAX_DIAGRAM_POINTS: usize = 100_000;
/// The most solver iterations `--max-iterations` accepts.
pub const MAX_ITERATIONS: usize = 1_000_000;
/// The widest Savitzky–Golay window the hidden `--savgol-coeffs` accepts.
pub const MAX_SAVGOL_WINDOW: usize = 10_001;

pub const HELP: Flag = Flag::switch("--help", "this text", |p, _| {
    p.help = true;
    Ok(())
})
.or_short("-h")
.repeatable();

pub const JSON: Flag = Flag::switch(
    "--json",
    "machine-readable output (the schema of the browser and saved projects)",
    |p, _| {
        p.json = true;
        Ok(())
    },
)
.repeatable();

pub const CONFIG: Flag = Flag::takes("--config", "dN", "the configuration, d1 … d9", |p, v| {
    p.config = Some(usage(parse_configuration(given(v)))?);
    Ok(())
});

#[cfg(test)]
mod config_tests {
    use super::*;
    #[test]
    fn a_configuration_outside_d1_to_d9_is_refused() {
        let mut p = Parsed::default();
        assert!((CONFIG.update)(&mut p, Some("d10")).is_err());
        (CONFIG.update)(&mut p, Some("d3")).unwrap();
        assert_eq!(p.config, Some(3));
    }
}

pub const ION: Flag = Flag::takes(
    "--ion",
    "ION",
    "the metal ion, e.g. Cr3+ or Ni(II) (gives dⁿ, B₀ for β and the default C/B)",
    |p, v| {
        p.ion = v.map(String::from);
        Ok(())
    },
);

pub const GEOMETRY: Flag = Flag::takes(
    "--geometry",
    "G",
    "octahedral (oh, default) or tetrahedral (td)",
    |p, v| {
        p.geometry = Some(usage(given(v).parse::<Geometry>())?);
        Ok(())
    },
);

#[cfg(test)]
mod geometry_tests {
    use super::*;
    #[test]
    fn a_geometry_is_read_by_its_short_name() {
        let mut p = Parsed::default();
        (GEOMETRY.update)(&mut p, Some("td")).unwrap();
        assert_eq!(p.geometry, Some(Geometry::Tetrahedral));
        assert!((GEOMETRY.update)(&mut p, Some("square")).is_err());
    }
}

/// The site symmetries `levels` accepts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SiteGeometry {
    Cubic(Geometry),
    Tetragonal,
    Trigonal,
}

/// `levels --geometry`: the cubic names, tetragonal (d4h) or trigonal (d3, d3d).
pub const SITE_GEOMETRY: Flag = Flag::takes(
    "--geometry",
    "G",
    "octahedral (oh, default), tetrahedral (td), tetragonal (d4h) or trigonal (d3d)",
    |p, v| {
        let text = given(v).trim().to_ascii_lowercase();
        p.site_geometry = Some(match text.as_str() {
            "tetragonal" | "d4h" => SiteGeometry::Tetragonal,
            "trigonal" | "d3" | "d3d" => SiteGeometry::Trigonal,
            _ => SiteGeometry::Cubic(usage(text.parse::<Geometry>()).map_err(|_| {
                CliError::Usage(format!(
                    "unknown geometry '{}': use octahedral, tetrahedral, tetragonal or trigonal",
                    shown(given(v))
                ))
            })?),
        });
        Ok(())
    },
);

macro_rules! field_flag {
    ($name:ident, $field:ident, $spelling:literal, $value:literal, $help:literal) => {
        pub const $name: Flag = Flag::takes($spelling, $value, $help, |p, v| {
            p.$field = Some(number($spelling, v)?);
            Ok(())
        });
    };
}

field_flag!(
    DS,
    ds,
    "--ds",
    "DS",
    "tetragonal Ds in cm⁻¹ (with --geometry tetragonal)"
);
field_flag!(
    DT,
    dt,
    "--dt",
    "DT",
    "tetragonal Dt in cm⁻¹ (with --geometry tetragonal)"
);
field_flag!(
    DSIGMA,
    dsigma,
    "--dsigma",
    "DSIGMA",
    "trigonal Dσ in cm⁻¹ (with --geometry trigonal)"
);
field_flag!(
    DTAU,
    dtau,
    "--dtau",
    "DTAU",
    "trigonal Dτ in cm⁻¹ (with --geometry trigonal)"
);
field_flag!(
    ZETA,
    zeta,
    "--zeta",
    "ZETA",
    "spin–orbit coupling constant ζ in cm⁻¹ (|ζ| ≤ 10000; default 0)"
);

pub const LIGANDS: Flag = Flag::takes(
    "--ligands",
    "FILE",
    "angular overlap model: a CSV file with the header x,y,z,e_sigma,e_pi, one ligand per row",
    |p, v| {
        p.ligands = v.map(String::from);
        Ok(())
    },
);

#[cfg(test)]
mod site_tests {
    use super::*;
    #[test]
    fn a_site_geometry_takes_the_low_symmetry_names_too() {
        let mut p = Parsed::default();
        (SITE_GEOMETRY.update)(&mut p, Some("D4h")).unwrap();
        assert_eq!(p.site_geometry, Some(SiteGeometry::Tetragonal));
        (SITE_GEOMETRY.update)(&mut p, Some("td")).unwrap();
        assert_eq!(
            p.site_geometry,
            Some(SiteGeometry::Cubic(Geometry::Tetrahedral))
        );
        assert!((SITE_GEOMETRY.update)(&mut p, Some("square")).is_err());
        (ZETA.update)(&mut p, Some("649")).unwrap();
        assert_eq!(p.zeta, Some(649.0));
        assert!((DSIGMA.update)(&mut p, Some("nan")).is_err());
    }
}

pub const DQ: Flag = Flag::takes(
    "--dq",
    "DQ",
    "Dq in cm⁻¹ (|Dq| ≤ 100000; tetrahedral Dq is the ion's own, Δt = 10Dq)",
    |p, v| {
        p.dq = Some(number("--dq", v)?);
        Ok(())
    },
);

pub const B: Flag = Flag::takes("--b", "B", "Racah B in cm⁻¹ (≥ 0)", |p, v| {
    p.b = Some(number("--b", v)?);
    Ok(())
});

pub const C: Flag = Flag::takes("--c", "C", "Racah C in cm⁻¹ (≥ 0)", |p, v| {
    p.c = Some(number("--c", v)?);
    Ok(())
});

#[cfg(test)]
mod racah_tests {
    use super::*;
    #[test]
    fn a_non_finite_racah_parameter_is_refused() {
        let mut p = Parsed::default();
        assert!((B.update)(&mut p, Some("inf")).is_err());
        assert!((C.update)(&mut p, Some("nan")).is_err());
        (DQ.update)(&mut p, Some("-1740")).unwrap();
        assert_eq!(p.dq, Some(-1740.0));
    }
}

pub const DUMP_CK: Flag = Flag::switch(
    "--dump-ck",
    "print the angular coefficients c^k(m, m′) (SymPy reference check)",
    |p, _| {
        p.dump_ck = true;
        Ok(())
    },
)
.hidden();

pub const C_OVER_B: Flag = Flag::takes(
    "--c-over-b",
    "G",
    "hold C/B at G (default: the ion's free-ion C₀/B₀, else 4.5)",
    |p, v| {
        p.c_over_b = Some(number("--c-over-b", v)?);
        Ok(())
    },
);

pub const MAX: Flag = Flag::takes(
    "--max",
    "X",
    "the diagram runs from Δ/B = 0 to X (default 40)",
    |p, v| {
        p.max = Some(number("--max", v)?);
        Ok(())
    },
);

pub const POINTS: Flag = Flag::takes(
    "--points",
    "N",
    "points per curve (default 400, at most 100000)",
    |p, v| {
        p.points = Some(whole("--points", v, 0, MAX_DIAGRAM_POINTS)?);
        Ok(())
    },
);

#[cfg(test)]
mod points_tests {
    use super::*;
    #[test]
    fn a_diagram_point_count_above_the_cap_is_refused_with_a_sentence() {
        let mut p = Parsed::default();
        let err = (POINTS.update)(&mut p, Some("100000000")).unwrap_err();
        assert!(err.to_string().contains("from 0 to 100000"), "{err}");
        assert!((POINTS.update)(&mut p, Some("2.5")).is_err());
        (POINTS.update)(&mut p, Some("50")).unwrap();
        assert_eq!(p.points, Some(50));
    }
}

pub const SVG: Flag = Flag::takes("--svg", "FILE", "write the diagram as SVG", |p, v| {
    p.svg = v.map(String::from);
    Ok(())
});

pub const CSV: Flag = Flag::takes(
    "--csv",
    "FILE",
    "write the diagram's curves as CSV",
    |p, v| {
        p.csv = v.map(String::from);
        Ok(())
    },
);

pub const FREE_C: Flag = Flag::switch("--free-c", "fit C too (three or more bands)", |p, _| {
    p.free_c = true;
    Ok(())
});

pub const GLOBAL: Flag = Flag::switch(
    "--global",
    "also fit the whole spectrum with the ligand-field model (band centres tied to Dq, B, C)",
    |p, _| {
        p.global = true;
        Ok(())
    },
);

#[cfg(test)]
mod global_tests {
    use super::*;
    #[test]
    fn the_global_switch_asks_for_the_global_fit() {
        let mut p = Parsed::default();
        assert!(!p.global);
        (GLOBAL.update)(&mut p, None).unwrap();
        assert!(p.global);
    }
}

pub const SPIN_FORBIDDEN: Flag = Flag::switch(
    "--spin-forbidden",
    "consider spin-forbidden (ΔS = ±1) transitions",
    |p, _| {
        p.spin_forbidden = true;
        Ok(())
    },
);

pub const B0_SOURCE: Flag = Flag::takes(
    "--b0-source",
    "NAME",
    "free-ion table for β: common or jolly",
    |p, v| {
        p.b0_source = v.map(String::from);
        Ok(())
    },
);

pub const LIGAND: Flag = Flag::takes(
    "--ligand",
    "L",
    "the ligand (e.g. H2O, NH3, Cl-) for Jørgensen's estimates",
    |p, v| {
        p.ligand = v.map(String::from);
        Ok(())
    },
);

/// `--band` as `fit` reads it: every band is observed.
pub const BAND: Flag = Flag::takes(
    "--band",
    "E[:S[:STATE]]",
    "a band maximum in cm⁻¹, optionally its uncertainty and a forced state",
    update_band,
)
.more("(e.g. 24600:250:4T1g); `--band 33000:x` marks a band as not d–d (repeatable)")
.repeatable();

/// `--band` as `analyze` reads it: it fixes the band found nearest E.
pub const BAND_FIX: Flag = Flag::takes(
    "--band",
    "E:STATE",
    "fix the band found nearest E cm⁻¹ (within 3 %) to STATE (e.g. 23300:4T1g(P));",
    update_band,
)
.more("`--band 23300:x` marks it as not d–d (repeatable)")
.repeatable();

fn update_band(p: &mut Parsed, v: Option<&str>) -> Result<(), CliError> {
    p.bands.push(parse_band(given(v))?);
    Ok(())
}

#[cfg(test)]
mod band_tests {
    use super::*;
    #[test]
    fn a_band_reads_its_energy_uncertainty_state_and_not_dd_mark() {
        let b = parse_band("24600:250:4T1g").unwrap();
        assert_eq!((b.energy, b.sigma), (24600.0, Some(250.0)));
        assert_eq!(b.assign.as_deref(), Some("4T1g"));
        assert!(parse_band("33000:x").unwrap().not_dd);
        assert!(parse_band("far").is_err());
    }
}

pub const OBSERVED_FROM: Flag = Flag::takes(
    "--observed-from",
    "E",
    "the spectrum starts at E cm⁻¹: lower transitions could not be seen",
    |p, v| {
        p.observed_from = Some(number("--observed-from", v)?);
        Ok(())
    },
);

pub const MAX_PREDICTION: Flag = Flag::takes(
    "--max-prediction",
    "E",
    "predict transitions up to E cm⁻¹ (default 50 000)",
    |p, v| {
        p.max_prediction = Some(number("--max-prediction", v)?);
        Ok(())
    },
);

pub const X_UNIT: Flag = Flag::takes(
    "--x-unit",
    "UNIT",
    "the file's x unit: nm, um, cm-1 or eV (default: from the file)",
    |p, v| {
        p.x_unit = Some(usage(given(v).parse::<XUnit>())?);
        Ok(())
    },
);

#[cfg(test)]
mod x_unit_tests {
    use super::*;
    #[test]
    fn an_x_unit_is_read_in_any_case() {
        let mut p = Parsed::default();
        (X_UNIT.update)(&mut p, Some("EV")).unwrap();
        assert_eq!(p.x_unit, Some(XUnit::ElectronVolt));
        assert!((X_UNIT.update)(&mut p, Some("furlong")).is_err());
    }
}

pub const Y_QUANTITY: Flag = Flag::takes(
    "--y-quantity",
    "Q",
    "absorbance, transmittance, %T, epsilon or arbitrary (default: from the file)",
    |p, v| {
        p.y_quantity = Some(usage(given(v).parse::<Quantity>())?);
        Ok(())
    },
);

pub const AIR_TO_VACUUM: Flag = Flag::switch(
    "--air-to-vacuum",
    "wavelengths were measured in air: correct them to vacuum (Ciddor 1996)",
    |p, _| {
        p.air_to_vacuum = true;
        Ok(())
    },
);

pub const CONCENTRATION: Flag = Flag::takes(
    "--concentration",
    "M",
    "concentration in mol/L; with --path-length gives ε = A/(c·l)",
    |p, v| {
        p.concentration = Some(number("--concentration", v)?);
        Ok(())
    },
);

pub const PATH_LENGTH: Flag =
    Flag::takes("--path-length", "CM", "cell path length in cm", |p, v| {
        p.path_length = Some(number("--path-length", v)?);
        Ok(())
    });

pub const EXPORT_CSV: Flag = Flag::takes(
    "--export-csv",
    "FILE",
    "write the converted spectra (cm⁻¹, ascending) as CSV",
    |p, v| {
        p.export_csv = v.map(String::from);
        Ok(())
    },
);

pub const RAW: Flag = Flag::switch(
    "--raw",
    "x and y in file units and file order, no conversion (JSON only)",
    |p, _| {
        p.raw = true;
        Ok(())
    },
)
.hidden();

pub const SAVGOL_COEFFS: Flag = Flag::takes(
    "--savgol-coeffs",
    "W,O,D",
    "Savitzky–Golay coefficients for window W, order O, derivative D",
    |p, v| {
        let text = given(v);
        let parts: Vec<&str> = text.split(',').collect();
        let [w, o, d] = parts[..] else {
            return Err(CliError::Usage(format!(
                "--savgol-coeffs: expected three numbers W,O,D, found '{}'",
                shown(text)
            )));
        };
        let name = "--savgol-coeffs";
        p.savgol_coeffs = Some([
            whole(name, Some(w), 1, MAX_SAVGOL_WINDOW)?,
            whole(name, Some(o), 0, MAX_SAVGOL_WINDOW)?,
            whole(name, Some(d), 0, MAX_SAVGOL_WINDOW)?,
        ]);
        Ok(())
    },
)
.hidden();

#[cfg(test)]
mod savgol_tests {
    use super::*;
    #[test]
    fn a_savitzky_golay_window_above_the_cap_is_refused() {
        let mut p = Parsed::default();
        assert!((SAVGOL_COEFFS.update)(&mut p, Some("99999999,2,0")).is_err());
        assert!((SAVGOL_COEFFS.update)(&mut p, Some("5,2")).is_err());
        (SAVGOL_COEFFS.update)(&mut p, Some("5,2,0")).unwrap();
        assert_eq!(p.savgol_coeffs, Some([5, 2, 0]));
    }
}

pub const BANDS: Flag = Flag::takes(
    "--bands",
    "N|auto",
    "number of bands (default auto: chosen by BIC, up to 6)",
    |p, v| {
        p.band_count = Some(match given(v) {
            "auto" => BandCount::Auto(6),
            text => BandCount::Fixed(
                text.parse()
                    .ok()
                    .filter(|n| (1..=MAX_BANDS).contains(n))
                    .ok_or_else(|| {
                        CliError::Usage(format!(
                            "--bands: '{}' is not a number from 1 to {MAX_BANDS} or 'auto'",
                            shown(text)
                        ))
                    })?,
            ),
        });
        Ok(())
    },
);

#[cfg(test)]
mod bands_tests {
    use super::*;
    #[test]
    fn a_band_count_is_auto_or_one_to_thirty() {
        let mut p = Parsed::default();
        (BANDS.update)(&mut p, Some("auto")).unwrap();
        assert_eq!(p.band_count, Some(BandCount::Auto(6)));
        (BANDS.update)(&mut p, Some("30")).unwrap();
        assert_eq!(p.band_count, Some(BandCount::Fixed(30)));
        assert!((BANDS.update)(&mut p, Some("31")).is_err());
        assert!((BANDS.update)(&mut p, Some("0")).is_err());
    }
}

pub const SHAPE: Flag = Flag::takes(
    "--shape",
    "S",
    "gaussian (default), lorentzian, pseudo-voigt, voigt, skew-gaussian",
    |p, v| {
        p.shape = Some(usage(given(v).parse::<Shape>())?);
        Ok(())
    },
);

pub const BASELINE: Flag = Flag::takes(
    "--baseline",
    "B",
    "auto (default: linear or scattering, by BIC), none,",
    |p, v| {
        p.baseline = match given(v) {
            "auto" => None,
            b => Some(usage(b.parse::<BaselineModel>())?),
        };
        Ok(())
    },
)
.more("constant, linear, polynomial:N, scattering, ct-tail");

#[cfg(test)]
mod shape_and_baseline_tests {
    use super::*;
    #[test]
    fn auto_baseline_leaves_the_choice_to_the_fit_and_shapes_are_checked() {
        let mut p = Parsed::default();
        (BASELINE.update)(&mut p, Some("linear")).unwrap();
        (BASELINE.update)(&mut p, Some("auto")).unwrap();
        assert_eq!(p.baseline, None);
        assert!((BASELINE.update)(&mut p, Some("polynomial:4294967295")).is_err());
        assert!((SHAPE.update)(&mut p, Some("square")).is_err());
    }
}

pub const RANGE: Flag = Flag::takes("--range", "LO:HI", "use only LO–HI cm⁻¹", |p, v| {
    p.range = Some(parse_range(given(v))?);
    Ok(())
});

#[cfg(test)]
mod range_tests {
    use super::*;
    #[test]
    // Exact comparison meant: parsed decimal literals are exact.
    #[allow(clippy::float_cmp)]
    fn a_range_needs_two_finite_ends_in_order() {
        assert_eq!(parse_range("8000:30000").unwrap(), [8000.0, 30000.0]);
        assert!(parse_range("30000:8000").is_err());
        assert!(parse_range("8000:inf").is_err());
        assert!(parse_range("8000").is_err());
    }
}

pub const EPSILON: Flag = Flag::switch(
    "--epsilon",
    "y is ε in L mol⁻¹ cm⁻¹: report oscillator strengths and classes",
    |p, _| {
        p.epsilon = true;
        Ok(())
    },
);

pub const MAX_ITERATIONS_FLAG: Flag = Flag::takes(
    "--max-iterations",
    "N",
    "solver iteration limit (default 200, at most 1000000)",
    |p, v| {
        p.max_iterations = Some(whole("--max-iterations", v, 1, MAX_ITERATIONS)?);
        Ok(())
    },
);

#[cfg(test)]
mod max_iterations_tests {
    use super::*;
    #[test]
    fn an_iteration_limit_of_zero_or_above_a_million_is_refused() {
        let mut p = Parsed::default();
        assert!((MAX_ITERATIONS_FLAG.update)(&mut p, Some("0")).is_err());
        assert!((MAX_ITERATIONS_FLAG.update)(&mut p, Some("1000001")).is_err());
        (MAX_ITERATIONS_FLAG.update)(&mut p, Some("50")).unwrap();
        assert_eq!(p.max_iterations, Some(50));
    }
}

/// The most spectra a file may be asked for by `--spectrum`.
pub const MAX_SPECTRUM: usize = 1_000_000;

pub const SPECTRUM: Flag = Flag::takes(
    "--spectrum",
    "K",
    "the K-th spectrum of the file (default 1)",
    |p, v| {
        p.spectrum = Some(whole("--spectrum", v, 1, MAX_SPECTRUM)? - 1);
        Ok(())
    },
);

pub const CROP: Flag = Flag::takes(
    "--crop",
    "LO-HI",
    "clean: keep only LO–HI cm⁻¹ (before smoothing and baseline)",
    |p, v| {
        let text = given(v);
        let bad = || {
            CliError::Usage(format!(
                "--crop: '{}' should be LO-HI in cm⁻¹, e.g. 12000-30000",
                shown(text)
            ))
        };
        let (a, b) = text.split_once('-').ok_or_else(bad)?;
        let (lo, hi) = (parse_number("--crop", a)?, parse_number("--crop", b)?);
        if lo >= hi {
            return Err(bad());
        }
        p.crop = Some([lo, hi]);
        Ok(())
    },
);

pub const SMOOTH: Flag = Flag::takes(
    "--smooth",
    "savgol:W:O",
    "clean: Savitzky–Golay smoothing, window W points (odd), order O",
    |p, v| {
        let text = given(v);
        let bad = || {
            CliError::Usage(format!(
                "--smooth: '{}' should be savgol:WINDOW:ORDER, e.g. savgol:11:2",
                shown(text)
            ))
        };
        let parts: Vec<&str> = text.split(':').collect();
        let ["savgol", w, o] = parts[..] else {
            return Err(bad());
        };
        let window = whole("--smooth", Some(w), 3, MAX_SAVGOL_WINDOW)?;
        let order = whole("--smooth", Some(o), 0, window - 1)?;
        if window % 2 == 0 {
            return Err(CliError::Usage(format!(
                "--smooth: the window {window} should be an odd number of points"
            )));
        }
        p.smooth = Some([window, order]);
        Ok(())
    },
);

pub const SUBTRACT_BASELINE: Flag = Flag::takes(
    "--subtract-baseline",
    "METHOD",
    "clean: subtract a baseline: polynomial:ORDER[:LO-HI,LO-HI…],",
    |p, v| {
        p.subtract_baseline = Some(parse_baseline_method(given(v))?);
        Ok(())
    },
)
.more("rubber_band, asls[:LAMBDA:P], arpls[:LAMBDA], scattering[:N] (as the page names them)");

/// A baseline method spelled as the page's cleaning panel names it; omitted
/// parameters take the defaults of `analysis::defaults`.
pub fn parse_baseline_method(text: &str) -> Result<BaselineMethod, CliError> {
    let bad = |why: &str| {
        CliError::Usage(format!(
            "--subtract-baseline: '{}' {why}; see `--help`",
            shown(text)
        ))
    };
    let mut parts = text.split(':');
    let kind = parts.next().unwrap_or_default();
    let args: Vec<&str> = parts.collect();
    let default = ddlens::analysis::defaults::Defaults::get()
        .cleaning
        .baselines
        .into_iter()
        .find(|m| method_name(m) == kind)
        .ok_or_else(|| bad("is not polynomial, rubber_band, asls, arpls or scattering"))?;
    let n = |i: usize| parse_number("--subtract-baseline", args[i]);
    let method = match (default, args.len()) {
        (m, 0) => m,
        (BaselineMethod::Polynomial { .. }, 1 | 2) => {
            let order = whole("--subtract-baseline", Some(args[0]), 0, 8)?;
            let mut regions = Vec::new();
            for r in args.get(1).iter().flat_map(|t| t.split(',')) {
                let (a, b) = r
                    .split_once('-')
                    .ok_or_else(|| bad("has a region that is not LO-HI"))?;
                let (lo, hi) = (
                    parse_number("--subtract-baseline", a)?,
                    parse_number("--subtract-baseline", b)?,
                );
                regions.push([lo.min(hi), lo.max(hi)]);
            }
            BaselineMethod::Polynomial { order, regions }
        }
        (BaselineMethod::Asls { .. }, 2) => BaselineMethod::Asls {
            lambda: n(0)?,
            p: n(1)?,
        },
        (BaselineMethod::Arpls { .. }, 1) => BaselineMethod::Arpls { lambda: n(0)? },
        (BaselineMethod::Scattering { .. }, 1) => BaselineMethod::Scattering {
            exponent: Some(n(0)?),
        },
        _ => return Err(bad("has the wrong number of parameters")),
    };
    Ok(method)
}

/// The page's name of a baseline method.
fn method_name(m: &BaselineMethod) -> &'static str {
    match m {
        BaselineMethod::Polynomial { .. } => "polynomial",
        BaselineMethod::RubberBand => "rubber_band",
        BaselineMethod::Asls { .. } => "asls",
        BaselineMethod::Arpls { .. } => "arpls",
        BaselineMethod::Scattering { .. } => "scattering",
    }
}

#[cfg(test)]
mod cleaning_tests {
    use super::*;
    #[test]
    fn cleaning_flags_read_the_page_spellings() {
        let mut p = Parsed::default();
        (CROP.update)(&mut p, Some("12000-30000")).unwrap();
        assert_eq!(p.crop, Some([12000.0, 30000.0]));
        assert!((CROP.update)(&mut p, Some("30000-12000")).is_err());
        (SMOOTH.update)(&mut p, Some("savgol:11:2")).unwrap();
        assert_eq!(p.smooth, Some([11, 2]));
        assert!((SMOOTH.update)(&mut p, Some("savgol:10:2")).is_err());
        assert!((SMOOTH.update)(&mut p, Some("boxcar:11")).is_err());
        assert_eq!(
            parse_baseline_method("asls:1e6:0.02").unwrap(),
            BaselineMethod::Asls {
                lambda: 1e6,
                p: 0.02
            }
        );
        assert_eq!(
            parse_baseline_method("polynomial:2:9000-10500,28000-30000").unwrap(),
            BaselineMethod::Polynomial {
                order: 2,
                regions: vec![[9000.0, 10500.0], [28000.0, 30000.0]]
            }
        );
        assert_eq!(
            parse_baseline_method("rubber_band").unwrap(),
            BaselineMethod::RubberBand
        );
        // Without parameters a method takes the page's defaults.
        assert!(matches!(
            parse_baseline_method("arpls").unwrap(),
            BaselineMethod::Arpls { .. }
        ));
        assert!(parse_baseline_method("asls:1e6").is_err());
        assert!(parse_baseline_method("spline").is_err());
    }
}

pub const SAVE_PROJECT: Flag = Flag::takes(
    "--save-project",
    "OUT.json",
    "also write the analysis as a project file (with its data) the page opens",
    |p, v| {
        p.save_project = Some(given(v).to_string());
        Ok(())
    },
);

pub const PROJECT: Flag = Flag::takes(
    "--project",
    "P.json",
    "recompute every sample of a saved project (instead of FILE)",
    |p, v| {
        p.project = Some(given(v).to_string());
        Ok(())
    },
);

/// Stage one: the words after the command name, read against `flags`.
pub fn parse(words: &[String], flags: &[&Flag], command: &str) -> Result<Parsed, CliError> {
    let mut parsed = Parsed::default();
    let mut seen: Vec<&str> = Vec::new();
    let mut i = 0;
    while i < words.len() {
        let word = &words[i];
        i += 1;
        if !word.starts_with('-') || word == "-" {
            parsed.positionals.push(word.clone());
            continue;
        }
        let (name, inline) = match word.split_once('=') {
            Some((n, v)) if n.starts_with("--") => (n, Some(v.to_string())),
            _ => (word.as_str(), None),
        };
        let flag = flags
            .iter()
            .find(|f| f.name == name || f.short == Some(name))
            .ok_or_else(|| {
                CliError::Usage(format!(
                    "'{}' is not an option of `ddlens {command}`; see `ddlens {command} --help`",
                    shown(name)
                ))
            })?;
        if !flag.repeat && seen.contains(&flag.name) {
            return Err(CliError::Usage(format!(
                "{} given more than once",
                flag.name
            )));
        }
        seen.push(flag.name);
        let value = match (flag.value, inline) {
            (None, None) => None,
            (None, Some(_)) => {
                return Err(CliError::Usage(format!("{} takes no value", flag.name)))
            }
            (Some(_), Some(v)) => Some(v),
            (Some(_), None) => {
                let v = words
                    .get(i)
                    .ok_or_else(|| CliError::Usage(format!("{} needs a value", flag.name)))?;
                i += 1;
                Some(v.clone())
            }
        };
        (flag.update)(&mut parsed, value.as_deref())?;
    }
    Ok(parsed)
}

/// A command's help: its header, then one entry per visible flag.
pub fn help(header: &str, flags: &[&Flag]) -> String {
    let mut out = String::from(header);
    out.push_str("\nOPTIONS:\n");
    for f in flags.iter().filter(|f| !f.hidden) {
        let mut spelling = match f.short {
            Some(s) => format!("{s}, {}", f.name),
            None => f.name.to_string(),
        };
        if let Some(v) = f.value {
            spelling = format!("{spelling} {v}");
        }
        let _ = writeln!(out, "    {spelling:<22} {}", f.help);
        for line in f.long.lines() {
            let _ = writeln!(out, "    {:<22} {line}", "");
        }
    }
    out
}

#[cfg(test)]
mod parse_tests {
    use super::*;

    fn words(s: &str) -> Vec<String> {
        s.split_whitespace().map(String::from).collect()
    }

    #[test]
    fn values_switches_repeats_and_positionals_are_read_in_one_pass() {
        let p = parse(
            &words("--band 17400 --band=24600:200 --json FILE --dq 5"),
            &[&BAND, &JSON, &DQ],
            "fit",
        )
        .unwrap();
        assert_eq!(p.bands.len(), 2);
        assert!(p.json);
        assert_eq!(p.dq, Some(5.0));
        assert_eq!(p.positionals, vec!["FILE"]);
    }

    #[test]
    fn an_unknown_option_is_named_and_help_is_suggested() {
        let err = parse(&words("--bogus"), &[&JSON], "levels").unwrap_err();
        let text = err.to_string();
        assert!(text.contains("'--bogus'") && text.contains("ddlens levels --help"));
    }

    #[test]
    fn a_single_option_given_twice_or_without_its_value_is_refused() {
        assert!(parse(&words("--dq 1 --dq 2"), &[&DQ], "levels").is_err());
        assert!(parse(&words("--dq"), &[&DQ], "levels").is_err());
        assert!(parse(&words("--json=yes"), &[&JSON], "levels").is_err());
    }

    #[test]
    fn the_help_lists_every_visible_flag_and_no_hidden_one() {
        let text = help("header\n", &[&HELP, &RANGE, &RAW]);
        assert!(text.contains("-h, --help") && text.contains("--range LO:HI"));
        assert!(!text.contains("--raw"));
    }
}
