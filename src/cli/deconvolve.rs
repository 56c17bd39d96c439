//! `ddlens deconvolve FILE [--bands N|auto] [--shape gaussian] [--baseline auto]
//! [--range LO:HI] [--epsilon] [--max-iterations N]`: resolves overlapping bands.

use super::{Args, CliError};
use crate::analysis::{self, AnalysisError, AnalysisOptions};
use crate::bands::Shape;
use crate::spectrum::Quantity;

const HELP: &str = "\
ddlens deconvolve FILE [OPTIONS]

Fits a sum of bands plus a baseline to a spectrum file (delimited text or JCAMP-DX,
read as `ddlens import` reads it; the first spectrum of the file). Points are weighted
by their share of the wavenumber axis; saturated regions are left out.

OPTIONS:
    --bands N|auto     number of bands (default auto: chosen by BIC, up to 6)
    --shape S          gaussian (default), lorentzian, pseudo-voigt, voigt, skew-gaussian
    --baseline B       auto (default: linear or scattering, by BIC), none,
                       constant, linear, polynomial:N, scattering, ct-tail
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
    let count = super::band_count_option(args)?;
    let shape: Shape = match args.value("--shape")? {
        Some(s) => s.parse().map_err(CliError::Usage)?,
        None => Shape::Gaussian,
    };
    let baseline = super::baseline_option(args)?;
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
    let mut opts = AnalysisOptions {
        range: range.map(|(lo, hi)| [lo, hi]),
        bands: count,
        shape,
        baseline,
        max_iterations,
        ..AnalysisOptions::default()
    };
    if molar_absorptivity {
        opts.import.y_quantity = Some(Quantity::MolarAbsorptivity);
    }
    let fail = |e: AnalysisError| CliError::Failed(format!("{file}: {e}"));
    let spectrum = analysis::pick_spectrum(&bytes, &file, &opts).map_err(fail)?;
    let result = analysis::deconvolve(&spectrum, &opts, &mut |_| true).map_err(fail)?;
    if json {
        return super::print_json(&result);
    }
    let (fit, bic) = (result.fit, result.bic_per_band_count);
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
