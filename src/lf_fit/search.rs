//! Candidate transitions and the order-preserving assignments of the
//! observed bands to them, scored by a scan over Δ/B (see the module docs).

use super::{chem, LfFitError, Problem};
use crate::ligand_field::{model, Level, Params};
use std::collections::{BTreeMap, HashSet};

/// A level identified independently of its energy: levels of the same
/// (2S+1, Γ) never cross, so the rank within that block is stable.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub(crate) struct Key {
    pub multiplicity: u8,
    pub irrep: String,
    pub rank: usize,
}

/// The keys of `levels` (which come lowest first).
pub(crate) fn keys(levels: &[Level]) -> Vec<Key> {
    let mut seen: BTreeMap<(u8, &str), usize> = BTreeMap::new();
    levels
        .iter()
        .map(|l| {
            let r = seen.entry((l.multiplicity, l.irrep.as_str())).or_insert(0);
            *r += 1;
            Key {
                multiplicity: l.multiplicity,
                irrep: l.irrep.clone(),
                rank: *r - 1,
            }
        })
        .collect()
}

/// One assignment: the multiplicity of the starting level and, per observed
/// band (ascending), the key of its final level; with the scan's best start.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Tuple {
    pub start_multiplicity: u8,
    pub finals: Vec<Key>,
    pub scan_chi2: f64,
    /// The scan's χ² plus penalties (see `assignments`), for preselection.
    pub pre_score: f64,
    pub delta_over_b: f64,
    pub b: f64,
}

/// Δ/B values of the scan.
fn grid() -> Vec<f64> {
    (0..140).map(|i| 0.5 * 1.03f64.powi(i)).collect()
}

/// The starting level for a multiplicity: its lowest level.
pub(crate) fn start_index(levels: &[Level], multiplicity: u8) -> Option<usize> {
    levels.iter().position(|l| l.multiplicity == multiplicity)
}

pub(crate) fn is_candidate(start: u8, multiplicity: u8, spin_forbidden: bool) -> bool {
    multiplicity == start
        || (spin_forbidden && (i16::from(multiplicity) - i16::from(start)).abs() == 2)
}

fn forced_ok(level: &Level, forced: Option<&str>) -> bool {
    match forced {
        None => true,
        Some(f) => {
            let f = f.trim();
            level.label.eq_ignore_ascii_case(f)
                || level.typeset == f
                || level
                    .label
                    .split('(')
                    .next()
                    .is_some_and(|plain| plain.eq_ignore_ascii_case(f))
        }
    }
}

/// Whether `name` names a level of the model at some field strength of the
/// scan (as a forced assignment may name it).
pub(crate) fn names_state(m: &crate::ligand_field::Model, gamma: f64, name: &str) -> bool {
    grid().iter().any(|&x| {
        m.levels(&Params {
            dq: x / 10.0,
            b: 1.0,
            c: gamma,
        })
        .is_ok_and(|ls| ls.iter().any(|l| forced_ok(l, Some(name))))
    })
}

/// For each Δ/B of the scan grid: the levels per unit B (B = 1, C = γ) and
/// their keys.
type Tables = Vec<(f64, Vec<Level>, Vec<Key>)>;

/// All order-preserving assignments, best-scanned first (at most `LIMIT`,
/// plus all that satisfy forced assignments): the scan tables, the candidate
/// sets, a scan of each set over Δ/B, and the best few of each starting spin.
pub(crate) fn assignments(p: &Problem) -> Result<Vec<Tuple>, LfFitError> {
    let m = model(p.n, p.geometry)?;
    let forced: Vec<Option<String>> = p.bands.iter().map(|b| b.assign.clone()).collect();
    if let Some(f) = forced
        .iter()
        .flatten()
        .find(|f| !names_state(m, p.gamma, f))
    {
        return Err(LfFitError::UnknownState(f.clone()));
    }
    let (tables, starts) = scan_tables(m, p)?;
    let set = candidate_sets(p, &tables, &starts, &forced)?;
    let weights: Vec<f64> = p.sigmas.iter().map(|s| 1.0 / (s * s)).collect();
    let tuples = set
        .into_iter()
        .filter_map(|(s, finals)| scan_assignment(p, &tables, &weights, s, finals))
        .collect();
    Ok(best_per_spin(tuples, &starts))
}

