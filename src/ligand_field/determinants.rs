//! Slater determinants of dⁿ and the many-electron operators acting on them.
//!
//! A spin-orbital is |m, σ⟩ (m = −2…2, complex spherical harmonics with
//! Condon–Shortley phases; σ = α, β), numbered i = 2(m+2) + s with s = 0 for α.
//! A determinant is a 10-bit mask; |D⟩ = a†ᵢ₁ a†ᵢ₂ … |0⟩ with i₁ < i₂ < …, so
//! creating or annihilating orbital i costs the sign (−1)^(occupied below i).
//!
//! Operators are applied in second quantisation:
//! one-body Σ h_pq a†_p a_q and two-body ½ Σ ⟨pq|rs⟩ a†_p a†_q a_s a_r, with
//! ⟨m1 m2|1/r12|m3 m4⟩ = δ(m1+m2, m3+m4) Σ_k F^k c^k(m1, m3) c^k(m4, m2)
//! (Condon & Shortley 1935, ch. VI; Slater, Phys. Rev. 34 (1929) 1293).
//! The symmetry operator used to separate cubic irreps is the class sum of the
//! six fourfold rotations, built from the l = 2 rotation matrices.

use super::angular::ck;
use nalgebra::{Complex, DMatrix, Matrix3};

/// Number of d spin-orbitals.
pub const SPIN_ORBITALS: usize = 10;

/// m of spin-orbital i.
pub fn m_of(i: usize) -> i64 {
    (i / 2) as i64 - 2
}

/// 0 for α (+½), 1 for β (−½).
fn spin_of(i: usize) -> usize {
    i % 2
}

/// Spin-orbital index of (m, s).
fn orbital(m: i64, s: usize) -> usize {
    ((m + 2) as usize) * 2 + s
}

/// Twice M_S of a determinant.
pub fn two_ms(mask: u16) -> i64 {
    (0..SPIN_ORBITALS)
        .filter(|&i| mask & (1 << i) != 0)
        .map(|i| if spin_of(i) == 0 { 1 } else { -1 })
        .sum()
}

/// M_L of a determinant.
pub fn ml(mask: u16) -> i64 {
    (0..SPIN_ORBITALS)
        .filter(|&i| mask & (1 << i) != 0)
        .map(m_of)
        .sum()
}

/// Occupied spin-orbitals in ascending order.
pub(super) fn occupied(mask: u16) -> Vec<usize> {
    (0..SPIN_ORBITALS)
        .filter(|&i| mask & (1 << i) != 0)
        .collect()
}

fn parity_below(mask: u16, i: usize) -> f64 {
    if (mask & ((1u16 << i) - 1)).count_ones() % 2 == 0 {
        1.0
    } else {
        -1.0
    }
}

fn annihilate(mask: u16, i: usize) -> Option<(u16, f64)> {
    (mask & (1 << i) != 0).then(|| (mask ^ (1 << i), parity_below(mask, i)))
}

fn create(mask: u16, i: usize) -> Option<(u16, f64)> {
    (mask & (1 << i) == 0).then(|| (mask | (1 << i), parity_below(mask, i)))
}

/// a†_p a_q |D⟩.
pub(super) fn hop(mask: u16, p: usize, q: usize) -> Option<(u16, f64)> {
    let (m1, s1) = annihilate(mask, q)?;
    let (m2, s2) = create(m1, p)?;
    Some((m2, s1 * s2))
}

/// All determinants of dⁿ, with a reverse index.
pub struct Basis {
    pub masks: Vec<u16>,
    position: Vec<Option<usize>>,
}

impl Basis {
    pub fn new(n: u8) -> Basis {
        let masks: Vec<u16> = (0u16..1 << SPIN_ORBITALS)
            .filter(|m| m.count_ones() == u32::from(n))
            .collect();
        let mut position = vec![None; 1 << SPIN_ORBITALS];
        for (k, &m) in masks.iter().enumerate() {
            position[usize::from(m)] = Some(k);
        }
        Basis { masks, position }
    }

