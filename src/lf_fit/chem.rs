//! Chemistry in the assignment: what each band's width and intensity allow,
//! whether two bands can be one Jahn–Teller-split transition, and the soft
//! priors that rank assignments the band positions cannot tell apart.
//!
//! Rules (common practice unless a source is named; figures from the project's
//! reference notes, /work/shared/notes/reference-values.md §3):
//! - A band narrower than [`NARROW_BAND`] is a spin-flip line: it can only be
//!   spin-forbidden (intraconfigurational bands are tens to hundreds of cm⁻¹
//!   wide, spin-allowed d–d bands 2 000–4 000 cm⁻¹; from memory).
//! - A band with ε below [`WEAK_EPSILON`] can only be spin-forbidden
//!   ([Mn(H₂O)₆]²⁺: ε ≈ 0.01–0.05, from memory; spin-allowed octahedral d–d
//!   bands "a few to a few tens", teaching-site source \[S44\]).
//! - A broad or strong band (FWHM ≥ [`NARROW_BAND`] or ε ≥ [`STRONG_EPSILON`])
//!   read as spin-forbidden, while spin-allowed transitions exist, costs
//!   [`BROAD_FORBIDDEN_PENALTY`] in the ranking, one of unknown width and ε
//!   [`UNKNOWN_FORBIDDEN_PENALTY`].
//! - β outside the typical [`BETA_TYPICAL`] costs ((distance)/[`BETA_PRIOR_WIDTH`])²
//!   (a Gaussian prior outside the band where first-row complexes lie).
//! - One band whose reading depends on a B held (no B from the data) costs
//!   [`HELD_B_PENALTY`], so a B-independent reading of the same band ranks first.
//! - Two bands are one Jahn–Teller-split transition only when they lie at most
//!   [`JT_MAX_SPLITTING`] apart (Ti³⁺ aqua 2 900, SRC \[S12\]; Fe²⁺ aqua ≈ 2 100,
//!   from memory; Cr²⁺ and Cu²⁺ up to ≈ 5 000, from memory), both are broad,
//!   their widths within [`JT_WIDTH_RATIO`] and their heights within
//!   [`JT_HEIGHT_RATIO`] of each other.

use super::{Problem, Solution};
use crate::analysis::defaults::NARROW_BAND;

/// ε (M⁻¹cm⁻¹) below which a band can only be spin-forbidden.
pub const WEAK_EPSILON: f64 = 0.2;
/// ε (M⁻¹cm⁻¹) from which a band counts as strong for the spin prior.
pub const STRONG_EPSILON: f64 = 1.0;
/// ε (M⁻¹cm⁻¹) above which an octahedral d–d band is suspicious: charge
/// transfer or a tetrahedral site (tetrahedral d–d ε ≈ 100–1000, from memory).
pub const OCTAHEDRAL_EPSILON_WARNING: f64 = 300.0;
/// Ranking cost of a broad or strong band read as spin-forbidden.
pub const BROAD_FORBIDDEN_PENALTY: f64 = 4.0;
/// Ranking cost of a band of unknown width and ε read as spin-forbidden
/// (spin-allowed bands dominate d–d spectra).
pub const UNKNOWN_FORBIDDEN_PENALTY: f64 = 2.0;
/// The β range most first-row complexes fall in.
pub const BETA_TYPICAL: (f64, f64) = (0.5, 1.0);
/// Width of the β prior outside [`BETA_TYPICAL`].
pub const BETA_PRIOR_WIDTH: f64 = 0.05;
/// Ranking cost of a one-band reading that depends on the B held.
pub const HELD_B_PENALTY: f64 = 1.0;
/// Largest splitting of a Jahn–Teller pair, cm⁻¹.
pub const JT_MAX_SPLITTING: f64 = 5000.0;
/// Largest ratio of the two widths of a Jahn–Teller pair.
pub const JT_WIDTH_RATIO: f64 = 3.0;
/// Largest ratio of the two heights (ε) of a Jahn–Teller pair.
pub const JT_HEIGHT_RATIO: f64 = 10.0;

/// Which transitions a band may be assigned to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum BandSpin {
    AllowedOnly,
    ForbiddenOnly,
    Either,
}

/// Why band `i` can only be spin-forbidden, if it can.
pub(crate) fn forbidden_only_reason(p: &Problem, i: usize) -> Option<String> {
    let b = &p.bands[i];
    if let Some(w) = b.fwhm.filter(|w| *w < NARROW_BAND) {
        return Some(format!(
            "the band at {:.0} cm⁻¹ is {w:.0} cm⁻¹ wide (below {NARROW_BAND:.0}): a spin-flip line, read as spin-forbidden only",
            b.energy
        ));
    }
    b.epsilon.filter(|e| *e < WEAK_EPSILON).map(|e| {
        format!(
            "the band at {:.0} cm⁻¹ has ε = {e:.2} (below {WEAK_EPSILON}): read as spin-forbidden only",
            b.energy
        )
    })
}