/// The scan tables and the starting multiplicities (the ground levels met
/// along the grid).
fn scan_tables(
    m: &crate::ligand_field::Model,
    p: &Problem,
) -> Result<(Tables, Vec<u8>), LfFitError> {
    // For each Δ/B: the energy per unit B of every level above each starting level.
    let mut tables: Vec<(f64, Vec<Level>, Vec<Key>)> = Vec::new();
    let mut starts: Vec<u8> = Vec::new();
    for x in grid() {
        let levels = m.levels(&Params {
            dq: x / 10.0,
            b: 1.0,
            c: p.gamma,
        })?;
        if let Some(g) = levels.first() {
            if !starts.contains(&g.multiplicity) {
                starts.push(g.multiplicity);
            }
        }
        let ks = keys(&levels);
        tables.push((x, levels, ks));
    }
    Ok((tables, starts))
}

/// Every set of final states the bands can take, by starting multiplicity.
fn candidate_sets(
    p: &Problem,
    tables: &Tables,
    starts: &[u8],
    forced: &[Option<String>],
) -> Result<HashSet<(u8, Vec<Key>)>, LfFitError> {
    const MAX_COMBINATIONS: usize = 4000;
    let k = p.bands.len();
    let mut set: HashSet<(u8, Vec<Key>)> = HashSet::new();
    let mut any_candidate = false;
    // Candidates per band (its width and ε, see `chem`): the level list holds
    // what any band may take, each combination what each band may take.
    let any_forbidden = chem::any_forbidden(p);
    for &s in starts {
        for (_, levels, ks) in tables {
            let Some(i0) = start_index(levels, s) else {
                continue;
            };
            // A band forced onto a state may take it whatever its spin; the
            // other bands only take the candidates the request allows.
            let allowed = |j: usize| is_candidate(s, levels[j].multiplicity, any_forbidden);
            let cands: Vec<usize> = (0..levels.len())
                .filter(|&j| {
                    j != i0
                        && (allowed(j)
                            || forced
                                .iter()
                                .any(|f| forced_ok(&levels[j], f.as_deref()) && f.is_some()))
                })
                .collect();
            any_candidate |= !cands.is_empty();
            let mut c = cands.len();
            while c > k && binomial(c, k) > MAX_COMBINATIONS {
                c -= 1; // keep the lowest candidates when there are very many
            }
            for combo in combinations(c, k) {
                let finals: Vec<usize> = combo.iter().map(|&i| cands[i]).collect();
                if finals.iter().zip(forced).enumerate().all(|(i, (&j, f))| {
                    forced_ok(&levels[j], f.as_deref())
                        && (f.is_some() || chem::band_takes(p, i, s, levels[j].multiplicity))
                }) {
                    set.insert((s, finals.iter().map(|&j| ks[j].clone()).collect()));
                }
            }
        }
    }
    if !any_candidate {
        return Err(LfFitError::NoCandidates(format!(
            "d{} in {} symmetry has no spin-allowed d–d transition{}",
            p.n,
            p.geometry,
            if p.spin_forbidden {
                ""
            } else {
                ": allow spin-forbidden bands (as for high-spin d5)"
            }
        )));
    }
    if set.is_empty() {
        return Err(LfFitError::NoCandidates(format!(
            "{k} bands are more than this configuration has {} transitions for{}",
            if p.spin_forbidden { "" } else { "spin-allowed" },
            if p.spin_forbidden {
                ""
            } else {
                "; allow spin-forbidden bands or mark some bands as not d–d"
            }
        )));
    }
    Ok(set)
}

