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

/// Multiplicity of the lowest level among per-block energies (each block's
/// energies ascending, blocks in the model's order).
fn lowest_multiplicity(m: &super::Model, energies: &[Vec<f64>]) -> u8 {
    m.blocks
        .iter()
        .zip(energies)
        .filter_map(|(b, e)| e.first().map(|&lowest| (b.multiplicity, lowest)))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map_or(0, |(mult, _)| mult)
}

/// Multiplicity of the ground level at Δ/B = x.
fn ground_multiplicity(m: &super::Model, x: f64, c_over_b: f64) -> u8 {
    lowest_multiplicity(m, &m.block_energies(&at(x, c_over_b)))
}

/// Step of the spin-change scan and the largest Δ/B it reaches.
const SCAN_STEP: f64 = 0.25;
const SCAN_END: f64 = 100.0;

/// Bisects a bracket [lo, hi] with the ground multiplicity `start` at lo and a
/// different one at hi down to 1e-9.
fn bisect_spin_change(m: &super::Model, c_over_b: f64, start: u8, mut lo: f64, mut hi: f64) -> f64 {
    while hi - lo > 1e-9 {
        let mid = 0.5 * (lo + hi);
        if ground_multiplicity(m, mid, c_over_b) == start {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Scans Δ/B from `from` in steps of [`SCAN_STEP`] up to [`SCAN_END`] for the
/// first change away from the ground multiplicity `start`.
fn scan_spin_change(m: &super::Model, c_over_b: f64, start: u8, from: f64) -> Option<f64> {
    let mut lo = from;
    while lo < SCAN_END {
        let hi = lo + SCAN_STEP;
        if ground_multiplicity(m, hi, c_over_b) != start {
            return Some(bisect_spin_change(m, c_over_b, start, lo, hi));
        }
        lo = hi;
    }
    None
}

/// Δ/B at which the ground level changes spin (first change above Δ/B = 0, up to 100).
pub fn spin_change(n: u8, geometry: Geometry, c_over_b: f64) -> Result<Option<f64>, LfError> {
    check_c_over_b(c_over_b)?;
    let m = model(n, geometry)?;
    let start = ground_multiplicity(m, 1e-6, c_over_b);
    Ok(scan_spin_change(m, c_over_b, start, 0.0))
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
    // The spin change is bracketed from the diagram's own grid when it is at
    // least as fine as the scan (no extra diagonalisations), else scanned.
    let start = ground_multiplicity(m, 1e-6, c_over_b);
    let grid_brackets = max_delta_over_b / (points - 1) as f64 <= SCAN_STEP;
    let mut bracket: Option<(f64, f64)> = None;
    let mut previous = 0.0;
    for &x in &delta_over_b {
        let energies = m.block_energies(&at(x, c_over_b));
        if grid_brackets && bracket.is_none() && x > 0.0 && x <= SCAN_END {
            if lowest_multiplicity(m, &energies) != start {
                bracket = Some((previous, x));
            }
            previous = x;
        }
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
        spin_change: match bracket {
            Some((lo, hi)) => Some(bisect_spin_change(m, c_over_b, start, lo, hi)),
            None if grid_brackets => scan_spin_change(m, c_over_b, start, previous),
            None => scan_spin_change(m, c_over_b, start, 0.0),
        },
    })
}
