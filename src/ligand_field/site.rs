//! dⁿ levels in a field of any symmetry, with or without spin–orbit coupling.
//!
//! H = Σ h(m, m′) a†a (the one-electron field of [`super::field`]) + B·K_B +
//! C·K_C + ζ Σᵢ lᵢ·sᵢ, built on the Slater determinants of the complex spin-
//! orbitals |m, σ⟩ (complex Hermitian). The one-electron part is applied to
//! the determinants at every evaluation (a few thousand operations); K_B and
//! K_C are built once per sector and cached.
//!
//! Sectors: a field with a k-fold axis along z conserves M_L mod k, and with
//! spin–orbit coupling M_J mod k (2M_J mod 2k here). Without ζ, M_S is also
//! conserved and the sector M_S = 0 or ½ holds one component of every level;
//! its spin is read from ⟨S²⟩. Time reversal (complex conjugation of the
//! spatial part when ζ = 0) maps the class c onto −c with the same spectrum,
//! so only one of each such pair is diagonalised and its levels are counted
//! twice; for odd n with ζ this is Kramers' degeneracy.
//!
//! Labels: without ζ, each level gets the cubic level it comes from (the
//! octahedral part of the field in the site's own frame, by projection) with
//! its weight; with ζ, the spin-free level it comes from with its weight, and
//! at a cubic site its O′ double-group irrep from the C₄ eigenvalues
//! e^{−iπM_J/2} of its components: Γ6 (M_J = ±½), Γ7 (±3/2), Γ8 (both), and
//! Γ1…Γ5 (A1, A2, E, T1, T2) for even n by the class table of the method notes
//! (Bethe, Ann. Phys. 3 (1929) 133; Koster, Dimmock, Wheeler & Statz, *Properties
//! of the Thirty-Two Point Groups*, 1963; Griffith 1961).

use super::determinants::{hop, ml, occupied, two_ms, Basis, Coulomb, SpinRaise};
use super::field::{self, FieldMatrix, Ligand};
use super::{check_params, model, Geometry, LfError, Params, MAX_ABS_DQ};
use nalgebra::{Complex, DMatrix};
use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

/// Largest |ζ| accepted, cm⁻¹.
pub const MAX_ABS_ZETA: f64 = 1e4;

/// The site: where the one-electron field comes from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase", tag = "kind")]
pub enum Site {
    Cubic { geometry: Geometry, dq: f64 },
    Tetragonal { dq: f64, ds: f64, dt: f64 },
    Trigonal { dq: f64, dsigma: f64, dtau: f64 },
    Ligands { ligands: Vec<Ligand> },
}

impl Site {
    /// The one-electron field matrix of the site.
    pub fn field(&self) -> Result<FieldMatrix, LfError> {
        match self {
            Site::Cubic { geometry, dq } => field::cubic(*geometry, *dq),
            Site::Tetragonal { dq, ds, dt } => field::tetragonal(*dq, *ds, *dt),
            Site::Trigonal { dq, dsigma, dtau } => field::trigonal(*dq, *dsigma, *dtau),
            Site::Ligands { ligands } => field::angular_overlap(ligands),
        }
    }

    /// The cubic field the labels refer to: its geometry, Dq and matrix.
    fn cubic_reference(&self, h: &FieldMatrix) -> Result<(Geometry, f64, FieldMatrix), LfError> {
        let (dq, unit) = match self {
            Site::Cubic { geometry, dq } => return Ok((*geometry, *dq, *h)),
            Site::Tetragonal { dq, .. } => (*dq, field::cubic(Geometry::Octahedral, 1.0)?),
            Site::Trigonal { dq, .. } => (*dq, field::octahedral_unit_trigonal()),
            Site::Ligands { .. } => {
                let unit = field::cubic(Geometry::Octahedral, 1.0)?;
                (field::octahedral_part(h, &unit), unit)
            }
        };
        let dq = dq.clamp(-MAX_ABS_DQ, MAX_ABS_DQ);
        let matrix = unit * Complex::new(dq, 0.0);
        Ok(if dq < 0.0 {
            (Geometry::Tetrahedral, -dq, matrix)
        } else {
            (Geometry::Octahedral, dq, matrix)
        })
    }
}

