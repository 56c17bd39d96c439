//! Hard synthetic spectra with known truth, for judging the automatic analysis
//! (issue 17): pure noise, a charge-transfer edge, a sharp spin-forbidden line,
//! skewed bands, 1–2 % noise, ν1 outside the measured range, a Jahn–Teller
//! pair, a broad Cu²⁺ band, Mn²⁺ with only spin-forbidden bands, and two
//! overlapping bands of very different height.
//!
//! Band positions come from the project's own engine (`ddlens::ligand_field`)
//! for the stated Dq, B, C, so the truth is exact by construction; the band
//! shapes are plain Gaussians in wavenumber (split Gaussians for the skewed
//! case, whose maximum stays at the stated centre). Noise comes from a seeded
//! splitmix64 generator (Steele, Lea & Flood, OOPSLA 2014) with Box–Muller
//! normal deviates, so every spectrum is reproducible byte for byte.
//!
//! Shared by `tests/hard_cases.rs` and `examples/trust_survey.rs` through
//! `#[path]`; each uses only part of it.
#![allow(dead_code)]

use ddlens::ions;
use ddlens::ligand_field::{model, Geometry, Level, Params};
use std::fmt::Write as _;

/// 4 ln 2: a Gaussian of FWHM w is exp(−4 ln2 (x − c)²/w²).
const FOUR_LN2: f64 = 4.0 * std::f64::consts::LN_2;

/// splitmix64: a 64-bit seeded generator with a one-word state.
pub struct SplitMix(u64);

impl SplitMix {
    pub fn new(seed: u64) -> Self {
        SplitMix(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform on (0, 1], 53 bits.
    pub fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 1.0) / (1u64 << 53) as f64
    }

    /// A standard normal deviate (Box–Muller, cosine branch).
    pub fn normal(&mut self) -> f64 {
        let (u1, u2) = (self.uniform(), self.uniform());
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
}

/// One band of a synthetic spectrum (Gaussian in wavenumber).
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// Maximum, cm⁻¹.
    pub centre: f64,
    /// Full width at half maximum, cm⁻¹.
    pub fwhm: f64,
    /// Absorbance at the maximum.
    pub height: f64,
    /// Width of the high-energy half over the low-energy half (1 = symmetric).
    pub skew: f64,
    /// The state it goes to ("4T2g"), or what it is ("charge transfer").
    pub label: String,
    /// A d–d band of the ion (false for charge transfer).
    pub dd: bool,
}

impl Band {
    fn at(x: f64, b: &Band) -> f64 {
        // Split Gaussian: half-widths w·2/(1+s) below and w·2s/(1+s) above the
        // maximum, so the FWHM stays w and the maximum stays at the centre.
        let dx = x - b.centre;
        let w = if dx < 0.0 {
            b.fwhm * 2.0 / (1.0 + b.skew)
        } else {
            b.fwhm * 2.0 * b.skew / (1.0 + b.skew)
        };
        b.height * (-FOUR_LN2 * dx * dx / (w * w)).exp()
    }
}

/// The measured axis of a case.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Axis {
    /// Wavelength in nm, descending from `to` to `from` in steps of `step`.
    Nm { from: f64, to: f64, step: f64 },
    /// Wavenumber in cm⁻¹, ascending.
    Wavenumber { from: f64, to: f64, step: f64 },
}

impl Axis {
    /// The wavenumber range the axis covers, cm⁻¹, ascending.
    pub fn range_cm(self) -> [f64; 2] {
        match self {
            Axis::Nm { from, to, .. } => [1e7 / to, 1e7 / from],
            Axis::Wavenumber { from, to, .. } => [from, to],
        }
    }

    /// (x as written, x in cm⁻¹), in file order.
    fn points(self) -> Vec<(f64, f64)> {
        match self {
            Axis::Nm { from, to, step } => {
                let n = ((to - from) / step).round() as usize;
                (0..=n)
                    .map(|i| to - step * i as f64)
                    .map(|nm| (nm, 1e7 / nm))
                    .collect()
            }
            Axis::Wavenumber { from, to, step } => {
                let n = ((to - from) / step).round() as usize;
                (0..=n)
                    .map(|i| from + step * i as f64)
                    .map(|x| (x, x))
                    .collect()
            }
        }
    }
}

