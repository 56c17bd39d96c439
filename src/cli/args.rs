//! A small argument reader: `--name value`, `--name=value`, repeated options,
//! boolean flags and positionals. Unknown options are reported, not ignored.

use std::fmt;

/// What can go wrong on the command line; each maps to an exit code.
#[derive(Debug)]
pub enum CliError {
    /// The command line itself is wrong (exit code 2).
    Usage(String),
    /// The input was read but refused, or a computation failed (exit code 1).
    Failed(String),
}

impl CliError {
    pub fn kind(&self) -> &'static str {
        match self {
            CliError::Usage(_) => "usage",
            CliError::Failed(_) => "failed",
        }
    }

    pub fn exit_code(&self) -> i32 {
        match self {
            CliError::Usage(_) => 2,
            CliError::Failed(_) => 1,
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CliError::Usage(m) | CliError::Failed(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for CliError {}

/// The remaining command-line words; options are taken out as they are read.
#[derive(Debug)]
pub struct Args {
    words: Vec<String>,
}

impl Args {
    pub fn new(words: Vec<String>) -> Self {
        Args { words }
    }

    /// Removes a boolean flag; true if it was present.
    pub fn flag(&mut self, name: &str) -> bool {
        let before = self.words.len();
        self.words.retain(|w| w != name);
        self.words.len() != before
    }

    /// Removes every occurrence of `--name value` / `--name=value`, in order.
    pub fn values(&mut self, name: &str) -> Result<Vec<String>, CliError> {
        let mut out = Vec::new();
        let mut i = 0;
        let prefix = format!("{name}=");
        while i < self.words.len() {
            if self.words[i] == name {
                if i + 1 >= self.words.len() {
                    return Err(CliError::Usage(format!("{name} needs a value")));
                }
                out.push(self.words.remove(i + 1));
                self.words.remove(i);
            } else if let Some(v) = self.words[i].strip_prefix(&prefix) {
                out.push(v.to_string());
                self.words.remove(i);
            } else {
                i += 1;
            }
        }
        Ok(out)
    }

    /// Removes one `--name value`; an error if given more than once.
    pub fn value(&mut self, name: &str) -> Result<Option<String>, CliError> {
        let mut all = self.values(name)?;
        match all.len() {
            0 => Ok(None),
            1 => Ok(all.pop()),
            _ => Err(CliError::Usage(format!("{name} given more than once"))),
        }
    }

    /// A numeric option; the message names the option and what was found.
    pub fn number(&mut self, name: &str) -> Result<Option<f64>, CliError> {
        match self.value(name)? {
            None => Ok(None),
            Some(text) => parse_number(name, &text).map(Some),
        }
    }

    /// A numeric option that must be present.
    pub fn required_number(&mut self, name: &str) -> Result<f64, CliError> {
        self.number(name)?
            .ok_or_else(|| CliError::Usage(format!("{name} is required")))
    }

    /// Takes the next word that is not an option.
    pub fn next_positional(&mut self) -> Option<String> {
        let i = self
            .words
            .iter()
            .position(|w| !w.starts_with("--") || w == "--")?;
        Some(self.words.remove(i))
    }

    /// Fails if anything was left unread: a misspelt option must not be ignored.
    pub fn finish(&self) -> Result<(), CliError> {
        match self.words.first() {
            None => Ok(()),
            Some(w) => Err(CliError::Usage(format!("unexpected argument '{w}'"))),
        }
    }
}

/// Parses a number given on the command line; rejects NaN and infinities.
pub fn parse_number(name: &str, text: &str) -> Result<f64, CliError> {
    match text.trim().parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(CliError::Usage(format!(
            "{name}: '{text}' is not a finite number"
        ))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn args(s: &str) -> Args {
        Args::new(s.split_whitespace().map(String::from).collect())
    }

    #[test]
    fn reads_values_flags_and_repeats() {
        let mut a = args("fit --band 17400 --band=24600:200 --json --dq 5");
        assert_eq!(a.next_positional().as_deref(), Some("fit"));
        assert!(a.flag("--json"));
        assert_eq!(a.values("--band").unwrap(), vec!["17400", "24600:200"]);
        assert_eq!(a.number("--dq").unwrap(), Some(5.0));
        assert!(a.finish().is_ok());
    }

    #[test]
    fn rejects_leftovers_and_bad_numbers() {
        let mut a = args("--dq nan --bogus");
        assert!(a.number("--dq").is_err());
        assert!(a.finish().is_err());
        let mut b = args("--dq");
        assert!(b.value("--dq").is_err());
    }
}
