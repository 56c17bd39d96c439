//! `ddlens analyze FILE --ion Cr3+ --geometry octahedral [--bands N|auto] …`
//! or `ddlens analyze --project P.json`: the whole analysis of a document
//! (`analysis::analyze`, the same function the browser calls).

use super::flags::{self, Flag};
use super::{json_text, outln, CliError};
use ddlens::analysis::{self, Document, Project, Source, SCHEMA};
use ddlens::estimate::Estimate;
use ddlens::lf_fit::global::GlobalFit;
use ddlens::lf_fit::Solution;

const HEADER: &str = "\
ddlens analyze FILE [OPTIONS]

Imports FILE, cleans it (--crop, --smooth, --subtract-baseline, in that order),
resolves its bands, assigns them and fits 10Dq, B (and C). With --project P.json
instead of FILE, recomputes every sample of a saved project with its own settings.
The outcome is printed as a sentence (JSON: top-level `outcome`, one of assigned,
no_dd_bands, no_spin_allowed_bands, underdetermined, and `outcome_text`).
With --global, the spectrum is also fitted with the ligand-field model itself
(band centres at the model's transition energies), started from the two-step
result; it is printed beside the two-step numbers (JSON: top-level `global`).
The exit code is 1 when the ligand-field fit fails (the bands are still reported),
and 0 in every outcome above.
";

pub(super) const FLAGS: [&Flag; 23] = [
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
    &flags::GLOBAL,
    &flags::BAND_FIX,
    &flags::B0_SOURCE,
    &flags::LIGAND,
    &flags::CROP,
    &flags::SMOOTH,
    &flags::SUBTRACT_BASELINE,
    &flags::SAVE_PROJECT,
    &flags::PROJECT,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "analyze")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    if let Some(path) = &p.project {
        return recompute(&p, path);
    }
    let file = super::one_file(&p, "analyze")?;
    let source = Source {
        spectrum: p.spectrum.unwrap_or(0),
        import: ddlens::spectrum::ImportOptions {
            x_unit: p.x_unit,
            ..Default::default()
        },
        ..Source::default()
    };
    let bytes = super::read_input(&file)?;
    let fail = |e: analysis::AnalysisError| {
        CliError::Failed(format!("{}: {e}", super::args::shown(&file)))
    };
    let mut doc =
        Document::import(&bytes, &file, source, super::band_fit_options(&p)).map_err(fail)?;
    doc.steps = super::cleaning_steps(&p);
    doc.ligand_field = Some(super::fit_request(&p)?.into());
    if let Some(lf) = doc.ligand_field.as_mut().filter(|_| p.global) {
        lf.global = Some(ddlens::lf_fit::global::GlobalOptions::default());
    }
    let mut doc = analysis::analyze(&doc, &mut |_| true).map_err(fail)?;
    if let Some(out) = &p.save_project {
        save(&doc, out)?;
    }
    if p.json {
        doc.sample.data = None;
        let text = json_text(&with_outcome(&doc)?)?;
        return match doc.results.as_ref().and_then(|r| r.fit_error.clone()) {
            Some(e) => Err(CliError::FitFailed(text, e)),
            None => Ok(text),
        };
    }
    report(&doc)
}

/// The document as JSON with its results' outcome and sentence, and the
/// global fit when there is one, copied to the top level (where `jq .outcome`
/// and `jq .global` find them; `results.fit.best` stays put).
fn with_outcome(doc: &Document) -> Result<serde_json::Value, CliError> {
    let mut v = serde_json::to_value(doc).map_err(|e| CliError::Failed(e.to_string()))?;
    if let (Some(map), Some(r)) = (v.as_object_mut(), doc.results.as_ref()) {
        let outcome = serde_json::to_value(r.outcome).unwrap_or_default();
        map.insert("outcome".into(), outcome);
        map.insert(
            "outcome_text".into(),
            serde_json::to_value(&r.outcome_text).unwrap_or_default(),
        );
        if let Some(g) = &r.global {
            map.insert(
                "global".into(),
                serde_json::to_value(g).map_err(|e| CliError::Failed(e.to_string()))?,
            );
        }
    }
    Ok(v)
}

/// Writes `doc` (with its data) as a one-sample project.
fn save(doc: &Document, path: &str) -> Result<(), CliError> {
    let project = Project {
        ddlens_project: SCHEMA,
        program: format!("ddlens {}", ddlens::VERSION),
        saved: None,
        samples: vec![doc.clone()],
        active: Some(0),
        page: analysis::PageState::default(),
    };
    std::fs::write(path, project.to_json() + "\n")
        .map_err(|e| CliError::Failed(format!("cannot write '{}': {e}", super::args::shown(path))))
}

