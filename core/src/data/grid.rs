//! Time grids that map irregular visit times to bins.
//!
//! Two kinds: bin edges e_0 < e_1 < ... < e_k giving bins [e_0, e_1), ..., [e_(k-1), e_k] (the
//! last bin closed so the end point counts), and a nominal schedule s_1 < ... < s_k with a
//! tolerance w, where a visit at t belongs to the nominal time nearest to it if |t - s| <= w
//! (when two nominal times are equally near, the earlier one). Times outside every bin belong to
//! none.

use serde::Serialize;

use crate::error::{Error, Result};

/// A validated grid of time bins.
///
/// # Examples
/// ```
/// use trajweave_core::TimeGrid;
/// # fn main() -> trajweave_core::Result<()> {
/// let g = TimeGrid::schedule(vec![0.0, 1.0, 2.0], 0.25)?;
/// assert_eq!(g.bin_of(1.2), Some(1));
/// assert_eq!(g.bin_of(1.5), None);
/// let e = TimeGrid::edges(vec![0.0, 1.0, 2.0])?;
/// assert_eq!(e.bin_of(2.0), Some(1));
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum TimeGrid {
    /// Bins between consecutive edges.
    Edges {
        /// Strictly increasing bin edges (at least two).
        edges: Vec<f64>,
    },
    /// Windows around nominal visit times.
    Schedule {
        /// Strictly increasing nominal times (at least one).
        times: Vec<f64>,
        /// Half-width of each window (>= 0).
        tolerance: f64,
    },
}

impl TimeGrid {
    /// A grid from bin edges.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] unless there are at least two finite, strictly increasing edges.
    pub fn edges(edges: Vec<f64>) -> Result<TimeGrid> {
        if edges.len() < 2 {
            return Err(Error::option(
                "edges",
                format!("{} edge(s)", edges.len()),
                "give at least two bin edges",
            ));
        }
        check_increasing("edges", &edges)?;
        Ok(TimeGrid::Edges { edges })
    }

    /// `bins` bins of equal width from `lower` to `upper` (the last edge is `upper` exactly).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::TimeGrid;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let g = TimeGrid::equal_width(0.0, 8.0, 4)?;
    /// assert_eq!(g, TimeGrid::edges(vec![0.0, 2.0, 4.0, 6.0, 8.0])?);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for zero bins or limits that are not finite with lower < upper.
    pub fn equal_width(lower: f64, upper: f64, bins: usize) -> Result<TimeGrid> {
        if bins == 0 {
            return Err(Error::option("bins", 0, "give at least one bin"));
        }
        if !(lower.is_finite() && upper.is_finite() && lower < upper) {
            return Err(Error::option(
                "bins",
                format!("limits {lower} to {upper}"),
                "equal-width bins need finite limits with lower < upper (times must vary)",
            ));
        }
        let width = (upper - lower) / bins as f64;
        let mut edges: Vec<f64> = (0..bins).map(|i| lower + i as f64 * width).collect();
        edges.push(upper);
        TimeGrid::edges(edges)
    }

    /// A grid from nominal visit times and a tolerance window.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] unless the times are non-empty, finite and strictly increasing
    /// and the tolerance is finite and >= 0.
    pub fn schedule(times: Vec<f64>, tolerance: f64) -> Result<TimeGrid> {
        if times.is_empty() {
            return Err(Error::option(
                "schedule",
                "no times",
                "give at least one nominal time",
            ));
        }
        check_increasing("schedule", &times)?;
        if !(tolerance.is_finite() && tolerance >= 0.0) {
            return Err(Error::option(
                "tolerance",
                tolerance,
                "give a finite tolerance >= 0 (half the width of each window)",
            ));
        }
        Ok(TimeGrid::Schedule { times, tolerance })
    }

    /// The grid a front end's options ask for: bin `edges`, or a nominal `schedule` with a
    /// `tolerance`, or neither (no grid). Every front calls this, so all give the same errors.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::TimeGrid;
    /// # fn main() -> trajweave_core::Result<()> {
    /// assert!(TimeGrid::from_options(None, None, None)?.is_none());
    /// let g = TimeGrid::from_options(None, Some(vec![0.0, 1.0]), Some(0.1))?.unwrap();
    /// assert_eq!(g.n_bins(), 2);
    /// assert!(TimeGrid::from_options(Some(vec![0.0, 1.0]), Some(vec![0.0]), None).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when both kinds are given, when a schedule lacks a tolerance or
    /// a tolerance comes without a schedule, or when [`TimeGrid::edges`] or
    /// [`TimeGrid::schedule`] refuses the values.
    pub fn from_options(
        edges: Option<Vec<f64>>,
        schedule: Option<Vec<f64>>,
        tolerance: Option<f64>,
    ) -> Result<Option<TimeGrid>> {
        match (edges, schedule, tolerance) {
            (None, None, None) => Ok(None),
            (Some(e), None, None) => TimeGrid::edges(e).map(Some),
            (None, Some(s), Some(w)) => TimeGrid::schedule(s, w).map(Some),
            (Some(_), Some(_), _) => Err(Error::option(
                "edges",
                "given together with `schedule`",
                "give either bin edges or a schedule, not both",
            )),
            (None, Some(_), None) => Err(Error::option(
                "tolerance",
                "not given",
                "a schedule needs a tolerance (half the width of each window)",
            )),
            (_, None, Some(_)) => Err(Error::option(
                "tolerance",
                "given without `schedule`",
                "a tolerance goes with a nominal schedule; give `schedule` too",
            )),
        }
    }

