//! `ddlens analyze FILE --ion Cr3+ --geometry octahedral [--bands N|auto] …`:
//! the whole pipeline (the same function the browser calls).

use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::pipeline;

const HEADER: &str = "\
ddlens analyze FILE [OPTIONS]

Imports FILE, resolves its bands, assigns them and fits 10Dq, B (and C).
The exit code is 1 when the ligand-field fit fails (the bands are still reported).
";

pub(super) const FLAGS: [&Flag; 17] = [
    &flags::ION,
    &flags::CONFIG,
    &flags::GEOMETRY,
    &flags::BANDS,
    &flags::SHAPE,
    &flags::BASELINE,
    &flags::RANGE,
    &flags::SPECTRUM,
    &flags::X_UNIT,
    &flags::C_OVER_B,
    &flags::FREE_C,
    &flags::SPIN_FORBIDDEN,
    &flags::BAND_FIX,
    &flags::B0_SOURCE,
    &flags::LIGAND,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "analyze")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    let file = super::one_file(&p, "analyze")?;
    let mut opts = super::band_fit_options(&p);
    opts.ligand_field = Some(super::fit_request(&p)?);
    opts.spectrum = p.spectrum.unwrap_or(0);
    opts.import.x_unit = p.x_unit;
    let bytes = super::read_input(&file)?;
    let analysis = pipeline::analyze_file(&bytes, &file, &opts)
        .map_err(|e| CliError::Failed(format!("{}: {e}", super::args::shown(&file))))?;
    if p.json {
        let text = json_text(&analysis)?;
        return match &analysis.fit_error {
            Some(e) => Err(CliError::FitFailed(text, e.clone())),
            None => Ok(text),
        };
    }
    let mut out = String::new();
    let i = &analysis.import;
    outln!(
        out,
        "{}: {} points, {:.0}–{:.0} cm⁻¹",
        i.name,
        i.points,
        i.x_range_cm[0],
        i.x_range_cm[1]
    );
    outln!(out, "bands ({}):", analysis.bands.fit.bands.len());
    for b in &analysis.bands.fit.bands {
        outln!(
            out,
            "    {:>18} cm⁻¹ ({:.1} nm)   FWHM {}   height {}",
            b.centre.to_string(),
            b.centre_nm.value,
            b.fwhm,
            b.height
        );
    }
    for w in analysis.warnings.iter().chain(&analysis.bands.fit.warnings) {
        outln!(out, "warning: {w}");
    }
    match (&analysis.fit, &analysis.fit_error) {
        (Some(o), _) => super::fit::print_outcome(&mut out, o),
        (None, Some(e)) => {
            outln!(out, "no ligand-field fit: {e}");
            return Err(CliError::FitFailed(out, e.clone()));
        }
        (None, None) => {}
    }
    Ok(out)
}
