//! `ddlens deconvolve FILE [--bands N|auto] [--shape gaussian] [--baseline linear]
//! [--range LO:HI] [--epsilon] [--max-iterations N]`: resolves overlapping bands.

use super::{Args, CliError};
use crate::bands::{self, BandModel, BaselineModel, FitOptions, Shape};

const HELP: &str = "\
ddlens deconvolve FILE [OPTIONS]

Fits a sum of bands plus a baseline to a two-column spectrum (x y).
x in cm⁻¹, or in nm when every x is below 3000.

OPTIONS:
    --bands N|auto     number of bands (default auto: chosen by BIC, up to 6)
    --shape S          gaussian (default), lorentzian, pseudo-voigt, voigt, skew-gaussian
    --baseline B       none, constant, linear (default), polynomial:N, scattering, ct-tail
    --range LO:HI      fit only LO–HI cm⁻¹
    --epsilon          y is ε in L mol⁻¹ cm⁻¹: report oscillator strengths and classes
    --max-iterations N solver iteration limit (default 200)
    --json             machine-readable output
";

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") || args.flag("-h") {
        print!("{HELP}");
        return Ok(());
    }
    let bands_opt = args.value("--bands")?;
    let shape: Shape = match args.value("--shape")? {
        Some(s) => s.parse().map_err(CliError::Usage)?,
        None => Shape::Gaussian,
    };
    let baseline: BaselineModel = match args.value("--baseline")? {
        Some(s) => s.parse().map_err(CliError::Usage)?,
        None => BaselineModel::Linear,
    };
    let range = match args.value("--range")? {
        Some(r) => Some(parse_range(&r)?),
        None => None,
    };
    let molar_absorptivity = args.flag("--epsilon");
    let max_iterations = match args.number("--max-iterations")? {
        Some(v) if (1.0..=1e6).contains(&v) => v as usize,
        Some(_) => {
            return Err(CliError::Usage(
                "--max-iterations must be between 1 and 1000000".into(),
            ))
        }
        None => 200,
    };
    let file = args
        .next_positional()
        .ok_or_else(|| CliError::Usage("deconvolve needs a spectrum FILE".into()))?;
    args.finish()?;
    let bytes =
        std::fs::read(&file).map_err(|e| CliError::Failed(format!("cannot read {file}: {e}")))?;
    let (mut x, mut y) = read_two_columns(&String::from_utf8_lossy(&bytes))?;
    if let Some((lo, hi)) = range {
        let keep: Vec<bool> = x.iter().map(|&v| v >= lo && v <= hi).collect();
        x = x.iter().zip(&keep).filter(|p| *p.1).map(|p| *p.0).collect();
        y = y.iter().zip(&keep).filter(|p| *p.1).map(|p| *p.0).collect();
    }
    let opts = FitOptions {
        max_iterations,
        molar_absorptivity,
        ..FitOptions::default()
    };
    let fail = |e: bands::BandFitError| CliError::Failed(e.to_string());
    let (fit, bic) = match bands_opt.as_deref() {
        None | Some("auto") => {
            let report =
                bands::select_band_count(&x, &y, None, 6, shape, baseline, &opts).map_err(fail)?;
            (report.best, Some(report.bic))
        }
        Some(text) => {
            let n: usize = text
                .parse()
                .ok()
                .filter(|n| (1..=30).contains(n))
                .ok_or_else(|| {
                    CliError::Usage(format!(
                        "--bands: '{text}' is not a number from 1 to 30 or 'auto'"
                    ))
                })?;
            let mut specs = bands::guess(&x, &y, Some(n));
            if specs.is_empty() {
                return Err(CliError::Failed(format!(
                    "{} data points are too few to place bands",
                    x.len()
                )));
            }
            specs.iter_mut().for_each(|b| b.shape = shape);
            let model = BandModel {
                bands: specs,
                baseline,
                ties: Vec::new(),
            };
            (
                bands::fit(&x, &y, None, &model, &opts, &mut |_| true).map_err(fail)?,
                None,
            )
        }
    };
    if json {
        let mut doc = serde_json::to_value(&fit).map_err(|e| CliError::Failed(e.to_string()))?;
        if let (Some(b), Some(obj)) = (bic, doc.as_object_mut()) {
            obj.insert("bic_per_band_count".into(), serde_json::json!(b));
        }
        return super::print_json(&doc);
    }
    println!(
        "{} points, {} bands, {}",
        fit.statistics.points,
        fit.bands.len(),
        fit.statistics.stopped
    );
    println!(
        "{:>4} {:>18} {:>12} {:>16} {:>16} {:>16}",
        "band", "centre / cm⁻¹", "nm", "FWHM / cm⁻¹", "height", "area"
    );
    for (i, b) in fit.bands.iter().enumerate() {
        println!(
            "{:>4} {:>18} {:>12.1} {:>16} {:>16} {:>16}",
            i + 1,
            b.centre.to_string(),
            b.centre_nm.value,
            b.fwhm.to_string(),
            b.height.to_string(),
            b.area.to_string()
        );
        if let (Some(f), Some(class)) = (b.oscillator_strength, &b.class) {
            println!(
                "     f = {:.3e} ± {:.1e}   {class}",
                f.value,
                f.sigma.unwrap_or(0.0)
            );
        }
    }
    let s = &fit.statistics;
    println!(
        "χ² = {:.6e}   reduced χ² = {}   R² = {}   BIC = {}",
        s.chi2,
        s.reduced_chi2.map_or("—".into(), |v| format!("{v:.4e}")),
        s.r2.map_or("—".into(), |v| format!("{v:.6}")),
        s.bic.map_or("—".into(), |v| format!("{v:.1}"))
    );
    if let Some(b) = bic {
        let list: Vec<String> = b.iter().map(|(n, v)| format!("{n}: {v:.1}")).collect();
        println!("BIC per band count: {}", list.join(", "));
    }
    for w in &fit.warnings {
        println!("warning: {w}");
    }
    Ok(())
}

