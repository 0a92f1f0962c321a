//! Residual correlation between time bins for irregular visits (the binned correlation matrix)
//! and the correlation by bin lag.
//!
//! Each visit is placed in a [`TimeGrid`] bin. When a subject has several visits in one bin,
//! the visit nearest the bin's centre (its nominal time, or the midpoint of its edges) is used,
//! ties to the earlier visit; the others are counted as `visits_unused`. Visits outside every
//! bin are counted as `visits_outside`.
//!
//! For bins a and b the correlation is the Pearson correlation over the subjects with a value
//! in both (pairwise complete, as R's `cor(use = "pairwise.complete.obs")` and pandas
//! `DataFrame.corr`), with the number of those subjects. Cells with fewer than `min_count`
//! subjects, or with no spread, are NaN. Intervals use Fisher's z (Fisher 1915): tanh(atanh(r)
//! -/+ z_(1+level)/2 / sqrt(n - 3)), NaN for n <= 3.
//!
//! The lag correlation at lag L (in bins) averages the cells (a, a + L) that have a
//! correlation, weighted by their subject counts; its `gap` is the same weighted mean of the
//! distance between the bin centres.
//!
//! The moment sums ([`CorrelationMoments`]) are plain sums over subjects, so sums over
//! partitions of the subjects merge exactly (up to the order of additions) into the whole.

use rayon::prelude::*;
use serde::Serialize;

use crate::data::grid::{BinLocator, TimeGrid};
use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::individuals::ranking::check_residuals;
use crate::numeric::normal::normal_quantile;

/// Most bins a correlation grid may have.
pub const MAX_BINS: usize = 64;

/// Settings of [`binned_correlation`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CorrelationOptions {
    /// Coverage of the Fisher intervals, in (0, 1).
    pub level: f64,
    /// Fewest subjects behind a cell for its correlation to be shown (>= 2).
    pub min_count: usize,
}

impl Default for CorrelationOptions {
    fn default() -> Self {
        CorrelationOptions {
            level: 0.95,
            min_count: 3,
        }
    }
}

impl CorrelationOptions {
    /// Options from a front's numbers (absent ones take their defaults).
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for a level outside (0, 1) or a `min_count` that is not a
    /// whole number >= 2.
    pub fn from_numbers(level: Option<f64>, min_count: Option<f64>) -> Result<CorrelationOptions> {
        let d = CorrelationOptions::default();
        let o = CorrelationOptions {
            level: level.unwrap_or(d.level),
            min_count: match min_count {
                Some(m) => crate::error::whole_number("min_count", m, 2, u32::MAX as u64)? as usize,
                None => d.min_count,
            },
        };
        o.check()?;
        Ok(o)
    }

    fn check(&self) -> Result<()> {
        if !(self.level > 0.0 && self.level < 1.0) {
            return Err(Error::option("level", self.level, "a number in (0, 1)"));
        }
        if self.min_count < 2 {
            return Err(Error::option(
                "min_count",
                self.min_count,
                "a whole number >= 2 (a correlation needs two subjects)",
            ));
        }
        Ok(())
    }
}

/// Sums of n, x, y, x^2, y^2 and xy for every pair of bins a <= b: the mergeable state of a
/// binned correlation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CorrelationMoments {
    /// Number of bins k.
    pub bins: usize,
    /// k x k, row-major; cell (a, b) with a <= b holds [n, sum x, sum y, sum x^2, sum y^2,
    /// sum xy] with x the value in bin a and y in bin b (cells below the diagonal stay zero).
    pub sums: Vec<[f64; 6]>,
    /// Visits used (one per subject and bin at most).
    pub visits_used: u64,
    /// Visits outside every bin.
    pub visits_outside: u64,
    /// Visits in a bin where the subject had a visit nearer the bin's centre.
    pub visits_unused: u64,
}

