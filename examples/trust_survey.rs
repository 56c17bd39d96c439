//! The trust survey of issue 17: how the automatic analysis does off the happy
//! path. Not a benchmark and not a test (today most cases come out wrong); it
//! prints three tables, run with `make survey`:
//!
//! 1. every hard synthetic case of `tests/support/hard_cases.rs` through the
//!    analysis `ddlens analyze` runs: truth, result ± σ, relative error,
//!    whether the truth lies within ±1σ / ±2σ, the assignment and the outcome;
//! 2. a coverage run: noise realisations of a three-band Ni²⁺ Oh spectrum,
//!    the fraction of truths within ±1σ and ±2σ for 10Dq, B and the band
//!    centres of the deconvolution (a Gaussian σ should give ≈ 68 % and 95 %);
//! 3. textbook band maxima through `ddlens::lf_fit::fit` (the `ddlens fit`
//!    path), each with its source.

#[path = "../tests/support/hard_cases.rs"]
mod hard_cases;

use ddlens::analysis::{self, BandSetup, Document, LigandFieldOptions, Source};
use ddlens::estimate::Estimate;
use ddlens::lf_fit::{self, FitOutcome, FitRequest, ObservedBand, Solution};
use ddlens::ligand_field::Geometry;
use hard_cases::Case;

/// Noise realisations in the coverage run.
const DRAWS: u64 = 50;

/// What one automatic analysis gave: the ligand-field outcome or why there is
/// none, and the deconvolution's band centres.
struct Run {
    fit: Result<FitOutcome, String>,
    centres: Vec<Estimate>,
    /// `results.outcome` as JSON spells it, or "—".
    outcome: String,
    /// The fitted bands, "centre/FWHM" with the reason when left out.
    bands: Vec<String>,
}

/// The one call into the automatic analysis (as `ddlens analyze --ion … --geometry …`
/// with every other option at its default). Repoint this when the module moves.
fn analyze(case: &Case) -> Run {
    let request = FitRequest {
        ion: Some(case.ion.to_string()),
        n: 0,
        geometry: case.geometry,
        ..FitRequest::default()
    };
    let done = Document::import(
        case.csv().as_bytes(),
        &case.file_name(),
        Source::default(),
        BandSetup::default(),
    )
    .and_then(|doc| {
        let doc = Document {
            ligand_field: Some(LigandFieldOptions::from(request)),
            ..doc
        };
        analysis::analyze(&doc, &mut |_| true)
    });
    match done.map(|d| d.results) {
        Err(e) => Run {
            fit: Err(format!("analysis failed: {e}")),
            centres: Vec::new(),
            outcome: "—".into(),
            bands: Vec::new(),
        },
        Ok(None) => Run {
            fit: Err("the analysis gave no results".into()),
            centres: Vec::new(),
            outcome: "—".into(),
            bands: Vec::new(),
        },
        Ok(Some(r)) => Run {
            centres: r.bands.fit.bands.iter().map(|b| b.centre).collect(),
            outcome: r.outcome.map_or("—".into(), |o| {
                serde_json::to_value(o).map_or("?".into(), |v| v.as_str().unwrap_or("?").into())
            }),
            bands: r
                .bands
                .fit
                .bands
                .iter()
                .map(|b| {
                    let why = b.left_out.map_or(String::new(), |w| {
                        format!(" left out: {}", serde_json::to_value(w).unwrap_or_default())
                    });
                    format!("{:.0}/{:.0}{why}", b.centre.value, b.fwhm.value)
                })
                .collect(),
            fit: r.fit.ok_or_else(|| {
                r.fit_error
                    .or(r.outcome_text)
                    .unwrap_or_else(|| "no fit, no reason".into())
            }),
        },
    }
}

/// "+1.2 %" or "—".
fn rel(value: f64, truth: Option<f64>) -> String {
    match truth {
        Some(t) if t != 0.0 => format!("{:+.1} %", 100.0 * (value - t) / t),
        _ => "—".into(),
    }
}

/// How many σ the estimate lies from the truth, as "1σ", "2σ" or "out" (or "no σ").
fn within(e: Option<Estimate>, truth: Option<f64>) -> String {
    match (e, truth) {
        (Some(e), Some(t)) => match e.sigma {
            Some(s) if s > 0.0 => {
                let z = (e.value - t).abs() / s;
                if z <= 1.0 {
                    "1σ".into()
                } else if z <= 2.0 {
                    "2σ".into()
                } else {
                    format!("out ({z:.0}σ)")
                }
            }
            _ => "no σ".into(),
        },
        _ => "—".into(),
    }
}

