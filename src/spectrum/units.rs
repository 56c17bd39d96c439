//! Units of the x axis and quantities of the y axis.
//!
//! - x: ν̃ \[cm⁻¹\] = 10⁷/λ\[nm\] = 10⁴/λ\[µm\] = E\[eV\]·e/(hc); e/(hc) is computed from the
//!   exact SI 2019 constants (e = 1.602176634e-19 C, h = 6.62607015e-34 J s,
//!   c = 299792458 m/s), ≈ 8065.544 cm⁻¹ per eV.
//! - air → vacuum: λ_vac = n(λ)·λ_air with the refractive index of standard air
//!   (15 °C, 101.325 kPa, dry, 450 ppm CO₂) from P. E. Ciddor, "Refractive index
//!   of air: new equations for the visible and near infrared", Appl. Opt. 35
//!   (1996) 1566, eq. (1): (n−1)·10⁸ = 5792105/(238.0185 − σ²) + 167917/(57.362 − σ²),
//!   σ = 1/λ in µm⁻¹, valid 0.23–1.69 µm. It is ≈ +5.6 cm⁻¹ at 500 nm.
//! - y: A = −log₁₀ T, A = 2 − log₁₀ %T (IUPAC photochemistry glossary 1996,
//!   "Absorbance"), ε = A/(c·l) (Beer–Lambert), ε = 10^(log ε).

use serde::{Deserialize, Serialize};
use std::str::FromStr;

/// The unit of a file's x axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum XUnit {
    #[serde(rename = "nm")]
    Nanometre,
    #[serde(rename = "um")]
    Micrometre,
    #[serde(rename = "cm-1")]
    Wavenumber,
    #[serde(rename = "eV")]
    ElectronVolt,
}

/// What the ordinate holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    Absorbance,
    /// Transmittance on a 0–1 scale.
    Transmittance,
    /// Transmittance in percent (0–100).
    PercentTransmittance,
    /// Molar (decadic) absorption coefficient ε in L mol⁻¹ cm⁻¹.
    MolarAbsorptivity,
    /// Anything else (counts, arbitrary units).
    Arbitrary,
}

/// cm⁻¹ per eV: e/(h c) with c in cm/s, from the exact SI constants.
pub const WAVENUMBER_PER_EV: f64 = 1.602_176_634e-19 / (6.626_070_15e-34 * 2.997_924_58e10);

/// Shortest and longest wavelength (nm) where Ciddor (1996) is stated valid.
pub const CIDDOR_VALID_NM: [f64; 2] = [230.0, 1690.0];

impl XUnit {
    /// A short label for tables: "nm", "µm", "cm⁻¹", "eV".
    pub fn symbol(self) -> &'static str {
        match self {
            XUnit::Nanometre => "nm",
            XUnit::Micrometre => "µm",
            XUnit::Wavenumber => "cm⁻¹",
            XUnit::ElectronVolt => "eV",
        }
    }

    /// Is this a wavelength (where air and vacuum differ)?
    pub fn is_wavelength(self) -> bool {
        matches!(self, XUnit::Nanometre | XUnit::Micrometre)
    }

    /// Converts one x value to cm⁻¹ (no air correction); `None` if not positive.
    pub fn to_wavenumber(self, x: f64) -> Option<f64> {
        if x.is_nan() || x <= 0.0 || x.is_infinite() {
            return None;
        }
        Some(match self {
            XUnit::Nanometre => 1e7 / x,
            XUnit::Micrometre => 1e4 / x,
            XUnit::Wavenumber => x,
            XUnit::ElectronVolt => x * WAVENUMBER_PER_EV,
        })
    }

    /// Reads a unit from a header or label such as "Wavelength (nm)", "1/CM",
    /// "MICROMETERS", "Energy / eV"; `None` when no unit word is present.
    pub fn detect(label: &str) -> Option<XUnit> {
        let lower = label.to_lowercase();
        let compact: String = lower.chars().filter(|c| !c.is_whitespace()).collect();
        let wavenumber_marks = [
            "cm-1",
            "cm^-1",
            "cm⁻¹",
            "1/cm",
            "cm**-1",
            "cm−1",
            "wavenumber",
        ];
        if wavenumber_marks.iter().any(|m| compact.contains(m)) {
            return Some(XUnit::Wavenumber);
        }
        let words: Vec<&str> = lower
            .split(|c: char| !(c.is_alphanumeric() || c == 'µ' || c == 'μ'))
            .filter(|w| !w.is_empty())
            .collect();
        let has = |names: &[&str]| words.iter().any(|w| names.contains(w));
        if has(&["nm", "nanometers", "nanometer", "nanometres", "nanometre"]) {
            Some(XUnit::Nanometre)
        } else if has(&[
            "µm",
            "μm",
            "um",
            "micrometers",
            "micrometer",
            "micrometres",
            "micrometre",
            "micron",
            "microns",
        ]) {
            Some(XUnit::Micrometre)
        } else if has(&["ev", "electronvolt", "electronvolts"]) {
            Some(XUnit::ElectronVolt)
        } else if has(&["wavelength", "wellenlänge", "lambda", "λ"]) {
            Some(XUnit::Nanometre)
        } else {
            None
        }
    }
}