impl CorrelationMoments {
    /// Zero sums for `bins` bins.
    pub fn new(bins: usize) -> CorrelationMoments {
        CorrelationMoments {
            bins,
            sums: vec![[0.0; 6]; bins * bins],
            visits_used: 0,
            visits_outside: 0,
            visits_unused: 0,
        }
    }

    /// The sums over the panel's subjects of `residuals` (one per row, panel order) on `grid`.
    ///
    /// # Errors
    /// As [`binned_correlation`].
    pub fn accumulate(
        panel: &Panel,
        residuals: &[f64],
        grid: &TimeGrid,
    ) -> Result<CorrelationMoments> {
        check_residuals(panel, residuals)?;
        let k = check_grid(grid)?;
        let s = panel.n_subjects();
        // A block count that depends only on the number of subjects, so the sums are the same
        // for any thread count, and at most 64 blocks of k x k cells alive at once.
        let block = s.div_ceil(64).max(512);
        let starts: Vec<usize> = (0..s).step_by(block).collect();
        let parts: Vec<CorrelationMoments> = starts
            .par_iter()
            .map(|&first| {
                let mut m = CorrelationMoments::new(k);
                let mut chosen: Vec<Option<(f64, f64)>> = vec![None; k];
                let mut present: Vec<(usize, f64)> = Vec::with_capacity(k);
                let locator = BinLocator::new(grid);
                for i in first..(first + block).min(s) {
                    m.add_subject(
                        panel,
                        residuals,
                        &locator,
                        grid,
                        i,
                        &mut chosen,
                        &mut present,
                    );
                }
                m
            })
            .collect();
        let mut total = CorrelationMoments::new(k);
        for p in &parts {
            total.merge(p)?;
        }
        Ok(total)
    }

    #[allow(clippy::too_many_arguments)] // per-block scratch passed in to avoid allocations
    fn add_subject(
        &mut self,
        panel: &Panel,
        residuals: &[f64],
        locator: &BinLocator<'_>,
        grid: &TimeGrid,
        i: usize,
        chosen: &mut [Option<(f64, f64)>],
        present: &mut Vec<(usize, f64)>,
    ) {
        let t = panel.time();
        chosen.iter_mut().for_each(|c| *c = None);
        for row in panel.subject_rows(i) {
            let Some(b) = locator.locate(t[row]) else {
                self.visits_outside += 1;
                continue;
            };
            let d = (t[row] - grid.centre(b)).abs();
            match chosen[b] {
                Some((best, _)) => {
                    self.visits_unused += 1;
                    if d < best {
                        chosen[b] = Some((d, residuals[row]));
                    }
                }
                None => chosen[b] = Some((d, residuals[row])),
            }
        }
        present.clear();
        present.extend(
            chosen
                .iter()
                .enumerate()
                .filter_map(|(b, c)| c.map(|(_, v)| (b, v))),
        );
        self.visits_used += present.len() as u64;
        let k = self.bins;
        for (p, &(a, x)) in present.iter().enumerate() {
            for &(b, y) in &present[p..] {
                let c = &mut self.sums[a * k + b];
                c[0] += 1.0;
                c[1] += x;
                c[2] += y;
                c[3] += x * x;
                c[4] += y * y;
                c[5] += x * y;
            }
        }
    }

    /// Adds another set of sums (from other subjects) to these.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `other` when the bin counts differ.
    pub fn merge(&mut self, other: &CorrelationMoments) -> Result<()> {
        if other.bins != self.bins {
            return Err(Error::option(
                "other",
                format!("{} bins", other.bins),
                &format!("sums over the same {} bins", self.bins),
            ));
        }
        for (c, o) in self.sums.iter_mut().zip(&other.sums) {
            for (x, y) in c.iter_mut().zip(o) {
                *x += y;
            }
        }
        self.visits_used += other.visits_used;
        self.visits_outside += other.visits_outside;
        self.visits_unused += other.visits_unused;
        Ok(())
    }