fn est(e: Option<Estimate>) -> String {
    e.map_or("—".into(), |e| e.to_string())
}

/// "4T2g 4T1g(F)", the states in band order.
fn states(s: &Solution) -> String {
    let v: Vec<&str> = s.assignment.iter().map(|a| a.state.as_str()).collect();
    v.join(" ")
}

/// The states with the ground's spin where dⁿ has two ("… (low-spin)").
fn states_and_spin(s: &Solution) -> String {
    match s.spin.state.as_str() {
        "high-spin" | "low-spin" => format!("{} ({})", states(s), s.spin.state),
        _ => states(s),
    }
}

/// The outcome column: assigned (plausible or not) or no fit with its reason.
fn outcome(fit: &Result<FitOutcome, String>) -> String {
    match fit {
        Ok(o) if o.best.plausible => "assigned".into(),
        Ok(o) => {
            let w = &o.best.warnings;
            let more = match w.len() {
                0 | 1 => String::new(),
                n => format!(" (+{} more)", n - 1),
            };
            format!(
                "assigned, implausible: {}{more}",
                w.first().map_or("", |s| s.as_str())
            )
        }
        Err(e) => format!("no fit: {e}"),
    }
}

fn case_table(cases: &[Case]) {
    println!("## Hard synthetic cases through the automatic analysis\n");
    println!(
        "| case | truth 10Dq | truth B | 10Dq ± σ | B ± σ | error 10Dq | error B | truth in (10Dq) | truth in (B) | assignment | truth assignment | outcome |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|");
    let mut bands = Vec::new();
    for case in cases {
        let run = analyze(case);
        let t = &case.truth;
        let (td, tb) = (t.delta(), t.params.map(|p| p.b).filter(|b| *b > 0.0));
        let truth_states: Vec<&str> = t.bands.iter().map(|b| b.label.as_str()).collect();
        let cells = match &run.fit {
            Ok(o) => {
                let s = &o.best;
                let b = s.parameters.b;
                [
                    s.derived.delta.to_string(),
                    est(b),
                    rel(s.derived.delta.value, td),
                    b.map_or("—".into(), |b| rel(b.value, tb)),
                    within(Some(s.derived.delta), td),
                    within(b, tb),
                    states_and_spin(s),
                ]
            }
            Err(_) => ["—", "—", "—", "—", "—", "—", "—"].map(String::from),
        };
        println!(
            "| {} | {} | {} | {} | {} |",
            case.name,
            td.map_or("none".into(), |v| format!("{v:.0}")),
            tb.map_or("—".into(), |v| format!("{v:.0}")),
            cells.join(" | "),
            format_args!(
                "{} | {}: {}",
                truth_states.join(" "),
                run.outcome,
                outcome(&run.fit)
            )
        );
        bands.push(format!("- {}: {}", case.name, run.bands.join(", ")));
    }
    println!("\nFitted bands (centre/FWHM cm⁻¹; left out of the assignment where marked):\n");
    for line in &bands {
        println!("{line}");
    }
    println!();
    for case in cases {
        println!("- {}: {} ({})", case.name, case.truth.note, case.ion);
    }
    println!();
}

/// Counts of truths within ±1σ and ±2σ out of `n`.
#[derive(Default)]
struct Tally {
    n: usize,
    one: usize,
    two: usize,
}

impl Tally {
    fn add(&mut self, e: Option<Estimate>, truth: f64) {
        self.n += 1;
        if let Some(Estimate {
            value,
            sigma: Some(s),
            ..
        }) = e
        {
            let d = (value - truth).abs();
            self.one += usize::from(d <= s);
            self.two += usize::from(d <= 2.0 * s);
        }
    }

    fn row(&self, what: &str) {
        let pct = |k: usize| 100.0 * k as f64 / self.n.max(1) as f64;
        println!(
            "| {what} | {} | {:.0} % | {:.0} % |",
            self.n,
            pct(self.one),
            pct(self.two)
        );
    }
}

/// Sample standard deviation.
fn spread(v: &[f64]) -> f64 {
    let m = v.iter().sum::<f64>() / v.len().max(1) as f64;
    (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len().max(2) - 1) as f64).sqrt()
}

