//! Energy-level diagrams (E/B against Δ/B at fixed C/B, ground subtracted, as
//! introduced by Tanabe & Sugano, J. Phys. Soc. Jpn. 9 (1954) 766) and the
//! field strength at which the ground level changes spin.
//!
//! Curves follow the eigen-order of each (2S+1, Γ) block, so curves of the same
//! symmetry never cross (von Neumann–Wigner non-crossing rule). The spin change
//! is found by scanning Δ/B in steps of 0.25 up to 100 and bisecting the first
//! change of ground multiplicity to 1e-9.

use super::{model, Geometry, LfError, Params};
use serde::{Deserialize, Serialize};

/// One curve: one level of one block, E/B above the ground level at each Δ/B.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Curve {
    pub label: String,
    pub typeset: String,
    pub multiplicity: u8,
    pub irrep: String,
    pub energy_over_b: Vec<f64>,
}

/// A whole diagram.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Diagram {
    /// "d6".
    pub config: String,
    pub geometry: Geometry,
    pub c_over_b: f64,
    pub delta_over_b: Vec<f64>,
    pub curves: Vec<Curve>,
    /// Δ/B where the ground level changes spin, if within 0…100.
    pub spin_change: Option<f64>,
}

/// Largest Δ/B a diagram or spin-change search may reach.
pub const MAX_DELTA_OVER_B: f64 = 1000.0;
/// Largest number of points of a diagram.
pub const MAX_POINTS: usize = 20_000;

fn check_c_over_b(c_over_b: f64) -> Result<(), LfError> {
    if c_over_b.is_finite() && (0.0..=100.0).contains(&c_over_b) {
        Ok(())
    } else {
        Err(LfError::Diagram(format!(
            "C/B = {c_over_b} is outside the accepted range 0 to 100"
        )))
    }
}

/// Parameters at Δ/B = x with B = 1.
fn at(x: f64, c_over_b: f64) -> Params {
    Params {
        dq: x / 10.0,
        b: 1.0,
        c: c_over_b,
    }
}

/// Multiplicity of the ground level at Δ/B = x.
fn ground_multiplicity(m: &super::Model, x: f64, c_over_b: f64) -> u8 {
    let energies = m.block_energies(&at(x, c_over_b));
    m.blocks
        .iter()
        .zip(&energies)
        .filter_map(|(b, e)| e.first().map(|&lowest| (b.multiplicity, lowest)))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map_or(0, |(mult, _)| mult)
}

/// Δ/B at which the ground level changes spin (first change above Δ/B = 0, up to 100).
pub fn spin_change(n: u8, geometry: Geometry, c_over_b: f64) -> Result<Option<f64>, LfError> {
    check_c_over_b(c_over_b)?;
    let m = model(n, geometry)?;
    let step = 0.25;
    let mut lo = 0.0;
    let start = ground_multiplicity(m, 1e-6, c_over_b);
    while lo < 100.0 {
        let hi = lo + step;
        if ground_multiplicity(m, hi, c_over_b) != start {
            let (mut a, mut b) = (lo, hi);
            while b - a > 1e-9 {
                let mid = 0.5 * (a + b);
                if ground_multiplicity(m, mid, c_over_b) == start {
                    a = mid;
                } else {
                    b = mid;
                }
            }
            return Ok(Some(0.5 * (a + b)));
        }
        lo = hi;
    }
    Ok(None)
}

/// The E/B against Δ/B diagram of dⁿ at the given C/B, `points` values of Δ/B
/// from 0 to `max_delta_over_b`.
pub fn diagram(
    n: u8,
    geometry: Geometry,
    c_over_b: f64,
    max_delta_over_b: f64,
    points: usize,
) -> Result<Diagram, LfError> {
    check_c_over_b(c_over_b)?;
    if !(max_delta_over_b.is_finite()
        && max_delta_over_b > 0.0
        && max_delta_over_b <= MAX_DELTA_OVER_B)
    {
        return Err(LfError::Diagram(format!(
            "the largest Δ/B must be above 0 and at most {MAX_DELTA_OVER_B}, not {max_delta_over_b}"
        )));
    }
    if !(2..=MAX_POINTS).contains(&points) {
        return Err(LfError::Diagram(format!(
            "a diagram needs 2 to {MAX_POINTS} points, not {points}"
        )));
    }
    let m = model(n, geometry)?;
    let delta_over_b: Vec<f64> = (0..points)
        .map(|i| max_delta_over_b * i as f64 / (points - 1) as f64)
        .collect();
    let parents = m.parents(&at(max_delta_over_b / 1e3, c_over_b));
    let mut curves: Vec<Curve> = Vec::new();
    for (block, block_parents) in m.blocks.iter().zip(&parents) {
        for k in 0..block_parents.len() {
            let (irrep, label, typeset) = block.names(geometry, block_parents, k);
            curves.push(Curve {
                label,
                typeset,
                multiplicity: block.multiplicity,
                irrep,
                energy_over_b: Vec::with_capacity(points),
            });
        }
    }
    for &x in &delta_over_b {
        let energies = m.block_energies(&at(x, c_over_b));
        let ground = energies
            .iter()
            .filter_map(|e| e.first().copied())
            .fold(f64::INFINITY, f64::min);
        for (curve, e) in curves.iter_mut().zip(energies.iter().flatten()) {
            curve.energy_over_b.push(e - ground);
        }
    }
    Ok(Diagram {
        config: format!("d{n}"),
        geometry,
        c_over_b,
        delta_over_b,
        curves,
        spin_change: spin_change(n, geometry, c_over_b)?,
    })
}
