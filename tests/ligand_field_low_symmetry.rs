//! Checks of the general-field engine (tetragonal, trigonal, angular overlap
//! model, spin–orbit coupling) against closed forms, the cubic engine and a
//! dense diagonalisation of the full determinant-basis matrix.

use ddlens::ligand_field::field::{angular_overlap, tetragonal, trigonal, FieldMatrix};
use ddlens::ligand_field::{
    full_site_matrix, model, site_levels, Geometry, Ligand, Params, Site, SiteLevel,
};

fn binomial(n: usize, k: usize) -> usize {
    (0..k).fold(1, |acc, i| acc * (n - i) / (i + 1))
}

fn orbital_energies(h: &FieldMatrix) -> Vec<f64> {
    let mut e: Vec<f64> = h.symmetric_eigenvalues().iter().copied().collect();
    e.sort_by(f64::total_cmp);
    e
}

/// Every state's energy (each level repeated by its degeneracy), ascending.
fn expanded(levels: &[SiteLevel]) -> Vec<f64> {
    let mut out: Vec<f64> = levels
        .iter()
        .flat_map(|l| std::iter::repeat_n(l.energy, l.degeneracy))
        .collect();
    out.sort_by(f64::total_cmp);
    out
}

fn cubic_expanded(n: u8, geometry: Geometry, p: &Params) -> Vec<f64> {
    let mut out: Vec<f64> = model(n, geometry)
        .unwrap()
        .levels(p)
        .unwrap()
        .iter()
        .flat_map(|l| std::iter::repeat_n(l.energy, l.degeneracy))
        .collect();
    out.sort_by(f64::total_cmp);
    out
}

fn assert_same_spectrum(a: &[f64], b: &[f64], relative: f64, what: &str) {
    assert_eq!(a.len(), b.len(), "{what}: state count");
    let scale = b.iter().fold(1.0f64, |m, x| m.max(x.abs()));
    for (x, y) in a.iter().zip(b) {
        assert!((x - y).abs() <= relative * scale, "{what}: {x} against {y}");
    }
}

fn octahedron(e_sigma: f64, e_pi: f64) -> Vec<Ligand> {
    [
        [1.0, 0.0, 0.0],
        [-1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0],
        [0.0, -1.0, 0.0],
        [0.0, 0.0, 1.0],
        [0.0, 0.0, -1.0],
    ]
    .iter()
    .map(|&[x, y, z]| Ligand {
        x: 2.1 * x,
        y: 2.1 * y,
        z: 2.1 * z,
        e_sigma,
        e_pi,
        e_pi_y: None,
    })
    .collect()
}

fn tetrahedron(e_sigma: f64, e_pi: f64) -> Vec<Ligand> {
    [
        [1.0, 1.0, 1.0],
        [1.0, -1.0, -1.0],
        [-1.0, 1.0, -1.0],
        [-1.0, -1.0, 1.0],
    ]
    .iter()
    .map(|&[x, y, z]| Ligand {
        x,
        y,
        z,
        e_sigma,
        e_pi,
        e_pi_y: None,
    })
    .collect()
}

