//! The command line's error type and the helpers its messages share: numbers
//! read from words, echoed words shortened, numbers shown in exponent form
//! when huge or tiny.

use std::fmt;

/// What can go wrong on the command line; each maps to an exit code.
#[derive(Debug)]
pub enum CliError {
    /// The command line itself is wrong (exit code 2).
    Usage(String),
    /// The input was read but refused, or a computation failed (exit code 1).
    Failed(String),
    /// `analyze` ran but its ligand-field fit failed (exit code 1): the output
    /// to print anyway, and the reason.
    FitFailed(String, String),
}

impl CliError {
    pub fn kind(&self) -> &'static str {
        match self {
            CliError::Usage(_) => "usage",
            CliError::Failed(_) | CliError::FitFailed(..) => "failed",
        }
    }

    pub fn exit_code(&self) -> i32 {
        match self {
            CliError::Usage(_) => 2,
            CliError::Failed(_) | CliError::FitFailed(..) => 1,
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CliError::Usage(m) | CliError::Failed(m) => f.write_str(m),
            CliError::FitFailed(_, reason) => write!(f, "no ligand-field fit: {reason}"),
        }
    }
}

impl std::error::Error for CliError {}

/// Parses a number given on the command line; rejects NaN and infinities.
pub fn parse_number(name: &str, text: &str) -> Result<f64, CliError> {
    match text.trim().parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(CliError::Usage(format!(
            "{name}: '{}' is not a finite number",
            shown(text)
        ))),
    }
}

/// The longest echo of a user's word in a message, in characters.
pub const MAX_ECHO: usize = 60;

/// A word as echoed in a message: at most [`MAX_ECHO`] characters, control characters replaced.
pub fn shown(text: &str) -> String {
    let clean: String = text
        .chars()
        .map(|c| if c.is_control() { '?' } else { c })
        .collect();
    if clean.chars().count() <= MAX_ECHO {
        clean
    } else {
        let head: String = clean.chars().take(MAX_ECHO - 1).collect();
        format!("{head}…")
    }
}

/// A number as shown in a message: plain when moderate, exponent form when
/// its magnitude is at least 1e6 or below 1e-3.
pub fn num(v: f64) -> String {
    let a = v.abs();
    if v != 0.0 && v.is_finite() && !(1e-3..1e6).contains(&a) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_long_word_is_echoed_shortened_to_sixty_characters() {
        let long = "x".repeat(10_000);
        let s = shown(&long);
        assert_eq!(s.chars().count(), MAX_ECHO);
        assert!(s.ends_with('…'));
        assert_eq!(shown("short"), "short");
        assert_eq!(shown("a\u{7}b"), "a?b");
    }

    #[test]
    fn huge_and_tiny_numbers_are_shown_in_exponent_form() {
        assert_eq!(num(1.7e308), "1.7e308");
        assert_eq!(num(2.5e-9), "2.5e-9");
        assert_eq!(num(17400.0), "17400");
        assert_eq!(num(0.0), "0");
    }

    #[test]
    // Exact comparison meant: a parsed decimal literal is exact.
    #[allow(clippy::float_cmp)]
    fn a_non_finite_number_is_refused_with_its_option_named() {
        let err = parse_number("--dq", "nan").unwrap_err().to_string();
        assert!(err.starts_with("--dq:"), "{err}");
        assert!(parse_number("--dq", "1e400").is_err());
        assert_eq!(parse_number("--dq", " 5 ").unwrap(), 5.0);
    }
}