impl FromStr for XUnit {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_lowercase().as_str() {
            "nm" | "nanometre" | "nanometer" => Ok(XUnit::Nanometre),
            "um" | "µm" | "μm" | "micrometre" | "micrometer" => Ok(XUnit::Micrometre),
            "cm-1" | "cm^-1" | "1/cm" | "cm⁻¹" | "wavenumber" => Ok(XUnit::Wavenumber),
            "ev" => Ok(XUnit::ElectronVolt),
            other => Err(format!("unknown x unit '{other}'; use nm, um, cm-1 or eV")),
        }
    }
}

/// What a y header or YUNITS says, including log ε (converted to ε on import).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum YLabel {
    Quantity(Quantity),
    LogMolarAbsorptivity,
}

impl Quantity {
    /// A short label for tables.
    pub fn describe(self) -> &'static str {
        match self {
            Quantity::Absorbance => "absorbance",
            Quantity::Transmittance => "transmittance (0–1)",
            Quantity::PercentTransmittance => "transmittance (%)",
            Quantity::MolarAbsorptivity => "ε (L mol⁻¹ cm⁻¹)",
            Quantity::Arbitrary => "arbitrary units",
        }
    }

    /// Reads a quantity from a header or YUNITS label ("Abs", "%T",
    /// "TRANSMITTANCE", "Logarithm epsilon", "ε / M-1 cm-1").
    pub fn detect(label: &str) -> Option<YLabel> {
        let lower = label.to_lowercase();
        let compact: String = lower.chars().filter(|c| !c.is_whitespace()).collect();
        let words: Vec<&str> = lower
            .split(|c: char| !(c.is_alphanumeric() || c == '%' || c == 'ε'))
            .filter(|w| !w.is_empty())
            .collect();
        let has = |names: &[&str]| words.iter().any(|w| names.contains(w));
        let epsilon = has(&["epsilon", "ε", "absorptivity", "extinction"])
            || compact.contains("m-1cm-1")
            || compact.contains("lmol-1cm-1")
            || compact.contains("l/(mol*cm)")
            || compact.contains("l/(mol·cm)")
            || compact.contains("l/molcm");
        if epsilon {
            return Some(if has(&["log", "logarithm", "lg", "log10"]) {
                YLabel::LogMolarAbsorptivity
            } else {
                YLabel::Quantity(Quantity::MolarAbsorptivity)
            });
        }
        if compact.contains("%t") || has(&["%", "percent", "percenttransmittance"]) {
            return Some(YLabel::Quantity(Quantity::PercentTransmittance));
        }
        if lower.trim() == "a" || has(&["abs", "absorbance", "od", "extinktion", "absorption"]) {
            return Some(YLabel::Quantity(Quantity::Absorbance));
        }
        if has(&["t", "transmittance", "transmission", "trans"]) {
            return Some(YLabel::Quantity(Quantity::Transmittance));
        }
        if has(&[
            "counts",
            "arbitrary",
            "intensity",
            "au",
            "a.u",
            "reflectance",
        ]) {
            return Some(YLabel::Quantity(Quantity::Arbitrary));
        }
        None
    }

    /// Absorbance from this quantity; `None` for quantities that are not transmittances
    /// or absorbance, or for T ≤ 0 (no finite absorbance).
    pub fn to_absorbance(self, y: f64) -> Option<f64> {
        match self {
            Quantity::Absorbance => Some(y),
            Quantity::Transmittance if y > 0.0 => Some(-y.log10()),
            Quantity::PercentTransmittance if y > 0.0 => Some(2.0 - y.log10()),
            _ => None,
        }
    }
}

impl FromStr for Quantity {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_lowercase().as_str() {
            "absorbance" | "a" | "abs" => Ok(Quantity::Absorbance),
            "transmittance" | "t" => Ok(Quantity::Transmittance),
            "percent-transmittance" | "percent_transmittance" | "%t" | "percent" => {
                Ok(Quantity::PercentTransmittance)
            }
            "molar-absorptivity" | "molar_absorptivity" | "epsilon" | "ε" => {
                Ok(Quantity::MolarAbsorptivity)
            }
            "arbitrary" => Ok(Quantity::Arbitrary),
            other => Err(format!(
                "unknown y quantity '{other}'; use absorbance, transmittance, %T, epsilon or arbitrary"
            )),
        }
    }
}

