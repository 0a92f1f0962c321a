//! Equal-count overlapping intervals of a covariate (Cleveland 1993, *Visualizing Data*).
//!
//! The rule, for n sorted values x_(1) <= ... <= x_(n), a number of intervals k and an overlap
//! fraction f in [0, 1): each interval nominally holds r = n / (k (1 - f) + f) values, and
//! interval j (j = 0, ..., k - 1) starts at offset i_j = j (1 - f) r, so consecutive intervals
//! share about a fraction f of their values. Its ends are
//!
//! lower_j = x_(round(1 + i_j)) - e,   upper_j = x_(round(r + i_j)) + e,
//!
//! where `round` rounds half to even and e is half the smallest positive gap between sorted
//! values (0 when all values are equal), so that values equal to an end lie inside. An interval
//! whose order statistics (before widening) repeat those of the interval before it, at both
//! ends, is dropped: with many ties several nominal intervals can land on the same values.
//! Counts are the numbers of values in each closed interval [lower, upper].
//!
//! At least k values are needed, which makes r >= 1 and every order statistic exist. For a
//! covariate of a panel, a time-fixed covariate gives one value per subject (so the intervals
//! hold about equal numbers of subjects) and a time-varying one gives one value per row.

use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};

/// One interval and the number of values in it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Band {
    /// Lower end (inclusive).
    pub lower: f64,
    /// Upper end (inclusive).
    pub upper: f64,
    /// Number of values in [lower, upper].
    pub count: usize,
}

impl Band {
    /// True when `v` lies in [lower, upper].
    pub fn contains(&self, v: f64) -> bool {
        self.lower <= v && v <= self.upper
    }

    /// A short label, `[lower, upper]`.
    pub fn label(&self) -> String {
        format!("[{}, {}]", self.lower, self.upper)
    }
}

/// A set of equal-count overlapping intervals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bands {
    /// The intervals, by increasing lower end (repeats dropped).
    pub bands: Vec<Band>,
    /// The number of intervals asked for (`bands` may hold fewer).
    pub number: usize,
    /// The overlap fraction used.
    pub overlap: f64,
    /// What the counts count: `"values"` or `"subjects"`.
    pub counted: String,
}

/// Equal-count overlapping intervals of `values`.
///
/// # Examples
/// ```
/// use trajweave_core::covariates::bands::equal_count_bands;
/// # fn main() -> trajweave_core::Result<()> {
/// let x: Vec<f64> = (1..=10).map(f64::from).collect();
/// let b = equal_count_bands(&x, 4, 0.5)?;
/// assert_eq!(b.bands.len(), 4);
/// assert_eq!((b.bands[0].lower, b.bands[0].upper, b.bands[0].count), (0.5, 4.5, 4));
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] when `number` < 1 or `overlap` is outside [0, 1);
/// [`Error::NonFinite`] for a NaN or infinite value (row counted from 1);
/// [`Error::TooFew`] when there are fewer values than `number`.
pub fn equal_count_bands(values: &[f64], number: usize, overlap: f64) -> Result<Bands> {
    check_options(number, overlap)?;
    crate::trend::curve::check_finite("values", values)?;
    bands_of(values, number, overlap, "values")
}

/// Equal-count overlapping intervals of a panel's covariate: one value per subject when the
/// covariate is time-fixed (`counted` = `"subjects"`), one per row otherwise (`"values"`).
///
/// # Examples
/// ```
/// use trajweave_core::covariates::bands::covariate_bands;
/// use trajweave_core::{Covariate, Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(3), Some(4)]);
/// let age = Covariate::new("age", vec![40.0, 40.0, 50.0, 60.0, 70.0]);
/// let p = Panel::new(ids, &[0.0, 1.0, 0.0, 0.0, 0.0], &[1.0; 5], vec![age], Missing::Error)?;
/// let b = covariate_bands(&p, "age", 2, 0.0)?;
/// assert_eq!(b.counted, "subjects");
/// assert_eq!(b.bands.iter().map(|b| b.count).collect::<Vec<_>>(), vec![2, 2]);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for an unknown covariate name or options out of range;
/// [`Error::TooFew`] when there are fewer values (subjects) than `number`.
pub fn covariate_bands(
    panel: &Panel,
    covariate: &str,
    number: usize,
    overlap: f64,
) -> Result<Bands> {
    check_options(number, overlap)?;
    let c = find_covariate(panel, covariate)?;
    if c.time_fixed {
        let per_subject: Vec<f64> = (0..panel.n_subjects())
            .map(|i| c.values[panel.offsets()[i]])
            .collect();
        bands_of(&per_subject, number, overlap, "subjects")
    } else {
        bands_of(&c.values, number, overlap, "values")
    }
}