/// One level of dⁿ at a site.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SiteLevel {
    /// cm⁻¹ above the ground level.
    pub energy: f64,
    pub degeneracy: usize,
    /// The O′ irrep ("Γ8") at a cubic site with ζ; otherwise the parent's label.
    pub label: String,
    /// 2S + 1, when ζ = 0.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub multiplicity: Option<u8>,
    /// The level it comes from: the cubic level (ζ = 0) or the spin-free level (ζ ≠ 0).
    pub parent: String,
    /// The weight of that parent in the state (0…1).
    pub parent_weight: f64,
}

/// One block of determinants closed under H, with its cached operators.
struct Sector {
    dets: Vec<usize>,
    /// Row of each determinant mask in this sector.
    row_of: Vec<Option<usize>>,
    kb: DMatrix<f64>,
    kc: DMatrix<f64>,
    /// S² (spin-free sectors only, where M_S is fixed).
    s_squared: Option<DMatrix<f64>>,
    /// 2 when the time-reversed class is not diagonalised separately.
    copies: usize,
    /// The class label: M_L mod k (spin-free) or 2M_J mod 2k.
    class: i64,
}

struct Sectors {
    basis: Basis,
    sectors: Vec<Sector>,
}

fn build_sectors(n: u8, order: i64, spin_orbit: bool) -> Sectors {
    let basis = Basis::new(n);
    let (racah_b, racah_c) = (Coulomb::racah_b(), Coulomb::racah_c());
    let low_ms = i64::from(n % 2);
    let modulus = if spin_orbit { 2 * order } else { order };
    let label = |mask: u16| {
        if spin_orbit {
            2 * ml(mask) + two_ms(mask)
        } else {
            ml(mask)
        }
    };
    let in_use: Vec<usize> = (0..basis.masks.len())
        .filter(|&d| spin_orbit || two_ms(basis.masks[d]) == low_ms)
        .collect();
    let raised: Vec<usize> = (0..basis.masks.len())
        .filter(|&d| two_ms(basis.masks[d]) == low_ms + 2)
        .collect();
    let mut sectors = Vec::new();
    for class in 0..modulus {
        let partner = (-class).rem_euclid(modulus);
        if partner < class {
            continue;
        }
        let dets: Vec<usize> = in_use
            .iter()
            .copied()
            .filter(|&d| label(basis.masks[d]).rem_euclid(modulus) == class)
            .collect();
        if dets.is_empty() {
            continue;
        }
        let mut row_of = vec![None; 1 << 10];
        for (r, &d) in dets.iter().enumerate() {
            row_of[usize::from(basis.masks[d])] = Some(r);
        }
        let s_squared = (!spin_orbit).then(|| {
            let s_plus = super::determinants::matrix(&basis, &raised, &dets, &SpinRaise);
            let ms = low_ms as f64 / 2.0;
            s_plus.transpose() * s_plus + DMatrix::identity(dets.len(), dets.len()) * (ms * ms + ms)
        });
        sectors.push(Sector {
            kb: super::determinants::matrix(&basis, &dets, &dets, &racah_b),
            kc: super::determinants::matrix(&basis, &dets, &dets, &racah_c),
            s_squared,
            copies: if partner == class { 1 } else { 2 },
            class,
            dets,
            row_of,
        });
    }
    Sectors { basis, sectors }
}

/// Sectors of dⁿ for an axial order (1…4), with or without spin–orbit coupling; cached.
fn sectors(n: u8, order: i64, spin_orbit: bool) -> &'static Sectors {
    static CELLS: [OnceLock<Sectors>; 72] = [const { OnceLock::new() }; 72];
    let slot =
        (usize::from(n - 1) * 4 + (order.clamp(1, 4) - 1) as usize) * 2 + usize::from(spin_orbit);
    CELLS[slot].get_or_init(|| build_sectors(n, order, spin_orbit))
}