#[test]
fn tetragonal_d1_orbital_energies_follow_the_usual_closed_forms() {
    // x²−y²: 6Dq+2Ds−Dt, z²: 6Dq−2Ds−6Dt, xy: −4Dq+2Ds−Dt, xz/yz: −4Dq−Ds+4Dt
    // (Lever, Inorganic Electronic Spectroscopy, 1984; the convention of issue 18).
    let (dq, ds, dt) = (1500.0, 420.0, 130.0);
    let mut expected = vec![
        6.0 * dq + 2.0 * ds - dt,
        6.0 * dq - 2.0 * ds - 6.0 * dt,
        -4.0 * dq + 2.0 * ds - dt,
        -4.0 * dq - ds + 4.0 * dt,
        -4.0 * dq - ds + 4.0 * dt,
    ];
    expected.sort_by(f64::total_cmp);
    let e = orbital_energies(&tetragonal(dq, ds, dt).unwrap());
    assert_same_spectrum(&e, &expected, 1e-12, "d1 tetragonal");
    // The many-electron engine gives the same d¹ levels above the ground one.
    let levels = site_levels(1, &Site::Tetragonal { dq, ds, dt }, 0.0, 0.0, 0.0).unwrap();
    let shifted: Vec<f64> = expected.iter().map(|x| x - expected[0]).collect();
    assert_same_spectrum(
        &expanded(&levels),
        &{
            let mut v: Vec<f64> = shifted.iter().flat_map(|&x| [x, x]).collect();
            v.sort_by(f64::total_cmp);
            v
        },
        1e-10,
        "d1 levels",
    );
}

#[test]
fn trigonal_a1_orbital_lies_at_minus_4dq_minus_2dsigma_minus_6dtau() {
    // d_z² along the threefold axis is the a1 component of t2g; Dσ and Dτ act on
    // it as Ds and Dt do on d_z² (the convention stated in the field module).
    let (dq, dsigma, dtau) = (1700.0, 300.0, -90.0);
    let h = trigonal(dq, dsigma, dtau).unwrap();
    assert!((h[(2, 2)].re - (-4.0 * dq - 2.0 * dsigma - 6.0 * dtau)).abs() < 1e-9);
    for m in [0usize, 1, 3, 4] {
        assert!(h[(2, m)].norm() < 1e-12, "a1 is an eigenvector");
    }
    // The orbital energies are still traceless: their sum is zero.
    assert!(orbital_energies(&h).iter().sum::<f64>().abs() < 1e-9);
}

#[test]
fn undistorted_low_symmetry_fields_reproduce_the_cubic_levels() {
    // Ds = Dt = 0, Dσ = Dτ = 0 and an undistorted AOM octahedron (10Dq = 3eσ − 4eπ,
    // Schäffer & Jørgensen, Mol. Phys. 9 (1965) 401) against the cubic engine, to 1e-6.
    let (b, c) = (780.0, 3300.0);
    let (e_sigma, e_pi) = (6000.0, 900.0);
    for n in 1..=9u8 {
        let dq = 1234.0;
        let cubic = cubic_expanded(n, Geometry::Octahedral, &Params { dq, b, c });
        for site in [
            Site::Tetragonal {
                dq,
                ds: 0.0,
                dt: 0.0,
            },
            Site::Trigonal {
                dq,
                dsigma: 0.0,
                dtau: 0.0,
            },
        ] {
            let levels = site_levels(n, &site, b, c, 0.0).unwrap();
            assert_same_spectrum(&expanded(&levels), &cubic, 1e-6, &format!("d{n} {site:?}"));
            // The labels name the cubic levels they come from, with full weight.
            for l in &levels {
                assert!(l.parent_weight > 0.999, "d{n} {site:?} {l:?}");
            }
        }
        let aom_dq = (3.0 * e_sigma - 4.0 * e_pi) / 10.0;
        let cubic = cubic_expanded(n, Geometry::Octahedral, &Params { dq: aom_dq, b, c });
        let site = Site::Ligands {
            ligands: octahedron(e_sigma, e_pi),
        };
        let levels = site_levels(n, &site, b, c, 0.0).unwrap();
        assert_same_spectrum(
            &expanded(&levels),
            &cubic,
            1e-6,
            &format!("d{n} AOM octahedron"),
        );
    }
}

