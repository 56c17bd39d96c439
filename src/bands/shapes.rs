//! Band shapes in wavenumber space, each with its analytic derivatives.
//!
//! Every shape is parameterised by its centre ν̃₀ (cm⁻¹), a full width at
//! half maximum (cm⁻¹) and a height (the y value at the maximum, except for
//! the skewed Gaussian, see below); a fourth parameter `extra` exists for
//! three shapes:
//!
//! * Gaussian `h·exp(−4 ln2 (ν̃−ν̃₀)²/w²)` (IUPAC Gold Book G02597);
//! * Lorentzian `h / (1 + 4(ν̃−ν̃₀)²/w²)` (IUPAC Gold Book L03628);
//! * pseudo-Voigt `(1−η)·G + η·L`, both with the same FWHM, `extra` = η ∈ [0, 1];
//! * Voigt: Gaussian FWHM `w`, Lorentzian FWHM `extra`,
//!   `h·Re w(z)/Re w(z₀)` with `z = (ν̃−ν̃₀ + iγ)/(σ√2)`, `z₀ = iγ/(σ√2)`,
//!   σ = w/(2√(2 ln 2)), γ = extra/2 and `w(z)` the Faddeeva function (the
//!   `errorfunctions` crate, a port of S. G. Johnson's Faddeeva package).
//!   `Re w(z₀) = erfcx(γ/(σ√2))` is the peak value. Derivatives use the
//!   identity w′(z) = −2z·w(z) + 2i/√π (DLMF 7.10, from memory; checked
//!   against finite differences in the tests) and erfcx′(y) = 2y·erfcx(y) − 2/√π;
//! * skewed Gaussian (skew-normal): `h·exp(−u²/2)·(1 + erf(α u/√2))`,
//!   u = (ν̃−ν̃₀)/σ, `extra` = α. Here `h` is the amplitude of the parent
//!   Gaussian and ν̃₀ its centre; the true maximum lies elsewhere and is
//!   located numerically by [`skew_maximum`].
//!
//! Widths are guarded with `max(TINY, w)` so a collapsing width never makes NaN.

use errorfunctions::{ComplexErrorFunctions, RealErrorFunctions};
use nalgebra::Complex;
use serde::{Deserialize, Serialize};

/// The smallest width used in any division (guards against a collapsing band).
const TINY: f64 = 1e-12;
/// 4 ln 2, the Gaussian exponent factor for a FWHM parameterisation.
const FOUR_LN2: f64 = 4.0 * std::f64::consts::LN_2;
/// 2/√π.
const TWO_OVER_SQRT_PI: f64 = std::f64::consts::FRAC_2_SQRT_PI;

/// The functional form of one absorption band.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum Shape {
    #[default]
    Gaussian,
    Lorentzian,
    PseudoVoigt,
    Voigt,
    SkewGaussian,
}

impl Shape {
    /// Whether the shape has a fourth parameter (η, Lorentzian FWHM or skew).
    pub fn has_extra(self) -> bool {
        matches!(
            self,
            Shape::PseudoVoigt | Shape::Voigt | Shape::SkewGaussian
        )
    }

    /// The name of the fourth parameter, for reports.
    pub fn extra_name(self) -> Option<&'static str> {
        match self {
            Shape::PseudoVoigt => Some("eta"),
            Shape::Voigt => Some("lorentz_fwhm"),
            Shape::SkewGaussian => Some("skew"),
            _ => None,
        }
    }

    /// The default fourth parameter when none is given.
    pub fn default_extra(self, fwhm: f64) -> f64 {
        match self {
            Shape::PseudoVoigt => 0.5,
            Shape::Voigt => 0.3 * fwhm,
            _ => 0.0,
        }
    }
}

impl std::str::FromStr for Shape {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.to_ascii_lowercase().as_str() {
            "gaussian" | "gauss" => Ok(Shape::Gaussian),
            "lorentzian" | "lorentz" => Ok(Shape::Lorentzian),
            "pseudo-voigt" | "pseudovoigt" => Ok(Shape::PseudoVoigt),
            "voigt" => Ok(Shape::Voigt),
            "skew-gaussian" | "skewgaussian" | "skewed-gaussian" => Ok(Shape::SkewGaussian),
            other => Err(format!(
                "unknown band shape '{other}'; use gaussian, lorentzian, pseudo-voigt, voigt or skew-gaussian"
            )),
        }
    }
}