    pub fn index(&self, mask: u16) -> Option<usize> {
        self.position.get(usize::from(mask)).copied().flatten()
    }
}

/// An operator given by its action on one determinant: it calls `emit(D′, amplitude)`.
pub trait Operator {
    fn apply(&self, mask: u16, emit: &mut dyn FnMut(u16, f64));
}

/// The matrix ⟨rows|O|cols⟩ (determinant lists given as basis indices).
pub fn matrix(basis: &Basis, rows: &[usize], cols: &[usize], op: &dyn Operator) -> DMatrix<f64> {
    let mut row_of = vec![None; basis.masks.len()];
    for (r, &d) in rows.iter().enumerate() {
        row_of[d] = Some(r);
    }
    let mut out = DMatrix::zeros(rows.len(), cols.len());
    for (c, &d) in cols.iter().enumerate() {
        op.apply(basis.masks[d], &mut |target, amplitude| {
            if let Some(r) = basis.index(target).and_then(|t| row_of[t]) {
                out[(r, c)] += amplitude;
            }
        });
    }
    out
}

/// A spin-independent one-electron operator h(m, m′) in the |m⟩ basis.
pub struct OneBody(pub [[f64; 5]; 5]);

impl Operator for OneBody {
    fn apply(&self, mask: u16, emit: &mut dyn FnMut(u16, f64)) {
        for q in occupied(mask) {
            for p in (0..SPIN_ORBITALS).filter(|&p| spin_of(p) == spin_of(q)) {
                let h = self.0[(m_of(p) + 2) as usize][(m_of(q) + 2) as usize];
                if h != 0.0 {
                    if let Some((d, sign)) = hop(mask, p, q) {
                        emit(d, sign * h);
                    }
                }
            }
        }
    }
}

/// The octahedral crystal-field operator for Dq = 1 (notes: ⟨0|V|0⟩ = 6,
/// ⟨±1|V|±1⟩ = −4, ⟨±2|V|±2⟩ = 1, ⟨2|V|−2⟩ = 5); `sign` = −1 gives the tetrahedral one.
pub fn cubic_field(sign: f64) -> OneBody {
    let mut v = [[0.0; 5]; 5];
    v[2][2] = 6.0 * sign;
    v[1][1] = -4.0 * sign;
    v[3][3] = -4.0 * sign;
    v[0][0] = sign;
    v[4][4] = sign;
    v[0][4] = 5.0 * sign;
    v[4][0] = 5.0 * sign;
    OneBody(v)
}

/// Interelectronic repulsion for given Slater integrals F², F⁴ (F⁰ dropped).
pub struct Coulomb {
    /// ⟨m1 m2|1/r12|m3 m4⟩ indexed by m + 2.
    integral: Vec<f64>,
}

impl Coulomb {
    pub fn new(f2: f64, f4: f64) -> Coulomb {
        let mut integral = vec![0.0; 625];
        for m1 in -2..=2 {
            for m2 in -2..=2 {
                for m3 in -2..=2 {
                    for m4 in -2..=2 {
                        if m1 + m2 != m3 + m4 {
                            continue;
                        }
                        let value =
                            f2 * ck(2, m1, m3) * ck(2, m4, m2) + f4 * ck(4, m1, m3) * ck(4, m4, m2);
                        integral[Self::slot(m1, m2, m3, m4)] = value;
                    }
                }
            }
        }
        Coulomb { integral }
    }

    /// Racah B = 1: F² = 49F₂ = 49, F⁴ = 0 (F₂ = B + C/7, F₄ = C/35).
    pub fn racah_b() -> Coulomb {
        Coulomb::new(49.0, 0.0)
    }

    /// Racah C = 1: F² = 49/7 = 7, F⁴ = 441/35.
    pub fn racah_c() -> Coulomb {
        Coulomb::new(7.0, 441.0 / 35.0)
    }

    fn slot(m1: i64, m2: i64, m3: i64, m4: i64) -> usize {
        (((m1 + 2) * 125 + (m2 + 2) * 25 + (m3 + 2) * 5 + (m4 + 2)) as usize).min(624)
    }
}

