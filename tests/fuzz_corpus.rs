//! The short deterministic fuzz pass of `make test` (no nightly, no cargo-fuzz): a fixed seed
//! corpus (the import fixtures plus the hostile inputs of issue 20) and a seeded mutation loop
//! go through import and every preprocessing step. Nothing may panic or take longer than a
//! bounded wait; whatever succeeds must be finite, ascending and within the import limits.
//! A small PRNG (xorshift64*, Marsaglia 2003 / Vigna 2016) keeps failures reproducible; the
//! cargo-fuzz targets in fuzz/ run the same idea for longer.

use ddlens::preprocess::{self, BaselineMethod, MAX_POLYNOMIAL_ORDER, MAX_WINDOW};
use ddlens::spectrum::{import, ImportOptions, Spectrum, MAX_MAGNITUDE, WAVENUMBER_RANGE};
mod common;
use common::within;

struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
}

const ALPHABET: &[u8] = b"0123456789.,;\t -+eE@AJjSs%?#$=\n\r\"abcXYZ()";

/// Tokens that broke the importer or the page before (issue 20) or sit on a limit.
const HOSTILE: &[&str] = &[
    "1.7e308", "-1.7e308", "1e-300", "1e300", "0", "-0", "1e101", "s99998", "\u{0}", "\u{1b}",
    "\u{7f}", ",,,,,,", "\n", "inf", "NaN",
];

fn mutate(rng: &mut Rng, seed: &[u8]) -> Vec<u8> {
    let mut bytes = seed.to_vec();
    for _ in 0..=rng.below(8) {
        let at = rng.below(bytes.len() + 1);
        match rng.below(5) {
            0 if !bytes.is_empty() => {
                bytes.remove(at.min(bytes.len() - 1));
            }
            1 => bytes.insert(at, *rng.pick(ALPHABET)),
            2 => bytes.insert(at, rng.next() as u8),
            3 => {
                let token = rng.pick(HOSTILE).as_bytes();
                bytes.splice(at..at, token.iter().copied());
            }
            _ if !bytes.is_empty() => {
                let i = at.min(bytes.len() - 1);
                bytes[i] = *rng.pick(ALPHABET);
            }
            _ => {}
        }
    }
    bytes
}

fn seeds() -> Vec<Vec<u8>> {
    let dir = format!("{}/fixtures/import", env!("CARGO_MANIFEST_DIR"));
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| Some(e.ok()?.path()))
        .filter(|p| p.extension().is_some_and(|e| e != "md"))
        .collect();
    files.sort();
    let mut seeds: Vec<Vec<u8>> = files.iter().filter_map(|p| std::fs::read(p).ok()).collect();
    let more: &[&str] = &[
        "##TITLE=t\n##FIRSTX=1\n##LASTX=8\n##NPOINTS=8\n##XYDATA=(X++(Y..Y))\n1A0JK%T\n5A3jB0J\n7B1\n##END=\n",
        "##TITLE=l\n##DATA TYPE=LINK\n##TITLE=a\n##XYPOINTS=(XY..XY)\n1,2;3,4\n##END=\n##END=\n",
        "{\"ddlens_project\": 1}",
        "nm,A\n400,0.1\n500,1.7e308\n600,0.1\n",
        "nm,A\n400,1.7e308\n400,1.7e308\n500,0.1\n",
        "cm-1,A\n1e-300,0.1\n1,0.2\n1e300,0.3\n",
        "##TITLE=d\n##XUNITS=1/CM\n##FIRSTX=1\n##LASTX=500\n##NPOINTS=500\n##XYDATA=(X++(Y..Y))\n1 A1s498\n##END=\n",
        "name\u{1b}:x\u{7}\nnm\tS\u{0}1\tS2\n400\t0.1\t0.2\n450\t0.3\t0.1\n500\t0.2\t0.4\n",
    ];
    seeds.extend(more.iter().map(|s| s.as_bytes().to_vec()));
    seeds
}

fn assert_sound(s: &Spectrum, what: &str) {
    assert!(
        s.wavenumber.windows(2).all(|w| w[1] > w[0]),
        "{what}: not ascending"
    );
    let [low, high] = WAVENUMBER_RANGE;
    assert!(
        s.wavenumber.iter().all(|w| (low..=high).contains(w)),
        "{what}: a wavenumber outside the import limits"
    );
    assert!(
        s.values.iter().all(|v| v.abs() <= MAX_MAGNITUDE),
        "{what}: a value is not finite or beyond ±{MAX_MAGNITUDE:e}"
    );
    let control = |t: &str| t.chars().any(|c| c.is_control() && c != '\n' && c != '\t');
    assert!(!control(&s.name), "{what}: control character in the name");
}

