//! Why a file was refused.

use std::fmt;

/// The reasons `import` refuses a file; each `Display`s as one plain sentence.
#[derive(Debug, Clone, PartialEq)]
pub enum ImportError {
    /// The file has no content.
    Empty,
    /// The file holds no table of numbers and no JCAMP-DX spectrum.
    NoData,
    /// The file's structure is broken at a line (a text cell inside the data, a bad number).
    Malformed {
        line: Option<usize>,
        message: String,
    },
    /// The file is valid but holds a kind of data this reader does not handle (e.g. NTUPLES).
    Unsupported {
        line: Option<usize>,
        message: String,
    },
    /// The x unit cannot be told from the file; the user must give it.
    UnknownXUnit(String),
    /// An option does not fit the data (e.g. a non-positive concentration).
    BadOption(String),
    /// A saved-project envelope is missing, malformed or from a newer version.
    Project(String),
    /// The file is a saved ddlens project, not a spectrum.
    ProjectFile { schema: u32 },
    /// The file holds more points or spectra than the import limits allow.
    TooLarge(String),
}

impl ImportError {
    /// The 1-based line the error concerns, when known.
    pub fn line(&self) -> Option<usize> {
        match self {
            ImportError::Malformed { line, .. } | ImportError::Unsupported { line, .. } => *line,
            _ => None,
        }
    }
}

impl fmt::Display for ImportError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let with_line = |f: &mut fmt::Formatter<'_>, line: &Option<usize>, m: &str| match line {
            Some(l) => write!(f, "line {l}: {m}"),
            None => f.write_str(m),
        };
        match self {
            ImportError::Empty => f.write_str("the file is empty"),
            ImportError::NoData => f.write_str(
                "no spectrum found: the file has no table of at least two numeric columns and no JCAMP-DX data",
            ),
            ImportError::Malformed { line, message } | ImportError::Unsupported { line, message } => {
                with_line(f, line, message)
            }
            ImportError::UnknownXUnit(m)
            | ImportError::BadOption(m)
            | ImportError::Project(m)
            | ImportError::TooLarge(m) => {
                f.write_str(m)
            }
            ImportError::ProjectFile { schema } => write!(
                f,
                "this is a saved ddlens project (schema {schema}), not a spectrum file; open it as a project"
            ),
        }
    }
}

impl std::error::Error for ImportError {}
