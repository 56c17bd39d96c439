//! Randomised robustness: mutated fixtures and JCAMP fragments must give Ok or Err, never panic.
//! A small deterministic PRNG (xorshift64*) keeps failures reproducible; the cargo-fuzz
//! targets in fuzz/ run the same idea for longer.

use ddlens::preprocess;
use ddlens::spectrum::{import, ImportOptions};

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
}

const ALPHABET: &[u8] = b"0123456789.,;\t -+eE@AJjSs%?#$=\n\r\"abcXYZ()";

fn mutate(rng: &mut Rng, seed: &[u8]) -> Vec<u8> {
    let mut bytes = seed.to_vec();
    for _ in 0..=rng.below(8) {
        let at = rng.below(bytes.len() + 1);
        match rng.below(4) {
            0 if !bytes.is_empty() => {
                bytes.remove(at.min(bytes.len() - 1));
            }
            1 => bytes.insert(at, ALPHABET[rng.below(ALPHABET.len())]),
            2 => bytes.insert(at, rng.next() as u8),
            _ if !bytes.is_empty() => {
                let i = at.min(bytes.len() - 1);
                bytes[i] = ALPHABET[rng.below(ALPHABET.len())];
            }
            _ => {}
        }
    }
    bytes
}

#[test]
fn mutated_inputs_never_panic() {
    let dir = format!("{}/fixtures/import", env!("CARGO_MANIFEST_DIR"));
    let mut seeds: Vec<Vec<u8>> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| std::fs::read(e.ok()?.path()).ok())
        .collect();
    seeds.push(b"##TITLE=t\n##FIRSTX=1\n##LASTX=8\n##NPOINTS=8\n##XYDATA=(X++(Y..Y))\n1A0JK%T\n5A3jB0J\n7B1\n##END=\n".to_vec());
    seeds.push(
        b"##TITLE=l\n##DATA TYPE=LINK\n##TITLE=a\n##XYPOINTS=(XY..XY)\n1,2;3,4\n##END=\n##END=\n"
            .to_vec(),
    );
    seeds.push(br#"{"ddlens_project": 1}"#.to_vec());
    let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
    let opts = ImportOptions {
        air_to_vacuum: true,
        ..Default::default()
    };
    for round in 0..3000 {
        let seed = &seeds[round % seeds.len()];
        let bytes = mutate(&mut rng, seed);
        if let Ok(report) = import(&bytes, "fuzz.txt", &opts) {
            for s in &report.spectra {
                assert!(
                    s.wavenumber.windows(2).all(|w| w[1] > w[0]),
                    "round {round}: not ascending"
                );
                assert!(
                    s.values.iter().all(|v| v.is_finite()),
                    "round {round}: non-finite value"
                );
                let _ = preprocess::baseline(
                    &s.wavenumber,
                    &s.values,
                    &preprocess::BaselineMethod::Arpls { lambda: 1e5 },
                );
                let _ = preprocess::baseline(
                    &s.wavenumber,
                    &s.values,
                    &preprocess::BaselineMethod::RubberBand,
                );
            }
        }
    }
}
