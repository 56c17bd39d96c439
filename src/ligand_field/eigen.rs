//! Small real symmetric eigenproblems (the cubic blocks, at most a few dozen
//! rows) solved on the stack, without allocation: Householder reduction to
//! tridiagonal form, then the implicit QL algorithm with Wilkinson's shift
//! (Golub & Van Loan, *Matrix Computations*, 4th ed., 2013, §5.1.4 and §8.3;
//! Bowdler, Martin, Reinsch & Wilkinson, Numer. Math. 11 (1968) 293).
//!
//! Energies only skip the accumulation of the transformations, which is most
//! of the work; with vectors the same steps are applied to an identity matrix.
//! The matrix is scaled to entries of at most 1 first, so rotation lengths are
//! plain √(f² + g²) (libm's `hypot` guards against overflow at half the speed).

/// Largest order solved on the stack; larger matrices take nalgebra's solver.
pub const MAX: usize = 16;

/// A square matrix of order `n` ≤ [`MAX`], row-major in a fixed buffer.
#[derive(Clone)]
pub struct Small {
    pub n: usize,
    pub a: [f64; MAX * MAX],
}

impl Small {
    pub fn zeros(n: usize) -> Small {
        Small {
            n: n.min(MAX),
            a: [0.0; MAX * MAX],
        }
    }

    #[inline]
    pub fn at(&self, i: usize, j: usize) -> f64 {
        self.a[i * MAX + j]
    }

    #[inline]
    pub fn set(&mut self, i: usize, j: usize, value: f64) {
        self.a[i * MAX + j] = value;
    }
}

/// Eigenvalues ascending in `values[..n]`, and with `vectors` the matching
/// eigenvectors as its columns. `a` is destroyed. Returns false when the QL
/// iteration does not converge (never seen for finite symmetric input).
pub fn solve(a: &mut Small, values: &mut [f64; MAX], mut vectors: Option<&mut Small>) -> bool {
    let n = a.n;
    // Scaled to entries of at most 1, so that no square below can overflow.
    let scale = (0..n)
        .flat_map(|i| a.a[i * MAX..i * MAX + n].iter())
        .fold(0.0f64, |m, x| m.max(x.abs()));
    if !scale.is_finite() {
        return false;
    }
    if scale > 0.0 {
        for i in 0..n {
            for x in &mut a.a[i * MAX..i * MAX + n] {
                *x /= scale;
            }
        }
    }
    let mut off = [0.0; MAX];
    if let Some(z) = vectors.as_deref_mut() {
        *z = Small::zeros(n);
        for i in 0..n {
            z.set(i, i, 1.0);
        }
    }
    tridiagonalize(a, values, &mut off, vectors.as_deref_mut());
    if !tridiagonal_ql(n, values, &mut off, vectors.as_deref_mut()) {
        return false;
    }
    if scale > 0.0 {
        for x in &mut values[..n] {
            *x *= scale;
        }
    }
    sort(n, values, vectors);
    true
}

/// Householder reflections P_k = I − 2vvᵀ zeroing column k below the
/// subdiagonal; `diag` and `off` receive T (off[i] couples rows i and i+1), and
/// `z` (if given) is multiplied on the right by every P_k, so that A = Z T Zᵀ.
#[allow(
    clippy::needless_range_loop,
    reason = "index loops over the rows and columns of the matrix, as in the textbook algorithm"
)]
fn tridiagonalize(
    a: &mut Small,
    diag: &mut [f64; MAX],
    off: &mut [f64; MAX],
    z: Option<&mut Small>,
) {
    let n = a.n;
    let mut z = z;
    let mut v = [0.0; MAX];
    let mut w = [0.0; MAX];
    for k in 0..n.saturating_sub(2) {
        let norm = (k + 1..n)
            .map(|i| a.at(i, k) * a.at(i, k))
            .sum::<f64>()
            .sqrt();
        let x0 = a.at(k + 1, k);
        if (k + 2..n).all(|i| a.at(i, k) == 0.0) {
            continue;
        }
        let alpha = if x0 > 0.0 { -norm } else { norm };
        // v = (x − αe₁)/‖x − αe₁‖ on rows k+1…n−1.
        for i in k + 1..n {
            v[i] = a.at(i, k);
        }
        v[k + 1] -= alpha;
        let v_norm = (k + 1..n).map(|i| v[i] * v[i]).sum::<f64>().sqrt();
        for x in &mut v[k + 1..n] {
            *x /= v_norm;
        }
        // A ← PAP on the trailing block: p = 2Av, w = p − (vᵀp)v, A −= vwᵀ + wvᵀ.
        let mut vp = 0.0;
        for i in k + 1..n {
            let p: f64 = (k + 1..n).map(|j| a.at(i, j) * v[j]).sum::<f64>() * 2.0;
            w[i] = p;
            vp += v[i] * p;
        }
        for i in k + 1..n {
            w[i] -= vp * v[i];
        }
        for i in k + 1..n {
            for j in k + 1..n {
                let value = a.at(i, j) - v[i] * w[j] - w[i] * v[j];
                a.set(i, j, value);
            }
        }
        a.set(k + 1, k, alpha);
        a.set(k, k + 1, alpha);
        for i in k + 2..n {
            a.set(i, k, 0.0);
            a.set(k, i, 0.0);
        }
        if let Some(z) = z.as_deref_mut() {
            // Z ← Z P: each row r loses 2(r·v)vᵀ.
            for r in 0..n {
                let dot: f64 = (k + 1..n).map(|j| z.at(r, j) * v[j]).sum::<f64>() * 2.0;
                for j in k + 1..n {
                    let value = z.at(r, j) - dot * v[j];
                    z.set(r, j, value);
                }
            }
        }
    }
    for i in 0..n {
        diag[i] = a.at(i, i);
        off[i] = if i + 1 < n { a.at(i + 1, i) } else { 0.0 };
    }
}

