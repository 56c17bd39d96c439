//! Angular coefficients of the Coulomb interaction between d electrons.
//!
//! The Condon–Shortley coefficient
//! c^k(m, m′) = √(4π/(2k+1)) ∫ Y*₂ₘ Y_{k,m−m′} Y₂ₘ′ dΩ
//!            = (−1)^m · 5 · (2 k 2; 0 0 0) · (2 k 2; −m, m−m′, m′)
//! is computed here from Wigner 3j symbols (Racah's closed formula), never
//! typed in from a table (Condon & Shortley, *The Theory of Atomic Spectra*,
//! 1935, ch. VI; Racah, Phys. Rev. 62 (1942) 438).

/// n! as a float; exact for the small arguments used here (n ≤ 20).
fn factorial(n: i64) -> f64 {
    (1..=n).map(|i| i as f64).product()
}

/// The Wigner 3j symbol (j1 j2 j3; m1 m2 m3) for integer angular momenta,
/// by Racah's formula. Zero when the triangle or projection rules fail.
pub fn wigner_3j(j1: i64, j2: i64, j3: i64, m1: i64, m2: i64, m3: i64) -> f64 {
    if m1 + m2 + m3 != 0
        || j3 < (j1 - j2).abs()
        || j3 > j1 + j2
        || m1.abs() > j1
        || m2.abs() > j2
        || m3.abs() > j3
    {
        return 0.0;
    }
    let triangle = factorial(j1 + j2 - j3) * factorial(j1 - j2 + j3) * factorial(-j1 + j2 + j3)
        / factorial(j1 + j2 + j3 + 1);
    let projections = factorial(j1 + m1)
        * factorial(j1 - m1)
        * factorial(j2 + m2)
        * factorial(j2 - m2)
        * factorial(j3 + m3)
        * factorial(j3 - m3);
    let k_min = 0.max(j2 - j3 - m1).max(j1 - j3 + m2);
    let k_max = (j1 + j2 - j3).min(j1 - m1).min(j2 + m2);
    let sum: f64 = (k_min..=k_max)
        .map(|k| {
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            sign / (factorial(k)
                * factorial(j3 - j2 + k + m1)
                * factorial(j3 - j1 + k - m2)
                * factorial(j1 + j2 - j3 - k)
                * factorial(j1 - k - m1)
                * factorial(j2 - k + m2))
        })
        .sum();
    let phase = if (j1 - j2 - m3).rem_euclid(2) == 0 {
        1.0
    } else {
        -1.0
    };
    phase * (triangle * projections).sqrt() * sum
}

/// c^k(m, m′) for two d orbitals (l = l′ = 2); k is 0, 2 or 4.
pub fn ck(k: i64, m: i64, m_prime: i64) -> f64 {
    let phase = if m.rem_euclid(2) == 0 { 1.0 } else { -1.0 };
    phase * 5.0 * wigner_3j(2, k, 2, 0, 0, 0) * wigner_3j(2, k, 2, -m, m - m_prime, m_prime)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn three_j_known_values() {
        // (1 1 0; 0 0 0) = −1/√3 and (2 2 0; 1 −1 0) = −1/√5: standard 3j values
        // (Edmonds, Angular Momentum in Quantum Mechanics, 1957, table 2; from memory).
        assert!((wigner_3j(1, 1, 0, 0, 0, 0) + 1.0 / 3f64.sqrt()).abs() < 1e-14);
        assert!((wigner_3j(2, 2, 0, 1, -1, 0) + 1.0 / 5f64.sqrt()).abs() < 1e-14);
        assert!(wigner_3j(2, 2, 2, 0, 0, 1) == 0.0);
    }

    #[test]
    fn ck_of_k0_is_kronecker_delta() {
        // c⁰(m, m′) = δ(m, m′) follows from the orthonormality of the Y₂ₘ.
        for m in -2..=2 {
            for mp in -2..=2 {
                let expected = if m == mp { 1.0 } else { 0.0 };
                assert!((ck(0, m, mp) - expected).abs() < 1e-14);
            }
        }
    }

    #[test]
    fn ck_sum_rule() {
        // Σ_{m′} c^k(m, m′)² = 5·(2 k 2; 0 0 0)², independent of m, because
        // Σ_{m2,m3} (j1 j2 j3; m1 m2 m3)² = 1/(2j1+1) (3j orthogonality, Edmonds 1957 eq. 3.7.8).
        for k in [2, 4] {
            let reference = 5.0 * wigner_3j(2, k, 2, 0, 0, 0).powi(2);
            for m in -2..=2 {
                let sum: f64 = (-2..=2).map(|mp| ck(k, m, mp).powi(2)).sum();
                assert!((sum - reference).abs() < 1e-13, "k={k} m={m}");
            }
        }
    }
}