/// The panel covariate named `name`, or an error listing the names there are.
pub(crate) fn find_covariate<'a>(
    panel: &'a Panel,
    name: &str,
) -> Result<&'a crate::data::panel::PanelCovariate> {
    panel
        .covariates()
        .iter()
        .find(|c| c.name == name)
        .ok_or_else(|| {
            let names: Vec<String> = panel
                .covariates()
                .iter()
                .map(|c| format!("{:?}", c.name))
                .collect();
            let allowed = if names.is_empty() {
                "the panel has no covariates; build it with the covariate".to_string()
            } else {
                format!("use one of the panel's covariates: {}", names.join(", "))
            };
            Error::option("covariate", format!("{name:?}"), &allowed)
        })
}

fn check_options(number: usize, overlap: f64) -> Result<()> {
    if number < 1 {
        return Err(Error::option(
            "number",
            number,
            "give a whole number of intervals >= 1",
        ));
    }
    if !(0.0..1.0).contains(&overlap) {
        return Err(Error::option(
            "overlap",
            overlap,
            "give a fraction in [0, 1), e.g. 0.5",
        ));
    }
    Ok(())
}

/// The intervals of finite values (checked by the caller).
fn bands_of(values: &[f64], number: usize, overlap: f64, counted: &str) -> Result<Bands> {
    let n = values.len();
    if n < number {
        return Err(Error::TooFew {
            what: counted.into(),
            estimate: format!("{number} equal-count intervals"),
            needed: number,
            found: n,
        });
    }
    let mut x: Vec<f64> = values.iter().map(|v| v + 0.0).collect();
    x.sort_unstable_by(f64::total_cmp);
    // Same operation order as the published rule's usual statement, so that a tie in the
    // rounding falls the same way.
    let r = n as f64 / (number as f64 * (1.0 - overlap) + overlap);
    // 1-based order statistic, clamped against rounding at the ends (r >= 1 keeps it in range).
    let stat = |pos: f64| x[(pos.round_ties_even() as usize).clamp(1, n) - 1];
    let ends: Vec<(f64, f64)> = (0..number)
        .map(|j| {
            let i = j as f64 * (1.0 - overlap) * r;
            (stat(1.0 + i), stat(r + i))
        })
        .collect();
    let eps = 0.5
        * x.windows(2)
            .map(|w| w[1] - w[0])
            .filter(|&d| d > 0.0)
            .fold(f64::INFINITY, f64::min);
    let eps = if eps.is_finite() { eps } else { 0.0 };
    let bands = ends
        .iter()
        .enumerate()
        .filter(|&(j, e)| j == 0 || e.0 > ends[j - 1].0 || e.1 > ends[j - 1].1)
        .map(|(_, &(lo, hi))| {
            let (lower, upper) = (lo - eps, hi + eps);
            let count = x.partition_point(|&v| v <= upper) - x.partition_point(|&v| v < lower);
            Band {
                lower,
                upper,
                count,
            }
        })
        .collect();
    Ok(Bands {
        bands,
        number,
        overlap,
        counted: counted.into(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_options() {
        let x = [1.0, 2.0];
        assert_eq!(
            equal_count_bands(&x, 0, 0.5).unwrap_err().to_string(),
            "`number` = 0 is not allowed: give a whole number of intervals >= 1"
        );
        assert_eq!(
            equal_count_bands(&x, 1, 1.0).unwrap_err().to_string(),
            "`overlap` = 1 is not allowed: give a fraction in [0, 1), e.g. 0.5"
        );
        assert_eq!(
            equal_count_bands(&x, 1, f64::NAN).unwrap_err().kind(),
            "invalid_option"
        );
        assert_eq!(
            equal_count_bands(&[1.0, f64::NAN], 1, 0.5)
                .unwrap_err()
                .to_string(),
            "`values` is not finite at row 2 (value NaN): remove the row or give a finite value"
        );
        assert_eq!(
            equal_count_bands(&x, 3, 0.5).unwrap_err().to_string(),
            "too few values for 3 equal-count intervals: need at least 3, found 2"
        );
    }

    #[test]
    fn all_equal_values_give_one_interval() {
        // Every nominal interval is [5, 5]; all but the first repeat it; no positive gap.
        let b = equal_count_bands(&[5.0; 6], 3, 0.5).unwrap();
        assert_eq!(
            b.bands,
            vec![Band {
                lower: 5.0,
                upper: 5.0,
                count: 6
            }]
        );
    }
}