/// Implicit QL with Wilkinson's shift on the tridiagonal (diag, off); each plane
/// rotation is applied to the columns of `z` when given.
#[allow(
    clippy::needless_range_loop,
    reason = "index loops over the rows and columns of the matrix, as in the textbook algorithm"
)]
fn tridiagonal_ql(
    n: usize,
    diag: &mut [f64; MAX],
    off: &mut [f64; MAX],
    mut z: Option<&mut Small>,
) -> bool {
    for l in 0..n {
        let mut iterations = 0;
        loop {
            let mut m = l;
            while m + 1 < n {
                let scale = diag[m].abs() + diag[m + 1].abs();
                if off[m].abs() <= f64::EPSILON * scale {
                    break;
                }
                m += 1;
            }
            if m == l {
                break;
            }
            iterations += 1;
            if iterations > 60 {
                return false;
            }
            let mut g = (diag[l + 1] - diag[l]) / (2.0 * off[l]);
            let mut r = (g * g + 1.0).sqrt();
            g = diag[m] - diag[l] + off[l] / (g + r.copysign(g));
            let (mut s, mut c, mut p) = (1.0, 1.0, 0.0);
            let mut underflow = false;
            for i in (l..m).rev() {
                let f = s * off[i];
                let b = c * off[i];
                r = (f * f + g * g).sqrt();
                off[i + 1] = r;
                if r == 0.0 {
                    diag[i + 1] -= p;
                    off[m] = 0.0;
                    underflow = true;
                    break;
                }
                s = f / r;
                c = g / r;
                g = diag[i + 1] - p;
                r = (diag[i] - g) * s + 2.0 * c * b;
                p = s * r;
                diag[i + 1] = g + p;
                g = c * r - b;
                if let Some(z) = z.as_deref_mut() {
                    for k in 0..n {
                        let f = z.at(k, i + 1);
                        let zi = z.at(k, i);
                        z.set(k, i + 1, s * zi + c * f);
                        z.set(k, i, c * zi - s * f);
                    }
                }
            }
            if underflow {
                continue;
            }
            diag[l] -= p;
            off[l] = g;
            off[m] = 0.0;
        }
    }
    true
}

/// Sorts the eigenvalues ascending, moving the eigenvector columns with them.
fn sort(n: usize, values: &mut [f64; MAX], mut z: Option<&mut Small>) {
    for i in 1..n {
        let mut j = i;
        while j > 0 && values[j - 1] > values[j] {
            values.swap(j - 1, j);
            if let Some(z) = z.as_deref_mut() {
                for r in 0..n {
                    z.a.swap(r * MAX + j - 1, r * MAX + j);
                }
            }
            j -= 1;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;

    /// A fixed-seed symmetric matrix with a repeated eigenvalue built in.
    fn sample(n: usize, seed: u64) -> DMatrix<f64> {
        let mut state = seed;
        let mut next = move || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        };
        let m = DMatrix::from_fn(n, n, |_, _| next() * 1e4);
        &m + m.transpose()
    }

    #[test]
    fn the_stack_solver_matches_nalgebra_and_returns_orthonormal_eigenvectors() {
        // nalgebra's SymmetricEigen is the independent reference; A x = λ x is checked directly.
        for n in 1..=MAX {
            for seed in [1, 7, 42] {
                let m = sample(n, seed + n as u64);
                let mut reference: Vec<f64> = m.symmetric_eigenvalues().iter().copied().collect();
                reference.sort_by(f64::total_cmp);
                let mut a = Small::zeros(n);
                for i in 0..n {
                    for j in 0..n {
                        a.set(i, j, m[(i, j)]);
                    }
                }
                let (mut values, mut plain) = ([0.0; MAX], [0.0; MAX]);
                let mut z = Small::zeros(n);
                assert!(solve(&mut a.clone(), &mut plain, None));
                assert!(solve(&mut a, &mut values, Some(&mut z)));
                let scale = m.norm();
                for k in 0..n {
                    assert!((values[k] - reference[k]).abs() < 1e-12 * scale, "n={n}");
                    assert!((plain[k] - reference[k]).abs() < 1e-12 * scale, "n={n}");
                    let x = DMatrix::from_fn(n, 1, |i, _| z.at(i, k));
                    let residual = (&m * &x - &x * values[k]).norm();
                    assert!(residual < 1e-11 * scale, "n={n} residual {residual}");
                    for j in 0..n {
                        let dot: f64 = (0..n).map(|i| z.at(i, j) * z.at(i, k)).sum();
                        let expected = if j == k { 1.0 } else { 0.0 };
                        assert!((dot - expected).abs() < 1e-12, "n={n}");
                    }
                }
            }
        }
    }

    #[test]
    fn a_diagonal_matrix_with_repeated_values_keeps_them() {
        let mut a = Small::zeros(4);
        for (i, v) in [3.0, -1.0, 3.0, 0.0].into_iter().enumerate() {
            a.set(i, i, v);
        }
        let mut values = [0.0; MAX];
        let mut z = Small::zeros(4);
        assert!(solve(&mut a, &mut values, Some(&mut z)));
        assert_eq!(&values[..4], &[-1.0, 0.0, 3.0, 3.0]);
        assert_eq!((z.at(1, 0), z.at(3, 1)), (1.0, 1.0));
    }
}
