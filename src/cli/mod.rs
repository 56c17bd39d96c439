//! The command-line face of every engine.
//!
//! Each subcommand lives in its own file and prints either a table for a
//! chemist or, with `--json`, the same serde types the browser facade returns.
//! This module only parses arguments and dispatches; it holds no science.

mod analyze;
mod args;
mod deconvolve;
mod diagram;
mod fit;
mod import;
mod levels;

pub use args::{Args, CliError};

const HELP: &str = "\
ddlens — ligand-field analysis of d–d absorption spectra

USAGE:
    ddlens <COMMAND> [OPTIONS]

COMMANDS:
    levels      energy levels of a dⁿ ion for given Dq, B, C
    diagram     energy-level (Tanabe–Sugano type) diagram as SVG, CSV or JSON
    fit         10Dq, B, C from observed band maxima, with the assignment search
    import      read a spectrum file (CSV/TXT, JCAMP-DX) and report what was found
    deconvolve  resolve overlapping bands of a spectrum
    analyze     the whole pipeline: import, bands, assignment and fit

OPTIONS:
    --json      machine-readable output (the same schema as the browser and saved projects)
    --help      this text; `ddlens <COMMAND> --help` for a command's options
    --version   the program version

Results are model estimates; they need a chemist's judgement.
";

/// Runs the command line; returns the process exit code.
pub fn main(argv: Vec<String>) -> i32 {
    let mut args = Args::new(argv);
    let json = args.flag("--json");
    match run(&mut args, json) {
        Ok(()) => 0,
        Err(err) => {
            if json {
                let doc = serde_json::json!({ "error": { "kind": err.kind(), "message": err.to_string() } });
                println!("{doc}");
            }
            eprintln!("ddlens: {err}");
            err.exit_code()
        }
    }
}

fn run(args: &mut Args, json: bool) -> Result<(), CliError> {
    let Some(command) = args.next_positional() else {
        if args.flag("--version") || args.flag("-V") {
            println!("ddlens {}", crate::VERSION);
            return Ok(());
        }
        print!("{HELP}");
        return if args.flag("--help") || args.flag("-h") {
            Ok(())
        } else {
            Err(CliError::Usage("no command given".into()))
        };
    };
    match command.as_str() {
        "levels" => levels::run(args, json),
        "diagram" => diagram::run(args, json),
        "fit" => fit::run(args, json),
        "import" => import::run(args, json),
        "deconvolve" => deconvolve::run(args, json),
        "analyze" => analyze::run(args, json),
        "help" => {
            print!("{HELP}");
            Ok(())
        }
        other => Err(CliError::Usage(format!(
            "unknown command '{other}'; see `ddlens --help`"
        ))),
    }
}

/// Reads `--geometry` (default octahedral).
pub(crate) fn geometry_option(args: &mut Args) -> Result<crate::ligand_field::Geometry, CliError> {
    args.value("--geometry")?
        .as_deref()
        .unwrap_or("octahedral")
        .parse()
        .map_err(|e: crate::ligand_field::LfError| CliError::Usage(e.to_string()))
}

/// The ligand-field choices `fit` and `analyze` share: `--ion` or `--config`,
/// `--geometry`, `--c-over-b`, `--free-c`, `--spin-forbidden`, `--b0-source`
/// and `--ligand`. Bands and ranges are left to the command.
pub(crate) fn fit_request_options(args: &mut Args) -> Result<crate::lf_fit::FitRequest, CliError> {
    let ion = args.value("--ion")?;
    let n = match args.value("--config")? {
        Some(c) => crate::ligand_field::parse_configuration(&c)
            .map_err(|e| CliError::Usage(e.to_string()))?,
        None if ion.is_some() => 0,
        None => {
            return Err(CliError::Usage(
                "give the ion (--ion Cr3+) or the configuration (--config d3)".into(),
            ))
        }
    };
    Ok(crate::lf_fit::FitRequest {
        ion,
        n,
        geometry: geometry_option(args)?,
        c_over_b: args.number("--c-over-b")?,
        free_c: args.flag("--free-c"),
        spin_forbidden: args.flag("--spin-forbidden"),
        b0_source: args.value("--b0-source")?,
        ligand: args.value("--ligand")?,
        ..Default::default()
    })
}

/// Reads `--baseline` (default and `auto`: chosen by BIC between linear and scattering).
pub(crate) fn baseline_option(
    args: &mut Args,
) -> Result<Option<crate::bands::BaselineModel>, CliError> {
    match args.value("--baseline")?.as_deref() {
        None | Some("auto") => Ok(None),
        Some(b) => b.parse().map(Some).map_err(CliError::Usage),
    }
}

/// Reads `--bands N|auto` (default auto: chosen by BIC among 1…6).
pub(crate) fn band_count_option(args: &mut Args) -> Result<crate::analysis::BandCount, CliError> {
    use crate::analysis::BandCount;
    match args.value("--bands")?.as_deref() {
        None | Some("auto") => Ok(BandCount::Auto(6)),
        Some(text) => text
            .parse()
            .ok()
            .filter(|n| (1..=30).contains(n))
            .map(BandCount::Fixed)
            .ok_or_else(|| {
                CliError::Usage(format!(
                    "--bands: '{text}' is not a number from 1 to 30 or 'auto'"
                ))
            }),
    }
}

/// Prints a serializable value as pretty JSON.
pub(crate) fn print_json<T: serde::Serialize>(value: &T) -> Result<(), CliError> {
    let text = serde_json::to_string_pretty(value).map_err(|e| CliError::Failed(e.to_string()))?;
    println!("{text}");
    Ok(())
}
