//! Flags wavenumber ranges where the detector was saturated.
//!
//! Two signs, both on absorbance:
//! - values at or above [`CEILING_ABSORBANCE`]: beyond the stated photometric
//!   range of bench spectrophotometers ("past 6.0 Abs" for the Cary 300, Agilent
//!   brochure cited in the research notes); Cary software writes clipped points as 10;
//! - a flat run of at least [`FLAT_RUN`] points exactly at the spectrum's maximum
//!   when that maximum is at least [`FLAT_MIN_ABSORBANCE`] (common practice: a real
//!   band top is never flat to the last digit over several points).

/// Absorbance at or above which a point counts as saturated.
pub const CEILING_ABSORBANCE: f64 = 6.0;
/// Shortest run of identical maximal values that counts as clipping.
pub const FLAT_RUN: usize = 3;
/// A flat maximum below this absorbance is not treated as clipping.
pub const FLAT_MIN_ABSORBANCE: f64 = 1.5;

/// Returns `[low, high]` cm⁻¹ ranges of saturated points; `x` ascending.
pub fn detect(x: &[f64], absorbance: &[f64]) -> Vec<[f64; 2]> {
    let n = x.len().min(absorbance.len());
    let max = absorbance
        .iter()
        .take(n)
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let mut flagged: Vec<bool> = absorbance
        .iter()
        .take(n)
        .map(|&a| a >= CEILING_ABSORBANCE)
        .collect();
    if max >= FLAT_MIN_ABSORBANCE {
        let at_max = |i: usize| absorbance.get(i).is_some_and(|&a| a >= max);
        let mut i = 0;
        while i < n {
            if at_max(i) {
                let start = i;
                while i < n && at_max(i) {
                    i += 1;
                }
                if i - start >= FLAT_RUN {
                    flagged[start..i].iter_mut().for_each(|f| *f = true);
                }
            } else {
                i += 1;
            }
        }
    }
    let mut ranges = Vec::new();
    let mut i = 0;
    while i < n {
        if flagged[i] {
            let start = i;
            while i < n && flagged[i] {
                i += 1;
            }
            ranges.push([x[start], x[i - 1]]);
        } else {
            i += 1;
        }
    }
    ranges
}

/// Merges ranges that overlap or touch, sorted by their low end.
pub fn merge(mut ranges: Vec<[f64; 2]>) -> Vec<[f64; 2]> {
    ranges.sort_by(|a, b| a[0].total_cmp(&b[0]));
    let mut out: Vec<[f64; 2]> = Vec::with_capacity(ranges.len());
    for r in ranges {
        match out.last_mut() {
            Some(last) if r[0] <= last[1] => last[1] = last[1].max(r[1]),
            _ => out.push(r),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flat_top_and_ceiling_are_flagged_but_a_peak_is_not() {
        let x: Vec<f64> = (0..8).map(|i| 1000.0 + f64::from(i)).collect();
        let clipped = [0.5, 2.0, 3.2, 3.2, 3.2, 2.0, 0.4, 0.1];
        assert_eq!(detect(&x, &clipped), vec![[1002.0, 1004.0]]);
        let peak = [0.5, 2.0, 3.1, 3.2, 3.1, 2.0, 0.4, 0.1];
        assert!(detect(&x, &peak).is_empty());
        let cary = [0.5, 10.0, 10.0, 1.0, 0.2, 0.1, 0.1, 0.1];
        assert_eq!(detect(&x, &cary), vec![[1001.0, 1002.0]]);
        let low_flat = [0.1, 0.2, 0.2, 0.2, 0.2, 0.1, 0.0, 0.0];
        assert!(detect(&x, &low_flat).is_empty());
    }
}