impl Operator for Coulomb {
    fn apply(&self, mask: u16, emit: &mut dyn FnMut(u16, f64)) {
        let occ = occupied(mask);
        for &r in &occ {
            for &s in occ.iter().filter(|&&s| s != r) {
                let Some((d1, s1)) = annihilate(mask, r) else {
                    continue;
                };
                let Some((d2, s2)) = annihilate(d1, s) else {
                    continue;
                };
                for p in (0..SPIN_ORBITALS).filter(|&p| spin_of(p) == spin_of(r)) {
                    for q in (0..SPIN_ORBITALS).filter(|&q| spin_of(q) == spin_of(s) && q != p) {
                        if m_of(p) + m_of(q) != m_of(r) + m_of(s) {
                            continue;
                        }
                        let g = self.integral[Self::slot(m_of(p), m_of(q), m_of(r), m_of(s))];
                        if g == 0.0 {
                            continue;
                        }
                        let Some((d3, s3)) = create(d2, q) else {
                            continue;
                        };
                        let Some((d4, s4)) = create(d3, p) else {
                            continue;
                        };
                        emit(d4, 0.5 * g * s1 * s2 * s3 * s4);
                    }
                }
            }
        }
    }
}

/// S₊ = Σ_m a†_{mα} a_{mβ}.
pub struct SpinRaise;

impl Operator for SpinRaise {
    fn apply(&self, mask: u16, emit: &mut dyn FnMut(u16, f64)) {
        for m in -2..=2 {
            if let Some((d, sign)) = hop(mask, orbital(m, 0), orbital(m, 1)) {
                emit(d, sign);
            }
        }
    }
}

/// L₊ = Σ_{m,σ} √(6 − m(m+1)) a†_{m+1,σ} a_{m,σ}.
pub struct OrbitRaise;

impl Operator for OrbitRaise {
    fn apply(&self, mask: u16, emit: &mut dyn FnMut(u16, f64)) {
        for m in -2..2 {
            let factor = ((6 - m * (m + 1)) as f64).sqrt();
            for s in 0..2 {
                if let Some((d, sign)) = hop(mask, orbital(m + 1, s), orbital(m, s)) {
                    emit(d, sign * factor);
                }
            }
        }
    }
}

/// Y₂ₘ (up to a common factor) as the quadratic form rᵀQr: Q for m = −2…2.
pub(super) fn harmonic_forms() -> [Matrix3<Complex<f64>>; 5] {
    let re = |x: f64| Complex::new(x, 0.0);
    let im = |x: f64| Complex::new(0.0, x);
    let z = re(0.0);
    let a = (1.5f64).sqrt();
    let b = 6f64.sqrt() / 2.0;
    let form = |sign: f64, k: i64| -> Matrix3<Complex<f64>> {
        match k {
            // √(3/2)(x ± iy)²
            2 => Matrix3::new(re(a), im(sign * a), z, im(sign * a), re(-a), z, z, z, z),
            // ∓√6 z(x ± iy)
            1 => Matrix3::new(z, z, re(-sign * b), z, z, im(-b), re(-sign * b), im(-b), z),
            // 3z² − r²
            _ => Matrix3::new(re(-1.0), z, z, z, re(-1.0), z, z, z, re(2.0)),
        }
    };
    [
        form(-1.0, 2),
        form(-1.0, 1),
        form(1.0, 0),
        form(1.0, 1),
        form(1.0, 2),
    ]
}

/// The l = 2 rotation matrix D[m′][m] of the rotation R: (O_R Y₂ₘ)(r) = Y₂ₘ(R⁻¹r).
pub(super) fn d_rotation(rotation: &Matrix3<f64>) -> [[Complex<f64>; 5]; 5] {
    let forms = harmonic_forms();
    let r = rotation.map(|x| Complex::new(x, 0.0));
    let mut d = [[Complex::new(0.0, 0.0); 5]; 5];
    for (m, q) in forms.iter().enumerate() {
        let rotated = r * q * r.transpose();
        for (mp, qp) in forms.iter().enumerate() {
            let overlap: Complex<f64> = qp
                .iter()
                .zip(rotated.iter())
                .map(|(a, b)| a.conj() * b)
                .sum();
            let norm: f64 = qp.iter().map(nalgebra::Complex::norm_sqr).sum();
            d[mp][m] = overlap / norm;
        }
    }
    d
}