/// The one-electron operator on the ten spin-orbitals i = 2(m+2) + s: the field
/// (spin-diagonal) plus ζ·l·s (lz·sz + ½(l₊s₋ + l₋s₊); Condon & Shortley 1935, ch. V).
fn spin_orbitals(h: &FieldMatrix, zeta: f64) -> [[Complex<f64>; 10]; 10] {
    let mut out = [[Complex::new(0.0, 0.0); 10]; 10];
    for a in 0..5 {
        for b in 0..5 {
            for s in 0..2 {
                out[2 * a + s][2 * b + s] = h[(a, b)];
            }
        }
    }
    for m in -2i64..=2 {
        let i = ((m + 2) * 2) as usize;
        out[i][i].re += zeta * m as f64 / 2.0;
        out[i + 1][i + 1].re -= zeta * m as f64 / 2.0;
        if m < 2 {
            // ½ζ l₊s₋: (m, α) → (m+1, β), and its adjoint.
            let f = 0.5 * zeta * ((6 - m * (m + 1)) as f64).sqrt();
            out[i + 3][i].re += f;
            out[i][i + 3].re += f;
        }
    }
    out
}

/// ⟨rows|Σ h_pq a†_p a_q|cols⟩ on one sector.
fn one_body(basis: &Basis, sector: &Sector, h: &[[Complex<f64>; 10]; 10]) -> DMatrix<Complex<f64>> {
    let size = sector.dets.len();
    let mut out = DMatrix::from_element(size, size, Complex::new(0.0, 0.0));
    for (c, &d) in sector.dets.iter().enumerate() {
        let mask = basis.masks[d];
        for q in occupied(mask) {
            for (p, row) in h.iter().enumerate() {
                let value = row[q];
                if value.norm_sqr() == 0.0 {
                    continue;
                }
                if let Some((target, sign)) = hop(mask, p, q) {
                    if let Some(r) = sector.row_of[usize::from(target)] {
                        out[(r, c)] += value * sign;
                    }
                }
            }
        }
    }
    out
}

fn hamiltonian(
    basis: &Basis,
    sector: &Sector,
    h: &[[Complex<f64>; 10]; 10],
    b: f64,
    c: f64,
) -> DMatrix<Complex<f64>> {
    let mut out = one_body(basis, sector, h);
    for (x, (kb, kc)) in out.iter_mut().zip(sector.kb.iter().zip(sector.kc.iter())) {
        x.re += b * kb + c * kc;
    }
    out
}

/// Eigenvalues ascending with matching eigenvector columns (Hermitian). A
/// matrix that is real (a field with real ⟨m|h|m′⟩: cubic, tetragonal; l·s is
/// real in the |m, σ⟩ basis) takes the real symmetric solver, several times faster.
fn eigen(m: DMatrix<Complex<f64>>) -> (Vec<f64>, DMatrix<Complex<f64>>) {
    let largest = m.iter().fold(0.0f64, |a, x| a.max(x.norm()));
    let real = m.iter().all(|x| x.im.abs() <= 1e-14 * largest);
    let (values, vectors) = if real {
        let eig = m.map(|x| x.re).symmetric_eigen();
        (
            eig.eigenvalues,
            eig.eigenvectors.map(|x| Complex::new(x, 0.0)),
        )
    } else {
        let eig = m.symmetric_eigen();
        (eig.eigenvalues, eig.eigenvectors)
    };
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[a].total_cmp(&values[b]));
    let sorted = order.iter().map(|&i| values[i]).collect();
    (sorted, vectors.select_columns(&order))
}

/// A labelled reference spectrum: each level's energy above its ground and label.
struct Reference {
    levels: Vec<(f64, String)>,
    tolerance: f64,
}

impl Reference {
    fn label_of(&self, energy_above_ground: f64) -> String {
        self.levels
            .iter()
            .map(|(e, label)| ((e - energy_above_ground).abs(), label))
            .filter(|(gap, _)| *gap <= self.tolerance)
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map_or_else(|| "?".to_string(), |(_, label)| label.clone())
    }
}

/// One eigenstate found in one sector.
struct Found {
    energy: f64,
    sector: usize,
    multiplicity: Option<u8>,
    parent: String,
    parent_weight: f64,
}

/// Everything one evaluation needs.
struct Problem<'a> {
    sectors: &'a Sectors,
    spin_orbitals: [[Complex<f64>; 10]; 10],
    reference_orbitals: [[Complex<f64>; 10]; 10],
    reference: Reference,
    b: f64,
    c: f64,
}

