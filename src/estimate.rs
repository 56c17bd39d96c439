//! A value with its standard uncertainty, the unit of every reported number.

use serde::{Deserialize, Serialize};

/// A measured or fitted quantity and its standard uncertainty (one σ).
///
/// `sigma` is `None` when no uncertainty can be given (for example a
/// parameter held fixed, or a singular covariance matrix); it is never NaN.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    pub value: f64,
    pub sigma: Option<f64>,
}

impl Estimate {
    /// A value with a known uncertainty; a non-finite or negative σ becomes `None`.
    pub fn new(value: f64, sigma: f64) -> Self {
        let sigma = (sigma.is_finite() && sigma >= 0.0).then_some(sigma);
        Estimate { value, sigma }
    }

    /// A value with no uncertainty (fixed or not estimable).
    pub fn exact(value: f64) -> Self {
        Estimate { value, sigma: None }
    }
}

/// Significant digits an uncertainty is written with.
pub const SIGMA_DIGITS: usize = 2;
/// Significant digits of a value written without uncertainty.
pub const PLAIN_DIGITS: usize = 6;

impl std::fmt::Display for Estimate {
    /// Writes the value the way chemists write it: `17400 ± 60`, the value
    /// rounded to the decade of the uncertainty's two significant digits.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.sigma {
            Some(s) if s > 0.0 => {
                let decade = s.log10().floor() as i32 - (SIGMA_DIGITS as i32 - 1);
                let digits = (-decade).max(0) as usize;
                write!(f, "{:.*} ± {:.*}", digits, self.value, digits, s)
            }
            _ => {
                // Six significant digits, trailing zeros dropped.
                let mag = if self.value == 0.0 {
                    0
                } else {
                    self.value.abs().log10().floor() as i32
                };
                let text = format!(
                    "{:.*}",
                    (PLAIN_DIGITS as i32 - 1 - mag).max(0) as usize,
                    self.value
                );
                let text = if text.contains('.') {
                    text.trim_end_matches('0').trim_end_matches('.')
                } else {
                    &text
                };
                f.write_str(text)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_sigma_becomes_none() {
        assert_eq!(Estimate::new(1.0, f64::NAN).sigma, None);
        assert_eq!(Estimate::new(1.0, -1.0).sigma, None);
        assert_eq!(Estimate::new(1.0, 0.5).sigma, Some(0.5));
    }

    #[test]
    fn display_rounds_to_the_uncertainty() {
        assert_eq!(Estimate::new(17403.2, 61.0).to_string(), "17403 ± 61");
        assert_eq!(Estimate::new(0.7912, 0.0123).to_string(), "0.791 ± 0.012");
        assert_eq!(Estimate::exact(2.5).to_string(), "2.5");
        assert_eq!(Estimate::exact(3850.0 / 918.0).to_string(), "4.1939");
        assert_eq!(Estimate::exact(20300.0).to_string(), "20300");
    }
}
