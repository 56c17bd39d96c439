//! A value with its standard uncertainty, the unit of every reported number.

use serde::{Deserialize, Serialize};

/// A measured or fitted quantity and its standard uncertainty (one σ).
///
/// `sigma` is `None` when no uncertainty can be given (for example a
/// parameter held fixed, or a singular covariance matrix); it is never NaN.
/// `determined` is false for a value the data do not determine, held at a
/// stated value instead (it is then printed as held, never with a σ).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    pub value: f64,
    pub sigma: Option<f64>,
    /// False when the data do not determine the value (absent in JSON: true).
    #[serde(default = "yes", skip_serializing_if = "is_true")]
    pub determined: bool,
}

fn yes() -> bool {
    true
}

// serde's skip_serializing_if hands the field by reference.
#[allow(clippy::trivially_copy_pass_by_ref)]
fn is_true(b: &bool) -> bool {
    *b
}

/// What a held value says after its number.
pub const HELD_TEXT: &str = "(held: not determined by these bands)";

impl Estimate {
    /// A value with a known uncertainty; a non-finite or negative σ becomes `None`.
    pub fn new(value: f64, sigma: f64) -> Self {
        let sigma = (sigma.is_finite() && sigma >= 0.0).then_some(sigma);
        Estimate {
            value,
            sigma,
            determined: true,
        }
    }

    /// A value with no uncertainty (fixed or not estimable).
    pub fn exact(value: f64) -> Self {
        Estimate {
            value,
            sigma: None,
            determined: true,
        }
    }

    /// A value the data do not determine, held at `value`: no σ.
    pub fn held(value: f64) -> Self {
        Estimate {
            value,
            sigma: None,
            determined: false,
        }
    }

    /// The same estimate multiplied by `factor` (σ by |factor|).
    #[must_use]
    pub fn scaled(self, factor: f64) -> Self {
        Estimate {
            value: self.value * factor,
            sigma: self.sigma.map(|s| s * factor.abs()),
            determined: self.determined,
        }
    }
}

/// σ rounded to [`SIGMA_DIGITS`] significant digits, and the power of ten
/// it ends on (common practice: the GUM, JCGM 100:2008 §7.2.6, asks for
/// at most two significant digits, from memory).
fn rounded_sigma(s: f64) -> (f64, i32) {
    let mut decade = s.log10().floor() as i32 - (SIGMA_DIGITS as i32 - 1);
    let mut r = (s / 10f64.powi(decade)).round() * 10f64.powi(decade);
    // 99.6 rounds to 100: three digits, so the last one moves a decade up.
    if r >= 10f64.powi(decade + SIGMA_DIGITS as i32) {
        decade += 1;
        r = (s / 10f64.powi(decade)).round() * 10f64.powi(decade);
    }
    (r, decade)
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
    /// Writes the value the way chemists write it: `17403 ± 61`,
    /// `123500 ± 1500`: σ to two significant digits and the value rounded
    /// to the same decade. A held value is written with [`HELD_TEXT`].
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.sigma {
            _ if !self.determined => {
                write!(f, "{} {HELD_TEXT}", Estimate::exact(self.value))
            }
            Some(s) if s > 0.0 && s.is_finite() && self.value.is_finite() => {
                let (s, decade) = rounded_sigma(s);
                let digits = (-decade).max(0) as usize;
                let step = 10f64.powi(decade);
                let value = if decade > 0 {
                    (self.value / step).round() * step
                } else {
                    self.value
                };
                write!(f, "{value:.digits$} ± {s:.digits$}")
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
            "123\u{2009}500 ± 1\u{2009}500"
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

    /// Two significant digits of σ and the value to match (GUM §7.2.6).
    #[test]
    fn a_large_sigma_rounds_the_value_to_its_decade() {
        assert_eq!(
            Estimate::new(123_456.0, 1534.0).to_string(),
            "123500 ± 1500"
        );
        assert_eq!(Estimate::new(17_403.2, 99.7).to_string(), "17400 ± 100");
        assert_eq!(Estimate::new(0.7912, 0.00996).to_string(), "0.791 ± 0.010");
        assert_eq!(
            Estimate::new(16_517.3, 0.372).to_string(),
            "16517.30 ± 0.37"
        );
    }

    #[test]
    fn a_held_value_says_so_and_has_no_sigma() {
        let c = Estimate::held(3850.0);
        assert_eq!(c.sigma, None);
        assert_eq!(c.to_string(), "3850 (held: not determined by these bands)");
        assert_eq!(
            c.grouped(),
            "3\u{2009}850 (held: not determined by these bands)"
        );
        assert!(!c.scaled(2.0).determined);
    }

    #[test]
    fn a_saved_estimate_without_the_field_is_determined() {
        let e: Estimate = serde_json::from_str(r#"{"value": 1.0, "sigma": 0.5}"#).unwrap();
        assert!(e.determined);
        assert_eq!(
            serde_json::to_string(&e).unwrap(),
            r#"{"value":1.0,"sigma":0.5}"#
        );
        let h = serde_json::to_string(&Estimate::held(2.0)).unwrap();
        assert_eq!(h, r#"{"value":2.0,"sigma":null,"determined":false}"#);
    }
}
