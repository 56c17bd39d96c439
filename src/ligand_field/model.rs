//! The symmetry-blocked dⁿ model: built once, evaluated for any (Dq, B, C).
//!
//! H = Dq·V + B·K_B + C·K_C is linear in the parameters (Racah A dropped: it
//! shifts every level of dⁿ equally). The three operators are built on the
//! Slater determinants of one (M_S = S, q = M_L mod 4) block; the states of
//! spin exactly S are the null space of S₊ (S² = S_z(S_z+1) + S₋S₊); the cubic
//! irreps are separated by the class sum of the fourfold rotations, whose value
//! on irrep Γ is 6χ_Γ(C₄)/dim Γ. One row of each irrep is kept (T1, T2 from
//! q = 1; A1, E from q = 0; A2 from q = 2, as in the q-class table of the method
//! notes), and the three operators are stored projected onto it (Uᵀ V U, …).
//! Every evaluation is then a handful of symmetric eigen-solves of at most a few
//! rows (Tanabe & Sugano, J. Phys. Soc. Jpn. 9 (1954) 753; Griffith, *The Theory
//! of Transition-Metal Ions*, 1961).
//!
//! Labels: each block is stored in the eigenbasis of V, so the strong-field
//! configuration of a level is read from its squared components (the number of
//! e_g electrons is (V/Dq + 4n)/10 in Oh, of t2 electrons (V/Dq_t + 6n)/10 in
//! Td). The parent free-ion term follows a level to Dq → 0: levels of one (S, Γ)
//! block never cross, so the k-th level connects with the k-th free-ion level of
//! the block, and those are the eigenvalues of B·K_B + C·K_C on the block's L²
//! eigenspaces (precomputed, a few 1- to 3-row solves per evaluation).

use super::determinants::{
    cubic_field, fourfold_class_sum, matrix, ml, two_ms, Basis, Coulomb, OrbitRaise, SpinRaise,
};
use super::eigen::{self, Small};
use super::{Geometry, Level, Params};
use nalgebra::DMatrix;
use std::sync::Mutex;

/// A cubic irreducible representation (O or Td).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Irrep {
    A1,
    A2,
    E,
    T1,
    T2,
}

impl Irrep {
    pub fn dimension(self) -> usize {
        match self {
            Irrep::A1 | Irrep::A2 => 1,
            Irrep::E => 2,
            Irrep::T1 | Irrep::T2 => 3,
        }
    }

    /// "T1g" in Oh, "T1" in Td.
    pub fn name(self, geometry: Geometry) -> String {
        let base = match self {
            Irrep::A1 => "A1",
            Irrep::A2 => "A2",
            Irrep::E => "E",
            Irrep::T1 => "T1",
            Irrep::T2 => "T2",
        };
        match geometry {
            Geometry::Octahedral => format!("{base}g"),
            Geometry::Tetrahedral => base.to_string(),
        }
    }

    /// Value of the C₄ class sum on this irrep, and the q class whose row is kept.
    fn class_sum_and_row(self) -> (f64, i64) {
        match self {
            Irrep::A1 => (6.0, 0),
            Irrep::E => (0.0, 0),
            Irrep::T1 => (2.0, 1),
            Irrep::T2 => (-2.0, 1),
            Irrep::A2 => (-6.0, 2),
        }
    }

    const ALL: [Irrep; 5] = [Irrep::A1, Irrep::A2, Irrep::E, Irrep::T1, Irrep::T2];
}

/// One (S, Γ) block: the projected operators and the subspaces used for labels.
///
/// The block's basis is the eigenbasis of V, so V is diagonal and the weight of a
/// strong-field configuration in a state is a sum of squared components.
#[derive(Debug)]
pub struct Block {
    pub multiplicity: u8,
    pub irrep: Irrep,
    pub v: DMatrix<f64>,
    pub kb: DMatrix<f64>,
    pub kc: DMatrix<f64>,
    /// Each free-ion L of the block: its letter and K_B, K_C restricted to it
    /// (both commute with L², so the free-ion levels of the block are their eigenvalues).
    terms: Vec<TermSpace>,
    /// Strong-field configuration names, and the index of each row's name.
    configurations: Vec<String>,
    configuration_of_row: Vec<usize>,
    /// The names of the last parent sequence asked for (they change only when
    /// C/B reorders the free-ion terms of the block).
    names_cache: Mutex<Option<NamesCache>>,
}