fn coverage() {
    let noise = 0.0045;
    let base = hard_cases::nickel_coverage(noise, 0);
    let p = base.truth.params.expect("the coverage case has parameters");
    let truth_states: Vec<&str> = base.truth.bands.iter().map(|b| b.label.as_str()).collect();
    let (mut delta, mut b, mut centres) = (Tally::default(), Tally::default(), Tally::default());
    let (mut failed, mut misassigned) = (0, 0);
    let (mut deltas, mut sigmas) = (Vec::new(), Vec::new());
    for seed in 1..=DRAWS {
        let run = analyze(&base.with_noise(noise, 1000 + seed));
        for t in &base.truth.bands {
            let near = run.centres.iter().min_by(|x, y| {
                (x.value - t.centre)
                    .abs()
                    .total_cmp(&(y.value - t.centre).abs())
            });
            centres.add(near.copied(), t.centre);
        }
        if let Ok(o) = &run.fit {
            let s = &o.best;
            delta.add(Some(s.derived.delta), 10.0 * p.dq);
            b.add(s.parameters.b, p.b);
            deltas.push(s.derived.delta.value);
            sigmas.extend(s.derived.delta.sigma);
            misassigned += usize::from(states(s) != truth_states.join(" "));
        } else {
            failed += 1;
            delta.add(None, 10.0 * p.dq);
            b.add(None, p.b);
        }
    }
    println!("## Coverage: {DRAWS} noise draws of a three-band Ni²⁺ Oh spectrum\n");
    println!(
        "Truth 10Dq = {:.0}, B = {:.0} cm⁻¹ (C at the free-ion C/B), FWHM 2 600 cm⁻¹, noise σ = {noise} \
         (1 % of the strongest band), 300–1600 nm. Expected for honest σ: ≈ 68 % and 95 %.\n",
        10.0 * p.dq,
        p.b
    );
    println!("| quantity | draws | within ±1σ | within ±2σ |\n|---|---|---|---|");
    delta.row("10Dq");
    b.row("B");
    centres.row("band centres (nearest fitted band to each true centre)");
    sigmas.sort_by(f64::total_cmp);
    let median = sigmas.get(sigmas.len() / 2).copied().unwrap_or(f64::NAN);
    println!(
        "\nNo fit in {failed} of {DRAWS}; assignment other than {} in {misassigned}. \
         Scatter of 10Dq over the draws {:.1} cm⁻¹; median reported σ(10Dq) {} cm⁻¹.\n",
        truth_states.join(" "),
        spread(&deltas),
        if median.is_finite() {
            format!("{median:.2}")
        } else {
            "— (none reported)".into()
        }
    );
}

/// One textbook band set and what the literature says it is.
struct Textbook {
    complex: &'static str,
    ion: &'static str,
    geometry: Geometry,
    bands: &'static [f64],
    spin_forbidden: bool,
    expected: &'static str,
    source: &'static str,
}

