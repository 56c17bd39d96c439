//! `ddlens fit --config d3 --geometry octahedral --band 17400 --band 24600[:σ] …`:
//! ligand-field parameters from band maxima.

use super::{Args, CliError};
use crate::lf_fit::{self, FitOutcome, ObservedBand, Solution};

const HELP: &str = "\
ddlens fit [OPTIONS] --band E[:SIGMA] --band …

Finds the assignment of the bands and fits 10Dq, B (and C).

OPTIONS:
    --config dN          configuration d1…d9 (or give --ion)
    --ion ION            the metal ion, e.g. Cr3+ (gives dⁿ, B₀ for β and the default C/B)
    --geometry G         octahedral (default) or tetrahedral
    --band E[:S[:STATE]] a band maximum in cm⁻¹, optionally its uncertainty and a forced
                         state (e.g. 24600:250:4T1g); `--band 33000:x` marks a band as not d–d
    --c-over-b G         hold C/B at G
    --free-c             fit C too (three or more bands)
    --spin-forbidden     consider spin-forbidden (ΔS = ±1) transitions
    --b0-source NAME     free-ion table for β: common or jolly
    --ligand L           the ligand (e.g. H2O, NH3, Cl-) for Jørgensen's estimates
    --observed-from E    the spectrum starts at E cm⁻¹: lower transitions could not be seen
    --max-prediction E   predict transitions up to E cm⁻¹ (default 50 000)
    --json               machine-readable output
";

/// Reads `E[:S][:STATE]` or `E:x` (shared with `analyze`, where it fixes the band found nearest E).
pub(super) fn parse_band(text: &str) -> Result<ObservedBand, CliError> {
    let mut parts = text.split(':');
    let energy = super::args::parse_number("--band", parts.next().unwrap_or(""))?;
    let mut band = ObservedBand::at(energy);
    for part in parts {
        if part.eq_ignore_ascii_case("x") {
            band.not_dd = true;
        } else if let Ok(s) = part.parse::<f64>() {
            band.sigma = Some(s);
        } else {
            band.assign = Some(part.to_string());
        }
    }
    Ok(band)
}

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") || args.flag("-h") {
        print!("{HELP}");
        return Ok(());
    }
    let mut req = super::fit_request_options(args)?;
    req.bands = args
        .values("--band")?
        .iter()
        .map(|b| parse_band(b))
        .collect::<Result<Vec<_>, _>>()?;
    req.max_prediction = args.number("--max-prediction")?;
    req.observed_from = args.number("--observed-from")?;
    args.finish()?;
    let outcome = lf_fit::fit(&req).map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        return super::print_json(&outcome);
    }
    print_outcome(&outcome);
    Ok(())
}

fn opt(e: Option<crate::estimate::Estimate>) -> String {
    e.map_or("—".into(), |v| v.to_string())
}

fn print_solution(s: &Solution) {
    let d = &s.derived;
    println!("    10Dq (Δ)  {} cm⁻¹", d.delta);
    println!("    B         {} cm⁻¹", opt(s.parameters.b));
    println!("    C         {} cm⁻¹", opt(s.parameters.c));
    println!("    C/B       {}", opt(d.c_over_b));
    match (d.beta, d.b0, &d.b0_source) {
        (Some(beta), Some(b0), Some(src)) => {
            println!("    β         {beta}   (B₀ = {b0:.0} cm⁻¹, {src})")
        }
        _ => println!("    β         — (no free-ion B₀)"),
    }
    println!("    Dq/B      {}", opt(d.dq_over_b));
    print!("    ground    {}, {}", s.ground, s.spin.state);
    if let (Some(x), Some(m)) = (s.spin.spin_change_delta_over_b, s.spin.margin) {
        print!(" (spin change at Δ/B = {x:.2}; margin {m:+.2})");
    }
    println!();
    println!(
        "    χ² = {:.3} with {} degrees of freedom",
        s.chi2, s.degrees_of_freedom
    );
    println!(
        "    {:>12} {:>12} {:>10}  state",
        "observed", "calculated", "residual"
    );
    for a in &s.assignment {
        println!(
            "    {:>12.0} {:>12.1} {:>10.1}  {}",
            a.observed, a.calculated, a.residual, a.state
        );
    }
}

/// The table a chemist reads: best solution, predictions, alternatives, warnings.
pub fn print_outcome(o: &FitOutcome) {
    println!(
        "best assignment{}:",
        if o.best.plausible {
            ""
        } else {
            " (fails a plausibility check)"
        }
    );
    print_solution(&o.best);
    println!("  predicted transitions from {}:", o.best.ground);
    for p in &o.best.predicted {
        let sigma = p.sigma.map_or(String::new(), |s| format!(" ± {s:.0}"));
        println!(
            "    {:>9.0}{sigma:<8} cm⁻¹  {:>7.1} nm  {:<10} {}{}",
            p.energy,
            1e7 / p.energy,
            p.state,
            if p.spin_allowed {
                "spin-allowed"
            } else {
                "spin-forbidden"
            },
            if p.observed { "  (observed)" } else { "" }
        );
    }
    for n in &o.best.notes {
        println!("  note: {n}");
    }
    for w in o.best.warnings.iter().chain(&o.warnings) {
        println!("  warning: {w}");
    }
    if let Some(j) = &o.jorgensen {
        let d = j.delta.map_or("—".into(), |v| format!("{v:.0} cm⁻¹"));
        let b = j.beta.map_or("—".into(), |v| format!("{v:.2}"));
        println!(
            "  Jørgensen estimate with {}: Δ ≈ {d}, β ≈ {b} ({})",
            j.ligand, j.source
        );
    }
    if !o.alternatives.is_empty() {
        println!("alternatives:");
        for a in o.alternatives.iter().take(5) {
            let states: Vec<&str> = a.assignment.iter().map(|x| x.state.as_str()).collect();
            println!(
                "    Δχ² = {:>8.2}  Δ = {:>6.0}  B = {:>5}  [{}]{}",
                a.delta_chi2,
                a.derived.delta.value,
                a.parameters
                    .b
                    .map_or("—".into(), |b| format!("{:.0}", b.value)),
                states.join(", "),
                a.warnings
                    .first()
                    .map_or(String::new(), |w| format!("  — {w}"))
            );
        }
    }
}
