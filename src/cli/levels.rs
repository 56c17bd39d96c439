//! `ddlens levels`: the energy levels of dⁿ for given Dq, B, C.
//!
//! `--dump-ck` prints the angular coefficients c^k(m, m′) instead (used by the
//! SymPy reference check, tests/reference/check_angular.py).

use super::args::num;
use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::ligand_field::{ck, model, Geometry, Params};
use serde_json::json;

const HEADER: &str = "\
ddlens levels — energy levels of a dⁿ ion in a cubic field

USAGE:
    ddlens levels --config d3 --geometry octahedral --dq 1740 --b 725 --c 3263 [--json]
";

pub(super) const FLAGS: [&Flag; 8] = [
    &flags::CONFIG,
    &flags::GEOMETRY,
    &flags::DQ,
    &flags::B,
    &flags::C,
    &flags::DUMP_CK,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "levels")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    super::no_positionals(&p)?;
    let json = p.json;
    if p.dump_ck {
        return dump_ck(json);
    }
    let required = |v: Option<f64>, name: &str| {
        v.ok_or_else(|| CliError::Usage(format!("{name} is required")))
    };
    let n = p
        .config
        .ok_or_else(|| CliError::Usage("--config is required (d1 … d9)".into()))?;
    let geometry = p.geometry.unwrap_or(Geometry::Octahedral);
    let params = Params {
        dq: required(p.dq, "--dq")?,
        b: required(p.b, "--b")?,
        c: required(p.c, "--c")?,
    };
    let mut out = String::new();
    let levels = model(n, geometry)
        .and_then(|m| m.levels(&params))
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        return json_text(&json!({
            "config": format!("d{n}"),
            "geometry": geometry,
            "parameters": params,
            "levels": levels,
        }));
    }
    outln!(
        out,
        "d{n} {geometry}, Dq = {} cm⁻¹, B = {} cm⁻¹, C = {} cm⁻¹ (C/B = {})",
        num(params.dq),
        num(params.b),
        num(params.c),
        match params.c / params.b {
            r if params.b > 0.0 && r < 1e6 => format!("{r:.3}"),
            r if params.b > 0.0 => num(r),
            _ => "—".into(),
        }
    );
    outln!(
        out,
        "{:>12}  {:<10} {:>4}  {:<6} {:<16} {:>6}",
        "E / cm⁻¹",
        "level",
        "deg",
        "parent",
        "configuration",
        "weight"
    );
    for level in &levels {
        outln!(
            out,
            "{:>12.2}  {:<10} {:>4}  {:<6} {:<16} {:>6.3}",
            level.energy,
            level.label,
            level.degeneracy,
            level.parent,
            level.configuration,
            level.weight
        );
    }
    Ok(out)
}

fn dump_ck(json: bool) -> Result<String, CliError> {
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
        json_text(&json!({ "ck": rows }))
    } else {
        let mut out = String::new();
        for r in &rows {
            outln!(
                out,
                "c^{}({}, {}) = {}",
                r["k"],
                r["m"],
                r["m_prime"],
                r["value"]
            );
        }
        Ok(out)
    }
}
