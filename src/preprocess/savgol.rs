//! Savitzky–Golay smoothing and derivatives.
//!
//! A. Savitzky and M. J. E. Golay, "Smoothing and differentiation of data by
//! simplified least squares procedures", Anal. Chem. 36 (1964) 1627. A polynomial
//! of degree `order` is fitted by least squares to each window of `window` points;
//! its `deriv`-th derivative at a position is a fixed linear combination of the
//! window's values. The weights come from the pseudo-inverse of the window's
//! Vandermonde matrix, built on positions scaled to [−1, 1] to keep it well
//! conditioned. Edges use the polynomial fitted to the first/last full window
//! (the same as SciPy's `savgol_filter(mode="interp")`). Derivatives are per
//! point index: divide by spacing^deriv for physical units.
//!
//! The pseudo-inverse is computed once per call ([`Fit`]); the weights at each
//! edge position are then a cheap product with it (window·order operations).
//! The window is at most [`MAX_WINDOW`] points and never longer than the data.

use super::PreprocessError;
use nalgebra::DMatrix;

/// The widest Savitzky–Golay window accepted, in points.
pub const MAX_WINDOW: usize = 1001;

/// Weights giving the `deriv`-th derivative at the window centre, in correlation
/// order (`Σ c[j]·y[i + j − half]`); equal to SciPy `savgol_coeffs(…, use="dot")`.
pub fn savgol_coeffs(
    window: usize,
    order: usize,
    deriv: usize,
) -> Result<Vec<f64>, PreprocessError> {
    let half = check(window, order, deriv)?;
    Ok(Fit::new(window, order, deriv)?.weights_at(half))
}

/// Smooths (`deriv` = 0) or differentiates `y` with a Savitzky–Golay filter.
///
/// A filter of polynomial order p passes every polynomial of degree ≤ p
/// unchanged, and its first derivative is exact for them (Savitzky & Golay,
/// Anal. Chem. 36, 1627 (1964)):
///
/// ```
/// use ddlens::preprocess::savgol;
///
/// let y: Vec<f64> = (0..50).map(|i| 3.0 + 0.5 * f64::from(i) - 0.02 * f64::from(i).powi(2)).collect();
/// let smooth = savgol(&y, 11, 2, 0)?;
/// let slope = savgol(&y, 11, 2, 1)?; // per point index
/// for i in 0..50 {
///     assert!((smooth[i] - y[i]).abs() < 1e-9);
///     assert!((slope[i] - (0.5 - 0.04 * i as f64)).abs() < 1e-9);
/// }
/// # Ok::<(), ddlens::preprocess::PreprocessError>(())
/// ```
pub fn savgol(
    y: &[f64],
    window: usize,
    order: usize,
    deriv: usize,
) -> Result<Vec<f64>, PreprocessError> {
    let half = check(window, order, deriv)?;
    if y.len() < window {
        return Err(PreprocessError::TooFewPoints {
            needed: window,
            found: y.len(),
        });
    }
    let fit = Fit::new(window, order, deriv)?;
    let centre = fit.weights_at(half);
    let dot = |w: &[f64], start: usize| -> f64 {
        w.iter()
            .zip(&y[start..start + window])
            .map(|(a, b)| a * b)
            .sum()
    };
    let mut out = vec![0.0; y.len()];
    for (i, o) in out.iter_mut().enumerate().take(y.len() - half).skip(half) {
        *o = dot(&centre, i - half);
    }
    let last_start = y.len() - window;
    for p in 0..half {
        out[p] = dot(&fit.weights_at(p), 0);
        out[y.len() - 1 - p] = dot(&fit.weights_at(window - 1 - p), last_start);
    }
    Ok(out)
}

fn check(window: usize, order: usize, deriv: usize) -> Result<usize, PreprocessError> {
    if window > MAX_WINDOW {
        return Err(PreprocessError::BadParameter(format!(
            "the Savitzky–Golay window may span at most {MAX_WINDOW} points, found {window}"
        )));
    }
    if window == 0 || window % 2 == 0 {
        return Err(PreprocessError::BadParameter(format!(
            "the Savitzky–Golay window must be an odd number of points, found {window}"
        )));
    }
    if order >= window {
        return Err(PreprocessError::BadParameter(format!(
            "the polynomial order ({order}) must be smaller than the window ({window} points)"
        )));
    }
    if deriv > order {
        return Err(PreprocessError::BadParameter(format!(
            "a derivative of order {deriv} of a degree-{order} polynomial is zero; choose deriv ≤ order"
        )));
    }
    Ok(window / 2)
}

/// The least-squares polynomial fit of one window: its pseudo-inverse, computed once.
struct Fit {
    window: usize,
    order: usize,
    deriv: usize,
    /// (order + 1) × window pseudo-inverse of the scaled Vandermonde matrix.
    pinv: DMatrix<f64>,
}