    /// The grid a front asks for with `bins` (that many equal-width bins from the first to the
    /// last of `times`), bin `edges`, or a `schedule` with a `tolerance`: exactly one of them.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::TimeGrid;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let g = TimeGrid::for_times(&[0.0, 3.0, 6.0], Some(3.0), None, None, None)?;
    /// assert_eq!(g, TimeGrid::edges(vec![0.0, 2.0, 4.0, 6.0])?);
    /// assert!(TimeGrid::for_times(&[0.0, 1.0], None, None, None, None).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when none or several kinds are given, `bins` is not a whole
    /// number from 1 to 1000, or as [`TimeGrid::from_options`].
    pub fn for_times(
        times: &[f64],
        bins: Option<f64>,
        edges: Option<Vec<f64>>,
        schedule: Option<Vec<f64>>,
        tolerance: Option<f64>,
    ) -> Result<TimeGrid> {
        match bins {
            Some(b) => {
                if edges.is_some() || schedule.is_some() || tolerance.is_some() {
                    return Err(Error::option(
                        "bins",
                        "given with edges or a schedule",
                        "give one of: bins, edges, or a schedule with a tolerance",
                    ));
                }
                let k = crate::error::whole_number("bins", b, 1, 1000)? as usize;
                let lo = times.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = times.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                TimeGrid::equal_width(lo, hi, k)
            }
            None => TimeGrid::from_options(edges, schedule, tolerance)?.ok_or_else(|| {
                Error::option(
                    "bins",
                    "not given",
                    "give one of: bins (a count), edges, or a schedule with a tolerance",
                )
            }),
        }
    }

    /// Number of bins.
    pub fn n_bins(&self) -> usize {
        match self {
            TimeGrid::Edges { edges } => edges.len() - 1,
            TimeGrid::Schedule { times, .. } => times.len(),
        }
    }

    /// The bin holding time `t`, if any.
    pub fn bin_of(&self, t: f64) -> Option<usize> {
        match self {
            TimeGrid::Edges { edges } => {
                let k = edges.len() - 1;
                if t < edges[0] || t > edges[k] || t.is_nan() {
                    return None;
                }
                // Number of edges <= t, minus one, is the bin; t == last edge joins the last bin.
                let i = edges.partition_point(|&e| e <= t);
                Some((i - 1).min(k - 1))
            }
            TimeGrid::Schedule { times, tolerance } => {
                nearest_within(times, *tolerance, times.partition_point(|&s| s < t), t)
            }
        }
    }

    /// The (lower, upper) time limits of bin `i`.
    pub fn limits(&self, i: usize) -> (f64, f64) {
        match self {
            TimeGrid::Edges { edges } => (edges[i], edges[i + 1]),
            TimeGrid::Schedule { times, tolerance } => (times[i] - tolerance, times[i] + tolerance),
        }
    }

    /// The centre of bin `i`: its nominal time, or the midpoint of its edges.
    pub fn centre(&self, i: usize) -> f64 {
        match self {
            TimeGrid::Edges { edges } => 0.5 * (edges[i] + edges[i + 1]),
            TimeGrid::Schedule { times, .. } => times[i],
        }
    }

    /// A short label for bin `i`: the nominal time, or `[lower, upper)`.
    pub fn label(&self, i: usize) -> String {
        match self {
            TimeGrid::Edges { edges } => {
                let close = if i + 2 == edges.len() { "]" } else { ")" };
                format!("[{}, {}{close}", edges[i], edges[i + 1])
            }
            TimeGrid::Schedule { times, .. } => format!("{}", times[i]),
        }
    }
}

/// [`TimeGrid::bin_of`] for many times: built once per grid, it finds the bin of equally spaced
/// edges or nominal times by arithmetic, then settles the exact answer against the grid's own
/// values, so it always agrees with `bin_of`.
#[derive(Debug, Clone)]
pub struct BinLocator<'a> {
    grid: &'a TimeGrid,
    /// (first value, 1 / spacing) when the edges or nominal times are equally spaced.
    uniform: Option<(f64, f64)>,
}

