//! One-electron ligand fields of any symmetry: a Hermitian 5×5 matrix on the
//! complex d orbitals |m⟩ (Condon–Shortley phases, the basis of
//! `determinants`).
//!
//! Sources of the field:
//! - cubic Dq: the octahedral operator of the method notes (sign reversed for a
//!   tetrahedron, in the tetrahedral ion's own Dq);
//! - tetragonal D4h (z the fourfold axis): Dq plus Ds·(2, −1, −2, −1, 2) and
//!   Dt·(−1, 4, −6, 4, −1) on m = −2…2, so that the d¹ energies are x²−y²
//!   6Dq+2Ds−Dt, z² 6Dq−2Ds−6Dt, xy −4Dq+2Ds−Dt, xz/yz −4Dq−Ds+4Dt (the usual
//!   convention: Lever, *Inorganic Electronic Spectroscopy*, 1984; König &
//!   Kremer, *Ligand Field Energy Diagrams*, 1977);
//! - trigonal D3/D3d (z the threefold axis): the octahedral operator rotated so
//!   that a body diagonal of the octahedron lies along z, plus Dσ and Dτ with the
//!   same diagonal forms as Ds and Dt about that axis, so that the t2g-derived
//!   a1 orbital (d_z² along the threefold axis) lies at −4Dq − 2Dσ − 6Dτ (the
//!   convention of Perumareddi, J. Phys. Chem. 71 (1967) 3144; from memory);
//! - the angular overlap model: each ligand adds eσ·|σ⟩⟨σ| + eπx·|πx⟩⟨πx| +
//!   eπy·|πy⟩⟨πy|, where σ, πx, πy are the d functions of the ligand's local
//!   frame (d_z′², d_x′z′, d_y′z′ with z′ towards the ligand), expressed in the
//!   global orbitals by the angular overlap of their quadratic forms (Schäffer
//!   & Jørgensen, Mol. Phys. 9 (1965) 401; Schäffer, Struct. Bonding 5 (1968) 68).
//!   For a regular octahedron this gives 10Dq = 3eσ − 4eπ, for a regular
//!   tetrahedron 10Dq = (4/9)(3eσ − 4eπ).
//!
//! Every field is returned traceless (its barycentre at zero): a common shift of
//! all d orbitals changes no level spacing.

use super::determinants::{d_rotation, harmonic_forms};
use super::{Geometry, LfError, MAX_ABS_DQ};
use nalgebra::{Complex, Matrix3, Matrix5, Vector3};

/// A one-electron field on the complex d orbitals, indexed m + 2.
pub type FieldMatrix = Matrix5<Complex<f64>>;

/// Largest |eσ|, |eπ| accepted, cm⁻¹.
pub const MAX_ABS_AOM: f64 = 1e5;
/// Largest number of ligands accepted.
pub const MAX_LIGANDS: usize = 24;

/// One ligand of the angular overlap model: its position relative to the metal
/// (only the direction counts) and its bonding parameters, cm⁻¹.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Ligand {
    pub x: f64,
    pub y: f64,
    pub z: f64,
    pub e_sigma: f64,
    /// π parameter along the local x′ axis (and along y′ unless `e_pi_y` is given).
    pub e_pi: f64,
    /// π parameter along the local y′ axis when the π bonding is anisotropic.
    #[serde(default)]
    pub e_pi_y: Option<f64>,
}

fn real(x: f64) -> Complex<f64> {
    Complex::new(x, 0.0)
}

fn diagonal(values: [f64; 5]) -> FieldMatrix {
    FieldMatrix::from_fn(|i, j| if i == j { real(values[i]) } else { real(0.0) })
}

/// The octahedral operator for Dq = 1 (method notes), z along a fourfold axis.
fn octahedral_unit() -> FieldMatrix {
    let mut v = diagonal([1.0, -4.0, 6.0, -4.0, 1.0]);
    v[(0, 4)] = real(5.0);
    v[(4, 0)] = real(5.0);
    v
}