type NamesCache = (Vec<char>, Vec<(String, String, String)>);

/// K_B and K_C of one block restricted to one L² eigenspace.
#[derive(Debug)]
struct TermSpace {
    letter: char,
    kb: DMatrix<f64>,
    kc: DMatrix<f64>,
    /// The eigenspace's orthonormal basis in block coordinates.
    basis: DMatrix<f64>,
}

impl Block {
    /// (irrep, plain label, typeset label) of the k-th level of this block, whose
    /// levels have the parent terms `parents`. The parent is shown only when the
    /// block has several levels; a parent letter met again in the same block gets
    /// primes ("1T2g(I)", then "1T2g(I')"; typeset ′) so every label is unique.
    pub fn names(
        &self,
        geometry: Geometry,
        parents: &[char],
        k: usize,
    ) -> (String, String, String) {
        let irrep = self.irrep.name(geometry);
        let parent = parents.get(k).copied().unwrap_or('?');
        let earlier = parents.iter().take(k).filter(|&&p| p == parent).count();
        let (tag, typeset_tag) = if parents.len() > 1 {
            (
                format!("({parent}{})", "'".repeat(earlier)),
                format!("({parent}{})", "′".repeat(earlier)),
            )
        } else {
            (String::new(), String::new())
        };
        let label = format!("{}{irrep}{tag}", self.multiplicity);
        let typeset = format!(
            "{}{}{typeset_tag}",
            superscript(self.multiplicity),
            subscript_irrep(&irrep)
        );
        (irrep, label, typeset)
    }

    /// The names of every level of the block (see [`Block::names`]), cached.
    pub fn all_names(&self, geometry: Geometry, parents: &[char]) -> Vec<(String, String, String)> {
        self.with_names(geometry, parents, <[_]>::to_vec)
    }

    /// Calls `use_names` with the names of every level of the block, computed
    /// only when the parent sequence differs from the last one asked for.
    fn with_names<T>(
        &self,
        geometry: Geometry,
        parents: &[char],
        use_names: impl FnOnce(&[(String, String, String)]) -> T,
    ) -> T {
        let make = || -> Vec<_> {
            (0..parents.len())
                .map(|k| self.names(geometry, parents, k))
                .collect()
        };
        let Ok(mut cache) = self.names_cache.lock() else {
            return use_names(&make());
        };
        if !matches!(cache.as_ref(), Some((key, _)) if key == parents) {
            *cache = Some((parents.to_vec(), make()));
        }
        use_names(cache.as_ref().map_or(&[][..], |(_, names)| names))
    }

    /// Number of levels (rows) of the block.
    pub fn size(&self) -> usize {
        self.v.nrows()
    }
}

/// The dⁿ model in one geometry.
#[derive(Debug)]
pub struct Model {
    pub n: u8,
    pub geometry: Geometry,
    pub blocks: Vec<Block>,
}

/// One eigenstate of one block.
pub struct BlockState {
    pub energy: f64,
    pub vector: nalgebra::DVector<f64>,
}

/// Eigenvalues ascending with matching eigenvector columns.
pub fn eigen_sorted(m: &DMatrix<f64>) -> (Vec<f64>, DMatrix<f64>) {
    if m.nrows() == 1 {
        return (vec![m[(0, 0)]], DMatrix::from_element(1, 1, 1.0));
    }
    let eig = m.clone().symmetric_eigen();
    let mut order: Vec<usize> = (0..eig.eigenvalues.len()).collect();
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let values = order.iter().map(|&i| eig.eigenvalues[i]).collect();
    let vectors = DMatrix::from_fn(m.nrows(), order.len(), |r, c| {
        eig.eigenvectors[(r, order[c])]
    });
    (values, vectors)
}

/// Columns of `vectors` whose eigenvalue satisfies `keep`.
fn columns_where(
    values: &[f64],
    vectors: &DMatrix<f64>,
    keep: impl Fn(f64) -> bool,
) -> DMatrix<f64> {
    let chosen: Vec<usize> = (0..values.len()).filter(|&i| keep(values[i])).collect();
    DMatrix::from_fn(vectors.nrows(), chosen.len(), |r, c| {
        vectors[(r, chosen[c])]
    })
}

