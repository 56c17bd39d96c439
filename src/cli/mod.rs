//! The command-line face of every engine.
//!
//! Each subcommand lives in its own file and prints either a table for a
//! chemist or, with `--json`, the same serde types the browser facade returns.
//! This module only dispatches and writes; it holds no science. Options are
//! defined once in [`flags`] (see there how to add one); a command's output is
//! built as text and written by [`write_stdout`], where a closed pipe
//! (`ddlens levels … | head -1`) is a normal end.

mod analyze;
mod args;
mod deconvolve;
mod diagram;
mod fit;
mod flags;
mod import;
mod levels;

pub use args::CliError;
use std::io::Write;

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
    analyze     the whole analysis: import, cleaning, bands, assignment and fit
    help CMD    the options of CMD (as `ddlens CMD --help`)

OPTIONS:
    --json      machine-readable output (the same schema as the browser and saved projects)
    -h, --help  this text; `ddlens <COMMAND> --help` for a command's options
    --version   the program version

Results are model estimates; they need a chemist's judgement.
";

/// Appends a line to a command's output text.
macro_rules! outln {
    ($out:expr) => {
        $out.push('\n')
    };
    ($out:expr, $($arg:tt)*) => {{
        use std::fmt::Write as _;
        let _ = writeln!($out, $($arg)*);
    }};
}

/// Appends text to a command's output without a line end.
macro_rules! out {
    ($out:expr, $($arg:tt)*) => {{
        use std::fmt::Write as _;
        let _ = write!($out, $($arg)*);
    }};
}

pub(crate) use {out, outln};

/// The largest input file any command reads: 256 MiB.
pub const MAX_INPUT_BYTES: u64 = 256 * 1024 * 1024;

/// Runs the command line; returns the process exit code.
pub fn main(argv: &[String]) -> i32 {
    let json = argv.iter().any(|w| w == "--json");
    match run(argv) {
        Ok(text) => write_stdout(&text),
        Err(CliError::FitFailed(text, reason)) => {
            let written = write_stdout(&text);
            eprintln!("ddlens: no ligand-field fit: {reason}");
            if written != 0 {
                written
            } else {
                1
            }
        }
        Err(err) => {
            let mut code = err.exit_code();
            if json {
                let doc = serde_json::json!({ "error": { "kind": err.kind(), "message": err.to_string() } });
                let written = write_stdout(&format!("{doc}\n"));
                if written != 0 {
                    code = written;
                }
            }
            eprintln!("ddlens: {err}");
            code
        }
    }
}

/// Writes the output; a closed pipe ends normally (0), other write errors fail (1).
pub fn write_stdout(text: &str) -> i32 {
    let mut stdout = std::io::stdout().lock();
    match stdout
        .write_all(text.as_bytes())
        .and_then(|()| stdout.flush())
    {
        Ok(()) => 0,
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => 0,
        Err(e) => {
            eprintln!("ddlens: could not write the output: {e}");
            1
        }
    }
}

/// One command: its name and its entry point over the words after the name.
type Command = fn(&[String]) -> Result<String, CliError>;

const COMMANDS: [(&str, Command); 6] = [
    ("levels", levels::run),
    ("diagram", diagram::run),
    ("fit", fit::run),
    ("import", import::run),
    ("deconvolve", deconvolve::run),
    ("analyze", analyze::run),
];

fn run(argv: &[String]) -> Result<String, CliError> {
    // `--json` may come before the command (`ddlens --json levels …`).
    let mut words: Vec<String> = argv.to_vec();
    if let Some(i) = words.iter().position(|w| w != "--json") {
        words.rotate_left(i);
    }
    let Some(command) = words.first().filter(|w| *w != "--json") else {
        write_stdout(HELP);
        return Err(CliError::Usage("no command given".into()));
    };
    let rest = &words[1..];
    match command.as_str() {
        "--version" | "-V" => return Ok(format!("ddlens {}\n", ddlens::VERSION)),
        "--help" | "-h" => return Ok(HELP.to_string()),
        "help" => {
            return match rest.first() {
                None => Ok(HELP.to_string()),
                Some(name) => find(name)?(&["--help".to_string()]),
            }
        }
        _ => {}
    }
    find(command)?(rest)
}

fn find(name: &str) -> Result<Command, CliError> {
    COMMANDS
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, c)| *c)
        .ok_or_else(|| {
            CliError::Usage(format!(
                "unknown command '{}'; see `ddlens --help`",
                args::shown(name)
            ))
        })
}

