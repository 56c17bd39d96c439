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

impl Estimate {
    /// The [`Display`](std::fmt::Display) text with the integer part of each
    /// number set in groups of three digits separated by thin spaces
    /// (U+2009), as the page and the report print it: `17 403 ± 61`,
    /// `0.00056` unchanged (digit grouping with thin spaces: ISO 80000-1 §7.3.1,
    /// from memory). A non-finite value is written as a dash, never as NaN.
    pub fn grouped(&self) -> String {
        if !self.value.is_finite() {
            return "—".to_string();
        }
        self.to_string()
            .split(' ')
            .map(group_integer_part)
            .collect::<Vec<_>>()
            .join(" ")
    }
}

/// `-12345.678` → `-12 345.678` (thin spaces); anything but a number is returned as it is.
fn group_integer_part(word: &str) -> String {
    let (sign, rest) = word.strip_prefix('-').map_or(("", word), |r| ("-", r));
    let digits = rest
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(rest.len());
    if digits == 0 {
        return word.to_string();
    }
    let (int, tail) = rest.split_at(digits);
    let mut out = String::from(sign);
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            out.push('\u{2009}');
        }
        out.push(c);
    }
    out + tail
}

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
    fn grouped_text_sets_thin_spaces_in_integer_parts_only() {
        assert_eq!(Estimate::new(17403.2, 61.0).grouped(), "17\u{2009}403 ± 61");
        assert_eq!(
            Estimate::new(-1234.5, 0.12).grouped(),
            "-1\u{2009}234.50 ± 0.12"
        );
        assert_eq!(Estimate::exact(0.00056).grouped(), "0.00056");
        assert_eq!(Estimate::exact(999.0).grouped(), "999");
        assert_eq!(
            Estimate::new(123_456.0, 1500.0).grouped(),
            "123\u{2009}456 ± 1\u{2009}500"
        );
        assert_eq!(Estimate::exact(f64::NAN).grouped(), "—");
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
