//! `ddlens analyze FILE --ion Cr3+ --geometry octahedral [--bands N|auto] …`:
//! the whole pipeline (the same function the browser calls).

use super::{Args, CliError};
use crate::analysis::{self, AnalysisOptions};
use crate::spectrum::XUnit;

const HELP: &str = "\
ddlens analyze FILE [OPTIONS]

Imports FILE, resolves its bands, assigns them and fits 10Dq, B (and C).

OPTIONS:
    --ion ION            the metal ion, e.g. Cr3+ or Ni(II) (gives dⁿ and B₀ for β)
    --config dN          the configuration when no ion is given
    --geometry G         octahedral (default) or tetrahedral
    --bands N|auto       number of bands (default auto: chosen by BIC, up to 6)
    --shape S            gaussian (default), lorentzian, pseudo-voigt, voigt, skew-gaussian
    --baseline B         auto (default: linear or scattering, by BIC), none,
                         constant, linear, polynomial:N, scattering, ct-tail
    --range LO:HI        use only LO–HI cm⁻¹
    --spectrum K         the K-th spectrum of the file (default 1)
    --x-unit U           override the x unit: nm, um, cm-1, ev
    --c-over-b G         hold C/B at G (default: the ion's free-ion C₀/B₀, else 4.5)
    --free-c             fit C too (needs three or more bands)
    --spin-forbidden     consider spin-forbidden transitions
    --band E:STATE       fix the band found nearest E cm⁻¹ (within 3 %) to STATE (e.g. 23300:4T1g(P));
                         `--band 23300:x` marks it as not d–d (repeatable)
    --b0-source NAME     free-ion table for β: common or jolly
    --ligand L           the ligand (e.g. H2O, NH3, Cl-) for Jørgensen's estimates
    --json               machine-readable output
";

pub fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    if args.flag("--help") || args.flag("-h") {
        print!("{HELP}");
        return Ok(());
    }
    let mut opts = AnalysisOptions {
        ligand_field: Some(super::fit_request_options(args)?),
        ..AnalysisOptions::default()
    };
    opts.bands = super::band_count_option(args)?;
    if let Some(s) = args.value("--shape")? {
        opts.shape = s.parse().map_err(CliError::Usage)?;
    }
    opts.baseline = super::baseline_option(args)?;
    if let Some(r) = args.value("--range")? {
        let bad = || CliError::Usage(format!("--range: '{r}' should be LO:HI in cm⁻¹"));
        let (a, b) = r.split_once(':').ok_or_else(bad)?;
        let (lo, hi) = (
            super::args::parse_number("--range", a)?,
            super::args::parse_number("--range", b)?,
        );
        if lo >= hi {
            return Err(bad());
        }
        opts.range = Some([lo, hi]);
    }
    if let Some(k) = args.number("--spectrum")? {
        if k < 1.0 || k.fract() != 0.0 {
            return Err(CliError::Usage("--spectrum counts from 1".into()));
        }
        opts.spectrum = k as usize - 1;
    }
    if let Some(u) = args.value("--x-unit")? {
        opts.import.x_unit = Some(match u.to_ascii_lowercase().as_str() {
            "nm" => XUnit::Nanometre,
            "um" | "µm" | "micrometre" => XUnit::Micrometre,
            "cm-1" | "1/cm" | "wavenumber" => XUnit::Wavenumber,
            "ev" => XUnit::ElectronVolt,
            _ => {
                return Err(CliError::Usage(format!(
                    "--x-unit: '{u}' is not nm, um, cm-1 or ev"
                )))
            }
        });
    }
    if let Some(lf) = opts.ligand_field.as_mut() {
        lf.bands = args
            .values("--band")?
            .iter()
            .map(|b| super::fit::parse_band(b))
            .collect::<Result<Vec<_>, _>>()?;
    }
    let file = args
        .next_positional()
        .ok_or_else(|| CliError::Usage("analyze needs a spectrum FILE".into()))?;
    args.finish()?;
    let bytes =
        std::fs::read(&file).map_err(|e| CliError::Failed(format!("cannot read {file}: {e}")))?;
    let analysis = analysis::analyze_file(&bytes, &file, &opts)
        .map_err(|e| CliError::Failed(format!("{file}: {e}")))?;
    if json {
        return super::print_json(&analysis);
    }
    let i = &analysis.import;
    println!(
        "{}: {} points, {:.0}–{:.0} cm⁻¹",
        i.name, i.points, i.x_range_cm[0], i.x_range_cm[1]
    );
    println!("bands ({}):", analysis.bands.fit.bands.len());
    for b in &analysis.bands.fit.bands {
        println!(
            "    {:>18} cm⁻¹ ({:.1} nm)   FWHM {}   height {}",
            b.centre.to_string(),
            b.centre_nm.value,
            b.fwhm,
            b.height
        );
    }
    for w in analysis.warnings.iter().chain(&analysis.bands.fit.warnings) {
        println!("warning: {w}");
    }
    match (&analysis.fit, &analysis.fit_error) {
        (Some(o), _) => super::fit::print_outcome(o),
        (None, Some(e)) => println!("no ligand-field fit: {e}"),
        (None, None) => {}
    }
    Ok(())
}
