//! `ddlens diagram`: E/B against Δ/B at fixed C/B as JSON, CSV or SVG.

use super::args::num;
use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::figures::diagram::{draw_diagram, DiagramStyle};
use ddlens::ligand_field::{diagram, Geometry};
use plotters::prelude::{IntoDrawingArea, SVGBackend};

const HEADER: &str = "\
ddlens diagram — energy-level diagram of dⁿ (E/B against Δ/B, ground level at 0)

USAGE:
    ddlens diagram --config d6 --geometry octahedral --c-over-b 4.8 [--max 40] [--points 400]
                   [--svg FILE] [--csv FILE] [--json]
";

pub(super) const FLAGS: [&Flag; 9] = [
    &flags::CONFIG,
    &flags::GEOMETRY,
    &flags::C_OVER_B,
    &flags::MAX,
    &flags::POINTS,
    &flags::SVG,
    &flags::CSV,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "diagram")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    super::no_positionals(&p)?;
    let n = p
        .config
        .ok_or_else(|| CliError::Usage("--config is required (d1 … d9)".into()))?;
    let geometry = p.geometry.unwrap_or(Geometry::Octahedral);
    let c_over_b = p.c_over_b.unwrap_or(4.5);
    let max = p.max.unwrap_or(40.0);
    let points = p.points.unwrap_or(400);
    let (svg, csv) = (&p.svg, &p.csv);
    let d =
        diagram(n, geometry, c_over_b, max, points).map_err(|e| CliError::Failed(e.to_string()))?;
    if let Some(path) = &svg {
        let mut text = String::new();
        {
            let root = SVGBackend::with_string(&mut text, (900, 700)).into_drawing_area();
            draw_diagram(&root, &d, &DiagramStyle::default())
                .map_err(|e| CliError::Failed(e.to_string()))?;
        }
        std::fs::write(path, text).map_err(|e| {
            CliError::Failed(format!("could not write {}: {e}", super::args::shown(path)))
        })?;
    }
    if let Some(path) = &csv {
        let mut text = String::from("delta_over_b");
        for c in &d.curves {
            text.push(',');
            text.push_str(&ddlens::spectrum::csv::text_cell(&c.label));
        }
        text.push('\n');
        for (i, x) in d.delta_over_b.iter().enumerate() {
            text.push_str(&x.to_string());
            for c in &d.curves {
                text.push(',');
                text.push_str(
                    &c.energy_over_b
                        .get(i)
                        .map_or(String::new(), |v| format!("{v:.6}")),
                );
            }
            text.push('\n');
        }
        std::fs::write(path, text).map_err(|e| {
            CliError::Failed(format!("could not write {}: {e}", super::args::shown(path)))
        })?;
    }
    if p.json {
        return json_text(&d);
    }
    let mut out = String::new();
    outln!(
        out,
        "d{n} {geometry}, C/B = {}: {} curves, {} points from Δ/B = 0 to {}",
        num(c_over_b),
        d.curves.len(),
        d.delta_over_b.len(),
        num(max)
    );
    if let Some(x) = d.spin_change {
        outln!(out, "ground-state spin changes at Δ/B = {x:.2}");
    } else {
        outln!(out, "no ground-state spin change up to Δ/B = 100");
    }
    Ok(out)
}
