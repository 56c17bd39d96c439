//! `ddlens levels`: the energy levels of dⁿ for given Dq, B, C, in a cubic,
//! tetragonal, trigonal or angular-overlap field, with optional spin–orbit ζ.
//!
//! `--dump-ck` prints the angular coefficients c^k(m, m′) instead (used by the
//! SymPy reference check, tests/reference/check_angular.py).

use super::args::num;
use super::flags::SiteGeometry;
use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::ligand_field::{ck, field::parse_ligands, model, site_levels, Geometry, Params, Site};
use serde_json::json;

const HEADER: &str = "\
ddlens levels — energy levels of a dⁿ ion in a cubic field

USAGE:
    ddlens levels --config d3 --geometry octahedral --dq 1740 --b 725 --c 3263 [--zeta Z] [--json]
    ddlens levels --config d1 --geometry tetragonal --dq 1500 --ds 400 --dt 100 --b 0 --c 0
    ddlens levels --config d3 --geometry trigonal --dq 1700 --dsigma 300 --dtau 50 --b 700 --c 3000
    ddlens levels --config d8 --ligands ligands.csv --b 900 --c 3800 [--zeta 649]
";

pub(super) const FLAGS: [&Flag; 14] = [
    &flags::CONFIG,
    &flags::SITE_GEOMETRY,
    &flags::DQ,
    &flags::DS,
    &flags::DT,
    &flags::DSIGMA,
    &flags::DTAU,
    &flags::LIGANDS,
    &flags::ZETA,
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
    let site = site(&p)?;
    let zeta = p.zeta.unwrap_or(0.0);
    let (b, c) = (required(p.b, "--b")?, required(p.c, "--c")?);
    let geometry = match site {
        Site::Cubic { geometry, .. } if zeta == 0.0 => geometry,
        _ => return site_table(n, &site, b, c, zeta, json),
    };
    let params = Params {
        dq: required(p.dq, "--dq")?,
        b,
        c,
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

/// The site from --ligands or --geometry with its field parameters.
fn site(p: &flags::Parsed) -> Result<Site, CliError> {
    let usage = |text: &str| CliError::Usage(text.to_string());
    let dq = || p.dq.ok_or_else(|| usage("--dq is required"));
    let unused = |given: bool, what: &str| {
        if given {
            Err(CliError::Usage(format!(
                "{what} do not apply to this geometry"
            )))
        } else {
            Ok(())
        }
    };
    let axial = p.ds.is_some() || p.dt.is_some();
    let trigonal = p.dsigma.is_some() || p.dtau.is_some();
    if let Some(path) = &p.ligands {
        if p.site_geometry.is_some() || p.dq.is_some() || axial || trigonal {
            return Err(usage(
                "--ligands defines the whole field: give it without --geometry, --dq, --ds, --dt, --dsigma or --dtau",
            ));
        }
        let bytes = super::read_input(path)?;
        let ligands = parse_ligands(&String::from_utf8_lossy(&bytes))
            .map_err(|e| CliError::Failed(e.to_string()))?;
        return Ok(Site::Ligands { ligands });
    }
    match p
        .site_geometry
        .unwrap_or(SiteGeometry::Cubic(Geometry::Octahedral))
    {
        SiteGeometry::Cubic(geometry) => {
            unused(axial || trigonal, "--ds, --dt, --dsigma and --dtau")?;
            Ok(Site::Cubic {
                geometry,
                dq: dq()?,
            })
        }
        SiteGeometry::Tetragonal => {
            unused(trigonal, "--dsigma and --dtau")?;
            Ok(Site::Tetragonal {
                dq: dq()?,
                ds: p.ds.unwrap_or(0.0),
                dt: p.dt.unwrap_or(0.0),
            })
        }
        SiteGeometry::Trigonal => {
            unused(axial, "--ds and --dt")?;
            Ok(Site::Trigonal {
                dq: dq()?,
                dsigma: p.dsigma.unwrap_or(0.0),
                dtau: p.dtau.unwrap_or(0.0),
            })
        }
    }
}

/// Levels of a low-symmetry site or with spin–orbit coupling.
fn site_table(
    n: u8,
    site: &Site,
    b: f64,
    c: f64,
    zeta: f64,
    json: bool,
) -> Result<String, CliError> {
    let levels = site_levels(n, site, b, c, zeta).map_err(|e| CliError::Failed(e.to_string()))?;
    if json {
        return json_text(&json!({
            "config": format!("d{n}"),
            "site": site,
            "parameters": { "b": b, "c": c, "zeta": zeta },
            "levels": levels,
        }));
    }
    let mut out = String::new();
    outln!(
        out,
        "d{n}, B = {} cm⁻¹, C = {} cm⁻¹, ζ = {} cm⁻¹",
        num(b),
        num(c),
        num(zeta)
    );
    outln!(
        out,
        "{:>12}  {:<10} {:>4}  {:<5} {:<12} {:>6}",
        "E / cm⁻¹",
        "level",
        "deg",
        "2S+1",
        "parent",
        "weight"
    );
    for level in &levels {
        let multiplicity = level
            .multiplicity
            .map_or_else(|| "—".to_string(), |m| m.to_string());
        outln!(
            out,
            "{:>12.2}  {:<10} {:>4}  {:<5} {:<12} {:>6.3}",
            level.energy,
            level.label,
            level.degeneracy,
            multiplicity,
            level.parent,
            level.parent_weight
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