impl<'a> BinLocator<'a> {
    /// A locator for `grid`.
    pub fn new(grid: &'a TimeGrid) -> BinLocator<'a> {
        let values = match grid {
            TimeGrid::Edges { edges } => edges,
            TimeGrid::Schedule { times, .. } => times,
        };
        let uniform = if values.len() >= 2 {
            let (first, last) = (values[0], values[values.len() - 1]);
            let step = (last - first) / (values.len() - 1) as f64;
            let even = values
                .iter()
                .enumerate()
                .all(|(i, &v)| (v - (first + i as f64 * step)).abs() <= 1e-9 * step);
            even.then_some((first, 1.0 / step))
        } else {
            None
        };
        BinLocator { grid, uniform }
    }

    /// The number of `values` below `t` (as `partition_point(|v| v < t)`), from an arithmetic
    /// guess walked to the exact place.
    #[inline]
    fn count_below(&self, values: &[f64], t: f64) -> usize {
        let below = |v: f64| v < t;
        let Some((first, inv)) = self.uniform else {
            return values.partition_point(|&v| below(v));
        };
        // Truncation, not floor (a library call on some targets): the walk below fixes it.
        let guess = (t - first) * inv;
        let mut i = if guess < 0.0 {
            0
        } else {
            ((guess as usize).saturating_add(1)).min(values.len())
        };
        while i > 0 && !below(values[i - 1]) {
            i -= 1;
        }
        while i < values.len() && below(values[i]) {
            i += 1;
        }
        i
    }

    /// The bin holding time `t`, if any: the same as [`TimeGrid::bin_of`].
    #[inline]
    pub fn locate(&self, t: f64) -> Option<usize> {
        match self.grid {
            TimeGrid::Edges { edges } => {
                let k = edges.len() - 1;
                // Also refuses NaN.
                if !(t >= edges[0] && t <= edges[k]) {
                    return None;
                }
                let Some((first, inv)) = self.uniform else {
                    return Some((edges.partition_point(|&e| e <= t) - 1).min(k - 1));
                };
                // The arithmetic guess, walked to the bin with edges[b] <= t < edges[b + 1]
                // (the last bin also takes its upper edge), as bin_of defines it.
                let mut b = (((t - first) * inv) as usize).min(k - 1);
                while b > 0 && t < edges[b] {
                    b -= 1;
                }
                while b + 1 < k && t >= edges[b + 1] {
                    b += 1;
                }
                Some(b)
            }
            TimeGrid::Schedule { times, tolerance } => {
                if t.is_nan() {
                    return None;
                }
                nearest_within(times, *tolerance, self.count_below(times, t), t)
            }
        }
    }
}

/// Of the nominal times just below and at position `i` (the count of times below `t`), the
/// nearer one within `tolerance` of `t`, the earlier on a tie.
fn nearest_within(times: &[f64], tolerance: f64, i: usize, t: f64) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for j in [i.wrapping_sub(1), i] {
        if let Some(&s) = times.get(j) {
            let d = (t - s).abs();
            if d <= tolerance && best.is_none_or(|(_, bd)| d < bd) {
                best = Some((j, d));
            }
        }
    }
    best.map(|(j, _)| j)
}

fn check_increasing(argument: &str, v: &[f64]) -> Result<()> {
    if let Some(x) = v.iter().find(|x| !x.is_finite()) {
        return Err(Error::option(argument, x, "every value must be finite"));
    }
    if let Some(w) = v.windows(2).find(|w| w[1] <= w[0]) {
        return Err(Error::option(
            argument,
            format!("{} then {}", w[0], w[1]),
            "values must be strictly increasing",
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::{BinLocator, TimeGrid};

    #[test]
    fn locator_agrees_with_bin_of() {
        let grids = [
            TimeGrid::equal_width(0.0, 8.0, 16).unwrap(),
            TimeGrid::edges(vec![0.0, 0.5, 2.0, 2.1, 7.0]).unwrap(),
            TimeGrid::schedule((0..10).map(f64::from).collect(), 0.5).unwrap(),
            TimeGrid::schedule(vec![0.0, 0.3, 1.0, 4.0], 0.2).unwrap(),
            TimeGrid::schedule(vec![0.1, 0.2, 0.3], 0.05).unwrap(),
        ];
        let mut rng = crate::numeric::rng::Rng::new(4, 0);
        for g in &grids {
            let loc = BinLocator::new(g);
            // Random times and every grid value with its neighbours (ties, edges, window ends).
            let mut ts: Vec<f64> = (0..5000).map(|_| 12.0 * rng.uniform() - 2.0).collect();
            let values = match g {
                TimeGrid::Edges { edges } => edges.clone(),
                TimeGrid::Schedule { times, tolerance } => times
                    .iter()
                    .flat_map(|s| [*s, s - tolerance, s + tolerance])
                    .collect(),
            };
            for v in values {
                ts.extend([v, f64::from_bits(v.to_bits() + 1), v - 1e-15, v + 1e-15]);
            }
            ts.push(f64::NAN);
            for t in ts {
                assert_eq!(loc.locate(t), g.bin_of(t), "t = {t} on {g:?}");
            }
        }
    }
}