/// The six fourfold rotations (±90° about x, y and z).
fn fourfold_rotations() -> Vec<Matrix3<f64>> {
    let rz = Matrix3::new(0.0, -1.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0);
    let rx = Matrix3::new(1.0, 0.0, 0.0, 0.0, 0.0, -1.0, 0.0, 1.0, 0.0);
    let ry = Matrix3::new(0.0, 0.0, 1.0, 0.0, 1.0, 0.0, -1.0, 0.0, 0.0);
    [rx, ry, rz]
        .into_iter()
        .flat_map(|r| [r, r.transpose()])
        .collect()
}

/// ⟨D′|Û|D⟩ = det u[occ(D′), occ(D)] for a one-electron unitary u (spin untouched).
fn many_body_element(d: &[[Complex<f64>; 5]; 5], row: u16, col: u16) -> Complex<f64> {
    let rows = occupied(row);
    let cols = occupied(col);
    let k = rows.len();
    let sub = DMatrix::from_fn(k, k, |a, b| {
        let (p, q) = (rows[a], cols[b]);
        if spin_of(p) == spin_of(q) {
            d[(m_of(p) + 2) as usize][(m_of(q) + 2) as usize]
        } else {
            Complex::new(0.0, 0.0)
        }
    });
    sub.determinant()
}

/// Real part of the class sum of the six C₄ rotations on a block of determinants
/// closed under it (fixed M_S and M_L mod 4). On each cubic irrep Γ it equals
/// 6·χ_Γ(C₄)/dim Γ: A1 6, A2 −6, E 0, T1 2, T2 −2. Also returns the largest
/// imaginary part seen (zero up to rounding; checked by a test).
pub fn fourfold_class_sum(basis: &Basis, block: &[usize]) -> (DMatrix<f64>, f64) {
    let rotations: Vec<_> = fourfold_rotations().iter().map(d_rotation).collect();
    let mut out = DMatrix::zeros(block.len(), block.len());
    let mut largest_imaginary: f64 = 0.0;
    for (r, &dr) in block.iter().enumerate() {
        for (c, &dc) in block.iter().enumerate() {
            let value: Complex<f64> = rotations
                .iter()
                .map(|d| many_body_element(d, basis.masks[dr], basis.masks[dc]))
                .sum();
            out[(r, c)] = value.re;
            largest_imaginary = largest_imaginary.max(value.im.abs());
        }
    }
    (out, largest_imaginary)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn field_orbital_energies() {
        // The e_g pair (|0⟩, (|2⟩+|−2⟩)/√2) lies at +6Dq and the t2g trio at −4Dq
        // (Griffith 1961, table A16; the check stated in the method notes).
        let v = nalgebra::DMatrix::from_fn(5, 5, |i, j| cubic_field(1.0).0[i][j]);
        let mut e: Vec<f64> = v.symmetric_eigen().eigenvalues.iter().copied().collect();
        e.sort_by(f64::total_cmp);
        let expected = [-4.0, -4.0, -4.0, 6.0, 6.0];
        for (a, b) in e.iter().zip(expected) {
            assert!((a - b).abs() < 1e-12);
        }
    }

    #[test]
    fn rotation_matrices_are_unitary() {
        for r in fourfold_rotations() {
            let d = d_rotation(&r);
            for a in 0..5 {
                for b in 0..5 {
                    let dot: Complex<f64> = (0..5).map(|k| d[k][a].conj() * d[k][b]).sum();
                    let expected = if a == b { 1.0 } else { 0.0 };
                    assert!((dot.re - expected).abs() < 1e-12 && dot.im.abs() < 1e-12);
                }
            }
        }
    }
}