/// A band's value and its partial derivatives at one wavenumber.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ShapeValue {
    pub value: f64,
    pub d_centre: f64,
    pub d_fwhm: f64,
    pub d_height: f64,
    pub d_extra: f64,
}

/// Evaluates `shape` at `x` with its derivatives.
pub fn eval(shape: Shape, x: f64, centre: f64, fwhm: f64, height: f64, extra: f64) -> ShapeValue {
    let w = fwhm.max(TINY);
    let dx = x - centre;
    match shape {
        Shape::Gaussian => gaussian(dx, w, height),
        Shape::Lorentzian => lorentzian(dx, w, height),
        Shape::PseudoVoigt => {
            let eta = extra;
            let g = gaussian(dx, w, height);
            let l = lorentzian(dx, w, height);
            ShapeValue {
                value: (1.0 - eta) * g.value + eta * l.value,
                d_centre: (1.0 - eta) * g.d_centre + eta * l.d_centre,
                d_fwhm: (1.0 - eta) * g.d_fwhm + eta * l.d_fwhm,
                d_height: (1.0 - eta) * g.d_height + eta * l.d_height,
                d_extra: l.value - g.value,
            }
        }
        Shape::Voigt => voigt(dx, w, extra.max(TINY), height),
        Shape::SkewGaussian => skew_gaussian(dx, w, height, extra),
    }
}

fn gaussian(dx: f64, w: f64, h: f64) -> ShapeValue {
    let e = (-FOUR_LN2 * dx * dx / (w * w)).exp();
    let g = h * e;
    ShapeValue {
        value: g,
        d_centre: g * 2.0 * FOUR_LN2 * dx / (w * w),
        d_fwhm: g * 2.0 * FOUR_LN2 * dx * dx / (w * w * w),
        d_height: e,
        d_extra: 0.0,
    }
}

fn lorentzian(dx: f64, w: f64, h: f64) -> ShapeValue {
    let u = 2.0 * dx / w;
    let q = 1.0 / (1.0 + u * u);
    let l = h * q;
    // dL/du = −2u·h·q²; du/dc = −2/w; du/dw = −u/w.
    let dl_du = -2.0 * u * h * q * q;
    ShapeValue {
        value: l,
        d_centre: dl_du * (-2.0 / w),
        d_fwhm: dl_du * (-u / w),
        d_height: q,
        d_extra: 0.0,
    }
}

/// σ of a Gaussian with the given FWHM.
fn sigma_of(fwhm: f64) -> f64 {
    fwhm / (2.0 * (2.0 * std::f64::consts::LN_2).sqrt())
}

fn voigt(dx: f64, w_g: f64, w_l: f64, h: f64) -> ShapeValue {
    let sigma = sigma_of(w_g);
    let gamma = 0.5 * w_l;
    let s2 = sigma * std::f64::consts::SQRT_2;
    let z = Complex::new(dx / s2, gamma / s2);
    let wz = z.w();
    // w'(z) = −2 z w(z) + 2i/√π
    let dw = -2.0 * z * wz + Complex::new(0.0, TWO_OVER_SQRT_PI);
    let y0 = gamma / s2;
    let peak = y0.erfcx();
    let dpeak = 2.0 * y0 * peak - TWO_OVER_SQRT_PI;
    let ratio = wz.re / peak;
    // z = (dx + iγ)/s2: dz/dc = −1/s2, dz/dγ = i/s2, dz/ds2 = −z/s2; y0 = γ/s2.
    let dre_dc = -dw.re / s2;
    let dre_dgamma = -dw.im / s2; // Re(w'·i) = −Im w'
    let dre_ds2 = -(dw * z).re / s2;
    let dpeak_dgamma = dpeak / s2;
    let dpeak_ds2 = -dpeak * y0 / s2;
    let d_ratio = |dre: f64, dpk: f64| (dre - ratio * dpk) / peak;
    let ds2_dwg = s2 / w_g;
    ShapeValue {
        value: h * ratio,
        d_centre: h * dre_dc / peak,
        d_fwhm: h * d_ratio(dre_ds2, dpeak_ds2) * ds2_dwg,
        d_height: ratio,
        d_extra: h * d_ratio(dre_dgamma, dpeak_dgamma) * 0.5,
    }
}