/// The Ds form (2, −1, −2, −1, 2) and the Dt form (−1, 4, −6, 4, −1) on m = −2…2.
fn axial_forms() -> (FieldMatrix, FieldMatrix) {
    (
        diagonal([2.0, -1.0, -2.0, -1.0, 2.0]),
        diagonal([-1.0, 4.0, -6.0, 4.0, -1.0]),
    )
}

fn check(name: &'static str, value: f64, limit: f64) -> Result<(), LfError> {
    if !value.is_finite() {
        return Err(LfError::Parameter { name, value });
    }
    if value.abs() > limit {
        return Err(LfError::OutOfRange { name, value, limit });
    }
    Ok(())
}

/// The cubic field of `geometry` with the given Dq.
pub fn cubic(geometry: Geometry, dq: f64) -> Result<FieldMatrix, LfError> {
    check("Dq", dq, MAX_ABS_DQ)?;
    let sign = if geometry == Geometry::Octahedral {
        1.0
    } else {
        -1.0
    };
    Ok(octahedral_unit() * real(sign * dq))
}

/// The tetragonal D4h field (z the fourfold axis).
pub fn tetragonal(dq: f64, ds: f64, dt: f64) -> Result<FieldMatrix, LfError> {
    check("Ds", ds, MAX_ABS_DQ)?;
    check("Dt", dt, MAX_ABS_DQ)?;
    let (s, t) = axial_forms();
    Ok(cubic(Geometry::Octahedral, dq)? + s * real(ds) + t * real(dt))
}

/// A rotation taking the body diagonal (1, 1, 1)/√3 of the cube to z, and the
/// twofold axis (1, −1, 0)/√2 to y, so that ⟨m|h|m′⟩ is real.
fn threefold_to_z() -> Matrix3<f64> {
    let z = Vector3::new(1.0, 1.0, 1.0).normalize();
    let x = Vector3::new(1.0, 1.0, -2.0).normalize();
    let y = z.cross(&x);
    Matrix3::from_rows(&[x.transpose(), y.transpose(), z.transpose()])
}

/// The octahedral operator for Dq = 1 with a threefold axis along z.
pub(super) fn octahedral_unit_trigonal() -> FieldMatrix {
    rotate(&octahedral_unit(), &threefold_to_z())
}

/// The field seen after rotating the ligands by `rotation`: D V D†.
fn rotate(v: &FieldMatrix, rotation: &Matrix3<f64>) -> FieldMatrix {
    let d = d_rotation(rotation);
    let d = FieldMatrix::from_fn(|i, j| d[i][j]);
    d * v * d.adjoint()
}

/// The trigonal D3/D3d field (z the threefold axis).
pub fn trigonal(dq: f64, dsigma: f64, dtau: f64) -> Result<FieldMatrix, LfError> {
    check("Dq", dq, MAX_ABS_DQ)?;
    check("Dσ", dsigma, MAX_ABS_DQ)?;
    check("Dτ", dtau, MAX_ABS_DQ)?;
    let (s, t) = axial_forms();
    Ok(octahedral_unit_trigonal() * real(dq) + s * real(dsigma) + t * real(dtau))
}

/// The quadratic form of the d function of the local frame (x′, y′, z′ = axes),
/// `kind` 0 for d_z′², 1 for d_x′z′, 2 for d_y′z′, normalised like the forms of
/// [`harmonic_forms`] (Frobenius norm² 6).
fn local_form(axes: &Matrix3<f64>, kind: usize) -> Matrix3<f64> {
    let (x, y, z) = (axes.column(0), axes.column(1), axes.column(2));
    let sym = |a: Vector3<f64>, b: Vector3<f64>| a * b.transpose() + b * a.transpose();
    match kind {
        0 => z * z.transpose() * 3.0 - Matrix3::identity(),
        1 => sym(x.into(), z.into()) * 3f64.sqrt(),
        _ => sym(y.into(), z.into()) * 3f64.sqrt(),
    }
}