fn finite(v: &[f64]) -> bool {
    v.iter().all(|x| x.is_finite())
}

/// A baseline method with parameters drawn from ordinary, edge and hostile values.
fn method(rng: &mut Rng) -> BaselineMethod {
    let lambdas = [1e-3, 1.0, 1e5, 1e12, 1e13, 1e300, f64::NAN, -1.0];
    match rng.below(5) {
        0 => BaselineMethod::Polynomial {
            order: *rng.pick(&[0, 1, 3, MAX_POLYNOMIAL_ORDER, u32::MAX as usize, usize::MAX]),
            regions: vec![[rng.next() as f64 % 40_000.0, 25_000.0]],
        },
        1 => BaselineMethod::Asls {
            lambda: *rng.pick(&lambdas),
            p: *rng.pick(&[0.001, 0.5, 0.0, 1.0, f64::NAN]),
        },
        2 => BaselineMethod::Arpls {
            lambda: *rng.pick(&lambdas),
        },
        3 => BaselineMethod::RubberBand,
        _ => BaselineMethod::Scattering {
            exponent: *rng.pick(&[None, Some(4.0), Some(-2.0), Some(1e300), Some(f64::NAN)]),
        },
    }
}

/// Every preprocessing step on `s` with random parameters: Ok results must be finite.
fn preprocess_all(rng: &mut Rng, s: &Spectrum, what: &str) {
    let lo = *rng.pick(&[f64::NEG_INFINITY, 0.0, 15_000.0, f64::NAN, 1e300]);
    let hi = *rng.pick(&[f64::INFINITY, 25_000.0, 5_000.0, f64::NAN]);
    let cropped = preprocess::crop(s, lo, hi);
    assert_sound(&cropped, what);
    let resampled = preprocess::resample_even(s, *rng.pick(&[0, 2, 17, 1000]));
    assert!(finite(&resampled.values), "{what}: resampling");
    let window = *rng.pick(&[1, 3, 5, 11, 4, MAX_WINDOW, MAX_WINDOW + 2, usize::MAX]);
    let (order, deriv) = (rng.below(7), rng.below(4));
    if let Ok(smooth) = preprocess::savgol(&s.values, window, order, deriv) {
        assert!(
            finite(&smooth),
            "{what}: savgol({window}, {order}, {deriv})"
        );
    }
    let m = method(rng);
    if let Ok(base) = preprocess::baseline(&s.wavenumber, &s.values, &m) {
        assert!(finite(&base), "{what}: baseline {m:?}");
    }
}

#[test]
fn mutated_files_import_and_preprocess_without_a_panic_or_a_non_finite_number() {
    within(120, || {
        let seeds = seeds();
        let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
        let options = [
            ImportOptions::default(),
            ImportOptions {
                air_to_vacuum: true,
                ..Default::default()
            },
            ImportOptions {
                concentration_mol_l: Some(1e-300),
                path_length_cm: Some(1e-10),
                ..Default::default()
            },
        ];
        for round in 0..3000 {
            let seed = &seeds[round % seeds.len()];
            let bytes = if round < seeds.len() {
                seed.clone()
            } else {
                mutate(&mut rng, seed)
            };
            let opts = rng.pick(&options);
            let Ok(report) = import(&bytes, "fuzz.txt", opts) else {
                continue;
            };
            for s in &report.spectra {
                let what = format!("round {round}");
                assert_sound(s, &what);
                preprocess_all(&mut rng, s, &what);
            }
        }
    });
}