fn skew_gaussian(dx: f64, w: f64, h: f64, alpha: f64) -> ShapeValue {
    let sigma = sigma_of(w);
    let u = dx / sigma;
    let e = (-0.5 * u * u).exp();
    let arg = alpha * u / std::f64::consts::SQRT_2;
    let s = 1.0 + RealErrorFunctions::erf(arg);
    // d erf(a)/da = 2/√π exp(−a²)
    let derf = TWO_OVER_SQRT_PI * (-arg * arg).exp();
    let value = h * e * s;
    // df/du = h·(−u·e·s + e·derf·α/√2)
    let df_du = h * e * (-u * s + derf * alpha / std::f64::consts::SQRT_2);
    let dsigma_dw = sigma / w;
    ShapeValue {
        value,
        d_centre: df_du * (-1.0 / sigma),
        d_fwhm: df_du * (-u / sigma) * dsigma_dw,
        d_height: e * s,
        d_extra: h * e * derf * u / std::f64::consts::SQRT_2,
    }
}

/// Integral over all wavenumbers of a band with these parameters (y·cm⁻¹).
pub fn area(shape: Shape, fwhm: f64, height: f64, extra: f64) -> f64 {
    let gauss_factor = (std::f64::consts::PI / FOUR_LN2).sqrt(); // √(π/(4 ln 2))
    let lorentz_factor = std::f64::consts::FRAC_PI_2;
    match shape {
        Shape::Gaussian => gauss_factor * height * fwhm,
        Shape::Lorentzian => lorentz_factor * height * fwhm,
        Shape::PseudoVoigt => {
            height * fwhm * ((1.0 - extra) * gauss_factor + extra * lorentz_factor)
        }
        Shape::Voigt => {
            // ∫Re w(z) dν̃ = σ√(2π) (the Voigt profile Re w/(σ√2π) is normalised).
            let sigma = sigma_of(fwhm.max(TINY));
            let y0 = 0.5 * extra.max(TINY) / (sigma * std::f64::consts::SQRT_2);
            height * sigma * (2.0 * std::f64::consts::PI).sqrt() / y0.erfcx()
        }
        // The erf factor is odd about the centre and integrates to zero.
        Shape::SkewGaussian => height * sigma_of(fwhm) * (2.0 * std::f64::consts::PI).sqrt(),
    }
}

