//! `ddlens levels` with low-symmetry fields, the angular overlap model and
//! spin–orbit coupling, as the held-out checks call it.

use std::fmt::Write as _;
use std::process::Command;

fn levels(args: &[&str]) -> (bool, serde_json::Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .arg("levels")
        .args(args)
        .arg("--json")
        .output()
        .expect("ddlens runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let value = serde_json::from_str(&stdout).unwrap_or(serde_json::Value::Null);
    (
        out.status.success(),
        value,
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

fn energies(v: &serde_json::Value) -> Vec<(f64, u64)> {
    v["levels"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| {
            (
                l["energy"].as_f64().unwrap(),
                l["degeneracy"].as_u64().unwrap(),
            )
        })
        .collect()
}

#[test]
fn tetragonal_d1_levels_follow_the_closed_forms() {
    // xz/yz −4Dq−Ds+4Dt, xy −4Dq+2Ds−Dt, z² 6Dq−2Ds−6Dt, x²−y² 6Dq+2Ds−Dt (Lever 1984).
    let (ok, v, err) = levels(&[
        "--config",
        "d1",
        "--geometry",
        "tetragonal",
        "--dq",
        "1500",
        "--ds",
        "400",
        "--dt",
        "100",
        "--b",
        "0",
        "--c",
        "0",
    ]);
    assert!(ok, "{err}");
    let (dq, ds, dt) = (1500.0, 400.0, 100.0);
    let ground = -4.0 * dq - ds + 4.0 * dt;
    let expected = [
        (-4.0 * dq + 2.0 * ds - dt - ground, 2),
        (6.0 * dq - 2.0 * ds - 6.0 * dt - ground, 2),
        (6.0 * dq + 2.0 * ds - dt - ground, 2),
    ];
    let got = energies(&v);
    assert_eq!(got[0], (0.0, 4));
    for ((e, d), (x, k)) in got[1..].iter().zip(expected) {
        assert!((e - x).abs() < 1e-6 && *d == k, "{got:?}");
    }
    assert_eq!(v["levels"][0]["multiplicity"], 2);
}

#[test]
fn zeta_splits_the_octahedral_d1_ground_level_into_gamma8_and_gamma7() {
    // t2g → Γ8 + Γ7, about 3ζ/2 apart when Dq ≫ ζ (Griffith 1961); no multiplicity with ζ.
    let (ok, v, err) = levels(&[
        "--config",
        "d1",
        "--geometry",
        "octahedral",
        "--dq",
        "20000",
        "--b",
        "0",
        "--c",
        "0",
        "--zeta",
        "100",
    ]);
    assert!(ok, "{err}");
    let first = &v["levels"][0];
    let second = &v["levels"][1];
    assert_eq!(
        (first["label"].as_str(), second["label"].as_str()),
        (Some("Γ8"), Some("Γ7"))
    );
    assert!((second["energy"].as_f64().unwrap() - 150.0).abs() < 0.5);
    assert!(first.get("multiplicity").is_none());
}

#[test]
fn a_ligand_file_gives_the_aom_octahedron() {
    // 10Dq = 3eσ − 4eπ (Schäffer & Jørgensen 1965): d³ ⁴T2g lies at 10Dq.
    let path = std::env::temp_dir().join(format!("ddlens-ligands-{}.csv", std::process::id()));
    let mut text = String::from("x,y,z,e_sigma,e_pi\n");
    for [x, y, z] in [
        [2, 0, 0],
        [-2, 0, 0],
        [0, 2, 0],
        [0, -2, 0],
        [0, 0, 2],
        [0, 0, -2],
    ] {
        let _ = writeln!(text, "{x},{y},{z},7000,900");
    }
    std::fs::write(&path, text).unwrap();
    let file = path.to_string_lossy().to_string();
    let (ok, v, err) = levels(&[
        "--config",
        "d3",
        "--ligands",
        &file,
        "--b",
        "700",
        "--c",
        "3100",
    ]);
    std::fs::remove_file(&path).ok();
    assert!(ok, "{err}");
    let t2 = v["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["label"] == "4T2g")
        .expect("a 4T2g level");
    assert!((t2["energy"].as_f64().unwrap() - (3.0 * 7000.0 - 4.0 * 900.0)).abs() < 1e-6);
}

#[test]
fn bad_field_options_are_refused_with_a_sentence() {
    for args in [
        [
            "--config",
            "d3",
            "--geometry",
            "tetragonal",
            "--dq",
            "1000",
            "--ds",
            "1e9",
            "--b",
            "700",
            "--c",
            "3000",
        ]
        .as_slice(),
        [
            "--config",
            "d3",
            "--geometry",
            "octahedral",
            "--dq",
            "1000",
            "--ds",
            "10",
            "--b",
            "700",
            "--c",
            "3000",
        ]
        .as_slice(),
        [
            "--config", "d3", "--dq", "1000", "--b", "700", "--c", "3000", "--zeta", "20000",
        ]
        .as_slice(),
        [
            "--config",
            "d3",
            "--ligands",
            "/nonexistent/ligands.csv",
            "--b",
            "700",
            "--c",
            "3000",
        ]
        .as_slice(),
    ] {
        let (ok, _, err) = levels(args);
        assert!(!ok, "{args:?}");
        assert!(err.len() > 20 && !err.contains("panicked"), "{err}");
    }
}