/// `--project P.json`: every sample recomputed; the reports one after the
/// other, or `--json`: the documents as a list.
fn recompute(p: &flags::Parsed, path: &str) -> Result<String, CliError> {
    if !p.positionals.is_empty() {
        return Err(CliError::Usage(
            "give either a spectrum FILE or --project P.json, not both".into(),
        ));
    }
    let name = super::args::shown(path);
    let bytes = super::read_input(path)?;
    let text = String::from_utf8_lossy(&bytes);
    let (project, notices) =
        Project::from_json(&text).map_err(|e| CliError::Failed(format!("{name}: {e}")))?;
    let mut docs = Vec::new();
    for (i, d) in project.samples.iter().enumerate() {
        let mut done = analysis::analyze(d, &mut |_| true).map_err(|e| {
            CliError::Failed(format!("{name}: sample {} ({}): {e}", i + 1, d.sample.name))
        })?;
        if i == 0 {
            done.notices.splice(0..0, notices.iter().cloned());
        }
        docs.push(done);
    }
    let failed = docs
        .iter()
        .find_map(|d| d.results.as_ref()?.fit_error.clone())
        .filter(|_| docs.iter().any(|d| d.ligand_field.is_some()));
    let text = if p.json {
        for d in &mut docs {
            d.sample.data = None;
        }
        let docs: Result<Vec<_>, _> = docs.iter().map(with_outcome).collect();
        json_text(&docs?)?
    } else {
        let mut out = String::new();
        for d in &docs {
            out.push_str(&report(d).unwrap_or_else(|e| match e {
                CliError::FitFailed(text, _) => text,
                other => other.to_string(),
            }));
        }
        out
    };
    match failed {
        Some(e) => Err(CliError::FitFailed(text, e)),
        None => Ok(text),
    }
}

/// The text report of an analysed document.
fn report(doc: &Document) -> Result<String, CliError> {
    let Some(analysis) = &doc.results else {
        return Ok(String::new());
    };
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
    if let Some(n) = &analysis.noise {
        outln!(out, "noise σ ≈ {:.2e} ({})", n.sigma, n.method);
    }
    outln!(out, "bands ({}):", analysis.bands.fit.bands.len());
    for b in &analysis.bands.fit.bands {
        outln!(
            out,
            "    {:>18} cm⁻¹ ({:.1} nm)   FWHM {}   height {}{}",
            b.centre.to_string(),
            b.centre_nm.value,
            b.fwhm,
            b.height,
            if b.left_out.is_some() {
                "   (not assigned)"
            } else {
                ""
            }
        );
    }
    for w in doc
        .notices
        .iter()
        .chain(&analysis.warnings)
        .chain(&analysis.bands.fit.warnings)
    {
        outln!(out, "warning: {w}");
    }
    if let Some(text) = &analysis.outcome_text {
        outln!(out, "{text}");
    }
    match (&analysis.fit, &analysis.fit_error) {
        (Some(o), _) => {
            super::fit::print_outcome(&mut out, o);
            if let Some(g) = &analysis.global {
                print_global(&mut out, &o.best, g);
            }
        }
        (None, Some(e)) => {
            outln!(out, "no ligand-field fit: {e}");
            return Err(CliError::FitFailed(out, e.clone()));
        }
        (None, None) => {}
    }
    Ok(out)
}

/// A table cell: the estimate with its σ, "… (held)", or "—".
fn cell(e: Option<Estimate>) -> String {
    match e {
        None => "—".into(),
        Some(e) if !e.determined => format!("{} (held)", Estimate::exact(e.value)),
        Some(e) => e.to_string(),
    }
}

/// The global fit beside the two-step numbers, its bands at the model's
/// positions and its warnings (among them any disagreement beyond the
/// combined σ).
fn print_global(out: &mut String, two: &Solution, g: &GlobalFit) {
    outln!(
        out,
        "global fit (the spectrum fitted with the model; {} points, {} parameters, χ² = {:.4e}{}):",
        g.points,
        g.parameter_count,
        g.chi2,
        g.bic.map_or(String::new(), |b| format!(", BIC = {b:.1}"))
    );
    outln!(out, "    {:<10}{:>24}{:>24}", "", "two-step", "global fit");
    let (t, gd) = (&two.derived, &g.derived);
    let rows = [
        ("Dq", Some(two.parameters.dq), Some(g.parameters.dq)),
        ("10Dq (Δ)", Some(t.delta), Some(gd.delta)),
        ("B", two.parameters.b, g.parameters.b),
        ("C", two.parameters.c, g.parameters.c),
        ("C/B", t.c_over_b, gd.c_over_b),
        ("β", t.beta, gd.beta),
        ("Dq/B", t.dq_over_b, gd.dq_over_b),
    ];
    for (name, a, b) in rows {
        outln!(out, "    {name:<10}{:>24}{:>24}", cell(a), cell(b));
    }
    outln!(
        out,
        "  {} ({})",
        "bands at the model's positions",
        g.uncertainty
    );
    for b in &g.bands {
        outln!(
            out,
            "    {:>18} cm⁻¹   FWHM {}   height {}   {}",
            b.centre.to_string(),
            b.fwhm,
            b.height,
            b.state.as_deref().unwrap_or("(free centre, not assigned)")
        );
    }
    for h in &g.held {
        outln!(
            out,
            "  held: {} at {:.0} cm⁻¹ ({})",
            h.parameter,
            h.value,
            h.reason
        );
    }
    for w in &g.warnings {
        outln!(out, "  warning: {w}");
    }
}
