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
//! Labels: the parent free-ion term follows a level to Dq → 0 (levels of one
//! (S, Γ) block never cross, so the k-th level at Dq connects with the k-th at a
//! tiny Dq of the same sign) and takes the L with the largest weight there. The
//! strong-field configuration comes from the eigenspaces of V itself, since the
//! number of e_g electrons is (V/Dq + 4n)/10 in Oh and the number of t2
//! electrons (V/Dq_t + 6n)/10 in Td.

use super::determinants::{
    cubic_field, fourfold_class_sum, matrix, ml, two_ms, Basis, Coulomb, OrbitRaise, SpinRaise,
};
use super::{Geometry, Level, Params};
use nalgebra::DMatrix;

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
#[derive(Debug)]
pub struct Block {
    pub multiplicity: u8,
    pub irrep: Irrep,
    pub v: DMatrix<f64>,
    pub kb: DMatrix<f64>,
    pub kc: DMatrix<f64>,
    /// Orthonormal bases of the L² eigenspaces, with the term letter.
    terms: Vec<(char, DMatrix<f64>)>,
    /// Orthonormal bases of the V eigenspaces, with the configuration name.
    configurations: Vec<(String, DMatrix<f64>)>,
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
                let l_plus = matrix(&basis, &same_ms, &dets, &OrbitRaise);
                let lz = DMatrix::from_fn(dets.len(), dets.len(), |r, c| {
                    if r == c {
                        let m = ml(basis.masks[dets[r]]) as f64;
                        m * m + m
                    } else {
                        0.0
                    }
                });
                let l_squared = lz + l_plus.transpose() * &l_plus;
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
                    let project = |m: &DMatrix<f64>| u.transpose() * m * &u;
                    let block_v = project(&v);
                    let terms = eigenspaces(&project(&l_squared), |l2| {
                        let l = (((1.0 + 4.0 * l2.max(0.0)).sqrt() - 1.0) / 2.0).round() as usize;
                        TERM_LETTERS.get(l).map_or('?', |&c| char::from(c))
                    });
                    let configurations =
                        eigenspaces(&block_v, |e| configuration_name(geometry, n, e));
                    blocks.push(Block {
                        multiplicity: (two_s + 1) as u8,
                        irrep,
                        kb: project(&kb),
                        kc: project(&kc),
                        v: block_v,
                        terms,
                        configurations,
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
                let h = &block.v * p.dq + &block.kb * p.b + &block.kc * p.c;
                let (values, vectors) = eigen_sorted(&h);
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
        self.blocks
            .iter()
            .map(|block| {
                // One allocation: H = Dq·V + B·K_B + C·K_C element by element.
                let h = DMatrix::from_fn(block.v.nrows(), block.v.ncols(), |i, j| {
                    block.v[(i, j)] * p.dq + block.kb[(i, j)] * p.b + block.kc[(i, j)] * p.c
                });
                let mut e: Vec<f64> = h.symmetric_eigenvalues().iter().copied().collect();
                e.sort_by(f64::total_cmp);
                e
            })
            .collect()
    }

    /// Parent-term letters of the levels of each block, in eigen-order: each
    /// level is followed to a tiny Dq of the same sign at the same B and C.
    pub fn parents(&self, p: &Params) -> Vec<Vec<char>> {
        let scale = p.b.abs().max(p.c.abs()).max(1.0);
        let direction = if p.dq < 0.0 { -1.0 } else { 1.0 };
        let weak = Params {
            dq: direction * 1e-4 * scale,
            b: p.b,
            c: p.c,
        };
        self.block_states(&weak)
            .iter()
            .zip(&self.blocks)
            .map(|(states, block)| {
                states
                    .iter()
                    .map(|s| {
                        largest_weight(&block.terms, &s.vector).map_or('?', |(letter, _)| *letter)
                    })
                    .collect()
            })
            .collect()
    }

    /// All levels, lowest first, energies and derivatives relative to the ground level.
    pub fn evaluate(&self, p: &Params) -> Vec<Level> {
        let states = self.block_states(p);
        let parents = self.parents(p);
        let mut raw = Vec::new();
        for ((block, block_states), block_parents) in self.blocks.iter().zip(&states).zip(&parents)
        {
            for (k, (state, &parent)) in block_states.iter().zip(block_parents).enumerate() {
                let x = &state.vector;
                let expect = |m: &DMatrix<f64>| (x.transpose() * m * x)[(0, 0)];
                let (configuration, weight) = largest_weight(&block.configurations, x)
                    .map_or((String::new(), 0.0), |(c, w)| (c.clone(), w));
                let (irrep, label, typeset) = block.names(self.geometry, block_parents, k);
                raw.push(Level {
                    energy: state.energy,
                    multiplicity: block.multiplicity,
                    label,
                    typeset,
                    irrep,
                    degeneracy: usize::from(block.multiplicity) * block.irrep.dimension(),
                    parent: parent.to_string(),
                    configuration,
                    weight,
                    d_dq: expect(&block.v),
                    d_b: expect(&block.kb),
                    d_c: expect(&block.kc),
                });
            }
        }
        raw.sort_by(|a, b| a.energy.total_cmp(&b.energy));
        if let Some(ground) = raw.first().cloned() {
            for level in &mut raw {
                level.energy -= ground.energy;
                level.d_dq -= ground.d_dq;
                level.d_b -= ground.d_b;
                level.d_c -= ground.d_c;
            }
        }
        raw
    }
}

/// The labelled subspace carrying the largest share of `x`, and that share.
fn largest_weight<'a, K>(
    spaces: &'a [(K, DMatrix<f64>)],
    x: &nalgebra::DVector<f64>,
) -> Option<(&'a K, f64)> {
    spaces
        .iter()
        .map(|(k, basis)| (k, (basis.transpose() * x).norm_squared()))
        .max_by(|a, b| a.1.total_cmp(&b.1))
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