    /// The correlation matrix, intervals and lag correlation from these sums.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for options out of range or a grid whose bin count differs
    /// from the sums'; [`Error::TooFew`] when no pair of different bins shares `min_count`
    /// subjects.
    pub fn finish(
        &self,
        grid: &TimeGrid,
        options: &CorrelationOptions,
    ) -> Result<BinnedCorrelation> {
        options.check()?;
        let k = self.bins;
        if grid.n_bins() != k {
            return Err(Error::option(
                "grid",
                format!("{} bins", grid.n_bins()),
                &format!("the grid the sums were made on ({k} bins)"),
            ));
        }
        let q = normal_quantile(0.5 + options.level / 2.0);
        let mut correlation = vec![f64::NAN; k * k];
        let mut counts = vec![0u64; k * k];
        let (mut lower, mut upper) = (vec![f64::NAN; k * k], vec![f64::NAN; k * k]);
        let (mut means, mut sds) = (vec![f64::NAN; k], vec![f64::NAN; k]);
        let mut shown = 0usize;
        for a in 0..k {
            for b in a..k {
                let [n, sx, sy, sxx, syy, sxy] = self.sums[a * k + b];
                let (ab, ba) = (a * k + b, b * k + a);
                counts[ab] = n as u64;
                counts[ba] = n as u64;
                if a == b && n >= 1.0 {
                    means[a] = sx / n;
                    if n >= 2.0 {
                        sds[a] = ((sxx - sx * sx / n).max(0.0) / (n - 1.0)).sqrt();
                    }
                }
                if n < options.min_count as f64 {
                    continue;
                }
                let vx = sxx - sx * sx / n;
                let vy = syy - sy * sy / n;
                if !(vx > 0.0 && vy > 0.0) {
                    continue;
                }
                let r = ((sxy - sx * sy / n) / (vx * vy).sqrt()).clamp(-1.0, 1.0);
                let r = if a == b { 1.0 } else { r };
                correlation[ab] = r;
                correlation[ba] = r;
                if n > 3.0 {
                    let (z, h) = (r.atanh(), q / (n - 3.0).sqrt());
                    lower[ab] = (z - h).tanh();
                    upper[ab] = (z + h).tanh();
                    lower[ba] = lower[ab];
                    upper[ba] = upper[ab];
                }
                if a != b {
                    shown += 1;
                }
            }
        }
        if shown == 0 {
            return Err(Error::TooFew {
                what: format!(
                    "pairs of bins shared by at least {} subjects",
                    options.min_count
                ),
                estimate: "a binned correlation".into(),
                needed: 1,
                found: 0,
            });
        }
        let lags = lag_correlation(grid, &correlation, &counts);
        Ok(BinnedCorrelation {
            bins: (0..k).map(|i| grid.label(i)).collect(),
            centres: (0..k).map(|i| grid.centre(i)).collect(),
            correlation,
            counts,
            lower,
            upper,
            level: options.level,
            min_count: options.min_count,
            means,
            sds,
            lags,
            visits_used: self.visits_used,
            visits_outside: self.visits_outside,
            visits_unused: self.visits_unused,
        })
    }
}

/// Correlation by bin lag.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LagCorrelation {
    /// Lag in bins, 1..k-1.
    pub lag: Vec<usize>,
    /// Count-weighted mean distance between the bin centres at this lag (time units).
    pub gap: Vec<f64>,
    /// Count-weighted mean of the cells' correlations (NaN when no cell has one).
    pub correlation: Vec<f64>,
    /// Subjects summed over the cells used.
    pub pairs: Vec<u64>,
    /// Number of cells used.
    pub cells: Vec<usize>,
}