fn parse_range(text: &str) -> Result<(f64, f64), CliError> {
    let bad = || {
        CliError::Usage(format!(
            "--range: '{text}' should be LO:HI in cm⁻¹, e.g. 8000:30000"
        ))
    };
    let (a, b) = text.split_once(':').ok_or_else(bad)?;
    let lo: f64 = a.trim().parse().map_err(|_| bad())?;
    let hi: f64 = b.trim().parse().map_err(|_| bad())?;
    if !(lo.is_finite() && hi.is_finite() && lo < hi) {
        return Err(bad());
    }
    Ok((lo, hi))
}

// TODO(lead): replace with crate::spectrum::import
/// Minimal reader: lines of two numbers (comma, tab, semicolon or spaces);
/// lines starting with '#' and text header lines before the data are skipped.
/// x is taken as nm when every x is below 3000 and converted to cm⁻¹.
fn read_two_columns(text: &str) -> Result<(Vec<f64>, Vec<f64>), CliError> {
    let mut pts = Vec::new();
    for (n, line) in text.lines().enumerate() {
        let t = line.trim();
        if t.is_empty() || t.starts_with('#') {
            continue;
        }
        let words: Vec<&str> = t
            .split(|c: char| c == ',' || c == ';' || c.is_whitespace())
            .filter(|w| !w.is_empty())
            .collect();
        let nums: Vec<Option<f64>> = words.iter().take(2).map(|w| w.parse().ok()).collect();
        match nums.as_slice() {
            [Some(a), Some(b)] if a.is_finite() && b.is_finite() => pts.push((*a, *b)),
            [Some(_), Some(_)] => {
                return Err(CliError::Failed(format!(
                    "line {}: NaN or infinity is not a usable value",
                    n + 1
                )))
            }
            _ if pts.is_empty() => continue,
            _ => {
                return Err(CliError::Failed(format!(
                    "line {}: expected two numbers, found '{t}'",
                    n + 1
                )))
            }
        }
    }
    if pts.is_empty() {
        return Err(CliError::Failed(
            "no data lines with two numbers were found".into(),
        ));
    }
    if pts.iter().all(|p| p.0 > 0.0 && p.0 < 3000.0) {
        pts.iter_mut().for_each(|p| p.0 = 1e7 / p.0);
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    Ok(pts.into_iter().unzip())
}
