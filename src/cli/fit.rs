//! `ddlens fit`: Dq, B (C = (C/B)·B) from observed band maxima, with the assignment search.

use super::{print_json, Args, CliError};
use crate::lf_fit::{fit, FitRequest, ObservedBand};
use crate::ligand_field::{parse_configuration, Geometry, LfError};

const HELP: &str = "\
ddlens fit — ligand-field parameters from band maxima

USAGE:
    ddlens fit --config d3 --geometry octahedral --band 17400 --band 24600[:σ]
               [--ion Cr3+] [--b0-source jolly|common] [--c-over-b 4.5 | --free-c] [--spin-forbidden] [--json]
";

fn parse_band(text: &str) -> Result<ObservedBand, CliError> {
    let mut parts = text.splitn(2, ':');
    let energy = super::args::parse_number("--band", parts.next().unwrap_or(""))?;
    let sigma = parts
        .next()
        .map(|s| super::args::parse_number("--band σ", s))
        .transpose()?;
    Ok(ObservedBand {
        energy,
        sigma,
        ..ObservedBand::default()
    })
}

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") {
        print!("{HELP}");
        return Ok(());
    }
    let config = args
        .value("--config")?
        .ok_or_else(|| CliError::Usage("--config is required (d1 … d9)".into()))?;
    let geometry: Geometry = args
        .value("--geometry")?
        .as_deref()
        .unwrap_or("octahedral")
        .parse()
        .map_err(|e: LfError| CliError::Usage(e.to_string()))?;
    let bands = args
        .values("--band")?
        .iter()
        .map(|b| parse_band(b))
        .collect::<Result<Vec<_>, _>>()?;
    let req = FitRequest {
        n: parse_configuration(&config).map_err(|e| CliError::Usage(e.to_string()))?,
        geometry,
        ion: args.value("--ion")?,
        bands,
        c_over_b: args.number("--c-over-b")?,
        free_c: args.flag("--free-c"),
        spin_forbidden: args.flag("--spin-forbidden"),
        b0_source: args.value("--b0-source")?,
    };
    args.finish()?;
    let outcome = fit(&req).map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        return print_json(&outcome);
    }
    let s = &outcome.best;
    println!(
        "ground {}; Δ = {} cm⁻¹, B = {} cm⁻¹, C = {} cm⁻¹",
        s.ground, s.derived.delta, s.parameters.b, s.parameters.c
    );
    if let (Some(beta), Some(b0), Some(src)) = (&s.derived.beta, s.derived.b0, &s.derived.b0_source)
    {
        println!("β = {beta} (B₀ = {b0} cm⁻¹, {src})");
    }
    for a in &s.assignment {
        println!(
            "  {:>9.0} → {:<10} calc {:>9.0}  residual {:>7.0}",
            a.observed, a.state, a.calculated, a.residual
        );
    }
    for p in &s.predicted {
        println!(
            "  predicted {:<10} {:>9.0} ± {:.0}",
            p.state,
            p.energy,
            p.sigma.unwrap_or(f64::NAN)
        );
    }
    for n in &s.notes {
        println!("note: {n}");
    }
    for w in &s.warnings {
        println!("warning: {w}");
    }
    Ok(())
}