impl Fit {
    fn new(window: usize, order: usize, deriv: usize) -> Result<Fit, PreprocessError> {
        let vandermonde = DMatrix::from_fn(window, order + 1, |j, k| {
            Fit::position(window, j).powi(k as i32)
        });
        let pinv = vandermonde
            .svd(true, true)
            .pseudo_inverse(1e-13)
            .map_err(|_| PreprocessError::Singular)?;
        Ok(Fit {
            window,
            order,
            deriv,
            pinv,
        })
    }

    /// Half the window, the scale that maps positions to [−1, 1].
    fn scale(window: usize) -> f64 {
        (window / 2).max(1) as f64
    }

    /// Window index `j` mapped to [−1, 1].
    fn position(window: usize, j: usize) -> f64 {
        (j as f64 - (window / 2) as f64) / Fit::scale(window)
    }

    /// Weights for the derivative at window position `pos` (0 … window−1).
    fn weights_at(&self, pos: usize) -> Vec<f64> {
        let (order, deriv) = (self.order, self.deriv);
        let scale = Fit::scale(self.window);
        // d^deriv/dt^deriv of t^k at t0, then chain rule dt/dindex = 1/scale.
        let t0 = Fit::position(self.window, pos);
        let mut factor = vec![0.0; order + 1];
        for (k, f) in factor.iter_mut().enumerate().skip(deriv) {
            let falling: f64 = ((k - deriv + 1)..=k).map(|m| m as f64).product();
            *f = falling * t0.powi((k - deriv) as i32) / scale.powi(deriv as i32);
        }
        (0..self.window)
            .map(|j| (0..=order).map(|k| factor[k] * self.pinv[(k, j)]).sum())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classic_five_point_quadratic_smoother() {
        // Savitzky & Golay (1964), Table I: 5-point quadratic/cubic smoothing weights (−3, 12, 17, 12, −3)/35.
        let c = savgol_coeffs(5, 2, 0).unwrap();
        let table = [-3.0, 12.0, 17.0, 12.0, -3.0];
        for (a, b) in c.iter().zip(table) {
            assert!((a - b / 35.0).abs() < 1e-12);
        }
        // Savitzky & Golay (1964), first derivative, 5-point quadratic: (−2, −1, 0, 1, 2)/10.
        let d = savgol_coeffs(5, 2, 1).unwrap();
        for (a, b) in d.iter().zip([-2.0, -1.0, 0.0, 1.0, 2.0]) {
            assert!((a - b / 10.0).abs() < 1e-12);
        }
    }

    #[test]
    fn polynomials_up_to_the_order_pass_unchanged_including_edges() {
        // A least-squares polynomial fit reproduces any polynomial of degree ≤ order exactly.
        let y: Vec<f64> = (0..30)
            .map(|i| {
                let x = f64::from(i);
                0.5 - 0.2 * x + 0.03 * x * x - 0.001 * x * x * x
            })
            .collect();
        let smooth = savgol(&y, 9, 3, 0).unwrap();
        let slope = savgol(&y, 9, 3, 1).unwrap();
        for i in 0..30 {
            let x = i as f64;
            assert!((smooth[i] - y[i]).abs() < 1e-10, "{i}");
            let exact = -0.2 + 0.06 * x - 0.003 * x * x;
            assert!((slope[i] - exact).abs() < 1e-10, "{i}");
        }
        assert!(savgol(&y, 8, 3, 0).is_err());
        assert!(savgol(&y[..5], 9, 3, 0).is_err());
        assert!(savgol_coeffs(5, 2, 3).is_err());
    }

    #[test]
    fn a_window_wider_than_the_cap_is_refused_before_any_work() {
        // Shorter than the window, so that a missing cap fails fast with another error.
        let err = savgol(&[0.0; 5], 8001, 2, 0).unwrap_err();
        assert!(err.to_string().contains("1001"), "{err}");
        assert!(savgol_coeffs(usize::MAX, 2, 0).is_err());
        assert!(savgol(&vec![0.0; 1500], MAX_WINDOW, 2, 0).is_ok());
    }

    #[test]
    fn edge_weights_equal_the_exact_least_squares_fit_at_each_position() {
        // SciPy savgol_coeffs(5, 2, pos=0, use="dot") × 35 = (31, 9, −3, −5, 3): the quadratic
        // least-squares fit of five points evaluated at the first (SciPy run by hand; NumPy's
        // pinv of the Vandermonde matrix on t = −2…2 gives the same).
        let fit = Fit::new(5, 2, 0).unwrap();
        let w = fit.weights_at(0);
        for (a, b) in w.iter().zip([31.0, 9.0, -3.0, -5.0, 3.0]) {
            assert!((a - b / 35.0).abs() < 1e-12, "{w:?}");
        }
        let end = fit.weights_at(4);
        for (a, b) in end.iter().zip([3.0, -5.0, -3.0, 9.0, 31.0]) {
            assert!((a - b / 35.0).abs() < 1e-12, "{end:?}");
        }
    }
}