fn lag_correlation(grid: &TimeGrid, correlation: &[f64], counts: &[u64]) -> LagCorrelation {
    let k = grid.n_bins();
    let mut out = LagCorrelation {
        lag: Vec::new(),
        gap: Vec::new(),
        correlation: Vec::new(),
        pairs: Vec::new(),
        cells: Vec::new(),
    };
    for lag in 1..k {
        let (mut w, mut sr, mut sg, mut cells) = (0u64, 0.0, 0.0, 0usize);
        for a in 0..k - lag {
            let c = a * k + a + lag;
            if correlation[c].is_finite() {
                let n = counts[c];
                w += n;
                sr += n as f64 * correlation[c];
                sg += n as f64 * (grid.centre(a + lag) - grid.centre(a));
                cells += 1;
            }
        }
        out.lag.push(lag);
        out.gap.push(if w > 0 { sg / w as f64 } else { f64::NAN });
        out.correlation
            .push(if w > 0 { sr / w as f64 } else { f64::NAN });
        out.pairs.push(w);
        out.cells.push(cells);
    }
    out
}

/// A binned residual correlation matrix with counts and intervals, and the lag correlation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BinnedCorrelation {
    /// Bin labels.
    pub bins: Vec<String>,
    /// Bin centres (nominal times or edge midpoints).
    pub centres: Vec<f64>,
    /// k x k row-major, symmetric; NaN where not estimable.
    pub correlation: Vec<f64>,
    /// k x k: subjects with a value in both bins (the diagonal: in the bin).
    pub counts: Vec<u64>,
    /// k x k: lower Fisher limits.
    pub lower: Vec<f64>,
    /// k x k: upper Fisher limits.
    pub upper: Vec<f64>,
    /// Coverage of the intervals.
    pub level: f64,
    /// Fewest subjects behind a shown cell.
    pub min_count: usize,
    /// Mean residual per bin.
    pub means: Vec<f64>,
    /// Standard deviation (n - 1) of the residuals per bin.
    pub sds: Vec<f64>,
    /// Correlation by bin lag.
    pub lags: LagCorrelation,
    /// Visits used.
    pub visits_used: u64,
    /// Visits outside every bin.
    pub visits_outside: u64,
    /// Visits not used because the subject had a visit nearer the bin's centre.
    pub visits_unused: u64,
}

/// The correlation of `residuals` (one per panel row, panel order) between the bins of `grid`.
///
/// # Examples
/// ```
/// use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
/// use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};
/// # fn main() -> trajweave_core::Result<()> {
/// // Four subjects seen at times 0 and 1; the second value follows the first exactly.
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2), Some(3), Some(3), Some(4), Some(4)]);
/// let t = [0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0];
/// let r = [1.0, 2.0, -1.0, -2.0, 0.5, 1.0, 0.0, 0.0];
/// let p = Panel::new(ids, &t, &r, vec![], Missing::Error)?;
/// let grid = TimeGrid::schedule(vec![0.0, 1.0], 0.2)?;
/// let c = binned_correlation(&p, p.response(), &grid, &CorrelationOptions::default())?;
/// assert!((c.correlation[1] - 1.0).abs() < 1e-12);
/// assert_eq!(c.counts[1], 4);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] or [`Error::NonFinite`] for `residuals` (rows counted from 1 in
/// the caller's order); [`Error::InvalidOption`] for a grid with fewer than 2 or more than
/// [`MAX_BINS`] bins or options out of range; [`Error::TooFew`] when no pair of bins shares
/// `min_count` subjects.
pub fn binned_correlation(
    panel: &Panel,
    residuals: &[f64],
    grid: &TimeGrid,
    options: &CorrelationOptions,
) -> Result<BinnedCorrelation> {
    options.check()?;
    CorrelationMoments::accumulate(panel, residuals, grid)?.finish(grid, options)
}

fn check_grid(grid: &TimeGrid) -> Result<usize> {
    let k = grid.n_bins();
    if !(2..=MAX_BINS).contains(&k) {
        return Err(Error::option(
            "grid",
            format!("{k} bins"),
            &format!("a grid of 2 to {MAX_BINS} bins"),
        ));
    }
    Ok(k)
}