#[test]
fn the_aom_tetrahedron_has_ten_dq_of_four_ninths_of_three_e_sigma_minus_four_e_pi() {
    // 10Dq_t = (4/9)(3eσ − 4eπ) (Schäffer & Jørgensen 1965; Larsen & La Mar,
    // J. Chem. Educ. 51 (1974) 633), e below t2.
    let (e_sigma, e_pi) = (4000.0, 700.0);
    let h = angular_overlap(&tetrahedron(e_sigma, e_pi)).unwrap();
    let e = orbital_energies(&h);
    let ten_dq = 4.0 / 9.0 * (3.0 * e_sigma - 4.0 * e_pi);
    assert!((e[4] - e[0] - ten_dq).abs() < 1e-9, "{e:?}");
    assert!(
        (e[1] - e[0]).abs() < 1e-9 && (e[4] - e[2]).abs() < 1e-9,
        "e pair below t2 trio"
    );
    // and the d² levels equal the cubic tetrahedral ones, labelled as such.
    let (b, c) = (650.0, 2900.0);
    let site = Site::Ligands {
        ligands: tetrahedron(e_sigma, e_pi),
    };
    let levels = site_levels(2, &site, b, c, 0.0).unwrap();
    let cubic = cubic_expanded(
        2,
        Geometry::Tetrahedral,
        &Params {
            dq: ten_dq / 10.0,
            b,
            c,
        },
    );
    assert_same_spectrum(&expanded(&levels), &cubic, 1e-6, "d2 AOM tetrahedron");
    assert_eq!(levels[0].label, "3A2");
}

#[test]
fn octahedral_d1_t2g_splits_into_gamma8_below_gamma7() {
    // Γ7 = −4Dq + ζ exactly; the two Γ8 are the eigenvalues of
    // [[−4Dq − ζ/2, √(3/2)ζ], [√(3/2)ζ, 6Dq]] (Griffith, The Theory of
    // Transition-Metal Ions, 1961), so t2g splits by about 3ζ/2 when Dq ≫ ζ.
    let (dq, zeta) = (2000.0, 150.0);
    let site = Site::Cubic {
        geometry: Geometry::Octahedral,
        dq,
    };
    let levels = site_levels(1, &site, 0.0, 0.0, zeta).unwrap();
    let (a, d, off) = (-4.0 * dq - zeta / 2.0, 6.0 * dq, 1.5f64.sqrt() * zeta);
    let mean = (a + d) / 2.0;
    let half = (((a - d) / 2.0).powi(2) + off * off).sqrt();
    let (g8_low, g8_high, g7) = (mean - half, mean + half, -4.0 * dq + zeta);
    let labels: Vec<(&str, usize)> = levels
        .iter()
        .map(|l| (l.label.as_str(), l.degeneracy))
        .collect();
    assert_eq!(labels, [("Γ8", 4), ("Γ7", 2), ("Γ8", 4)]);
    assert!((levels[1].energy - (g7 - g8_low)).abs() < 1e-8);
    assert!((levels[2].energy - (g8_high - g8_low)).abs() < 1e-8);
    assert!((levels[1].energy - 1.5 * zeta).abs() < 0.02 * zeta);
    assert_eq!(levels[0].parent, "2T2g");
}

#[test]
fn degeneracies_sum_to_c10n_and_odd_n_levels_are_kramers_pairs() {
    // Kramers' theorem: with an odd number of electrons every level is at least
    // twofold; the states of dⁿ number C(10, n).
    let sites = [
        Site::Tetragonal {
            dq: 1500.0,
            ds: 300.0,
            dt: -120.0,
        },
        Site::Trigonal {
            dq: 1300.0,
            dsigma: -200.0,
            dtau: 80.0,
        },
        Site::Ligands {
            ligands: distorted(),
        },
    ];
    for n in 1..=9u8 {
        for site in &sites {
            let levels = site_levels(n, site, 800.0, 3400.0, 400.0).unwrap();
            let total: usize = levels.iter().map(|l| l.degeneracy).sum();
            assert_eq!(total, binomial(10, usize::from(n)), "d{n} {site:?}");
            if n % 2 == 1 {
                assert!(
                    levels.iter().all(|l| l.degeneracy % 2 == 0),
                    "d{n} {site:?}"
                );
            }
        }
    }
}

