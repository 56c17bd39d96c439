//! Second derivatives of a level's energy with respect to (Dq, B, C).
//!
//! H = Dq·V + B·K_B + C·K_C is linear in the parameters, so the first
//! derivative of a level is ⟨k|∂H/∂pₐ|k⟩ (Hellmann–Feynman, stored on every
//! [`super::Level`]) and the second is the second-order perturbation sum
//!
//! ∂²E_k/∂pₐ∂p_b = 2 Σ_{m≠k} ⟨k|H_a|m⟩⟨m|H_b|k⟩ / (E_k − E_m)
//!
//! over the other levels of the same (S, Γ) block (non-degenerate
//! perturbation theory, e.g. Sakurai, *Modern Quantum Mechanics*, §5.1, from
//! memory; checked against finite differences of the first derivatives in the
//! tests). Levels of other blocks do not couple: the three operators are
//! totally symmetric and spin-free. Within a block the levels never cross, so
//! the denominators vanish only at an exact accidental coincidence, where the
//! function returns `None`.

use super::{check_params, Model, Params};

/// The 3×3 matrix of ∂²E/∂pₐ∂p_b, p = (Dq, B, C), of the level labelled
/// `label` ("4T1g(P)"), in absolute energy (not relative to the ground
/// level). `None` when no level has that label, the parameters are refused,
/// or two levels of its block coincide.
pub fn level_curvature(model: &Model, p: &Params, label: &str) -> Option<[[f64; 3]; 3]> {
    check_params(p).ok()?;
    for block in &model.blocks {
        let parents = block.parents(p);
        let names = block.all_names(model.geometry, &parents);
        let Some(k) = names.iter().position(|(_, plain, _)| plain == label) else {
            continue;
        };
        let h = &block.v * p.dq + &block.kb * p.b + &block.kc * p.c;
        let (values, vectors) = super::model::eigen_sorted(&h);
        let operators = [&block.v, &block.kb, &block.kc];
        // ⟨m|H_a|k⟩ for every m and a.
        let xk = vectors.column(k);
        let couplings: Vec<nalgebra::DVector<f64>> = operators
            .iter()
            .map(|op| vectors.transpose() * (*op * xk))
            .collect();
        let scale = values.iter().fold(1.0_f64, |s, e| s.max(e.abs()));
        let mut out = [[0.0; 3]; 3];
        for m in (0..values.len()).filter(|&m| m != k) {
            let gap = values[k] - values[m];
            if gap.abs() <= 1e-12 * scale {
                return None;
            }
            for a in 0..3 {
                for b in 0..3 {
                    out[a][b] += 2.0 * couplings[a][m] * couplings[b][m] / gap;
                }
            }
        }
        return Some(out);
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ligand_field::model;
    use crate::ligand_field::Geometry;

    /// ∂E/∂(Dq, B, C) of `label` relative to the ground level (Hellmann–Feynman).
    fn first_derivatives(model: &Model, p: &Params, label: &str) -> [f64; 3] {
        let levels = model.evaluate(p);
        let level = levels
            .iter()
            .find(|l| l.label == label)
            .expect("label exists");
        [level.d_dq, level.d_b, level.d_c]
    }

    /// The curvature of a transition (level minus ground) equals the central
    /// finite difference of its Hellmann–Feynman first derivatives.
    #[test]
    fn a_level_curvature_matches_finite_differences_of_its_first_derivatives() {
        let cases = [
            (3, Geometry::Octahedral, "4T1g(F)", "4A2g"),
            (8, Geometry::Octahedral, "3T1g(P)", "3A2g"),
            (7, Geometry::Tetrahedral, "4T1(P)", "4A2"),
        ];
        let p = Params {
            dq: 1_200.0,
            b: 800.0,
            c: 3_500.0,
        };
        for (n, geometry, label, ground) in cases {
            let m = model(n, geometry).unwrap();
            let hess = |l: &str| level_curvature(m, &p, l).expect("curvature");
            let (hl, hg) = (hess(label), hess(ground));
            let steps = [1e-2, 1e-2, 1e-2];
            for a in 0..3 {
                let mut up = p;
                let mut down = p;
                match a {
                    0 => (up.dq, down.dq) = (p.dq + steps[0], p.dq - steps[0]),
                    1 => (up.b, down.b) = (p.b + steps[1], p.b - steps[1]),
                    _ => (up.c, down.c) = (p.c + steps[2], p.c - steps[2]),
                }
                let (du, dd) = (
                    first_derivatives(m, &up, label),
                    first_derivatives(m, &down, label),
                );
                for b in 0..3 {
                    let fd = (du[b] - dd[b]) / (2.0 * steps[a]);
                    let analytic = hl[a][b] - hg[a][b];
                    assert!(
                        (fd - analytic).abs() <= 1e-6 * (1.0 + analytic.abs()),
                        "d{n} {label} ∂²/∂p{a}∂p{b}: analytic {analytic}, finite difference {fd}"
                    );
                }
            }
        }
    }

    #[test]
    fn an_unknown_label_has_no_curvature() {
        let m = model(3, Geometry::Octahedral).unwrap();
        let p = Params {
            dq: 1_750.0,
            b: 700.0,
            c: 3_150.0,
        };
        assert!(level_curvature(m, &p, "9Z").is_none());
    }
}