/// (n − 1) of standard air at vacuum wavelength `lambda_vac_nm` (Ciddor 1996, eq. 1).
pub fn air_refractivity_ciddor(lambda_vac_nm: f64) -> f64 {
    let sigma2 = (1e3 / lambda_vac_nm).powi(2);
    (5_792_105.0 / (238.0185 - sigma2) + 167_917.0 / (57.362 - sigma2)) * 1e-8
}

/// Vacuum wavelength from a wavelength measured in standard air. n depends on the
/// vacuum wavelength, so two fixed-point steps are taken (each changes λ by
/// ≈ 3·10⁻⁴ relative; the second step's change is below 10⁻¹⁰).
pub fn air_to_vacuum_nm(lambda_air_nm: f64) -> f64 {
    let mut lambda_vac = lambda_air_nm;
    for _ in 0..2 {
        lambda_vac = lambda_air_nm * (1.0 + air_refractivity_ciddor(lambda_vac));
    }
    lambda_vac
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn detects_units_from_headers() {
        assert_eq!(XUnit::detect("Wavelength (nm)"), Some(XUnit::Nanometre));
        assert_eq!(XUnit::detect("1/CM"), Some(XUnit::Wavenumber));
        assert_eq!(XUnit::detect("MICROMETERS"), Some(XUnit::Micrometre));
        assert_eq!(XUnit::detect("Wavenumber / cm-1"), Some(XUnit::Wavenumber));
        assert_eq!(XUnit::detect("Energy (eV)"), Some(XUnit::ElectronVolt));
        assert_eq!(XUnit::detect("Environment"), None);
        assert_eq!(
            Quantity::detect("Logarithm epsilon"),
            Some(YLabel::LogMolarAbsorptivity)
        );
        assert_eq!(
            Quantity::detect("%T"),
            Some(YLabel::Quantity(Quantity::PercentTransmittance))
        );
        assert_eq!(
            Quantity::detect("ABSORBANCE"),
            Some(YLabel::Quantity(Quantity::Absorbance))
        );
        assert_eq!(
            Quantity::detect("TRANSMITTANCE"),
            Some(YLabel::Quantity(Quantity::Transmittance))
        );
    }

    #[test]
    fn electronvolt_and_transmittance_conversions() {
        // CODATA 2018 (NIST): 1 eV ↔ 8065.543937... cm⁻¹.
        assert!((WAVENUMBER_PER_EV - 8_065.543_937).abs() < 1e-5);
        // A = 2 − log10(%T): 10 %T is A = 1; T = 0.001 is A = 3 (IUPAC definition).
        assert!((Quantity::PercentTransmittance.to_absorbance(10.0).unwrap() - 1.0).abs() < 1e-12);
        assert!((Quantity::Transmittance.to_absorbance(0.001).unwrap() - 3.0).abs() < 1e-12);
        assert_eq!(Quantity::Transmittance.to_absorbance(0.0), None);
    }

    #[test]
    fn ciddor_air_correction_matches_published_size() {
        // refractiveindex.info (Ciddor 1996 page) lists n = 1.00027896 at 0.5 µm (from memory
        // to the last digit; the research note's table gives 279.0e-6).
        assert!((air_refractivity_ciddor(500.0) - 279.0e-6).abs() < 0.2e-6);
        // Independent formula: IAU standard (Morton 2000, after Birch & Downs 1994),
        // n − 1 = 8.34254e-5 + 2.406147e-2/(130 − s²) + 1.5998e-4/(38.9 − s²), s = 10⁴/λ_vac[Å].
        // Ciddor and Morton agree to < 1e-7 in n above 300 nm.
        for lambda in [300.0, 400.0, 500.0, 650.0, 900.0, 1500.0] {
            let s2 = (1e4 / (lambda * 10.0_f64)).powi(2);
            let morton = 8.342_54e-5 + 2.406_147e-2 / (130.0 - s2) + 1.599_8e-4 / (38.9 - s2);
            assert!(
                (air_refractivity_ciddor(lambda) - morton).abs() < 1e-7,
                "{lambda}"
            );
        }
        // The research note (CALC from Ciddor): ν̃_air − ν̃_vac ≈ 5.6 cm⁻¹ at 500 nm.
        let shift = 1e7 / 500.0 - 1e7 / air_to_vacuum_nm(500.0);
        assert!((shift - 5.6).abs() < 0.05, "shift {shift}");
    }
}