/// Five ligands of a distorted square pyramid with different eσ, eπ: no symmetry.
fn distorted() -> Vec<Ligand> {
    [
        [2.0, 0.1, 0.05, 5000.0, 800.0],
        [-0.1, 2.1, -0.2, 4600.0, 600.0],
        [-2.05, 0.2, 0.1, 5200.0, 900.0],
        [0.15, -1.9, 0.3, 4800.0, 500.0],
        [0.2, -0.1, 2.3, 3000.0, 300.0],
    ]
    .iter()
    .map(|&[x, y, z, e_sigma, e_pi]| Ligand {
        x,
        y,
        z,
        e_sigma,
        e_pi,
        e_pi_y: None,
    })
    .collect()
}

#[test]
fn free_ion_fine_structure_follows_the_lande_interval_rule() {
    // E(J) − E(J−1) = λJ within ³F at small ζ, λ = +ζ/2S for d² and −ζ/2S for d⁸
    // (Landé interval rule; standard atomic physics).
    let zeta = 2.0;
    for (n, lambda) in [(2u8, zeta / 2.0), (8u8, -zeta / 2.0)] {
        let site = Site::Cubic {
            geometry: Geometry::Octahedral,
            dq: 0.0,
        };
        let levels = site_levels(n, &site, 1000.0, 4000.0, zeta).unwrap();
        // The ³F multiplet: the lowest 21 states, in J = 2, 3, 4 levels of 5, 7, 9.
        let mut by_j: Vec<(usize, f64)> = levels.iter().filter(|l| l.energy < 50.0).fold(
            Vec::new(),
            |mut acc: Vec<(usize, f64)>, l| {
                match acc.iter_mut().find(|(_, e)| (e - l.energy).abs() < 1e-6) {
                    Some((d, _)) => *d += l.degeneracy,
                    None => acc.push((l.degeneracy, l.energy)),
                }
                acc
            },
        );
        by_j.sort_by_key(|a| a.0);
        let energy_of = |dim: usize| by_j.iter().find(|(d, _)| *d == dim).unwrap().1;
        let (e2, e3, e4) = (energy_of(5), energy_of(7), energy_of(9));
        assert!(
            ((e3 - e2) - 3.0 * lambda).abs() < 1e-2 * zeta,
            "d{n}: {by_j:?}"
        );
        assert!(
            ((e4 - e3) - 4.0 * lambda).abs() < 1e-2 * zeta,
            "d{n}: {by_j:?}"
        );
    }
}

#[test]
fn vanishing_zeta_gives_back_the_spin_free_levels() {
    for n in [2u8, 5, 7] {
        let site = Site::Tetragonal {
            dq: 1100.0,
            ds: 250.0,
            dt: 60.0,
        };
        let free = site_levels(n, &site, 750.0, 3200.0, 0.0).unwrap();
        let tiny = site_levels(n, &site, 750.0, 3200.0, 1e-4).unwrap();
        assert_same_spectrum(&expanded(&tiny), &expanded(&free), 1e-7, &format!("d{n}"));
        // Each coupled level names its spin-free parent with nearly full weight.
        assert!(tiny.iter().all(|l| l.parent_weight > 0.99), "d{n}");
    }
}

fn dense_spectrum(n: u8, site: &Site, b: f64, c: f64, zeta: f64) -> Vec<f64> {
    let h = full_site_matrix(n, site, b, c, zeta).unwrap();
    let mut e: Vec<f64> = h.symmetric_eigenvalues().iter().copied().collect();
    e.sort_by(f64::total_cmp);
    let ground = e[0];
    e.iter().map(|x| x - ground).collect()
}

