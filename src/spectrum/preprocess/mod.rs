//! Preprocessing of imported spectra: crop, even resampling, point weights,
//! baselines and Savitzky–Golay smoothing. (Baselines being built.)

mod savgol;

pub use savgol::{savgol, savgol_coeffs};

/// Why a preprocessing step could not run.
#[derive(Debug, Clone, PartialEq)]
pub enum PreprocessError {
    /// A parameter is out of its range (the message says which and why).
    BadParameter(String),
    /// The spectrum has fewer points than the method needs.
    TooFewPoints { needed: usize, found: usize },
    /// A linear system had no unique solution (e.g. collinear points).
    Singular,
}

impl std::fmt::Display for PreprocessError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PreprocessError::BadParameter(m) => f.write_str(m),
            PreprocessError::TooFewPoints { needed, found } => {
                write!(f, "this needs at least {needed} points; the spectrum has {found}")
            }
            PreprocessError::Singular => f.write_str(
                "the least-squares problem has no unique solution (too few distinct points for the chosen order)",
            ),
        }
    }
}

impl std::error::Error for PreprocessError {}
