//! `ddlens diagram`: E/B against Δ/B at fixed C/B as JSON, CSV or SVG.

use super::{print_json, Args, CliError};
use crate::figures::diagram::{draw_diagram, DiagramStyle};
use crate::ligand_field::{diagram, parse_configuration};
use plotters::prelude::{IntoDrawingArea, SVGBackend};

const HELP: &str = "\
ddlens diagram — energy-level diagram of dⁿ (E/B against Δ/B, ground level at 0)

USAGE:
    ddlens diagram --config d6 --geometry octahedral --c-over-b 4.8 [--max 40] [--points 400]
                   [--svg FILE] [--csv FILE] [--json]
";

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") {
        print!("{HELP}");
        return Ok(());
    }
    let config = args
        .value("--config")?
        .ok_or_else(|| CliError::Usage("--config is required (d1 … d9)".into()))?;
    let geometry = super::geometry_option(args)?;
    let c_over_b = args.number("--c-over-b")?.unwrap_or(4.5);
    let max = args.number("--max")?.unwrap_or(40.0);
    let points = args.number("--points")?.unwrap_or(400.0);
    let svg = args.value("--svg")?;
    let csv = args.value("--csv")?;
    args.finish()?;
    if points.fract() != 0.0 || points < 0.0 {
        return Err(CliError::Usage(format!(
            "--points: '{points}' is not a whole number"
        )));
    }
    let n = parse_configuration(&config).map_err(|e| CliError::Usage(e.to_string()))?;
    let d = diagram(n, geometry, c_over_b, max, points as usize)
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if let Some(path) = &svg {
        let mut text = String::new();
        {
            let root = SVGBackend::with_string(&mut text, (900, 700)).into_drawing_area();
            draw_diagram(&root, &d, &DiagramStyle::default())
                .map_err(|e| CliError::Failed(e.to_string()))?;
        }
        std::fs::write(path, text)
            .map_err(|e| CliError::Failed(format!("could not write {path}: {e}")))?;
    }
    if let Some(path) = &csv {
        let mut text = String::from("delta_over_b");
        for c in &d.curves {
            text.push(',');
            text.push_str(&c.label);
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
        std::fs::write(path, text)
            .map_err(|e| CliError::Failed(format!("could not write {path}: {e}")))?;
    }
    if json {
        return print_json(&d);
    }
    println!(
        "d{n} {geometry}, C/B = {c_over_b}: {} curves, {} points from Δ/B = 0 to {max}",
        d.curves.len(),
        d.delta_over_b.len()
    );
    match d.spin_change {
        Some(x) => println!("ground-state spin changes at Δ/B = {x:.2}"),
        None => println!("no ground-state spin change up to Δ/B = 100"),
    }
    Ok(())
}