/// The AOM field of a set of ligands, traceless.
pub fn angular_overlap(ligands: &[Ligand]) -> Result<FieldMatrix, LfError> {
    if ligands.is_empty() {
        return Err(LfError::Ligands("at least one ligand is needed".into()));
    }
    if ligands.len() > MAX_LIGANDS {
        return Err(LfError::Ligands(format!(
            "{} ligands are more than the {MAX_LIGANDS} this tool accepts",
            ligands.len()
        )));
    }
    let forms = harmonic_forms();
    let mut directions: Vec<Vector3<f64>> = Vec::new();
    let mut h = FieldMatrix::zeros();
    for (k, l) in ligands.iter().enumerate() {
        for (name, value) in [("x", l.x), ("y", l.y), ("z", l.z)] {
            check(name, value, 1e6)?;
        }
        check("eσ", l.e_sigma, MAX_ABS_AOM)?;
        check("eπ", l.e_pi, MAX_ABS_AOM)?;
        let e_pi_y = l.e_pi_y.unwrap_or(l.e_pi);
        check("eπ", e_pi_y, MAX_ABS_AOM)?;
        let r = Vector3::new(l.x, l.y, l.z);
        if r.norm() < 1e-9 {
            return Err(LfError::Ligands(format!(
                "ligand {} sits on the metal: its position must not be zero",
                k + 1
            )));
        }
        let z = r.normalize();
        if let Some(j) = directions.iter().position(|d| (d - z).norm() < 1e-6) {
            return Err(LfError::Ligands(format!(
                "ligands {} and {} lie in the same direction from the metal",
                j + 1,
                k + 1
            )));
        }
        directions.push(z);
        let helper = if z.x.abs() < 0.9 {
            Vector3::x()
        } else {
            Vector3::y()
        };
        let x = (helper - z * helper.dot(&z)).normalize();
        let y = z.cross(&x);
        let axes = Matrix3::from_columns(&[x, y, z]);
        for (kind, e) in [(0, l.e_sigma), (1, l.e_pi), (2, e_pi_y)] {
            let q = local_form(&axes, kind);
            // Components of the local function on the |m⟩ (forms orthogonal, norm² 6).
            let c: Vec<Complex<f64>> = forms
                .iter()
                .map(|f| {
                    f.iter()
                        .zip(q.iter())
                        .map(|(a, b)| a.conj() * b)
                        .sum::<Complex<f64>>()
                        / 6.0
                })
                .collect();
            h += FieldMatrix::from_fn(|i, j| c[i] * c[j].conj() * e);
        }
    }
    Ok(traceless(h))
}

/// The field with its trace removed.
pub fn traceless(h: FieldMatrix) -> FieldMatrix {
    let shift = h.trace() / 5.0;
    h - FieldMatrix::identity() * shift
}

/// The cubic component of a field in its own frame: the Dq of the octahedral
/// operator it contains, by projection (⟨V, h⟩/⟨V, V⟩, Frobenius).
pub fn octahedral_part(h: &FieldMatrix, unit: &FieldMatrix) -> f64 {
    let dot: Complex<f64> = unit.iter().zip(h.iter()).map(|(a, b)| a.conj() * b).sum();
    dot.re / unit.norm_squared()
}

/// Largest rotational order k ∈ {4, 3, 2, 1} about z the field has: every
/// non-zero element ⟨m|h|m′⟩ has m − m′ divisible by k.
pub fn axial_order(h: &FieldMatrix, scale: f64) -> i64 {
    [4, 3, 2]
        .into_iter()
        .find(|&k| {
            (0..5).all(|i| {
                (0..5).all(|j| (i as i64 - j as i64) % k == 0 || h[(i, j)].norm() <= 1e-12 * scale)
            })
        })
        .unwrap_or(1)
}