/// Groups the eigenvectors of a symmetric matrix by the rounded value `key(λ)`.
fn eigenspaces<K: PartialEq + Clone>(
    m: &DMatrix<f64>,
    key: impl Fn(f64) -> K,
) -> Vec<(K, DMatrix<f64>)> {
    let (values, vectors) = eigen_sorted(m);
    let mut keys: Vec<K> = Vec::new();
    for &v in &values {
        let k = key(v);
        if !keys.contains(&k) {
            keys.push(k);
        }
    }
    keys.into_iter()
        .map(|k| {
            let basis = columns_where(&values, &vectors, |v| key(v) == k);
            (k, basis)
        })
        .collect()
}

const TERM_LETTERS: &[u8] = b"SPDFGHIKLMN";

fn configuration_name(geometry: Geometry, n: u8, eigenvalue: f64) -> String {
    let n_i = i64::from(n);
    let part = |name: &str, count: i64| {
        if count > 0 {
            format!("{name}^{count}")
        } else {
            String::new()
        }
    };
    match geometry {
        Geometry::Octahedral => {
            let eg = ((eigenvalue + 4.0 * f64::from(n)) / 10.0).round() as i64;
            format!("{}{}", part("t2g", n_i - eg), part("eg", eg))
        }
        Geometry::Tetrahedral => {
            let t2 = ((eigenvalue + 6.0 * f64::from(n)) / 10.0).round() as i64;
            format!("{}{}", part("e", n_i - t2), part("t2", t2))
        }
    }
}

/// L² = L₋L₊ + L_z² + L_z on the determinants `dets` (one M_S), with L₊ mapping
/// them into `same_ms` (every determinant of that M_S).
fn orbit_squared(basis: &Basis, same_ms: &[usize], dets: &[usize]) -> DMatrix<f64> {
    let l_plus = matrix(basis, same_ms, dets, &OrbitRaise);
    let lz = DMatrix::from_fn(dets.len(), dets.len(), |r, c| {
        if r == c {
            let m = ml(basis.masks[dets[r]]) as f64;
            m * m + m
        } else {
            0.0
        }
    });
    lz + l_plus.transpose() * &l_plus
}

/// The distinct strong-field configurations of the rows (eigenvalues of V)
/// and, for each row, the index of its configuration.
fn configuration_rows(geometry: Geometry, n: u8, v_values: &[f64]) -> (Vec<String>, Vec<usize>) {
    let mut configurations: Vec<String> = Vec::new();
    let of_row = v_values
        .iter()
        .map(|&e| {
            let name = configuration_name(geometry, n, e);
            if let Some(k) = configurations.iter().position(|c| *c == name) {
                k
            } else {
                configurations.push(name);
                configurations.len() - 1
            }
        })
        .collect();
    (configurations, of_row)
}