/// What the analysis should find.
#[derive(Debug, Clone, PartialEq)]
pub struct Truth {
    /// Dq, B, C of the engine that placed the bands; `None` when there is no d–d band.
    pub params: Option<Params>,
    /// β = B/B₀ with the ion's default free-ion B₀.
    pub beta: Option<f64>,
    /// The d–d bands (centre and state), ascending; charge transfer excluded.
    pub bands: Vec<Band>,
    /// One line on what makes the case hard.
    pub note: &'static str,
}

impl Truth {
    pub fn delta(&self) -> Option<f64> {
        self.params.map(|p| 10.0 * p.dq)
    }
}

/// One hard case: the file, the ion and site to analyse it as, and the truth.
#[derive(Debug, Clone)]
pub struct Case {
    pub name: &'static str,
    pub ion: &'static str,
    pub geometry: Geometry,
    pub axis: Axis,
    /// Every band drawn, d–d or not.
    pub drawn: Vec<Band>,
    /// Constant baseline absorbance.
    pub offset: f64,
    /// Standard deviation of the added normal noise, absorbance.
    pub noise: f64,
    pub seed: u64,
    pub truth: Truth,
}

impl Case {
    pub fn file_name(&self) -> String {
        format!("{}.csv", self.name)
    }

    /// The spectrum without noise at wavenumber `x`.
    pub fn clean(&self, x: f64) -> f64 {
        self.offset + self.drawn.iter().map(|b| Band::at(x, b)).sum::<f64>()
    }

    /// The file: a two-column CSV with a header naming the unit.
    pub fn csv(&self) -> String {
        let mut rng = SplitMix::new(self.seed);
        let mut out = match self.axis {
            Axis::Nm { .. } => String::from("Wavelength (nm),Absorbance\n"),
            Axis::Wavenumber { .. } => String::from("Wavenumber (cm-1),Absorbance\n"),
        };
        for (written, x) in self.axis.points() {
            let y = self.clean(x) + self.noise * rng.normal();
            let _ = writeln!(out, "{written:.2},{y:.6}");
        }
        out
    }

    /// The same case with another noise level and seed.
    pub fn with_noise(&self, noise: f64, seed: u64) -> Case {
        Case {
            noise,
            seed,
            ..self.clone()
        }
    }
}

/// The engine's levels of dⁿ for (Dq, B, C).
pub fn levels(n: u8, geometry: Geometry, p: Params) -> Vec<Level> {
    model(n, geometry)
        .expect("the engine has every d¹–d⁹ model")
        .levels(&p)
        .expect("the case parameters are finite and positive")
}

/// The energy of the level labelled `label` ("4T1g(P)").
pub fn level(n: u8, geometry: Geometry, p: Params, label: &str) -> f64 {
    levels(n, geometry, p)
        .iter()
        .find(|l| l.label == label)
        .unwrap_or_else(|| panic!("d{n} {geometry} has no level {label}"))
        .energy
}

/// Parameters with C at the ion's free-ion C₀/B₀ (the analysis's default).
pub fn free_ratio(ion: &str, dq: f64, b: f64) -> Params {
    let r = ions::ion(ion)
        .and_then(|i| i.free_c_over_b())
        .unwrap_or(4.5);
    Params { dq, b, c: r * b }
}

/// β = B/B₀ with the ion's default free-ion B₀.
pub fn beta(ion: &str, b: f64) -> Option<f64> {
    let i = ions::ion(ion)?;
    i.free_ion(None).map(|f| b / f.b0)
}

fn dd(n: u8, geometry: Geometry, p: Params, label: &str, fwhm: f64, height: f64) -> Band {
    Band {
        centre: level(n, geometry, p, label),
        fwhm,
        height,
        skew: 1.0,
        label: label.to_string(),
        dd: true,
    }
}

fn charge_transfer(centre: f64, fwhm: f64, height: f64) -> Band {
    Band {
        centre,
        fwhm,
        height,
        skew: 1.0,
        label: "charge transfer".into(),
        dd: false,
    }
}

/// UV–Vis–NIR, 300–1100 nm in 1 nm steps (9 091–33 333 cm⁻¹).
const VIS: Axis = Axis::Nm {
    from: 300.0,
    to: 1100.0,
    step: 1.0,
};

/// UV–Vis–NIR to 1600 nm (6 250–33 333 cm⁻¹), 1 nm steps.
const VIS_NIR: Axis = Axis::Nm {
    from: 300.0,
    to: 1600.0,
    step: 1.0,
};