/// Whether the dense comparison of dⁿ at this ζ runs in this build. An
/// optimised build (`cargo test --release`) checks every dⁿ with and without ζ;
/// a debug build, where one 252×252 complex diagonalisation takes seconds, keeps
/// every n up to C(10, n) = 120 rows both ways and the d⁵ point with ζ (the
/// largest matrix and the largest blocks), leaving out d⁴, d⁶ and d⁵ without ζ.
/// The random sequence is drawn in full either way, so the points checked are
/// the same in both builds.
fn dense_check_runs(n: u8, zeta: f64) -> bool {
    !cfg!(debug_assertions) || binomial(10, usize::from(n)) <= 120 || (n == 5 && zeta > 0.0)
}

#[test]
fn the_blocked_engine_agrees_with_a_dense_diagonalisation_for_every_dn() {
    // A pseudo-random (fixed-seed linear congruential) choice of site and parameters per n.
    let mut seed: u64 = 0x5eed;
    let mut next = move || {
        seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (seed >> 11) as f64 / (1u64 << 53) as f64
    };
    for n in 1..=9u8 {
        let (b, c) = (500.0 + 600.0 * next(), 2000.0 + 2500.0 * next());
        let site = match n % 3 {
            0 => Site::Tetragonal {
                dq: 800.0 + 1500.0 * next(),
                ds: 600.0 * next() - 300.0,
                dt: 200.0 * next() - 100.0,
            },
            1 => Site::Trigonal {
                dq: 800.0 + 1500.0 * next(),
                dsigma: 600.0 * next() - 300.0,
                dtau: 200.0 * next() - 100.0,
            },
            _ => Site::Ligands {
                ligands: distorted(),
            },
        };
        for zeta in [0.0, 100.0 + 600.0 * next()] {
            if !dense_check_runs(n, zeta) {
                continue;
            }
            let blocked = expanded(&site_levels(n, &site, b, c, zeta).unwrap());
            let dense = dense_spectrum(n, &site, b, c, zeta);
            assert_same_spectrum(&blocked, &dense, 1e-9, &format!("d{n} ζ={zeta} {site:?}"));
        }
    }
}

#[test]
fn bad_sites_and_parameters_are_refused_with_a_sentence() {
    let ligand = |x, y, z| Ligand {
        x,
        y,
        z,
        e_sigma: 5000.0,
        e_pi: 500.0,
        e_pi_y: None,
    };
    let cases = [
        (Site::Ligands { ligands: vec![] }, 0.0),
        (
            Site::Ligands {
                ligands: vec![ligand(0.0, 0.0, 0.0)],
            },
            0.0,
        ),
        (
            Site::Ligands {
                ligands: vec![ligand(0.0, 0.0, 1.0), ligand(0.0, 0.0, 2.5)],
            },
            0.0,
        ),
        (
            Site::Ligands {
                ligands: vec![ligand(f64::NAN, 0.0, 1.0)],
            },
            0.0,
        ),
        (
            Site::Tetragonal {
                dq: 1000.0,
                ds: 1e7,
                dt: 0.0,
            },
            0.0,
        ),
        (
            Site::Trigonal {
                dq: 1000.0,
                dsigma: 0.0,
                dtau: f64::INFINITY,
            },
            0.0,
        ),
        (
            Site::Cubic {
                geometry: Geometry::Octahedral,
                dq: 1000.0,
            },
            2e4,
        ),
        (
            Site::Cubic {
                geometry: Geometry::Octahedral,
                dq: 1000.0,
            },
            f64::NAN,
        ),
    ];
    for (site, zeta) in cases {
        let error = site_levels(3, &site, 700.0, 3000.0, zeta).unwrap_err();
        let text = error.to_string();
        assert!(text.len() > 20 && !text.contains("NaN cm"), "{text}");
    }
    let site = Site::Tetragonal {
        dq: 1000.0,
        ds: 0.0,
        dt: 0.0,
    };
    assert!(site_levels(0, &site, 700.0, 3000.0, 0.0).is_err());
    assert!(site_levels(3, &site, -1.0, 3000.0, 0.0).is_err());
}
