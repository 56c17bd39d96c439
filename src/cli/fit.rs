//! `ddlens fit --config d3 --geometry octahedral --band 17400 --band 24600[:σ] …`:
//! ligand-field parameters from band maxima.

use super::flags::{self, Flag};
use super::{json_text, out, outln, CliError};
use ddlens::lf_fit::{self, FitOutcome, Solution};

const HEADER: &str = "\
ddlens fit [OPTIONS] --band E[:SIGMA] --band …

Finds the assignment of the bands and fits 10Dq, B (and C).
";

pub(super) const FLAGS: [&Flag; 13] = [
    &flags::CONFIG,
    &flags::ION,
    &flags::GEOMETRY,
    &flags::BAND,
    &flags::C_OVER_B,
    &flags::FREE_C,
    &flags::SPIN_FORBIDDEN,
    &flags::B0_SOURCE,
    &flags::LIGAND,
    &flags::OBSERVED_FROM,
    &flags::MAX_PREDICTION,
    &flags::JSON,
    &flags::HELP,
];

pub fn run(words: &[String]) -> Result<String, CliError> {
    let p = flags::parse(words, &FLAGS, "fit")?;
    if p.help {
        return Ok(flags::help(HEADER, &FLAGS));
    }
    super::no_positionals(&p)?;
    let mut req = super::fit_request(&p)?;
    req.max_prediction = p.max_prediction;
    req.observed_from = p.observed_from;
    let outcome = lf_fit::fit(&req).map_err(|e| CliError::Failed(e.to_string()))?;
    outcome
        .refuse_unfittable_c()
        .map_err(|e| CliError::Failed(e.to_string()))?;
    if p.json {
        return json_text(&outcome);
    }
    let mut out = String::new();
    print_outcome(&mut out, &outcome);
    Ok(out)
}

fn opt(e: Option<ddlens::estimate::Estimate>) -> String {
    e.map_or("—".into(), |v| v.to_string())
}

fn print_solution(out: &mut String, s: &Solution) {
    let d = &s.derived;
    outln!(out, "    10Dq (Δ)  {} cm⁻¹", d.delta);
    outln!(out, "    B         {} cm⁻¹", opt(s.parameters.b));
    outln!(out, "    C         {} cm⁻¹", opt(s.parameters.c));
    outln!(out, "    C/B       {}", opt(d.c_over_b));
    if let (Some(beta), Some(b0), Some(src)) = (d.beta, d.b0, &d.b0_source) {
        outln!(out, "    β         {beta}   (B₀ = {b0:.0} cm⁻¹, {src})");
    } else {
        outln!(out, "    β         — (no free-ion B₀)");
    }
    outln!(out, "    Dq/B      {}", opt(d.dq_over_b));
    out!(out, "    ground    {}, {}", s.ground, s.spin.state);
    if let (Some(x), Some(m)) = (s.spin.spin_change_delta_over_b, s.spin.margin) {
        out!(out, " (spin change at Δ/B = {x:.2}; margin {m:+.2})");
    }
    outln!(out);
    outln!(
        out,
        "    χ² = {:.3} with {} degrees of freedom",
        s.chi2,
        s.degrees_of_freedom
    );
    outln!(
        out,
        "    {:>12} {:>12} {:>10}  state",
        "observed",
        "calculated",
        "residual"
    );
    for a in &s.assignment {
        outln!(
            out,
            "    {:>12.0} {:>12.1} {:>10.1}  {}",
            a.observed,
            a.calculated,
            a.residual,
            a.state
        );
    }
}

/// The table a chemist reads: best solution, predictions, alternatives, warnings.
pub fn print_outcome(out: &mut String, o: &FitOutcome) {
    outln!(
        out,
        "best assignment{}:",
        if o.best.plausible {
            ""
        } else {
            " (fails a plausibility check)"
        }
    );
    print_solution(out, &o.best);
    outln!(out, "  predicted transitions from {}:", o.best.ground);
    for p in &o.best.predicted {
        // σ to two digits and the energy to match (`Estimate`'s one rule).
        let energy = p.sigma.map_or(format!("{:.0}", p.energy), |s| {
            ddlens::estimate::Estimate::new(p.energy, s).to_string()
        });
        outln!(
            out,
            "    {energy:>17} cm⁻¹  {:>7.1} nm  {:<10} {}{}",
            1e7 / p.energy,
            p.state,
            if p.spin_allowed {
                "spin-allowed"
            } else {
                "spin-forbidden"
            },
            if p.observed { "  (observed)" } else { "" }
        );
    }
    for n in &o.best.notes {
        outln!(out, "  note: {n}");
    }
    for w in o.best.warnings.iter().chain(&o.warnings) {
        outln!(out, "  warning: {w}");
    }
    if let Some(j) = &o.jorgensen {
        let d = j.delta.map_or("—".into(), |v| format!("{v:.0} cm⁻¹"));
        let b = j.beta.map_or("—".into(), |v| format!("{v:.2}"));
        outln!(
            out,
            "  Jørgensen estimate with {}: Δ ≈ {d}, β ≈ {b} ({})",
            j.ligand,
            j.source
        );
    }
    if !o.alternatives.is_empty() {
        outln!(out, "alternatives:");
        for a in o.alternatives.iter().take(5) {
            let states: Vec<&str> = a.assignment.iter().map(|x| x.state.as_str()).collect();
            outln!(
                out,
                "    Δχ² = {:>8.2}  Δ = {:>6.0}  B = {:>5}  [{}]{}",
                a.delta_chi2,
                a.derived.delta.value,
                a.parameters
                    .b
                    .map_or("—".into(), |b| format!("{:.0}", b.value)),
                states.join(", "),
                a.warnings
                    .first()
                    .map_or(String::new(), |w| format!("  — {w}"))
            );
        }
    }
}
