//! Linear scales and "nice" tick positions.
//!
//! Ticks follow the loose labelling of Heckbert (1990), "Nice numbers for graph labels",
//! *Graphics Gems* I, pp. 61-63: with `nice(x, round)` the number 1, 2, 5 or 10 times a power of
//! ten nearest x (`round`) or not below it (`!round`),
//!
//! range = nice(max - min, false), step = nice(range / (n - 1), true),
//! ticks from floor(min / step) step to ceil(max / step) step by step,
//!
//! shown with max(-floor(log10 step), 0) decimals. The axis then spans the outer ticks, so
//! data never touch the frame. A degenerate range (min = max) is widened by one unit around
//! the value (or by 10% of it) first.

use serde::Serialize;

/// Heckbert's nice number: 1, 2, 5 or 10 times a power of ten, rounded to nearest (`round`)
/// or the smallest such number >= x.
///
/// # Examples
/// ```
/// use trajweave_report::scale::nice_number;
/// assert_eq!(nice_number(2.5, true), 2.0);
/// assert_eq!(nice_number(30.9, false), 50.0);
/// ```
pub fn nice_number(x: f64, round: bool) -> f64 {
    if !(x.is_finite() && x > 0.0) {
        return 1.0;
    }
    let exp = x.log10().floor();
    let f = x / 10f64.powf(exp);
    let nf = if round {
        if f < 1.5 {
            1.0
        } else if f < 3.0 {
            2.0
        } else if f < 7.0 {
            5.0
        } else {
            10.0
        }
    } else if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    nf * 10f64.powf(exp)
}

/// Tick positions and their labels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ticks {
    /// Tick values, increasing; the first and last are the axis ends.
    pub values: Vec<f64>,
    /// The spacing.
    pub step: f64,
    /// Decimals used by the labels.
    pub decimals: usize,
}

impl Ticks {
    /// Heckbert's loose ticks for data in [min, max], aiming at `n` ticks (at least 2).
    ///
    /// # Examples
    /// ```
    /// use trajweave_report::scale::Ticks;
    /// let t = Ticks::loose(-3.7, 27.2, 5);
    /// assert_eq!(t.values, vec![-10.0, 0.0, 10.0, 20.0, 30.0]);
    /// assert_eq!(t.labels(), vec!["-10", "0", "10", "20", "30"]);
    /// ```
    pub fn loose(min: f64, max: f64, n: usize) -> Ticks {
        let (mut lo, mut hi) = if min.is_finite() && max.is_finite() {
            (min.min(max), min.max(max))
        } else {
            (0.0, 1.0)
        };
        if hi == lo {
            let pad = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
            lo -= pad;
            hi += pad;
        }
        let n = n.max(2);
        let range = nice_number(hi - lo, false);
        let step = nice_number(range / (n - 1) as f64, true);
        // A tolerance of 1e-9 steps, so 1 / 0.2 = 4.999... does not add a tick.
        let first = (lo / step + 1e-9).floor();
        let last = (hi / step - 1e-9).ceil();
        // A range too wide for doubles (e.g. -1e308 to 1e308): the ends alone.
        let count = last - first;
        if !(hi - lo).is_finite() || count.is_nan() || count > 1000.0 {
            return Ticks {
                values: vec![lo, hi],
                step: hi - lo,
                decimals: 0,
            };
        }
        let decimals = (-step.log10().floor()).max(0.0) as usize;
        let unit = 10f64.powi(decimals.min(15) as i32);
        // Multiples of the step rounded to the label's decimals, so 3 x 0.2 is 0.6 exactly.
        let values = (0..=(last - first) as i64)
            .map(|k| ((first + k as f64) * step * unit).round() / unit + 0.0)
            .collect();
        Ticks {
            values,
            step,
            decimals,
        }
    }

    /// The labels, each with [`Ticks::decimals`] decimals.
    pub fn labels(&self) -> Vec<String> {
        self.values
            .iter()
            .map(|v| format_fixed(*v, self.decimals))
            .collect()
    }

    /// The first and last tick.
    pub fn span(&self) -> (f64, f64) {
        match (self.values.first(), self.values.last()) {
            (Some(&a), Some(&b)) => (a, b),
            _ => (0.0, 1.0),
        }
    }
}

/// `x` with `decimals` decimals, `-0` written `0`.
///
/// # Examples
/// ```
/// use trajweave_report::scale::format_fixed;
/// assert_eq!(format_fixed(-0.001, 2), "0.00");
/// assert_eq!(format_fixed(2.25, 1), "2.2");
/// ```
pub fn format_fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    if s.trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        s.trim_start_matches('-').to_string()
    } else {
        s
    }
}