/// One assignment scanned over Δ/B, B linear at fixed Δ/B; None when it fits
/// nowhere on the grid. The preselection score adds penalties for a starting
/// level that is not the ground level at that Δ/B, for an implausible B, and
/// for lower spin-allowed transitions left out (the same rules as the final
/// ranking; a lower band below the measured range costs nothing).
fn scan_assignment(
    p: &Problem,
    tables: &Tables,
    weights: &[f64],
    s: u8,
    finals: Vec<Key>,
) -> Option<Tuple> {
    let mut best = Tuple {
        start_multiplicity: s,
        finals,
        scan_chi2: f64::INFINITY,
        pre_score: f64::INFINITY,
        delta_over_b: 0.0,
        b: 0.0,
    };
    for (x, levels, ks) in tables {
        let Some(i0) = start_index(levels, s) else {
            continue;
        };
        let idx: Option<Vec<usize>> = best
            .finals
            .iter()
            .map(|key| ks.iter().position(|q| q == key))
            .collect();
        let Some(idx) = idx else { continue };
        let f: Vec<f64> = idx
            .iter()
            .map(|&j| levels[j].energy - levels[i0].energy)
            .collect();
        let (mut num, mut den) = (0.0, 0.0);
        for ((fi, b), w) in f.iter().zip(&p.bands).zip(weights) {
            num += w * b.energy * fi;
            den += w * fi * fi;
        }
        if den <= 0.0 || num <= 0.0 {
            continue;
        }
        let bb = num / den;
        let chi2: f64 = f
            .iter()
            .zip(&p.bands)
            .zip(weights)
            .map(|((fi, b), w)| w * (b.energy - bb * fi).powi(2))
            .sum();
        let top = f.iter().copied().fold(0.0, f64::max);
        let skipped = (0..levels.len())
            .filter(|&j| {
                j != i0
                    && !idx.contains(&j)
                    && levels[j].multiplicity == s
                    && levels[j].energy - levels[i0].energy < top
                    && bb * (levels[j].energy - levels[i0].energy) >= p.observed_from
            })
            .count();
        let b_bad = match &p.b0 {
            Some((b0, _)) => !(0.3 * b0..=1.05 * b0).contains(&bb),
            None => !(150.0..=1300.0).contains(&bb),
        };
        let spin_bad = levels.first().is_some_and(|g| g.multiplicity != s);
        let score = chi2
            + 4.0 * skipped as f64
            + 100.0 * f64::from(u8::from(b_bad))
            + 100.0 * f64::from(u8::from(spin_bad));
        if score < best.pre_score {
            best.scan_chi2 = chi2;
            best.pre_score = score;
            best.delta_over_b = *x;
            best.b = bb;
        }
    }
    best.pre_score.is_finite().then_some(best)
}

/// The best few tuples of each starting spin, so both spin states are refined.
fn best_per_spin(mut tuples: Vec<Tuple>, starts: &[u8]) -> Vec<Tuple> {
    const LIMIT: usize = 10;
    tuples.sort_by(|a, b| {
        a.pre_score
            .total_cmp(&b.pre_score)
            .then_with(|| a.finals.cmp(&b.finals))
    });
    let mut kept: Vec<Tuple> = Vec::new();
    for &s in starts {
        kept.extend(
            tuples
                .iter()
                .filter(|t| t.start_multiplicity == s)
                .take(LIMIT)
                .cloned(),
        );
    }
    kept.sort_by(|a, b| a.pre_score.total_cmp(&b.pre_score));
    kept
}

fn binomial(n: usize, k: usize) -> usize {
    if k > n {
        return 0;
    }
    (0..k).fold(1usize, |acc, i| acc.saturating_mul(n - i) / (i + 1))
}

/// All increasing k-index combinations of 0..n.
fn combinations(n: usize, k: usize) -> Vec<Vec<usize>> {
    let mut out = Vec::new();
    if k == 0 || k > n {
        return out;
    }
    let mut idx: Vec<usize> = (0..k).collect();
    loop {
        out.push(idx.clone());
        let mut i = k;
        while i > 0 && idx[i - 1] == n - k + i - 1 {
            i -= 1;
        }
        if i == 0 {
            return out;
        }
        idx[i - 1] += 1;
        for j in i..k {
            idx[j] = idx[j - 1] + 1;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn combinations_are_complete_and_ordered() {
        assert_eq!(combinations(4, 2).len(), 6);
        assert_eq!(combinations(3, 3), vec![vec![0, 1, 2]]);
        assert!(combinations(2, 3).is_empty());
        assert_eq!(binomial(10, 3), 120);
    }
}