/// Reads ligands from CSV text with the header `x,y,z,e_sigma,e_pi` (any column
/// order, an optional `e_pi_y`; blank lines and `#` comments skipped), one
/// ligand per row: its position relative to the metal and its eσ, eπ in cm⁻¹.
pub fn parse_ligands(text: &str) -> Result<Vec<Ligand>, LfError> {
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim()))
        .filter(|(_, l)| !l.is_empty() && !l.starts_with('#'));
    let (_, header) = lines
        .next()
        .ok_or_else(|| LfError::Ligands("the ligand file is empty".into()))?;
    let names: Vec<String> = header
        .split(',')
        .map(|h| h.trim().to_ascii_lowercase())
        .collect();
    let column = |name: &str| names.iter().position(|h| h == name);
    let required: Vec<usize> = ["x", "y", "z", "e_sigma", "e_pi"]
        .iter()
        .map(|name| column(name))
        .collect::<Option<_>>()
        .ok_or_else(|| {
            LfError::Ligands("the header must name the columns x,y,z,e_sigma,e_pi".into())
        })?;
    let pi_y = column("e_pi_y");
    let mut ligands = Vec::new();
    for (number, line) in lines {
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        let value = |k: usize| -> Result<f64, LfError> {
            cells
                .get(k)
                .and_then(|c| c.parse::<f64>().ok())
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    LfError::Ligands(format!(
                        "line {number} needs a finite number in column '{}'",
                        names[k]
                    ))
                })
        };
        ligands.push(Ligand {
            x: value(required[0])?,
            y: value(required[1])?,
            z: value(required[2])?,
            e_sigma: value(required[3])?,
            e_pi: value(required[4])?,
            e_pi_y: match pi_y {
                Some(k) if cells.get(k).is_some_and(|c| !c.is_empty()) => Some(value(k)?),
                _ => None,
            },
        });
    }
    Ok(ligands)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn orbital_energies(h: &FieldMatrix) -> Vec<f64> {
        let mut e: Vec<f64> = h.symmetric_eigenvalues().iter().copied().collect();
        e.sort_by(f64::total_cmp);
        e
    }

    #[test]
    fn the_trigonal_rotation_keeps_the_octahedral_orbital_energies() {
        // Rotating the octahedron leaves t2g at −4Dq and e_g at +6Dq (method notes).
        let e = orbital_energies(&octahedral_unit_trigonal());
        for (a, b) in e.iter().zip([-4.0, -4.0, -4.0, 6.0, 6.0]) {
            assert!((a - b).abs() < 1e-12, "{e:?}");
        }
        // and the threefold axis makes |0⟩ a t2g (a1) orbital.
        assert!((octahedral_unit_trigonal()[(2, 2)].re + 4.0).abs() < 1e-12);
        assert_eq!(axial_order(&octahedral_unit_trigonal(), 1.0), 3);
        // The twofold axis along y makes the matrix real (the fast solver's condition).
        assert!(octahedral_unit_trigonal()
            .iter()
            .all(|x| x.im.abs() < 1e-12));
        assert_eq!(axial_order(&octahedral_unit(), 1.0), 4);
    }

    #[test]
    fn a_ligand_file_is_read_by_its_header_names() {
        let text = "# square\ne_pi,x,y,z,e_sigma\n500,2,0,0,5000\n\n500,0,2,0,5000\n";
        let ligands = parse_ligands(text).unwrap();
        assert_eq!(ligands.len(), 2);
        assert_eq!(
            (ligands[1].y, ligands[1].e_sigma, ligands[1].e_pi),
            (2.0, 5000.0, 500.0)
        );
        assert!(parse_ligands("x,y,z\n1,2,3\n").is_err());
        let error = parse_ligands("x,y,z,e_sigma,e_pi\n1,0,0,nan,0\n").unwrap_err();
        assert!(error.to_string().contains("line 2"), "{error}");
    }
}
