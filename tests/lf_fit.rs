//! Checks of the ligand-field parameter fit against published worked examples
//! and closed forms (sources named next to each check).

use ddlens::lf_fit::{fit, FitRequest, ObservedBand};
use ddlens::ligand_field::{model, Geometry, Params};

fn bands(energies: &[f64]) -> Vec<ObservedBand> {
    energies
        .iter()
        .map(|&energy| ObservedBand {
            energy,
            ..ObservedBand::default()
        })
        .collect()
}

fn request(n: u8, ion: Option<&str>, energies: &[f64]) -> FitRequest {
    FitRequest {
        n,
        ion: ion.map(String::from),
        bands: bands(energies),
        ..FitRequest::default()
    }
}

#[test]
fn chromium_aqua_ion() {
    // [Cr(H2O)6]3+: 17 400 and 24 600 → Δ = 17 400, B = 725, β = 0.79 with B₀ = 918
    // (reference notes [S16], [S1]); third band ≈ 37 800 (Lever 1984, from memory).
    let out = fit(&request(3, Some("Cr3+"), &[17400.0, 24600.0])).unwrap();
    let best = &out.best;
    assert_eq!(best.ground, "4A2g");
    assert!((best.derived.delta.value - 17400.0).abs() < 1.0);
    assert!((best.parameters.b.value - 725.0).abs() < 15.0);
    let beta = best.derived.beta.unwrap().value;
    assert!((beta - 0.79).abs() < 0.02);
    assert_eq!(best.derived.b0, Some(918.0));
    let nu3 = best
        .predicted
        .iter()
        .find(|p| p.state == "4T1g(P)")
        .unwrap()
        .energy;
    assert!((nu3 - 37800.0).abs() < 1500.0, "ν3 = {nu3}");
}

#[test]
fn closed_form_b_from_two_bands() {
    // B = (ν2² + 2ν1² − 3ν1ν2)/(15ν2 − 27ν1) for d3 Oh (reference notes §4b,
    // Lever, Inorganic Electronic Spectroscopy, from memory); Δ = ν1.
    let (nu1, nu2) = (17400.0_f64, 24600.0_f64);
    let b = (nu2 * nu2 + 2.0 * nu1 * nu1 - 3.0 * nu1 * nu2) / (15.0 * nu2 - 27.0 * nu1);
    let out = fit(&request(3, None, &[nu1, nu2])).unwrap();
    assert!((out.best.parameters.b.value - b).abs() < 1e-6 * b);
    assert!((out.best.derived.delta.value - nu1).abs() < 1e-6 * nu1);
}

#[test]
fn nickel_aqua_ion_is_flagged_inconsistent() {
    // [Ni(H2O)6]2+ 8 500, 13 800, 25 300: Δ ≈ 8 500, B between 754 (ν1,ν2) and
    // 958 (Underhill–Billing), and the set is not self-consistent (notes [S31]).
    let out = fit(&request(8, Some("Ni2+"), &[8500.0, 13800.0, 25300.0])).unwrap();
    let best = &out.best;
    assert!((best.derived.delta.value - 8500.0).abs() < 300.0);
    let b = best.parameters.b.value;
    assert!((754.0..=958.0).contains(&b), "B = {b}");
    assert!(best.warnings.iter().any(|w| w.contains("not consistent")));
}

#[test]
fn titanium_jahn_teller_pair() {
    // [Ti(H2O)6]3+ 20 300 with shoulder 17 400: 10Dq ≈ 20 300 ± 300 ([S12], [S13]).
    let out = fit(&request(1, Some("Ti3+"), &[20300.0, 17400.0])).unwrap();
    assert!((out.best.derived.delta.value - 20300.0).abs() < 300.0);
    assert!(out
        .best
        .warnings
        .iter()
        .any(|w| w.contains("splitting 2900")));
}

#[test]
fn impossible_beta_is_flagged() {
    // The [VBr6]3- worked answer (6 600, 13 000, 19 200 reversed, β ≈ 2.7) is
    // physically impossible (notes [S36]): every solution with β > 1.05 must warn.
    let out = fit(&request(2, Some("V3+"), &[6600.0, 13000.0, 19200.0])).unwrap();
    for s in std::iter::once(&out.best).chain(&out.alternatives) {
        if let Some(beta) = s.derived.beta {
            if beta.value > 1.05 {
                assert!(s.warnings.iter().any(|w| w.contains("β")));
            }
        }
    }
    assert!(!out.best.warnings.is_empty());
}

