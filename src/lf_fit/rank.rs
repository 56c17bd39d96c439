//! Which fitted assignments are listed, in which order, and their Δχ².
//!
//! Order: assignments passing every plausibility check first, then by score
//! (χ² at C = γB plus the penalty for unobserved lower bands). Listed are
//! only physical fits: B > 0, β ≤ [`BETA_LISTED`], no fitted Dq, B or C on
//! the bound θ > 0 ([`ON_BOUND`]), every number finite. An assignment is
//! listed once, and of two with the same Δ and B within their σ only the
//! better-ranked one. Δχ² is measured from the smallest χ² listed, so it
//! is never negative.

use super::Solution;
use crate::estimate::Estimate;

/// A fitted Dq, B or C at or below this (cm⁻¹) ran to the bound θ > 0:
/// no dⁿ ion has a parameter within orders of magnitude of it (common practice).
pub(crate) const ON_BOUND: f64 = 1.0;

/// β above this is not listed: a B more than 10 % above the free ion's is
/// not physical (common practice; the plausibility check flags 1.05).
const BETA_LISTED: f64 = 1.1;

/// The best solution and up to nine alternatives.
const LISTED: usize = 10;

/// Why a solution is not listed, or None when it is physical.
fn unphysical(s: &Solution) -> Option<&'static str> {
    let p = &s.parameters;
    let d = &s.derived;
    let estimates = [
        Some(p.dq),
        p.b,
        p.c,
        Some(d.delta),
        d.beta,
        d.dq_over_b,
        d.c_over_b,
    ];
    let finite = |e: &Estimate| e.value.is_finite() && e.sigma.is_none_or(f64::is_finite);
    if !s.chi2.is_finite() || !estimates.iter().flatten().all(finite) {
        return Some("a non-finite number");
    }
    if p.b.is_some_and(|b| b.value <= 0.0) {
        return Some("B ≤ 0");
    }
    if d.beta.is_some_and(|b| b.value > BETA_LISTED) {
        return Some("β above 1.1");
    }
    let fitted = [Some(p.dq), p.b, p.c];
    if fitted
        .iter()
        .flatten()
        .any(|e| e.determined && e.value <= ON_BOUND)
    {
        return Some("a parameter on its bound");
    }
    None
}

/// The same value within the larger of the two σ (exactly the same without σ).
fn within(a: Option<Estimate>, b: Option<Estimate>) -> bool {
    match (a, b) {
        (None, None) => true,
        (Some(a), Some(b)) => {
            let s = a.sigma.unwrap_or(0.0).max(b.sigma.unwrap_or(0.0));
            (a.value - b.value).abs() <= s.max(1e-9 * a.value.abs())
        }
        _ => false,
    }
}

/// The same assignment, or the same Δ and B within σ.
fn duplicate(a: &Solution, b: &Solution) -> bool {
    let states = |s: &Solution| {
        let mut v: Vec<String> = vec![s.ground.clone()];
        v.extend(s.assignment.iter().map(|x| x.state.clone()));
        v
    };
    states(a) == states(b)
        || (within(Some(a.derived.delta), Some(b.derived.delta))
            && within(a.parameters.b, b.parameters.b))
}