#[allow(clippy::too_many_arguments)]
fn case(
    name: &'static str,
    ion: &'static str,
    geometry: Geometry,
    axis: Axis,
    params: Option<Params>,
    drawn: Vec<Band>,
    noise: f64,
    note: &'static str,
) -> Case {
    let mut bands: Vec<Band> = drawn.iter().filter(|b| b.dd).cloned().collect();
    bands.sort_by(|a, b| a.centre.total_cmp(&b.centre));
    Case {
        name,
        ion,
        geometry,
        axis,
        drawn,
        offset: 0.01,
        noise,
        seed: 0x5EED_0000 + name.len() as u64 * 7919 + u64::from(name.as_bytes()[0]),
        truth: Truth {
            params,
            beta: params.and_then(|p| beta(ion, p.b)),
            bands,
            note,
        },
    }
}

/// Three spin-allowed Ni²⁺ Oh bands (Dq 860, B 880 at the free-ion C/B),
/// 2 600 cm⁻¹ wide: the coverage spectrum and the base of several cases.
pub fn nickel_bands(p: Params, fwhm: f64, skew: f64) -> Vec<Band> {
    let g = Geometry::Octahedral;
    ["3T2g", "3T1g(F)", "3T1g(P)"]
        .iter()
        .zip([0.30, 0.25, 0.45])
        .map(|(label, h)| Band {
            skew,
            ..dd(8, g, p, label, fwhm, h)
        })
        .collect()
}

pub fn nickel_params() -> Params {
    free_ratio("Ni2+", 860.0, 880.0)
}

/// The coverage spectrum: three Ni²⁺ bands over 300–1600 nm with noise of
/// `noise` absorbance.
pub fn nickel_coverage(noise: f64, seed: u64) -> Case {
    let p = nickel_params();
    Case {
        seed,
        ..case(
            "ni-oh-coverage",
            "Ni2+",
            Geometry::Octahedral,
            VIS_NIR,
            Some(p),
            nickel_bands(p, 2600.0, 1.0),
            noise,
            "three well-separated spin-allowed bands",
        )
    }
}

/// The case called `name` (panics on a name that is not a case).
pub fn named(name: &str) -> Case {
    all()
        .into_iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no hard case is called {name}"))
}