impl Model {
    /// Builds the blocked model (a few milliseconds for d⁵).
    pub fn build(n: u8, geometry: Geometry) -> Model {
        let basis = Basis::new(n);
        let sign = match geometry {
            Geometry::Octahedral => 1.0,
            Geometry::Tetrahedral => -1.0,
        };
        let field = cubic_field(sign);
        let (racah_b, racah_c) = (Coulomb::racah_b(), Coulomb::racah_c());
        let all: Vec<usize> = (0..basis.masks.len()).collect();
        let mut blocks = Vec::new();
        let max_two_s = i64::from(n.min(10 - n));
        for two_s in (i64::from(n % 2)..=max_two_s).step_by(2) {
            let with_ms = |two_m: i64| -> Vec<usize> {
                all.iter()
                    .copied()
                    .filter(|&d| two_ms(basis.masks[d]) == two_m)
                    .collect()
            };
            let same_ms = with_ms(two_s);
            let raised_ms = with_ms(two_s + 2);
            for q in 0..3 {
                let dets: Vec<usize> = same_ms
                    .iter()
                    .copied()
                    .filter(|&d| ml(basis.masks[d]).rem_euclid(4) == q)
                    .collect();
                if dets.is_empty() {
                    continue;
                }
                let s_plus = matrix(&basis, &raised_ms, &dets, &SpinRaise);
                let (gram_values, gram_vectors) = eigen_sorted(&(s_plus.transpose() * &s_plus));
                let spin_s = columns_where(&gram_values, &gram_vectors, |g| g < 0.5);
                if spin_s.ncols() == 0 {
                    continue;
                }
                let (class_sum, _) = fourfold_class_sum(&basis, &dets);
                let (sum_values, sum_vectors) =
                    eigen_sorted(&(spin_s.transpose() * &class_sum * &spin_s));
                let v = matrix(&basis, &dets, &dets, &field);
                let kb = matrix(&basis, &dets, &dets, &racah_b);
                let kc = matrix(&basis, &dets, &dets, &racah_c);
                let l_squared = orbit_squared(&basis, &same_ms, &dets);
                for irrep in Irrep::ALL {
                    let (value, row) = irrep.class_sum_and_row();
                    if row != q {
                        continue;
                    }
                    let u = &spin_s
                        * columns_where(&sum_values, &sum_vectors, |s| (s - value).abs() < 0.5);
                    if u.ncols() == 0 {
                        continue;
                    }
                    // Rotate to the eigenbasis of V (configurations become rows).
                    let (v_values, v_vectors) = eigen_sorted(&(u.transpose() * &v * &u));
                    let u = u * v_vectors;
                    let project = |m: &DMatrix<f64>| u.transpose() * m * &u;
                    let block_kb = project(&kb);
                    let block_kc = project(&kc);
                    let terms = eigenspaces(&project(&l_squared), |l2| {
                        let l = (((1.0 + 4.0 * l2.max(0.0)).sqrt() - 1.0) / 2.0).round() as usize;
                        TERM_LETTERS.get(l).map_or('?', |&c| char::from(c))
                    })
                    .into_iter()
                    .map(|(letter, basis)| TermSpace {
                        letter,
                        kb: basis.transpose() * &block_kb * &basis,
                        kc: basis.transpose() * &block_kc * &basis,
                        basis,
                    })
                    .collect();
                    let (configurations, configuration_of_row) =
                        configuration_rows(geometry, n, &v_values);
                    blocks.push(Block {
                        multiplicity: (two_s + 1) as u8,
                        irrep,
                        v: DMatrix::from_diagonal(&nalgebra::DVector::from_vec(v_values)),
                        kb: block_kb,
                        kc: block_kc,
                        terms,
                        configurations,
                        configuration_of_row,
                        names_cache: Mutex::new(None),
                    });
                }
            }
        }
        Model {
            n,
            geometry,
            blocks,
        }
    }

    /// Eigenstates of every block, ascending within the block.
    pub fn block_states(&self, p: &Params) -> Vec<Vec<BlockState>> {
        self.blocks
            .iter()
            .map(|block| {
                let (values, vectors) = eigen_sorted(&block.hamiltonian(p));
                values
                    .iter()
                    .enumerate()
                    .map(|(k, &energy)| BlockState {
                        energy,
                        vector: vectors.column(k).into_owned(),
                    })
                    .collect()
            })
            .collect()
    }

    /// Energies of every block, ascending within the block (no vectors kept).
    pub fn block_energies(&self, p: &Params) -> Vec<Vec<f64>> {
        let mut values = [0.0; eigen::MAX];
        self.blocks
            .iter()
            .map(|block| block.energies(p, &mut values).to_vec())
            .collect()
    }

    /// Parent-term letters of the levels of each block, in eigen-order (see [`Block::parents`]).
    pub fn parents(&self, p: &Params) -> Vec<Vec<char>> {
        self.blocks.iter().map(|block| block.parents(p)).collect()
    }