/// Reads an input file: refuses anything but a regular file of at most
/// [`MAX_INPUT_BYTES`] before reading it.
pub(crate) fn read_input(path: &str) -> Result<Vec<u8>, CliError> {
    use std::io::Read;
    let name = args::shown(path);
    let fail = |e: std::io::Error| CliError::Failed(format!("cannot read '{name}': {e}"));
    let meta = std::fs::metadata(path).map_err(fail)?;
    if !meta.is_file() {
        return Err(CliError::Failed(format!(
            "'{name}' is not a regular file (a directory, device or pipe); give a spectrum file"
        )));
    }
    let too_big = || {
        CliError::Failed(format!(
            "'{name}' is larger than {} MiB, the most ddlens reads",
            MAX_INPUT_BYTES >> 20
        ))
    };
    if meta.len() > MAX_INPUT_BYTES {
        return Err(too_big());
    }
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .map_err(fail)?
        .take(MAX_INPUT_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(fail)?;
    if bytes.len() as u64 > MAX_INPUT_BYTES {
        return Err(too_big());
    }
    Ok(bytes)
}

/// The one positional a command takes (its FILE), or a sentence.
pub(crate) fn one_file(p: &flags::Parsed, command: &str) -> Result<String, CliError> {
    match p.positionals.as_slice() {
        [file] => Ok(file.clone()),
        [] => Err(CliError::Usage(format!(
            "{command} needs a spectrum FILE; see `ddlens {command} --help`"
        ))),
        [_, extra, ..] => Err(CliError::Usage(format!(
            "unexpected argument '{}'",
            args::shown(extra)
        ))),
    }
}

/// Fails if a command that takes no FILE was given one.
pub(crate) fn no_positionals(p: &flags::Parsed) -> Result<(), CliError> {
    match p.positionals.first() {
        None => Ok(()),
        Some(w) => Err(CliError::Usage(format!(
            "unexpected argument '{}'",
            args::shown(w)
        ))),
    }
}

/// The ligand-field request `fit` and `analyze` share, from the typed flags.
pub(crate) fn fit_request(p: &flags::Parsed) -> Result<ddlens::lf_fit::FitRequest, CliError> {
    let n = match p.config {
        Some(n) => n,
        None if p.ion.is_some() => 0,
        None => {
            return Err(CliError::Usage(
                "give the ion (--ion Cr3+) or the configuration (--config d3)".into(),
            ))
        }
    };
    Ok(ddlens::lf_fit::FitRequest {
        ion: p.ion.clone(),
        n,
        geometry: p
            .geometry
            .unwrap_or(ddlens::ligand_field::Geometry::Octahedral),
        c_over_b: p.c_over_b,
        free_c: p.free_c,
        spin_forbidden: p.spin_forbidden,
        b0_source: p.b0_source.clone(),
        ligand: p.ligand.clone(),
        bands: p.bands.clone(),
        ..Default::default()
    })
}

/// The band-fit choices `deconvolve` and `analyze` share, from the typed flags.
pub(crate) fn band_fit_options(p: &flags::Parsed) -> ddlens::analysis::BandSetup {
    let mut opts = ddlens::analysis::BandSetup {
        range: p.range,
        baseline: p.baseline,
        ..Default::default()
    };
    if let Some(count) = p.band_count {
        opts.count = count;
    }
    if let Some(shape) = p.shape {
        opts.shape = shape;
    }
    opts
}

/// The cleaning steps of the typed flags, in the page's order: crop,
/// smoothing, baseline subtraction.
pub(crate) fn cleaning_steps(p: &flags::Parsed) -> Vec<ddlens::preprocess::Step> {
    use ddlens::preprocess::Step;
    let mut steps = Vec::new();
    if let Some([low, high]) = p.crop {
        steps.push(Step::Crop { low, high });
    }
    if let Some([window, order]) = p.smooth {
        steps.push(Step::Smooth { window, order });
    }
    if let Some(method) = &p.subtract_baseline {
        steps.push(Step::SubtractBaseline {
            method: method.clone(),
        });
    }
    steps
}

/// A serializable value as pretty JSON text.
pub(crate) fn json_text<T: serde::Serialize>(value: &T) -> Result<String, CliError> {
    let mut text =
        serde_json::to_string_pretty(value).map_err(|e| CliError::Failed(e.to_string()))?;
    text.push('\n');
    Ok(text)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_command_lists_one_option_name_twice() {
        let lists: [&[&flags::Flag]; 6] = [
            &levels::FLAGS,
            &diagram::FLAGS,
            &fit::FLAGS,
            &import::FLAGS,
            &deconvolve::FLAGS,
            &analyze::FLAGS,
        ];
        for list in lists {
            let mut names: Vec<&str> = list.iter().map(|f| f.name).collect();
            let count = names.len();
            names.sort_unstable();
            names.dedup();
            assert_eq!(names.len(), count, "{names:?}");
            assert!(names.contains(&"--help") && names.contains(&"--json"));
        }
    }
}