/// The transitions band `i` may take.
pub(crate) fn band_spin(p: &Problem, i: usize) -> BandSpin {
    if forbidden_only_reason(p, i).is_some() {
        BandSpin::ForbiddenOnly
    } else if p.spin_forbidden {
        BandSpin::Either
    } else {
        BandSpin::AllowedOnly
    }
}

/// Whether band `i` may be assigned to a level of `multiplicity` from a
/// starting level of multiplicity `start`.
pub(crate) fn band_takes(p: &Problem, i: usize, start: u8, multiplicity: u8) -> bool {
    let same = multiplicity == start;
    let flip = (i16::from(multiplicity) - i16::from(start)).abs() == 2;
    match band_spin(p, i) {
        BandSpin::AllowedOnly => same,
        BandSpin::ForbiddenOnly => flip,
        BandSpin::Either => same || flip,
    }
}

/// Whether any band may take a spin-forbidden transition.
pub(crate) fn any_forbidden(p: &Problem) -> bool {
    (0..p.bands.len()).any(|i| band_spin(p, i) != BandSpin::AllowedOnly)
}

/// Why the two bands of `p` cannot be one Jahn–Teller-split transition, if
/// they cannot (see the module docs for the bounds).
pub(crate) fn not_a_jahn_teller_pair(p: &Problem) -> Option<String> {
    let [a, b] = p.bands.as_slice() else {
        return Some("a Jahn–Teller pair is two bands".into());
    };
    let split = b.energy - a.energy;
    if split > JT_MAX_SPLITTING {
        return Some(format!(
            "the bands at {:.0} and {:.0} cm⁻¹ are {split:.0} cm⁻¹ apart, more than the {JT_MAX_SPLITTING:.0} cm⁻¹ a Jahn–Teller splitting reaches",
            a.energy, b.energy
        ));
    }
    if let (Some(wa), Some(wb)) = (a.fwhm, b.fwhm) {
        if wa.min(wb) < NARROW_BAND || wa.max(wb) > JT_WIDTH_RATIO * wa.min(wb) {
            return Some(format!(
                "the widths {wa:.0} and {wb:.0} cm⁻¹ do not fit two components of one broad band"
            ));
        }
    }
    if let (Some(ea), Some(eb)) = (a.epsilon, b.epsilon) {
        if ea.min(eb) <= 0.0 || ea.max(eb) > JT_HEIGHT_RATIO * ea.min(eb) {
            return Some(format!(
                "the heights ε = {ea:.3} and {eb:.3} differ by more than {JT_HEIGHT_RATIO:.0}×: not two components of one band"
            ));
        }
    }
    None
}

/// The soft priors of the ranking for one solution: each reason with its cost.
pub(crate) fn priors(p: &Problem, s: &Solution) -> Vec<(String, f64)> {
    let mut out = Vec::new();
    if let Some(beta) = s.derived.beta.map(|b| b.value) {
        let (lo, hi) = BETA_TYPICAL;
        let dist = (lo - beta).max(beta - hi).max(0.0);
        if dist > 0.0 {
            out.push((
                format!("β = {beta:.2} lies outside the typical {lo}–{hi}"),
                (dist / BETA_PRIOR_WIDTH).powi(2),
            ));
        }
    }
    let any_allowed = s.predicted.iter().any(|t| t.spin_allowed);
    for (i, a) in s.assignment.iter().enumerate() {
        let forbidden = s
            .predicted
            .iter()
            .any(|t| t.state == a.state && !t.spin_allowed);
        let band = p.bands.get(i);
        let broad = band.is_some_and(|b| {
            b.fwhm.is_some_and(|w| w >= NARROW_BAND)
                || b.epsilon.is_some_and(|e| e >= STRONG_EPSILON)
        });
        let weak =
            band.is_some_and(|b| forbidden_only_reason(p, i).is_some() || b.epsilon.is_some());
        if forbidden && any_allowed && (broad || !weak) {
            let cost = if broad {
                BROAD_FORBIDDEN_PENALTY
            } else {
                UNKNOWN_FORBIDDEN_PENALTY
            };
            out.push((
                format!(
                    "the {} band at {:.0} cm⁻¹ is read as spin-forbidden",
                    if broad {
                        "broad or strong"
                    } else {
                        "(width and ε unknown)"
                    },
                    a.observed
                ),
                cost,
            ));
        }
    }
    if s.assignment.len() == 1 && s.free.len() == 1 && s.parameters.b.is_some() {
        out.push((
            "the reading of the one band depends on the B held".into(),
            HELD_B_PENALTY,
        ));
    }
    out
}

/// Adds the priors to a solution's score and names them in its notes.
pub(crate) fn apply_priors(p: &Problem, s: &mut Solution) {
    for (reason, cost) in priors(p, s) {
        s.score += cost;
        s.notes
            .push(format!("ranking prior: {reason} (+{cost:.1} to the score)"));
    }
}

/// The sum of the priors of `s`.
pub(crate) fn prior_cost(p: &Problem, s: &Solution) -> f64 {
    priors(p, s).iter().map(|(_, c)| c).sum()
}