    /// All levels, lowest first, energies and derivatives relative to the ground level.
    pub fn evaluate(&self, p: &Params) -> Vec<Level> {
        let count = self.blocks.iter().map(Block::size).sum();
        let mut raw = Vec::with_capacity(count);
        let mut parents = Vec::new();
        let mut values = [0.0; eigen::MAX];
        let mut vectors = Small::zeros(0);
        for block in &self.blocks {
            block.parents_into(p, &mut parents);
            let solved = block.eigenpairs(p, &mut values, &mut vectors);
            block.with_names(self.geometry, &parents, |names| {
                for (k, &energy) in values[..solved].iter().enumerate() {
                    raw.push(block.level(k, energy, &vectors, &parents, names));
                }
            });
        }
        raw.sort_by(|a, b| a.energy.total_cmp(&b.energy));
        if let Some(g) = raw.first().map(|l| [l.energy, l.d_dq, l.d_b, l.d_c]) {
            for level in &mut raw {
                level.energy -= g[0];
                level.d_dq -= g[1];
                level.d_b -= g[2];
                level.d_c -= g[3];
            }
        }
        raw
    }
}

impl Block {
    /// H = Dq·V + B·K_B + C·K_C of this block.
    fn hamiltonian(&self, p: &Params) -> DMatrix<f64> {
        DMatrix::from_fn(self.v.nrows(), self.v.ncols(), |i, j| {
            self.v[(i, j)] * p.dq + self.kb[(i, j)] * p.b + self.kc[(i, j)] * p.c
        })
    }

    /// H of this block in a stack buffer (blocks up to [`eigen::MAX`] rows).
    fn small_hamiltonian(&self, p: &Params) -> Small {
        let n = self.size();
        let mut h = Small::zeros(n);
        for i in 0..n {
            for j in 0..n {
                let value = self.kb[(i, j)] * p.b + self.kc[(i, j)] * p.c;
                h.set(i, j, value);
            }
            h.a[i * eigen::MAX + i] += self.v[(i, i)] * p.dq;
        }
        h
    }

