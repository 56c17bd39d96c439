//! `ddlens levels`: the energy levels of dⁿ for given Dq, B, C.
//!
//! `--dump-ck` prints the angular coefficients c^k(m, m′) instead (used by the
//! SymPy reference check, tests/reference/check_angular.py).

use super::{print_json, Args, CliError};
use crate::ligand_field::{ck, model, parse_configuration, Params};
use serde_json::json;

const HELP: &str = "\
ddlens levels — energy levels of a dⁿ ion in a cubic field

USAGE:
    ddlens levels --config d3 --geometry octahedral --dq 1740 --b 725 --c 3263 [--json]

OPTIONS:
    --config dN       d1 … d9
    --geometry G      octahedral (oh) or tetrahedral (td); default octahedral
    --dq, --b, --c    Dq, Racah B and C in cm⁻¹ (B, C ≥ 0; |Dq| ≤ 100000;
                      tetrahedral Dq is the ion's own Dq, Δt = 10Dq)
";

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") {
        print!("{HELP}");
        return Ok(());
    }
    if args.flag("--dump-ck") {
        args.finish()?;
        return dump_ck(json);
    }
    let config = args
        .value("--config")?
        .ok_or_else(|| CliError::Usage("--config is required (d1 … d9)".into()))?;
    let geometry = super::geometry_option(args)?;
    let params = Params {
        dq: args.required_number("--dq")?,
        b: args.required_number("--b")?,
        c: args.required_number("--c")?,
    };
    args.finish()?;
    let n = parse_configuration(&config).map_err(|e| CliError::Usage(e.to_string()))?;
    let levels = model(n, geometry)
        .and_then(|m| m.levels(&params))
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        return print_json(&json!({
            "config": format!("d{n}"),
            "geometry": geometry,
            "parameters": params,
            "levels": levels,
        }));
    }
    println!(
        "d{n} {geometry}, Dq = {} cm⁻¹, B = {} cm⁻¹, C = {} cm⁻¹ (C/B = {:.3})",
        params.dq,
        params.b,
        params.c,
        if params.b > 0.0 {
            params.c / params.b
        } else {
            f64::NAN
        }
    );
    println!(
        "{:>12}  {:<10} {:>4}  {:<6} {:<16} {:>6}",
        "E / cm⁻¹", "level", "deg", "parent", "configuration", "weight"
    );
    for level in &levels {
        println!(
            "{:>12.2}  {:<10} {:>4}  {:<6} {:<16} {:>6.3}",
            level.energy,
            level.label,
            level.degeneracy,
            level.parent,
            level.configuration,
            level.weight
        );
    }
    Ok(())
}

fn dump_ck(json: bool) -> Result<(), CliError> {
    let mut rows = Vec::new();
    for k in [0, 2, 4] {
        for m in -2..=2 {
            for m_prime in -2..=2 {
                rows.push(
                    json!({ "k": k, "m": m, "m_prime": m_prime, "value": ck(k, m, m_prime) }),
                );
            }
        }
    }
    if json {
        print_json(&json!({ "ck": rows }))
    } else {
        for r in &rows {
            println!(
                "c^{}({}, {}) = {}",
                r["k"], r["m"], r["m_prime"], r["value"]
            );
        }
        Ok(())
    }
}