const TEXTBOOK: [Textbook; 10] = [
    Textbook {
        complex: "[Cr(H₂O)₆]³⁺",
        ion: "Cr3+",
        geometry: Geometry::Octahedral,
        bands: &[17_400.0, 24_600.0],
        spin_forbidden: false,
        expected: "4T2g 4T1g(F); Δ 17 400, B 725, β 0.79",
        source: "reference-values.md: 17 400 and B SRC [S16], [S1]; 24 600 from memory",
    },
    Textbook {
        complex: "[V(H₂O)₆]³⁺",
        ion: "V3+",
        geometry: Geometry::Octahedral,
        bands: &[17_800.0, 25_700.0],
        spin_forbidden: false,
        expected: "3T2g 3T1g(P); Δ ≈ 19 000, B ≈ 650",
        source: "from memory (standard inorganic texts)",
    },
    Textbook {
        complex: "[Ni(H₂O)₆]²⁺",
        ion: "Ni2+",
        geometry: Geometry::Octahedral,
        bands: &[8_500.0, 13_800.0, 25_300.0],
        spin_forbidden: false,
        expected: "3T2g 3T1g(F) 3T1g(P); Δ 8 500, B 754–958",
        source: "reference-values.md SRC [S31]; B range CALC there",
    },
    Textbook {
        complex: "[Ni(NH₃)₆]²⁺",
        ion: "Ni2+",
        geometry: Geometry::Octahedral,
        bands: &[10_750.0, 17_500.0, 28_200.0],
        spin_forbidden: false,
        expected: "3T2g 3T1g(F) 3T1g(P); Δ 10 750, B 846–973",
        source: "reference-values.md, from memory; B range CALC there",
    },
    Textbook {
        complex: "[Co(H₂O)₆]²⁺",
        ion: "Co2+",
        geometry: Geometry::Octahedral,
        bands: &[8_100.0, 16_000.0, 19_400.0],
        spin_forbidden: false,
        expected: "4T2g 4A2g 4T1g(P) high-spin; Δ ≈ 9 300, B ≈ 830",
        source: "reference-values.md, bands from memory; Δ, B from memory",
    },
    Textbook {
        complex: "[Co(H₂O)₆]²⁺ + 21 550 shoulder",
        ion: "Co2+",
        geometry: Geometry::Octahedral,
        bands: &[8_100.0, 16_000.0, 19_400.0, 21_550.0],
        spin_forbidden: false,
        expected: "high-spin, 19 400/21 550 both 4T1g(P); Δ ≈ 9 300",
        source: "reference-values.md, from memory",
    },
    Textbook {
        complex: "[CoCl₄]²⁻ (Td)",
        ion: "Co2+",
        geometry: Geometry::Tetrahedral,
        bands: &[5_800.0, 14_700.0],
        spin_forbidden: false,
        expected: "4T1(F) 4T1(P); Δt ≈ 3 200, β ≈ 0.63",
        source: "from memory (issue 17's figures)",
    },
    Textbook {
        complex: "[Mn(H₂O)₆]²⁺",
        ion: "Mn2+",
        geometry: Geometry::Octahedral,
        bands: &[18_900.0, 23_100.0, 25_000.0, 28_000.0, 29_700.0],
        spin_forbidden: false,
        expected: "4T1g(G) 4T2g(G) 4A1g/4Eg(G) 4T2g(D) 4Eg(D) high-spin; Δ ≈ 8 500",
        source: "from memory (standard inorganic texts)",
    },
    Textbook {
        complex: "[Mn(H₂O)₆]²⁺ --spin-forbidden",
        ion: "Mn2+",
        geometry: Geometry::Octahedral,
        bands: &[18_900.0, 23_100.0, 25_000.0, 28_000.0, 29_700.0],
        spin_forbidden: true,
        expected: "as above",
        source: "from memory",
    },
    Textbook {
        complex: "[Ti(H₂O)₆]³⁺",
        ion: "Ti3+",
        geometry: Geometry::Octahedral,
        bands: &[17_400.0, 20_300.0],
        spin_forbidden: false,
        expected: "2Eg (Jahn–Teller pair); Δ ≈ 18 900–20 300",
        source: "reference-values.md SRC [S12]; Gardner [S13] 20 100",
    },
];

fn textbook_table() {
    println!("## Textbook band sets through lf_fit::fit (the `ddlens fit` path)\n");
    println!(
        "| complex | bands | ranked first | Δ ± σ | B ± σ | β | plausible | expected | source |"
    );
    println!("|---|---|---|---|---|---|---|---|---|");
    for t in &TEXTBOOK {
        let req = FitRequest {
            ion: Some(t.ion.into()),
            n: 0,
            geometry: t.geometry,
            bands: t.bands.iter().map(|&e| ObservedBand::at(e)).collect(),
            spin_forbidden: t.spin_forbidden,
            ..FitRequest::default()
        };
        let bands: Vec<String> = t.bands.iter().map(|e| format!("{e:.0}")).collect();
        let cells = match lf_fit::fit(&req) {
            Ok(o) => {
                let s = &o.best;
                format!(
                    "{} | {} | {} | {} | {}",
                    states_and_spin(s),
                    s.derived.delta,
                    est(s.parameters.b),
                    est(s.derived.beta),
                    if s.plausible { "yes" } else { "no" }
                )
            }
            Err(e) => format!("no fit: {e} | — | — | — | —"),
        };
        println!(
            "| {} | {} | {cells} | {} | {} |",
            t.complex,
            bands.join(", "),
            t.expected,
            t.source
        );
    }
    println!();
}

fn main() {
    let cases = hard_cases::all();
    case_table(&cases);
    coverage();
    textbook_table();
}