impl Problem<'_> {
    /// The eigenstates of every sector, each with its main reference component.
    fn solve(&self) -> Vec<Found> {
        let basis = &self.sectors.basis;
        let mut solved = Vec::new();
        let mut reference_ground = f64::INFINITY;
        for sector in &self.sectors.sectors {
            let (values, vectors) = eigen(hamiltonian(
                basis,
                sector,
                &self.spin_orbitals,
                self.b,
                self.c,
            ));
            let (ref_values, ref_vectors) = eigen(hamiltonian(
                basis,
                sector,
                &self.reference_orbitals,
                self.b,
                self.c,
            ));
            if let Some(&low) = ref_values.first() {
                reference_ground = reference_ground.min(low);
            }
            solved.push((values, vectors, ref_values, ref_vectors));
        }
        let tolerance = self.reference.tolerance;
        let mut found = Vec::new();
        for (k, (sector, (values, vectors, ref_values, ref_vectors))) in
            self.sectors.sectors.iter().zip(&solved).enumerate()
        {
            let overlaps = ref_vectors.adjoint() * vectors;
            for (column, &energy) in values.iter().enumerate() {
                // Weights summed over each degenerate group of reference states.
                let mut groups: Vec<(f64, f64)> = Vec::new();
                for (r, &e) in ref_values.iter().enumerate() {
                    let w = overlaps[(r, column)].norm_sqr();
                    match groups.last_mut() {
                        Some((e0, total)) if (e - *e0).abs() <= tolerance => *total += w,
                        _ => groups.push((e, w)),
                    }
                }
                let (parent_energy, parent_weight) = groups
                    .into_iter()
                    .max_by(|a, b| a.1.total_cmp(&b.1))
                    .unwrap_or((0.0, 0.0));
                let multiplicity = sector.s_squared.as_ref().map(|s2| {
                    let x = vectors.column(column);
                    let value = x.dotc(&(s2.map(|v| Complex::new(v, 0.0)) * x)).re;
                    ((1.0 + 4.0 * value.max(0.0)).sqrt()).round() as u8
                });
                found.push(Found {
                    energy,
                    sector: k,
                    multiplicity,
                    parent: self.reference.label_of(parent_energy - reference_ground),
                    parent_weight,
                });
            }
        }
        found
    }
}

fn scale_of(h: &FieldMatrix, b: f64, c: f64, zeta: f64) -> f64 {
    h.iter()
        .map(|x| x.norm())
        .fold(b.abs().max(c.abs()).max(zeta.abs()), f64::max)
        .max(1.0)
}

fn check_zeta(zeta: f64) -> Result<(), LfError> {
    if !zeta.is_finite() {
        return Err(LfError::Parameter {
            name: "ζ",
            value: zeta,
        });
    }
    if zeta.abs() > MAX_ABS_ZETA {
        return Err(LfError::OutOfRange {
            name: "ζ",
            value: zeta,
            limit: MAX_ABS_ZETA,
        });
    }
    Ok(())
}

/// All levels of dⁿ at `site`, lowest first, energies above the ground level.
/// A cubic site without ζ takes the fast cubic model.
pub fn site_levels(
    n: u8,
    site: &Site,
    b: f64,
    c: f64,
    zeta: f64,
) -> Result<Vec<SiteLevel>, LfError> {
    let h = site.field()?;
    check_zeta(zeta)?;
    let (geometry, dq, cubic_h) = site.cubic_reference(&h)?;
    let cubic_params = Params { dq, b, c };
    check_params(&cubic_params)?;
    let cubic_model = model(n, geometry)?;
    let cubic_site = matches!(site, Site::Cubic { .. });
    if cubic_site && zeta == 0.0 {
        return Ok(cubic_model
            .levels(&cubic_params)?
            .into_iter()
            .map(|l| SiteLevel {
                energy: l.energy,
                degeneracy: l.degeneracy,
                label: l.label.clone(),
                multiplicity: Some(l.multiplicity),
                parent: l.label,
                parent_weight: 1.0,
            })
            .collect());
    }
    let scale = scale_of(&h, b, c, zeta);
    let tolerance = 1e-8 * scale;
    let (reference, reference_h) = if zeta == 0.0 {
        let levels = cubic_model.levels(&cubic_params)?;
        (
            levels.into_iter().map(|l| (l.energy, l.label)).collect(),
            cubic_h,
        )
    } else {
        let levels = site_levels(n, site, b, c, 0.0)?;
        (levels.into_iter().map(|l| (l.energy, l.label)).collect(), h)
    };
    let order = field::axial_order(&h, scale);
    let problem = Problem {
        sectors: sectors(n, order, zeta != 0.0),
        spin_orbitals: spin_orbitals(&h, zeta),
        reference_orbitals: spin_orbitals(&reference_h, 0.0),
        reference: Reference {
            levels: reference,
            tolerance: 1e-6 * scale,
        },
        b,
        c,
    };
    let mut found = problem.solve();
    found.sort_by(|a, b| a.energy.total_cmp(&b.energy));
    let double_group = cubic_site && order == 4;
    Ok(group_levels(&problem, found, tolerance, double_group, n))
}