/// The listed solutions, best first (the order and rules of the module docs).
/// When no fit is physical, the best-ranked one is kept, marked implausible,
/// with a warning saying why.
pub(crate) fn rank(mut solutions: Vec<Solution>) -> Vec<Solution> {
    solutions.sort_by(|a, b| {
        (!a.plausible)
            .cmp(&!b.plausible)
            .then(a.score.total_cmp(&b.score))
    });
    let mut listed: Vec<Solution> = Vec::new();
    let mut first_dropped = None;
    for s in solutions {
        if let Some(why) = unphysical(&s) {
            first_dropped.get_or_insert((s, why));
        } else if listed.len() < LISTED && !listed.iter().any(|l| duplicate(l, &s)) {
            listed.push(s);
        }
    }
    if listed.is_empty() {
        if let Some((mut s, why)) = first_dropped {
            s.plausible = false;
            s.warnings.push(format!(
                "every assignment gave an unphysical fit (this one: {why}): these numbers are not a result"
            ));
            listed.push(s);
        }
    }
    let min = listed.iter().map(|s| s.chi2).fold(f64::INFINITY, f64::min);
    for s in &mut listed {
        let d = s.chi2 - min;
        s.delta_chi2 = if d.is_finite() { d.max(0.0) } else { 0.0 };
    }
    listed
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lf_fit::{fit, FitRequest, ObservedBand};

    /// A real solution: Cr³⁺ 17 400 and 24 600 cm⁻¹.
    fn solution() -> Solution {
        fit(&FitRequest {
            ion: Some("Cr3+".into()),
            bands: vec![ObservedBand::at(17_400.0), ObservedBand::at(24_600.0)],
            ..FitRequest::default()
        })
        .unwrap()
        .best
    }

    /// A copy with another first state, Δ shifted by `shift` σ-free units and χ².
    fn other(s: &Solution, state: &str, shift: f64, chi2: f64) -> Solution {
        let mut o = s.clone();
        o.assignment[0].state = state.into();
        o.parameters.dq.value += shift / 10.0;
        o.derived.delta.value += shift;
        o.chi2 = chi2;
        o.score = chi2;
        o
    }

    fn kept(list: Vec<Solution>) -> usize {
        rank(list).len()
    }

    #[test]
    fn a_fit_with_b_at_zero_or_below_is_not_listed() {
        let s = solution();
        let mut bad = other(&s, "x", 5000.0, 1.0);
        bad.parameters.b.as_mut().unwrap().value = 0.0;
        assert_eq!(kept(vec![s.clone(), bad.clone()]), 1);
        bad.parameters.b.as_mut().unwrap().value = -3.0;
        assert_eq!(kept(vec![s, bad]), 1);
    }

    #[test]
    fn a_beta_above_one_point_one_is_not_listed() {
        let s = solution();
        let mut bad = other(&s, "x", 5000.0, 1.0);
        bad.derived.beta.as_mut().unwrap().value = 1.2;
        assert_eq!(kept(vec![s.clone(), bad.clone()]), 1);
        bad.derived.beta.as_mut().unwrap().value = 1.08;
        assert_eq!(kept(vec![s, bad]), 2);
    }

    #[test]
    fn a_fit_that_ran_to_its_bound_is_not_listed() {
        let s = solution();
        let mut bad = other(&s, "x", 5000.0, 1.0);
        bad.parameters.b.as_mut().unwrap().value = 1e-6;
        assert_eq!(kept(vec![s, bad]), 1);
    }

    #[test]
    fn a_fit_with_a_non_finite_number_is_not_listed() {
        let s = solution();
        let mut nan = other(&s, "x", 5000.0, f64::NAN);
        assert_eq!(kept(vec![s.clone(), nan.clone()]), 1);
        nan.chi2 = 1.0;
        nan.derived.delta.sigma = Some(f64::INFINITY);
        assert_eq!(kept(vec![s, nan]), 1);
    }

    #[test]
    fn the_same_assignment_is_listed_once() {
        let s = solution();
        let mut again = other(&s, "x", 5000.0, 3.0);
        again.assignment.clone_from(&s.assignment);
        assert_eq!(kept(vec![s, again]), 1);
    }

    #[test]
    fn the_same_parameters_within_sigma_are_listed_once() {
        let s = solution();
        let sigma = s.derived.delta.sigma.unwrap();
        assert_eq!(kept(vec![s.clone(), other(&s, "x", 0.5 * sigma, 2.0)]), 1);
        assert_eq!(kept(vec![s.clone(), other(&s, "x", 3.0 * sigma, 2.0)]), 2);
    }

    #[test]
    fn delta_chi2_is_measured_from_the_smallest_chi2_listed() {
        let s = other(&solution(), "4T2g", 0.0, 5.0);
        let mut implausible = other(&s, "x", 5000.0, 1.0);
        implausible.plausible = false;
        let listed = rank(vec![implausible, s]);
        // Plausible first, although its χ² is larger.
        assert!(listed[0].plausible);
        assert!((listed[0].delta_chi2 - 4.0).abs() < 1e-12);
        assert!(listed[1].delta_chi2.abs() < 1e-12);
    }

    #[test]
    fn when_nothing_is_physical_the_first_is_kept_and_marked() {
        let mut s = solution();
        s.parameters.b.as_mut().unwrap().value = 0.0;
        let listed = rank(vec![s]);
        assert_eq!(listed.len(), 1);
        assert!(!listed[0].plausible);
        assert!(listed[0]
            .warnings
            .iter()
            .any(|w| w.contains("unphysical fit (this one: B ≤ 0)")));
    }
}