#[test]
fn round_trip_from_known_parameters() {
    // Synthetic bands (up to three lowest spin-allowed) from our own model at known
    // (Dq, B, C) must be fitted back with the right assignment ranked first.
    for (n, geometry, dq) in [
        (2u8, Geometry::Octahedral, 1800.0),
        (3, Geometry::Octahedral, 1700.0),
        (8, Geometry::Octahedral, 900.0),
        (7, Geometry::Tetrahedral, 400.0),
        (6, Geometry::Octahedral, 1000.0),
        (6, Geometry::Octahedral, 3000.0),
        (4, Geometry::Octahedral, 3000.0),
    ] {
        let truth = Params {
            dq,
            b: 700.0,
            c: 3150.0,
        };
        let levels = model(n, geometry).unwrap().levels(&truth).unwrap();
        let ground = levels[0].multiplicity;
        let chosen: Vec<_> = levels[1..]
            .iter()
            .filter(|l| l.multiplicity == ground)
            .take(3)
            .collect();
        let spin_set: Vec<f64> = chosen.iter().map(|l| l.energy).collect();
        let req = FitRequest {
            n,
            geometry,
            bands: bands(&spin_set),
            c_over_b: Some(4.5),
            ..FitRequest::default()
        };
        let out = fit(&req).unwrap();
        let states: Vec<&str> = out
            .best
            .assignment
            .iter()
            .map(|a| a.state.as_str())
            .collect();
        let truth_states: Vec<&str> = chosen.iter().map(|l| l.label.as_str()).collect();
        assert_eq!(states, truth_states, "d{n} {geometry}");
        assert!(
            (out.best.parameters.dq.value - dq).abs() < 1e-3,
            "d{n} {geometry}"
        );
        // With one band (high-spin d6: only ⁵Eg) B is held fixed and not recovered.
        if spin_set.len() > 1 {
            assert!(
                (out.best.parameters.b.value - 700.0).abs() < 1e-3,
                "d{n} {geometry}"
            );
        }
    }
}

#[test]
fn refuses_bad_input() {
    assert!(fit(&request(3, None, &[])).is_err());
    assert!(fit(&request(3, Some("Ni2+"), &[17400.0])).is_err());
    assert!(fit(&request(3, Some("Zz9+"), &[17400.0])).is_err());
}

#[test]
fn remarks_on_spin_state_and_doublet_order() {
    // Cr3+ in water: the ²E/²T1 "dips" near 630–677 nm (≈ 14 800–15 900 cm⁻¹,
    // notes [S19]) lie below ⁴T2g = 17 400, so ²Eg must be reported below ⁴T2g.
    let out = fit(&request(3, Some("Cr3+"), &[17400.0, 24600.0])).unwrap();
    assert!(out
        .best
        .notes
        .iter()
        .any(|n| n.contains("²Eg lies below ⁴T2g")));
    // A low-spin d6 fit must say so, with its margin to the spin change.
    let out = fit(&request(6, Some("Co3+"), &[16500.0, 24000.0])).unwrap();
    assert_eq!(out.best.ground, "1A1g(I)");
    assert!(out.best.notes.iter().any(|n| n.contains("low-spin")));
}

#[test]
fn underhill_billing_agrees_with_the_full_fit() {
    // Underhill & Billing, Nature 210 (1966) 834: from ν2, ν3 of d3 Oh,
    // 340Dq² − 18(ν2+ν3)Dq + ν2ν3 = 0 and B = (ν2 + ν3 − 30Dq)/15.
    // ν2, ν3 synthetic from our model at Dq = 1740, B = 725, C = 4.5B.
    let levels = model(3, Geometry::Octahedral)
        .unwrap()
        .levels(&Params {
            dq: 1740.0,
            b: 725.0,
            c: 3262.5,
        })
        .unwrap();
    let energy = |label: &str| levels.iter().find(|l| l.label == label).unwrap().energy;
    let (nu2, nu3) = (energy("4T1g(F)"), energy("4T1g(P)"));
    let out = fit(&FitRequest {
        n: 3,
        bands: bands(&[nu2, nu3]),
        c_over_b: Some(4.5),
        ..FitRequest::default()
    })
    .unwrap();
    let t1_pair = std::iter::once(&out.best)
        .chain(&out.alternatives)
        .find(|s| {
            s.assignment
                .iter()
                .map(|a| a.state.as_str())
                .collect::<Vec<_>>()
                == ["4T1g(F)", "4T1g(P)"]
        })
        .expect("the ⁴T1g(F), ⁴T1g(P) assignment is among the solutions");
    let (s, p) = (nu2 + nu3, nu2 * nu3);
    let disc = (18.0 * s).powi(2) - 4.0 * 340.0 * p;
    let roots = [
        (18.0 * s - disc.sqrt()) / 680.0,
        (18.0 * s + disc.sqrt()) / 680.0,
    ];
    let dq = t1_pair.parameters.dq.value;
    let root = roots
        .iter()
        .copied()
        .find(|r| (r - dq).abs() < 1e-6 * dq)
        .unwrap_or_else(|| panic!("Dq {dq} χ² {} roots {roots:?}", t1_pair.chi2));
    let b = (s - 30.0 * root) / 15.0;
    assert!(b > 0.0);
    assert!((t1_pair.parameters.b.value - b).abs() < 1e-6 * b);
}

#[test]
fn free_c_round_trip() {
    // Synthetic ²Eg, ⁴T2g, ⁴T1g(F) of d3 Oh from our model (CALC table of the notes:
    // 15 119.09, 17 400, 24 574.10 at Dq 1740, B 725, C 3263): with C free the
    // assignment with the doublet must return C.
    let out = fit(&FitRequest {
        n: 3,
        bands: bands(&[15119.09, 17400.0, 24574.10]),
        free_c: true,
        spin_forbidden: true,
        ..FitRequest::default()
    })
    .unwrap();
    let wanted = ["2Eg(G)", "4T2g", "4T1g(F)"];
    let found = std::iter::once(&out.best)
        .chain(&out.alternatives)
        .find(|s| s.assignment.iter().map(|a| a.state.as_str()).eq(wanted))
        .expect("the doublet assignment is among the solutions");
    assert!(
        (found.parameters.c.value - 3263.0).abs() < 5.0,
        "C = {}",
        found.parameters.c.value
    );
    assert!((found.parameters.b.value - 725.0).abs() < 2.0);
}
