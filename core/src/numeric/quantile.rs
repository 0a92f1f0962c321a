//! Sample quantiles and five-number summaries.
//!
//! One definition throughout: the linear interpolation between order statistics that is
//! Hyndman & Fan (1996) type 7, the default of R's `quantile()` and of `numpy.quantile`:
//! for sorted x_1..x_n and probability p, h = (n - 1) p, Q(p) = x_floor(h) + (h - floor(h))
//! (x_floor(h)+1 - x_floor(h)), indices counted from 0.

use serde::Serialize;

/// Quantile `p` (0 <= p <= 1) of an ascending, non-empty slice, by the type-7 rule.
///
/// # Examples
/// ```
/// use trajweave_core::numeric::quantile::quantile_sorted;
/// // R: quantile(c(1, 2, 4, 8), 0.25) gives 1.75
/// assert_eq!(quantile_sorted(&[1.0, 2.0, 4.0, 8.0], 0.25), 1.75);
/// ```
pub fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 0 {
        return f64::NAN;
    }
    let h = (n - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

/// Minimum, quartiles and maximum of a set of values.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FiveNumbers {
    /// Smallest value.
    pub min: f64,
    /// First quartile (type 7).
    pub q1: f64,
    /// Median.
    pub median: f64,
    /// Third quartile (type 7).
    pub q3: f64,
    /// Largest value.
    pub max: f64,
}

impl FiveNumbers {
    /// The summary of `values` (any order), or `None` when there are none.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::numeric::quantile::FiveNumbers;
    /// let s = FiveNumbers::of(vec![3.0, 1.0, 2.0]).unwrap();
    /// assert_eq!((s.min, s.median, s.max), (1.0, 2.0, 3.0));
    /// ```
    pub fn of(mut values: Vec<f64>) -> Option<FiveNumbers> {
        if values.is_empty() {
            return None;
        }
        values.sort_unstable_by(f64::total_cmp);
        Some(FiveNumbers {
            min: values[0],
            q1: quantile_sorted(&values, 0.25),
            median: quantile_sorted(&values, 0.5),
            q3: quantile_sorted(&values, 0.75),
            max: values[values.len() - 1],
        })
    }
}