/// Joins the eigenstates of equal energy (and spin) into levels.
fn group_levels(
    problem: &Problem,
    found: Vec<Found>,
    tolerance: f64,
    double_group: bool,
    n: u8,
) -> Vec<SiteLevel> {
    let sectors = &problem.sectors.sectors;
    let mut levels: Vec<(SiteLevel, Vec<i64>)> = Vec::new();
    for f in found {
        let copies = sectors[f.sector].copies * f.multiplicity.map_or(1, usize::from);
        let class = sectors[f.sector].class;
        if let Some((level, classes)) = levels.last_mut().filter(|(l, _)| {
            (f.energy - l.energy).abs() <= tolerance && l.multiplicity == f.multiplicity
        }) {
            level.degeneracy += copies;
            classes.push(class);
            continue;
        }
        levels.push((
            SiteLevel {
                energy: f.energy,
                degeneracy: copies,
                label: f.parent.clone(),
                multiplicity: f.multiplicity,
                parent: f.parent,
                parent_weight: f.parent_weight,
            },
            vec![class],
        ));
    }
    let ground = levels.first().map_or(0.0, |(l, _)| l.energy);
    levels
        .into_iter()
        .map(|(mut level, classes)| {
            level.energy -= ground;
            if double_group {
                level.label = double_group_irrep(n, &classes, level.degeneracy);
            }
            level
        })
        .collect()
}

/// The O′ irrep of a level from the 2M_J mod 8 classes its components occupy.
fn double_group_irrep(n: u8, classes: &[i64], degeneracy: usize) -> String {
    let has = |c: i64| classes.contains(&c);
    let name = if n % 2 == 1 {
        match (has(1), has(3)) {
            (true, true) => "Γ8",
            (true, false) => "Γ6",
            (false, true) => "Γ7",
            _ => "?",
        }
    } else {
        // Classes 0, 2, 4 are M_J ≡ 0, ±1, 2 (mod 4).
        match (has(0), has(2), has(4)) {
            (true, false, false) => "Γ1",
            (false, false, true) => "Γ2",
            (true, false, true) => "Γ3",
            (true, true, false) => "Γ4",
            (false, true, true) => "Γ5",
            _ => "?",
        }
    };
    if name == "?" {
        format!("{degeneracy}-fold")
    } else {
        name.to_string()
    }
}

/// The full determinant-basis Hamiltonian (all C(10, n) determinants, complex):
/// an independent dense path for tests and the benchmark.
pub fn full_site_matrix(
    n: u8,
    site: &Site,
    b: f64,
    c: f64,
    zeta: f64,
) -> Result<DMatrix<Complex<f64>>, LfError> {
    let h = site.field()?;
    check_zeta(zeta)?;
    let n = super::check_configuration(i64::from(n))?;
    let whole = build_sectors(n, 1, true);
    let mut out = DMatrix::from_element(
        whole.basis.masks.len(),
        whole.basis.masks.len(),
        Complex::new(0.0, 0.0),
    );
    for sector in &whole.sectors {
        let block = hamiltonian(&whole.basis, sector, &spin_orbitals(&h, zeta), b, c);
        for (r, &dr) in sector.dets.iter().enumerate() {
            for (k, &dc) in sector.dets.iter().enumerate() {
                out[(dr, dc)] = block[(r, k)];
            }
        }
    }
    Ok(out)
}
