//! `ddlens deconvolve FILE [--bands N|auto] [--shape gaussian] [--baseline auto]
//! [--range LO:HI] [--epsilon] [--max-iterations N]`: resolves overlapping bands.

use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::analysis::{self, AnalysisError, Source};
use ddlens::spectrum::Quantity;

const HEADER: &str = "\
ddlens deconvolve FILE [OPTIONS]

Fits a sum of bands plus a baseline to a spectrum file (delimited text or JCAMP-DX,
read as `ddlens import` reads it; the first spectrum of the file). Points are weighted
by their share of the wavenumber axis; saturated regions are left out.
";

pub(super) const FLAGS: [&Flag; 11] = [
    &flags::BANDS,
    &flags::SHAPE,
    &flags::BASELINE,
    &flags::RANGE,
    &flags::EPSILON,
    &flags::MAX_ITERATIONS_FLAG,
    &flags::CROP,
    &flags::SMOOTH,
    &flags::SUBTRACT_BASELINE,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "deconvolve")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    let file = super::one_file(&p, "deconvolve")?;
    let mut opts = super::band_fit_options(&p);
    if let Some(n) = p.max_iterations {
        opts.max_iterations = n;
    }
    let mut source = Source::default();
    if p.epsilon {
        source.import.y_quantity = Some(Quantity::MolarAbsorptivity);
    }
    let bytes = super::read_input(&file)?;
    let fail = |e: AnalysisError| CliError::Failed(format!("{}: {e}", super::args::shown(&file)));
    let raw = analysis::pick_spectrum(&bytes, &file, &source).map_err(fail)?;
    let (spectrum, cleaning) = ddlens::preprocess::apply_steps(&raw, &super::cleaning_steps(&p))
        .map_err(|e| fail(AnalysisError::Clean(e)))?;
    let mut result = analysis::deconvolve(&spectrum, &opts, &mut |_| true).map_err(fail)?;
    result
        .fit
        .warnings
        .splice(0..0, cleaning.into_iter().map(|w| w.message));
    if p.json {
        return json_text(&result);
    }
    let mut out = String::new();
    let (fit, bic) = (result.fit, result.bic_per_band_count);
    outln!(
        out,
        "{} points, {} bands, {}",
        fit.statistics.points,
        fit.bands.len(),
        fit.statistics.stopped
    );
    outln!(
        out,
        "{:>4} {:>18} {:>12} {:>16} {:>16} {:>16}",
        "band",
        "centre / cm⁻¹",
        "nm",
        "FWHM / cm⁻¹",
        "height",
        "area"
    );
    for (i, b) in fit.bands.iter().enumerate() {
        outln!(
            out,
            "{:>4} {:>18} {:>12.1} {:>16} {:>16} {:>16}",
            i + 1,
            b.centre.to_string(),
            b.centre_nm.value,
            b.fwhm.to_string(),
            b.height.to_string(),
            b.area.to_string()
        );
        if let (Some(f), Some(class)) = (b.oscillator_strength, &b.class) {
            outln!(
                out,
                "     f = {:.3e} ± {:.1e}   {class}",
                f.value,
                f.sigma.unwrap_or(0.0)
            );
        }
    }
    let s = &fit.statistics;
    outln!(
        out,
        "χ² = {:.6e}   reduced χ² = {}   R² = {}   BIC = {}",
        s.chi2,
        s.reduced_chi2.map_or("—".into(), |v| format!("{v:.4e}")),
        s.r2.map_or("—".into(), |v| format!("{v:.6}")),
        s.bic.map_or("—".into(), |v| format!("{v:.1}"))
    );
    if let Some(b) = bic {
        let list: Vec<String> = b.iter().map(|(n, v)| format!("{n}: {v:.1}")).collect();
        outln!(out, "BIC per band count: {}", list.join(", "));
    }
    for w in &fit.warnings {
        outln!(out, "warning: {w}");
    }
    Ok(out)
}
