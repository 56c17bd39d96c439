//! Exact dⁿ energy levels (n = 1…9) in octahedral and tetrahedral fields, and
//! (in `site` with [`field`]) in fields of any symmetry with spin–orbit coupling.
//!
//! The full configuration-interaction problem of dⁿ in a cubic field with
//! Racah B, C interelectronic repulsion (Tanabe & Sugano, J. Phys. Soc. Jpn. 9
//! (1954) 753; Griffith 1961), solved in the determinant basis and reduced by
//! symmetry to tiny blocks (see [`model`]). Energies are in cm⁻¹ above the
//! ground level. Conventions: octahedral e_g at +6Dq and t2g at −4Dq; the
//! tetrahedral field is the same operator with the sign reversed, in the
//! tetrahedral ion's own Dq (Δt = 10Dq_t, e below t2).
//!
//! Accepted input: n = 1…9; B and C finite and ≥ 0; Dq finite with
//! |Dq| ≤ 100 000 cm⁻¹ (negative Dq reverses the field).

mod angular;
mod curvature;
mod determinants;
mod diagram;
mod eigen;
pub mod field;
mod model;
mod site;

pub use angular::{ck, wigner_3j};
pub use curvature::level_curvature;
pub use diagram::{diagram, spin_change, Curve, Diagram};
pub use field::{FieldMatrix, Ligand};
pub use model::{Block, Irrep, Model};
pub use site::{full_site_matrix, site_levels, Site, SiteLevel, MAX_ABS_ZETA};

use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;
use std::sync::OnceLock;

/// Largest |Dq| accepted, cm⁻¹.
pub const MAX_ABS_DQ: f64 = 1e5;

/// The cubic site symmetry.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Geometry {
    Octahedral,
    Tetrahedral,
}

impl Geometry {
    pub fn name(self) -> &'static str {
        match self {
            Geometry::Octahedral => "octahedral",
            Geometry::Tetrahedral => "tetrahedral",
        }
    }
}

impl fmt::Display for Geometry {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Geometry {
    type Err = LfError;
    fn from_str(s: &str) -> Result<Self, LfError> {
        match s.trim().to_ascii_lowercase().as_str() {
            "octahedral" | "oh" => Ok(Geometry::Octahedral),
            "tetrahedral" | "td" => Ok(Geometry::Tetrahedral),
            _ => Err(LfError::UnknownGeometry(s.to_string())),
        }
    }
}

/// Ligand-field parameters, cm⁻¹.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Params {
    pub dq: f64,
    pub b: f64,
    pub c: f64,
}

/// One energy level (a (2S+1)Γ multiplet) of dⁿ.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Level {
    /// cm⁻¹ above the ground level.
    pub energy: f64,
    /// 2S + 1.
    pub multiplicity: u8,
    /// "T1g" (Oh) or "T1" (Td).
    pub irrep: String,
    /// "4T1g(P)"; the parent term is added only when the (2S+1)Γ occurs more than once.
    pub label: String,
    /// "⁴T₁g(P)".
    pub typeset: String,
    /// (2S+1)·dim Γ.
    pub degeneracy: usize,
    /// Letter of the free-ion term the level goes to as Dq → 0.
    pub parent: String,
    /// Leading strong-field configuration, "t2g^2eg^1" or "e^2t2^1".
    pub configuration: String,
    /// Weight of that configuration in the state (0…1).
    pub weight: f64,
    /// ∂energy/∂Dq, ∂energy/∂B, ∂energy/∂C of the energy above ground (Hellmann–Feynman).
    pub d_dq: f64,
    pub d_b: f64,
    pub d_c: f64,
}

/// Why a ligand-field calculation was refused.
#[derive(Debug, Clone, PartialEq)]
pub enum LfError {
    /// The configuration (as written) is not d1…d9.
    Configuration(String),
    /// A parameter is not a finite number, or B or C is negative.
    Parameter { name: &'static str, value: f64 },
    /// |Dq| is beyond the accepted range.
    FieldTooLarge(f64),
    /// A parameter's size is beyond its accepted range.
    OutOfRange {
        name: &'static str,
        value: f64,
        limit: f64,
    },
    /// The ligand list cannot define a field (none, on the metal, or two in one direction).
    Ligands(String),
    /// The geometry name is not octahedral/oh or tetrahedral/td.
    UnknownGeometry(String),
    /// A diagram request (range, points or C/B) is out of range.
    Diagram(String),
}

impl fmt::Display for LfError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LfError::Configuration(text) => write!(
                f,
                "'{text}' is not a configuration this tool handles: use d1 to d9"
            ),
            LfError::Parameter { name, value } => write!(
                f,
                "{name} = {value} is not allowed: it must be a finite number of cm⁻¹, not negative"
            ),
            LfError::FieldTooLarge(dq) => write!(
                f,
                "Dq = {dq} cm⁻¹ is outside the accepted range of ±{MAX_ABS_DQ} cm⁻¹"
            ),
            LfError::OutOfRange { name, value, limit } => write!(
                f,
                "{name} = {value} cm⁻¹ is outside the accepted range of ±{limit} cm⁻¹"
            ),
            LfError::Ligands(message) => write!(f, "the ligands cannot be used: {message}"),
            LfError::UnknownGeometry(g) => write!(
                f,
                "unknown geometry '{g}': use octahedral (oh) or tetrahedral (td)"
            ),
            LfError::Diagram(message) => f.write_str(message),
        }
    }
}