    /// The block's energies, ascending, in `values[..size]`.
    fn energies<'a>(&self, p: &Params, values: &'a mut [f64; eigen::MAX]) -> &'a [f64] {
        let n = self.size();
        if n > eigen::MAX || !eigen::solve(&mut self.small_hamiltonian(p), values, None) {
            let (all, _) = eigen_sorted(&self.hamiltonian(p));
            return Self::fallback(&all, values, None);
        }
        &values[..n]
    }

    /// The block's energies ascending and their eigenvectors as the columns of
    /// `vectors`; returns the number of levels.
    fn eigenpairs(&self, p: &Params, values: &mut [f64; eigen::MAX], vectors: &mut Small) -> usize {
        let n = self.size();
        if n > eigen::MAX || !eigen::solve(&mut self.small_hamiltonian(p), values, Some(vectors)) {
            let (all, x) = eigen_sorted(&self.hamiltonian(p));
            return Self::fallback(&all, values, Some((&x, vectors))).len();
        }
        n
    }

    /// Copies a dense solution into the stack buffers (only `MAX` levels fit:
    /// never reached by the cubic blocks of d1…d9, whose largest has 10 rows).
    fn fallback<'a>(
        all: &[f64],
        values: &'a mut [f64; eigen::MAX],
        vectors: Option<(&DMatrix<f64>, &mut Small)>,
    ) -> &'a [f64] {
        let kept = all.len().min(eigen::MAX);
        values[..kept].copy_from_slice(&all[..kept]);
        if let Some((x, out)) = vectors {
            *out = Small::zeros(kept);
            for i in 0..kept {
                for j in 0..kept {
                    out.set(i, j, x[(i, j)]);
                }
            }
        }
        &values[..kept]
    }

    /// The k-th level of the block from its eigenvector (column k of `vectors`).
    fn level(
        &self,
        k: usize,
        energy: f64,
        vectors: &Small,
        parents: &[char],
        names: &[(String, String, String)],
    ) -> Level {
        let n = self.size().min(eigen::MAX);
        let mut x = [0.0; eigen::MAX];
        for (i, xi) in x[..n].iter_mut().enumerate() {
            *xi = vectors.at(i, k);
        }
        let x = &x[..n];
        let mut shares = [0.0; eigen::MAX];
        let mut d_dq = 0.0;
        for (i, &xi) in x.iter().enumerate() {
            shares[self.configuration_of_row[i]] += xi * xi;
            d_dq += self.v[(i, i)] * xi * xi;
        }
        let (best, weight) = shares[..self.configurations.len().min(eigen::MAX)]
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.total_cmp(b.1))
            .map_or((0, 0.0), |(i, &w)| (i, w));
        let (irrep, label, typeset) = names.get(k).cloned().unwrap_or_default();
        Level {
            energy,
            multiplicity: self.multiplicity,
            label,
            typeset,
            irrep,
            degeneracy: usize::from(self.multiplicity) * self.irrep.dimension(),
            parent: parents.get(k).copied().unwrap_or('?').to_string(),
            configuration: self.configurations.get(best).cloned().unwrap_or_default(),
            weight,
            d_dq,
            d_b: quadratic_form(&self.kb, x),
            d_c: quadratic_form(&self.kc, x),
        }
    }

    /// Parent-term letters of this block's levels in eigen-order. Levels of one
    /// (S, Γ) block never cross, so the k-th level connects with the k-th free-ion
    /// level of the block: the eigenvalues of B·K_B + C·K_C on each L² eigenspace,
    /// sorted. When two different terms of the block coincide at this (B, C), the
    /// order is decided by following the levels to a tiny Dq of the same sign.
    pub fn parents(&self, p: &Params) -> Vec<char> {
        let mut out = Vec::with_capacity(self.size());
        self.parents_into(p, &mut out);
        out
    }

    /// [`Block::parents`] into a reused buffer.
    fn parents_into(&self, p: &Params, out: &mut Vec<char>) {
        out.clear();
        let mut free = [(0.0, '?'); eigen::MAX];
        let mut count = 0;
        let mut values = [0.0; eigen::MAX];
        for term in &self.terms {
            let n = term.kb.nrows();
            let mut h = Small::zeros(n);
            for i in 0..n {
                for j in 0..n {
                    h.set(i, j, term.kb[(i, j)] * p.b + term.kc[(i, j)] * p.c);
                }
            }
            let solved = if n == 1 {
                values[0] = h.at(0, 0);
                true
            } else {
                n <= eigen::MAX && eigen::solve(&mut h, &mut values, None)
            };
            if !solved {
                return self.parents_by_following(p, out);
            }
            for &e in &values[..n] {
                if let Some(slot) = free.get_mut(count) {
                    *slot = (e, term.letter);
                    count += 1;
                }
            }
        }
        let free = &mut free[..count];
        free.sort_by(|a, b| a.0.total_cmp(&b.0));
        let scale = p.b.abs().max(p.c.abs()).max(1.0);
        let tied = free
            .windows(2)
            .any(|w| w[0].1 != w[1].1 && w[1].0 - w[0].0 < 1e-7 * scale);
        if tied {
            return self.parents_by_following(p, out);
        }
        out.extend(free.iter().map(|&(_, letter)| letter));
    }

    /// Parents found by following the levels to a tiny Dq of the sign of `p.dq`
    /// and reading the largest L² component of each state.
    fn parents_by_following(&self, p: &Params, out: &mut Vec<char>) {
        out.clear();
        let scale = p.b.abs().max(p.c.abs()).max(1.0);
        let direction = if p.dq < 0.0 { -1.0 } else { 1.0 };
        let weak = Params {
            dq: direction * 1e-4 * scale,
            b: p.b,
            c: p.c,
        };
        let (_, vectors) = eigen_sorted(&self.hamiltonian(&weak));
        out.extend(vectors.column_iter().map(|x| {
            self.terms
                .iter()
                .map(|t| (t.letter, (t.basis.transpose() * x).norm_squared()))
                .max_by(|a, b| a.1.total_cmp(&b.1))
                .map_or('?', |(letter, _)| letter)
        }));
    }
}

/// xᵀ M x.
fn quadratic_form(m: &DMatrix<f64>, x: &[f64]) -> f64 {
    m.column_iter()
        .zip(x)
        .map(|(column, &xj)| xj * column.iter().zip(x).map(|(a, &xi)| a * xi).sum::<f64>())
        .sum()
}

fn superscript(n: u8) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    n.to_string()
        .chars()
        .map(|c| c.to_digit(10).map_or(c, |d| DIGITS[d as usize]))
        .collect()
}

fn subscript_irrep(irrep: &str) -> String {
    irrep
        .chars()
        .map(|c| match c {
            '1' => '₁',
            '2' => '₂',
            other => other,
        })
        .collect()
}