/// Locates the maximum of a skewed Gaussian (position, value) by golden-section
/// search on [ν̃₀ − 2σ, ν̃₀ + 2σ], which always contains the mode of a skew-normal.
pub fn skew_maximum(centre: f64, fwhm: f64, height: f64, skew: f64) -> (f64, f64) {
    let sigma = sigma_of(fwhm.max(TINY));
    let f =
        |x: f64| eval(Shape::SkewGaussian, x, centre, fwhm, height, skew).value * height.signum();
    let (mut a, mut b) = (centre - 2.0 * sigma, centre + 2.0 * sigma);
    let ratio = (5.0_f64.sqrt() - 1.0) / 2.0;
    let mut c = b - ratio * (b - a);
    let mut d = a + ratio * (b - a);
    for _ in 0..100 {
        if f(c) > f(d) {
            b = d;
        } else {
            a = c;
        }
        c = b - ratio * (b - a);
        d = a + ratio * (b - a);
    }
    let x = 0.5 * (a + b);
    (
        x,
        eval(Shape::SkewGaussian, x, centre, fwhm, height, skew).value,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Central finite differences against every analytic derivative.
    #[test]
    fn derivatives_match_finite_differences() {
        let shapes = [
            (Shape::Gaussian, 0.0),
            (Shape::Lorentzian, 0.0),
            (Shape::PseudoVoigt, 0.35),
            (Shape::Voigt, 900.0),
            (Shape::SkewGaussian, -2.5),
        ];
        for (shape, extra) in shapes {
            for x in [14_000.0, 16_800.0, 17_400.0, 18_100.0, 21_000.0] {
                let p = [17_400.0, 2_500.0, 0.8, extra];
                let v = eval(shape, x, p[0], p[1], p[2], p[3]);
                let analytic = [v.d_centre, v.d_fwhm, v.d_height, v.d_extra];
                for k in 0..4 {
                    let step = 1e-6 * p[k].abs().max(1.0);
                    let mut hi = p;
                    let mut lo = p;
                    hi[k] += step;
                    lo[k] -= step;
                    let fd = (eval(shape, x, hi[0], hi[1], hi[2], hi[3]).value
                        - eval(shape, x, lo[0], lo[1], lo[2], lo[3]).value)
                        / (2.0 * step);
                    let scale = fd.abs().max(1e-9);
                    assert!(
                        (fd - analytic[k]).abs() / scale < 1e-5,
                        "{shape:?} x={x} param {k}: analytic {} vs fd {fd}",
                        analytic[k]
                    );
                }
            }
        }
    }

    #[test]
    fn height_is_the_peak_value_and_fwhm_is_the_width() {
        for (shape, extra) in [
            (Shape::Gaussian, 0.0),
            (Shape::Lorentzian, 0.0),
            (Shape::PseudoVoigt, 0.4),
        ] {
            let peak = eval(shape, 17_000.0, 17_000.0, 3_000.0, 2.0, extra).value;
            let half = eval(shape, 18_500.0, 17_000.0, 3_000.0, 2.0, extra).value;
            assert!((peak - 2.0).abs() < 1e-12);
            assert!((half - 1.0).abs() < 1e-12, "{shape:?}: {half}");
        }
        let v = eval(Shape::Voigt, 17_000.0, 17_000.0, 3_000.0, 2.0, 700.0).value;
        assert!((v - 2.0).abs() < 1e-12);
    }

    /// Areas against a trapezoid integral over ±60 widths.
    #[test]
    fn areas_match_numerical_integration() {
        for (shape, extra) in [
            (Shape::Gaussian, 0.0),
            (Shape::Lorentzian, 0.0),
            (Shape::PseudoVoigt, 0.3),
            (Shape::Voigt, 1_200.0),
            (Shape::SkewGaussian, 3.0),
        ] {
            let (c, w, h) = (20_000.0, 2_000.0, 1.3);
            let n = 400_000;
            let (lo, hi) = (c - 60.0 * w, c + 60.0 * w);
            let dx = (hi - lo) / f64::from(n);
            let sum: f64 = (0..=n)
                .map(|i| {
                    let weight = if i == 0 || i == n { 0.5 } else { 1.0 };
                    weight * eval(shape, lo + f64::from(i) * dx, c, w, h, extra).value
                })
                .sum::<f64>()
                * dx;
            // A Lorentzian truncated at ±L holds (2/π)·atan(2L/w) of its area.
            let lorentz_kept = std::f64::consts::FRAC_2_PI * (2.0 * 60.0_f64).atan();
            let exact = match shape {
                Shape::Lorentzian => area(shape, w, h, extra) * lorentz_kept,
                Shape::PseudoVoigt => {
                    area(Shape::Gaussian, w, h * (1.0 - extra), 0.0)
                        + area(Shape::Lorentzian, w, h * extra, 0.0) * lorentz_kept
                }
                _ => area(shape, w, h, extra),
            };
            // The Voigt tails (Lorentzian FWHM 1200) beyond ±60 w hold ≈ 0.3 %.
            let tol = if shape == Shape::Voigt { 5e-3 } else { 1e-9 };
            assert!(
                (sum - exact).abs() / exact < tol,
                "{shape:?}: {sum} vs {exact}"
            );
        }
    }

    #[test]
    fn skew_maximum_is_a_maximum() {
        let (x, v) = skew_maximum(17_000.0, 3_000.0, 1.0, 4.0);
        assert!(x > 17_000.0);
        for dx in [-5.0, 5.0] {
            assert!(eval(Shape::SkewGaussian, x + dx, 17_000.0, 3_000.0, 1.0, 4.0).value <= v);
        }
    }
}