#[test]
fn random_arrays_at_the_import_limits_preprocess_without_a_panic_or_a_non_finite_number() {
    within(120, || {
        let mut rng = Rng(0xD1B5_4A32_D192_ED03);
        let scales = [1e-6, 1.0, 1e4, 5e11]; // x = scale·[1, 2) stays inside WAVENUMBER_RANGE
        let magnitudes = [0.0, 1e-300, 1.0, 1e50, MAX_MAGNITUDE];
        for round in 0..400 {
            let n = *rng.pick(&[0, 1, 2, 3, 7, 50, 300]);
            let scale = *rng.pick(&scales);
            let mut x: Vec<f64> = (0..n)
                .map(|_| scale * (1.0 + (rng.next() >> 11) as f64 / (1u64 << 53) as f64))
                .collect();
            x.sort_by(f64::total_cmp);
            x.dedup();
            let magnitude = *rng.pick(&magnitudes);
            let values: Vec<f64> = (0..x.len())
                .map(|_| magnitude * ((rng.next() >> 11) as f64 / (1u64 << 52) as f64 - 1.0))
                .collect();
            let s = Spectrum {
                name: "random".into(),
                wavenumber: x,
                values,
                quantity: ddlens::spectrum::Quantity::Absorbance,
                x_unit_read: ddlens::spectrum::XUnit::Wavenumber,
                saturated: vec![],
                metadata: std::collections::BTreeMap::new(),
                warnings: vec![],
            };
            preprocess_all(&mut rng, &s, &format!("array round {round}"));
        }
    });
}

/// JSON values that broke the page before (issue 20) or sit on a limit of a
/// project's fields: `__proto__` keys, lengths that wrap on wasm32, ±1e308.
fn hostile_json(rng: &mut Rng) -> serde_json::Value {
    use serde_json::json;
    let values = [
        json!(null),
        json!(1e308),
        json!(-1e308),
        json!(4_294_967_295u64),
        json!(-1),
        json!(0),
        json!(true),
        json!(""),
        json!("__proto__"),
        json!("=1+1"),
        json!([]),
        json!({}),
        json!({"__proto__": {"polluted": 1}}),
        json!([1e308, -1e308]),
    ];
    rng.pick(&values).clone()
}

/// Replaces one value somewhere in `v` (a random path) by a hostile one, or
/// adds an unknown key to an object on the way.
fn mutate_json(rng: &mut Rng, v: &mut serde_json::Value) {
    use serde_json::Value;
    let descend = rng.below(4) != 0;
    match v {
        Value::Object(map) if descend && !map.is_empty() => {
            if rng.below(8) == 0 {
                map.insert("__proto__".into(), hostile_json(rng));
                return;
            }
            let i = rng.below(map.len());
            if let Some(child) = map.values_mut().nth(i) {
                mutate_json(rng, child);
            }
        }
        Value::Array(items) if descend && !items.is_empty() => {
            let i = rng.below(items.len());
            mutate_json(rng, &mut items[i]);
        }
        _ => *v = hostile_json(rng),
    }
}

/// The share-link payload is a project's text (the page inflates the link and
/// hands the text to `Project::from_json`): the wave-1 project file and its
/// schema-2 form, with hostile values put at random paths and bytes mutated.
#[test]
fn mutated_share_link_projects_load_or_are_refused_and_what_loads_reads_back_the_same() {
    use ddlens::analysis::Project;
    within(120, || {
        let wave1 = include_str!("../fixtures/projects/wave1-demo.json");
        let (current, _) = Project::from_json(wave1).expect("the wave-1 fixture loads");
        let seeds: Vec<serde_json::Value> = [wave1.to_string(), current.to_json()]
            .iter()
            .map(|t| serde_json::from_str(t).expect("the seeds are JSON"))
            .collect();
        let mut rng = Rng(0xA076_1D64_78BD_642F);
        let mut loaded = 0;
        for round in 0..600 {
            let mut value = seeds[round % seeds.len()].clone();
            for _ in 0..=rng.below(3) {
                mutate_json(&mut rng, &mut value);
            }
            let mut text = value.to_string().into_bytes();
            if round % 5 == 0 {
                text = mutate(&mut rng, &text);
            }
            let Ok(text) = String::from_utf8(text) else {
                continue;
            };
            let Ok((project, _)) = Project::from_json(&text) else {
                continue;
            };
            loaded += 1;
            let (again, _) = Project::from_json(&project.to_json()).unwrap_or_else(|e| {
                panic!("round {round}: a loaded project is refused once written: {e}")
            });
            assert_eq!(again.samples.len(), project.samples.len(), "round {round}");
            assert_eq!(again.page, project.page, "round {round}");
        }
        // Some mutations are harmless (an unknown key, a colour): the pass reaches the loader's success path.
        assert!(loaded > 0, "no mutated project loaded");
    });
}