impl std::error::Error for LfError {}

/// Parses "d3" or "3" into the number of d electrons.
pub fn parse_configuration(text: &str) -> Result<u8, LfError> {
    let digits = text.trim().trim_start_matches(['d', 'D']);
    match digits.parse::<i64>() {
        Ok(n) if (1..=9).contains(&n) => Ok(n as u8),
        _ => Err(LfError::Configuration(text.to_string())),
    }
}

fn check_configuration(n: i64) -> Result<u8, LfError> {
    if (1..=9).contains(&n) {
        Ok(n as u8)
    } else {
        Err(LfError::Configuration(format!("d{n}")))
    }
}

/// Checks (Dq, B, C) against the accepted ranges.
pub fn check_params(p: &Params) -> Result<(), LfError> {
    if !p.dq.is_finite() {
        return Err(LfError::Parameter {
            name: "Dq",
            value: p.dq,
        });
    }
    if p.dq.abs() > MAX_ABS_DQ {
        return Err(LfError::FieldTooLarge(p.dq));
    }
    for (name, value) in [("B", p.b), ("C", p.c)] {
        if !value.is_finite() || value < 0.0 {
            return Err(LfError::Parameter { name, value });
        }
    }
    Ok(())
}

static MODELS: [OnceLock<Model>; 18] = [const { OnceLock::new() }; 18];

/// The blocked model of dⁿ in `geometry`, built on first use and cached.
pub fn model(n: u8, geometry: Geometry) -> Result<&'static Model, LfError> {
    let n = check_configuration(i64::from(n))?;
    let slot = usize::from(n - 1) * 2 + usize::from(geometry == Geometry::Tetrahedral);
    let cell = MODELS
        .get(slot)
        .ok_or_else(|| LfError::Configuration(format!("d{n}")))?;
    Ok(cell.get_or_init(|| Model::build(n, geometry)))
}

impl Model {
    /// All levels, lowest first, with energies above the ground level.
    ///
    /// For octahedral d³ the first spin-allowed band, ⁴A₂g → ⁴T₂g, lies at
    /// exactly 10Dq whatever B and C are (Tanabe & Sugano, J. Phys. Soc. Jpn.
    /// 9, 753 (1954)), and the ground level is the quartet ⁴A₂g:
    ///
    /// ```
    /// use ddlens::ligand_field::{model, Geometry, Params};
    ///
    /// let d3 = model(3, Geometry::Octahedral)?;
    /// for (b, c) in [(700.0, 3_150.0), (500.0, 2_000.0)] {
    ///     let levels = d3.levels(&Params { dq: 1_750.0, b, c })?;
    ///     assert_eq!((levels[0].label.as_str(), levels[0].energy), ("4A2g", 0.0));
    ///     let t2 = levels.iter().find(|l| l.label == "4T2g").unwrap();
    ///     assert!((t2.energy - 17_500.0).abs() < 1e-6, "{}", t2.energy);
    /// }
    /// # Ok::<(), ddlens::ligand_field::LfError>(())
    /// ```
    pub fn levels(&self, p: &Params) -> Result<Vec<Level>, LfError> {
        check_params(p)?;
        Ok(self.evaluate(p))
    }
}

/// The full determinant-basis matrices (V for Dq = 1, K_B, K_C) of dⁿ, unblocked:
/// C(10, n) rows. Used by tests and the benchmark as an independent path.
pub fn full_matrices(n: u8, geometry: Geometry) -> Result<[nalgebra::DMatrix<f64>; 3], LfError> {
    let n = check_configuration(i64::from(n))?;
    let basis = determinants::Basis::new(n);
    let all: Vec<usize> = (0..basis.masks.len()).collect();
    let sign = if geometry == Geometry::Octahedral {
        1.0
    } else {
        -1.0
    };
    Ok([
        determinants::matrix(&basis, &all, &all, &determinants::cubic_field(sign)),
        determinants::matrix(&basis, &all, &all, &determinants::Coulomb::racah_b()),
        determinants::matrix(&basis, &all, &all, &determinants::Coulomb::racah_c()),
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn class_sum_is_real() {
        // The C₄ class sum commutes with complex conjugation of CS coefficients,
        // so its matrix must be real; checked on the largest d⁵ block.
        let basis = determinants::Basis::new(5);
        let block: Vec<usize> = (0..basis.masks.len())
            .filter(|&d| {
                determinants::two_ms(basis.masks[d]) == 1
                    && determinants::ml(basis.masks[d]).rem_euclid(4) == 0
            })
            .collect();
        let (_, imaginary) = determinants::fourfold_class_sum(&basis, &block);
        assert!(imaginary < 1e-10, "imaginary part {imaginary}");
    }
}
