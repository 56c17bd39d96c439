//! What an analysis came to, as a kind and a plain sentence: the parameters
//! were fitted; no d–d band stands above the noise (no fit is made, no number
//! given); every assigned band is spin-forbidden; or the bands leave a
//! parameter undetermined (which one, held at what).

use crate::lf_fit::{FitOutcome, Solution};
use crate::spectrum::noise::Noise;
use crate::spectrum::Quantity;
use serde::{Deserialize, Serialize};

/// The kind of result an analysis with a ligand-field request reached.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// The bands were assigned and the parameters fitted (`fit.best`).
    Assigned,
    /// No band passed the significance test: no fit was made.
    NoDdBands,
    /// Every assigned band is spin-forbidden (the fit is kept).
    NoSpinAllowedBands,
    /// Fewer independent bands than parameters: one was held (the fit is kept).
    Underdetermined,
}

/// Every band the best solution assigns goes to a spin-forbidden state.
fn only_spin_forbidden(best: &Solution) -> bool {
    let allowed = |state: &str| {
        best.predicted
            .iter()
            .find(|p| p.state == state)
            .is_none_or(|p| p.spin_allowed)
    };
    !best.assignment.is_empty() && !best.assignment.iter().any(|a| allowed(&a.state))
}

/// σ of the noise with two significant figures (a plain decimal) and the data's unit.
fn noise_text(noise: &Noise, quantity: Quantity) -> String {
    let unit = match quantity {
        Quantity::Absorbance => " A",
        Quantity::MolarAbsorptivity => " L mol⁻¹ cm⁻¹",
        Quantity::PercentTransmittance => " %T",
        _ => "",
    };
    let decimals = (1.0 - noise.sigma.log10().floor()).clamp(0.0, 15.0) as usize;
    format!("{:.decimals$}{unit}", noise.sigma)
}

/// The outcome and its sentence, from the fit (when one was made), the number
/// of bands that passed the significance test and the noise. `None` when a
/// fit was asked for but failed (its error says why).
pub fn outcome_of(
    fit: Option<&FitOutcome>,
    assignable: usize,
    noise: Option<&Noise>,
    quantity: Quantity,
) -> Option<(Outcome, String)> {
    if assignable == 0 {
        let text = match noise {
            Some(n) => format!(
                "No d–d band found above the noise (σ ≈ {}).",
                noise_text(n, quantity)
            ),
            None => "No d–d band found in the measured range.".to_string(),
        };
        return Some((Outcome::NoDdBands, text));
    }
    let best = &fit?.best;
    let bands = best.assignment.len();
    let plural = if bands == 1 { "" } else { "s" };
    let held = &best.held;
    if only_spin_forbidden(best) {
        return Some((
            Outcome::NoSpinAllowedBands,
            format!(
                "Every assigned band is spin-forbidden ({bands} band{plural}): no spin-allowed band was found, and the parameters rest on the spin-forbidden bands alone."
            ),
        ));
    }
    if !held.is_empty() {
        let list: Vec<String> = held
            .iter()
            .map(|h| format!("{} was held at {:.0} cm⁻¹", h.parameter, h.value))
            .collect();
        return Some((
            Outcome::Underdetermined,
            format!(
                "{bands} band{plural} cannot determine every parameter: {}.",
                list.join(", ")
            ),
        ));
    }
    Some((
        Outcome::Assigned,
        format!(
            "{bands} band{plural} assigned; {} fitted.",
            best.free.join(", ")
        ),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lf_fit::{self, FitRequest, ObservedBand};

    fn fit(ion: &str, bands: &[(f64, Option<&str>)]) -> FitOutcome {
        lf_fit::fit(&FitRequest {
            ion: Some(ion.into()),
            bands: bands
                .iter()
                .map(|&(e, state)| ObservedBand {
                    assign: state.map(String::from),
                    ..ObservedBand::at(e)
                })
                .collect(),
            spin_forbidden: true,
            ..FitRequest::default()
        })
        .unwrap()
    }

    #[test]
    fn one_nickel_band_that_depends_on_b_leaves_b_held_and_says_so() {
        // ν2 of [Ni(H₂O)₆]²⁺ alone (13 800 cm⁻¹, from memory): ³T₁g(F) depends on
        // Dq and B, so one band cannot fix both.
        let o = fit("Ni2+", &[(13_800.0, Some("3T1g(F)"))]);
        let (kind, text) = outcome_of(Some(&o), 1, None, Quantity::Absorbance).unwrap();
        assert_eq!(kind, Outcome::Underdetermined);
        assert!(text.contains("B was held at"), "{text}");
    }

    #[test]
    fn manganese_bands_forced_onto_quartets_are_only_spin_forbidden() {
        // [Mn(H₂O)₆]²⁺: 18 900 ⁴T₁g(G), 23 100 ⁴T₂g(G), 25 000 ⁴A₁g/⁴Eg(G)
        // (from memory, standard inorganic texts); from the ⁶A₁g ground every
        // quartet is spin-forbidden.
        let o = fit(
            "Mn2+",
            &[
                (18_900.0, Some("4T1g(G)")),
                (23_100.0, Some("4T2g(G)")),
                (25_000.0, Some("4A1g")),
            ],
        );
        let (kind, _) = outcome_of(Some(&o), 3, None, Quantity::Absorbance).unwrap();
        assert_eq!(kind, Outcome::NoSpinAllowedBands);
    }

    #[test]
    fn no_assignable_band_gives_the_noise_with_two_significant_figures() {
        let noise = Noise {
            sigma: 0.002_153,
            points: 800,
            method: METHOD_FOR_TESTS.into(),
        };
        let (kind, text) = outcome_of(None, 0, Some(&noise), Quantity::Absorbance).unwrap();
        assert_eq!(kind, Outcome::NoDdBands);
        assert_eq!(text, "No d–d band found above the noise (σ ≈ 0.0022 A).");
    }

    const METHOD_FOR_TESTS: &str = crate::spectrum::noise::METHOD;
}