/// Every hard case of issue 17.
#[allow(clippy::too_many_lines)] // a table of cases, one literal each
pub fn all() -> Vec<Case> {
    let oh = Geometry::Octahedral;
    let ni = nickel_params();
    let cr = free_ratio("Cr3+", 1740.0, 725.0);
    let cr_strong = free_ratio("Cr3+", 2150.0, 650.0);
    let co_oh = free_ratio("Co2+", 930.0, 840.0);
    let co_td = free_ratio("Co2+", 335.0, 702.0);
    let mn = Params {
        dq: 780.0,
        b: 670.0,
        c: 3660.0,
    };
    let ti = Params {
        dq: 1900.0,
        b: 0.0,
        c: 0.0,
    };
    let cu = Params {
        dq: 1250.0,
        b: 0.0,
        c: 0.0,
    };
    let mut cr_line = vec![
        dd(3, oh, cr_strong, "4T2g", 2800.0, 0.30),
        dd(3, oh, cr_strong, "4T1g(F)", 3200.0, 0.35),
    ];
    cr_line.push(dd(3, oh, cr_strong, "2Eg(G)", 150.0, 0.012));
    vec![
        case(
            "pure-noise",
            "Ni2+",
            oh,
            VIS,
            None,
            Vec::new(),
            0.002,
            "flat 0.01 ± 0.002, no band at all",
        ),
        case(
            "charge-transfer-edge",
            "Cr3+",
            oh,
            VIS,
            Some(cr),
            vec![
                dd(3, oh, cr, "4T2g", 2800.0, 0.20),
                dd(3, oh, cr, "4T1g(F)", 3200.0, 0.25),
                charge_transfer(40_000.0, 9000.0, 2.5),
            ],
            0.001,
            "a charge-transfer band centred beyond the range rises into the UV",
        ),
        case(
            "sharp-spin-forbidden-line",
            "Cr3+",
            oh,
            VIS,
            Some(cr_strong),
            cr_line,
            0.0005,
            "a 150 cm⁻¹-wide ²Eg line at 4 % of the ⁴T₂g band's height",
        ),
        case(
            "skewed-bands",
            "Ni2+",
            oh,
            VIS_NIR,
            Some(ni),
            nickel_bands(ni, 2600.0, 1.6),
            0.0005,
            "high-energy halves 1.6× wider than the low-energy ones",
        ),
        case(
            "noise-1-percent",
            "Ni2+",
            oh,
            VIS_NIR,
            Some(ni),
            nickel_bands(ni, 2600.0, 1.0),
            0.0045,
            "noise σ = 1 % of the strongest band",
        ),
        case(
            "noise-2-percent",
            "Ni2+",
            oh,
            VIS_NIR,
            Some(ni),
            nickel_bands(ni, 2600.0, 1.0),
            0.009,
            "noise σ = 2 % of the strongest band",
        ),
        case(
            "ni-nu1-outside-range",
            "Ni2+",
            oh,
            Axis::Nm {
                from: 330.0,
                to: 1000.0,
                step: 1.0,
            },
            Some(ni),
            nickel_bands(ni, 2600.0, 1.0),
            0.0005,
            "the range starts at 10 000 cm⁻¹, above ν1 (only its upper wing is measured)",
        ),
        case(
            "co-td-nu1-mid-ir",
            "Co2+",
            Geometry::Tetrahedral,
            Axis::Wavenumber {
                from: 4000.0,
                to: 25_000.0,
                step: 10.0,
            },
            Some(co_td),
            vec![
                dd(7, Geometry::Tetrahedral, co_td, "4T1(F)", 2200.0, 0.25),
                dd(7, Geometry::Tetrahedral, co_td, "4T1(P)", 2000.0, 0.60),
            ],
            0.0005,
            "ν1 (⁴A₂→⁴T₂) lies in the mid-IR, below the 4 000 cm⁻¹ start",
        ),
        jahn_teller_pair(ti),
        case(
            "broad-cu",
            "Cu2+",
            oh,
            Axis::Nm {
                from: 330.0,
                to: 1100.0,
                step: 1.0,
            },
            Some(cu),
            vec![dd(9, oh, cu, "2T2g", 6000.0, 0.12)],
            0.0005,
            "one 6 000 cm⁻¹-wide band whose low-energy wing leaves the range",
        ),
        manganese(mn),
        case(
            "overlap-unequal-heights",
            "Co2+",
            oh,
            VIS_NIR,
            Some(co_oh),
            vec![
                dd(7, oh, co_oh, "4T2g", 3000.0, 0.08),
                dd(7, oh, co_oh, "4A2g", 2500.0, 0.02),
                dd(7, oh, co_oh, "4T1g(P)", 3000.0, 0.30),
            ],
            0.0005,
            "a weak ⁴A₂g band on the low side of a band 15× as high",
        ),
    ]
}

/// Ti³⁺ d¹: ²Eg split by 2 800 cm⁻¹ around 10Dq (the barycentre, both
/// components of equal degeneracy), the low component a shoulder.
fn jahn_teller_pair(p: Params) -> Case {
    let centre = level(1, Geometry::Octahedral, p, "2Eg");
    let part = |offset: f64, height: f64| Band {
        centre: centre + offset,
        fwhm: 2600.0,
        height,
        skew: 1.0,
        label: "2Eg".into(),
        dd: true,
    };
    case(
        "ti-jahn-teller-pair",
        "Ti3+",
        Geometry::Octahedral,
        VIS,
        Some(p),
        vec![part(-1400.0, 0.035), part(1400.0, 0.05)],
        0.0003,
        "²Eg split 2 800 cm⁻¹ by Jahn–Teller coupling; Δ is the barycentre",
    )
}

/// Mn²⁺ d⁵ high spin: only the weak quartet bands, the ⁴A₁g/⁴Eg(G) pair (one
/// sharp band: the two levels coincide at 10B + 5C) and C/B = 5.46, away from
/// the free ion's, so that C matters.
fn manganese(p: Params) -> Case {
    let g = Geometry::Octahedral;
    let b = |label: &str, fwhm: f64, height: f64| dd(5, g, p, label, fwhm, height);
    case(
        "mn-spin-forbidden-only",
        "Mn2+",
        g,
        Axis::Nm {
            from: 300.0,
            to: 700.0,
            step: 0.5,
        },
        Some(p),
        vec![
            b("4T1g(G)", 2500.0, 0.010),
            b("4T2g(G)", 2000.0, 0.012),
            b("4A1g", 300.0, 0.030),
            b("4T2g(D)", 1500.0, 0.012),
            b("4Eg(D)", 600.0, 0.020),
        ],
        0.0003,
        "only weak sextet→quartet bands; C/B = 5.46, not the free ion's",
    )
}