/// A linear map from a data interval (domain) to a pixel interval (range).
///
/// # Examples
/// ```
/// use trajweave_report::scale::Linear;
/// let s = Linear::new((0.0, 10.0), (100.0, 0.0)); // y grows upwards on screen
/// assert_eq!(s.map(2.5), 75.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Linear {
    /// Data interval.
    pub domain: (f64, f64),
    /// Pixel interval.
    pub range: (f64, f64),
}

impl Linear {
    /// A scale from `domain` to `range`; an empty domain maps everything to the range's middle.
    pub fn new(domain: (f64, f64), range: (f64, f64)) -> Linear {
        Linear { domain, range }
    }

    /// The pixel position of `v`.
    pub fn map(&self, v: f64) -> f64 {
        let (d0, d1) = self.domain;
        let (r0, r1) = self.range;
        if d1 == d0 {
            return (r0 + r1) / 2.0;
        }
        r0 + (v - d0) / (d1 - d0) * (r1 - r0)
    }
}

/// The smallest and largest finite value, `None` when there is none.
///
/// # Examples
/// ```
/// use trajweave_report::scale::extent;
/// assert_eq!(extent(&[3.0, f64::NAN, -1.0]), Some((-1.0, 3.0)));
/// ```
pub fn extent<'a>(values: impl IntoIterator<Item = &'a f64>) -> Option<(f64, f64)> {
    values
        .into_iter()
        .filter(|v| v.is_finite())
        .fold(None, |acc, &v| match acc {
            None => Some((v, v)),
            Some((a, b)) => Some((a.min(v), b.max(v))),
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_numbers_by_hand() {
        // Heckbert 1990's thresholds, worked by hand.
        assert_eq!(nice_number(1.4, true), 1.0);
        assert_eq!(nice_number(1.5, true), 2.0);
        assert_eq!(nice_number(6.9, true), 5.0);
        assert_eq!(nice_number(7.0, true), 10.0);
        assert_eq!(nice_number(1.0, false), 1.0);
        assert_eq!(nice_number(1.01, false), 2.0);
        assert_eq!(nice_number(0.042, false), 0.05);
        assert_eq!(nice_number(420.0, false), 500.0);
    }

    #[test]
    fn ticks_by_hand() {
        // [0, 1], 5 ticks: range nice(1) = 1, step nice(0.25, round) = 0.2.
        let t = Ticks::loose(0.0, 1.0, 5);
        assert_eq!(t.labels(), vec!["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
        // [-3.7, 27.2]: range nice(30.9) = 50, step nice(12.5, round) = 10.
        assert_eq!(
            Ticks::loose(-3.7, 27.2, 5).values,
            vec![-10.0, 0.0, 10.0, 20.0, 30.0]
        );
        // [0, 9.87] (years of follow-up): range 10, step nice(2.5) = 2, ceil(4.935) = 5.
        assert_eq!(
            Ticks::loose(0.0, 9.87, 5).labels(),
            vec!["0", "2", "4", "6", "8", "10"]
        );
        // [1003, 1047], 6 ticks: range nice(44) = 50, step nice(10) = 10.
        assert_eq!(
            Ticks::loose(1003.0, 1047.0, 6).values,
            vec![1000.0, 1010.0, 1020.0, 1030.0, 1040.0, 1050.0]
        );
        // R base: pretty(c(0, 1)) is 0.0 0.2 0.4 0.6 0.8 1.0 (the same here).
        assert_eq!(
            Ticks::loose(0.0, 1.0, 6).values,
            vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]
        );
    }

    #[test]
    fn degenerate_and_missing_ranges() {
        // 5 widened to [4.5, 5.5]: range 1, step 0.2, ends floor(22.5) and ceil(27.5) steps.
        assert_eq!(Ticks::loose(5.0, 5.0, 5).span(), (4.4, 5.6));
        assert_eq!(Ticks::loose(0.0, 0.0, 5).span(), (-1.0, 1.0));
        assert_eq!(Ticks::loose(f64::NAN, 1.0, 5).span(), (0.0, 1.0));
        assert_eq!(Ticks::loose(-1e308, 1e308, 5).values, vec![-1e308, 1e308]);
        assert_eq!(format_fixed(-0.0001, 2), "0.00");
        assert_eq!(extent(&[f64::NAN, 2.0, -1.0]), Some((-1.0, 2.0)));
        assert_eq!(extent(&[f64::NAN]), None);
    }
}
