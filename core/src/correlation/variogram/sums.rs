//! The mergeable sums behind a variogram: per lag bin the pair count and the sums of lag,
//! half squared difference and root absolute difference; and the sums that give the process
//! variance over between-subject pairs without enumerating them.

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};

/// Per-bin sums of within-subject pairs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LagSums {
    /// Bin edges: bins [e_0, e_1), ..., [e_(k-1), e_k] (the last closed).
    pub edges: Vec<f64>,
    /// Per bin: [pairs, sum u, sum (r_j - r_k)^2 / 2, sum |r_j - r_k|^(1/2)].
    pub cells: Vec<[f64; 4]>,
    /// Pairs with a lag above the last edge (or below the first).
    pub outside: u64,
}

/// Sums giving the variance over all between-subject pairs in O(n).
///
/// For n values with mean m, the sum over all pairs of (r_j - r_k)^2 is n sum (r - m)^2; the
/// same per subject gives the within-subject part; their difference is the between-subject
/// sum. Values are combined by Chan, Golub & LeVeque's (1979) update of (n, mean, sum of
/// squares), so partitions merge exactly up to rounding.
///
/// The visit times are summed alongside, so that the mean and variance of the times can be
/// weighted as the process variance weights its rows: a visit of subject i lies in n - n_i
/// between-subject pairs, so its weight is n - n_i, and sum_a (n - n_i(a)) t_a =
/// n sum t - sum_i n_i sum_(a in i) t_a (likewise for t^2). The random-slope variogram model
/// needs them (see [`super::fit`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProcessSums {
    /// Number of values.
    pub n: f64,
    /// Their mean.
    pub mean: f64,
    /// Sum of squared deviations from the mean.
    pub m2: f64,
    /// Sum over within-subject pairs of (r_j - r_k)^2.
    pub within: f64,
    /// Number of within-subject pairs.
    pub within_pairs: f64,
    /// Sum of the visit times.
    pub time_sum: f64,
    /// Sum of the squared visit times.
    pub time_sq_sum: f64,
    /// Sum over subjects of n_i times the sum of their visit times.
    pub sized_time_sum: f64,
    /// Sum over subjects of n_i times the sum of their squared visit times.
    pub sized_time_sq_sum: f64,
}

impl ProcessSums {
    /// Empty sums.
    pub fn new() -> ProcessSums {
        ProcessSums {
            n: 0.0,
            mean: 0.0,
            m2: 0.0,
            within: 0.0,
            within_pairs: 0.0,
            time_sum: 0.0,
            time_sq_sum: 0.0,
            sized_time_sum: 0.0,
            sized_time_sq_sum: 0.0,
        }
    }

    /// Adds one subject's visit times `t` and values `r` (of equal length).
    pub fn add_subject(&mut self, t: &[f64], r: &[f64]) {
        let n = r.len() as f64;
        if r.is_empty() {
            return;
        }
        let (s1, s2) = t.iter().fold((0.0, 0.0), |(a, b), &x| (a + x, b + x * x));
        self.time_sum += s1;
        self.time_sq_sum += s2;
        self.sized_time_sum += n * s1;
        self.sized_time_sq_sum += n * s2;
        let mean = r.iter().sum::<f64>() / n;
        let m2: f64 = r.iter().map(|x| (x - mean) * (x - mean)).sum();
        self.within += n * m2;
        self.within_pairs += n * (n - 1.0) / 2.0;
        self.merge_moments(n, mean, m2);
    }

    fn merge_moments(&mut self, n: f64, mean: f64, m2: f64) {
        let total = self.n + n;
        if total == 0.0 {
            return;
        }
        let delta = mean - self.mean;
        self.m2 += m2 + delta * delta * self.n * n / total;
        self.mean += delta * n / total;
        self.n = total;
    }

    /// Adds sums over other subjects.
    pub fn merge(&mut self, other: &ProcessSums) {
        self.within += other.within;
        self.within_pairs += other.within_pairs;
        self.time_sum += other.time_sum;
        self.time_sq_sum += other.time_sq_sum;
        self.sized_time_sum += other.sized_time_sum;
        self.sized_time_sq_sum += other.sized_time_sq_sum;
        self.merge_moments(other.n, other.mean, other.m2);
    }

    /// Number of between-subject pairs.
    pub fn between_pairs(&self) -> f64 {
        self.n * (self.n - 1.0) / 2.0 - self.within_pairs
    }

    /// Mean of (r_j - r_k)^2 / 2 over between-subject pairs (NaN when there are none).
    pub fn process_variance(&self) -> f64 {
        let pairs = self.between_pairs();
        if pairs > 0.0 {
            (self.n * self.m2 - self.within) / (2.0 * pairs)
        } else {
            f64::NAN
        }
    }

    /// Mean and variance of the visit times, each visit weighted by its number of
    /// between-subject pairs n - n_i, as in the process variance (NaN when there are no such
    /// pairs). The variance is the weighted mean square about the weighted mean, >= 0.
    pub fn time_moments(&self) -> (f64, f64) {
        // sum_a (n - n_i) = n^2 - sum_i n_i^2 = 2 x between-subject pairs.
        let weight = 2.0 * self.between_pairs();
        if weight <= 0.0 {
            return (f64::NAN, f64::NAN);
        }
        let mean = (self.n * self.time_sum - self.sized_time_sum) / weight;
        let second = (self.n * self.time_sq_sum - self.sized_time_sq_sum) / weight;
        (mean, (second - mean * mean).max(0.0))
    }

    /// Sample variance (n - 1) of all values.
    pub fn variance(&self) -> f64 {
        if self.n > 1.0 {
            self.m2 / (self.n - 1.0)
        } else {
            f64::NAN
        }
    }
}

impl Default for ProcessSums {
    fn default() -> Self {
        ProcessSums::new()
    }
}

impl LagSums {
    /// Zero sums on `edges` (at least two, increasing; checked by the caller).
    pub fn new(edges: Vec<f64>) -> LagSums {
        let k = edges.len() - 1;
        LagSums {
            edges,
            cells: vec![[0.0; 4]; k],
            outside: 0,
        }
    }

    /// Adds sums over other subjects on the same edges.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `other` when the edges differ.
    pub fn merge(&mut self, other: &LagSums) -> Result<()> {
        if other.edges != self.edges {
            return Err(Error::option(
                "other",
                "sums on other lag edges",
                "merge sums made on the same lag bins",
            ));
        }
        for (c, o) in self.cells.iter_mut().zip(&other.cells) {
            for (x, y) in c.iter_mut().zip(o) {
                *x += y;
            }
        }
        self.outside += other.outside;
        Ok(())
    }

    /// Merges runs of neighbouring bins into `bins` bins with about equal pair counts: a bin
    /// closes at the first edge where the running count reaches j / bins of the total.
    pub fn coarsen_equal_count(&self, bins: usize) -> LagSums {
        let total: f64 = self.cells.iter().map(|c| c[0]).sum();
        let mut edges = vec![self.edges[0]];
        let mut cells = Vec::with_capacity(bins);
        let mut acc = [0.0; 4];
        let mut running = 0.0;
        let last = self.cells.len() - 1;
        for (i, c) in self.cells.iter().enumerate() {
            for (a, x) in acc.iter_mut().zip(c) {
                *a += x;
            }
            running += c[0];
            let target = total * (cells.len() + 1) as f64 / bins as f64;
            if (acc[0] > 0.0 && running >= target && cells.len() + 1 < bins) || i == last {
                edges.push(self.edges[i + 1]);
                cells.push(acc);
                acc = [0.0; 4];
            }
        }
        LagSums {
            edges,
            cells,
            outside: self.outside,
        }
    }
}

/// Subjects per block of the parallel pass: fixed by the number of subjects, so the sums do
/// not depend on the thread count, and few enough blocks that their sums fit in memory.
pub(crate) fn block_size(subjects: usize) -> usize {
    subjects.div_ceil(256).max(1024)
}

/// The lag sums and process sums of `residuals` (panel order) over all the panel's subjects.
pub(crate) fn accumulate(
    panel: &Panel,
    residuals: &[f64],
    edges: &[f64],
) -> (LagSums, ProcessSums) {
    let s = panel.n_subjects();
    let block = block_size(s);
    let starts: Vec<usize> = (0..s).step_by(block).collect();
    let k = edges.len() - 1;
    let (lo, hi) = (edges[0], edges[k]);
    let width = (hi - lo) / k as f64;
    let uniform = edges
        .iter()
        .enumerate()
        .all(|(i, &e)| (e - (lo + i as f64 * width)).abs() <= 1e-12 * hi.abs().max(1.0));
    let parts: Vec<(LagSums, ProcessSums)> = starts
        .par_iter()
        .map(|&first| {
            let mut lags = LagSums::new(edges.to_vec());
            let mut process = ProcessSums::new();
            let subjects = first..(first + block).min(s);
            // Two monomorphised loops rather than the time grid's general locator: on this
            // loop (every within-subject pair) the specialised closures are 1.6x faster.
            if uniform {
                let inv = 1.0 / width;
                let locate = |u: f64| {
                    // The arithmetic guess, corrected against the edges themselves so the bins
                    // are exactly those the edges define.
                    let mut b = (((u - lo) * inv) as usize).min(k - 1);
                    if u < edges[b] {
                        b -= 1;
                    } else if b + 1 < k && u >= edges[b + 1] {
                        b += 1;
                    }
                    b
                };
                add_pairs(
                    panel,
                    residuals,
                    subjects,
                    lo,
                    hi,
                    &mut lags,
                    &mut process,
                    locate,
                );
            } else {
                let locate = |u: f64| (edges.partition_point(|&e| e <= u) - 1).min(k - 1);
                add_pairs(
                    panel,
                    residuals,
                    subjects,
                    lo,
                    hi,
                    &mut lags,
                    &mut process,
                    locate,
                );
            }
            (lags, process)
        })
        .collect();
    let mut lags = LagSums::new(edges.to_vec());
    let mut process = ProcessSums::new();
    for (l, p) in &parts {
        // Same edges by construction.
        let _ = lags.merge(l);
        process.merge(p);
    }
    (lags, process)
}

/// The process sums alone, in parallel over fixed blocks of subjects.
pub(crate) fn process_sums(panel: &Panel, residuals: &[f64]) -> ProcessSums {
    let s = panel.n_subjects();
    let block = block_size(s);
    let starts: Vec<usize> = (0..s).step_by(block).collect();
    let parts: Vec<ProcessSums> = starts
        .par_iter()
        .map(|&first| {
            let mut p = ProcessSums::new();
            for i in first..(first + block).min(s) {
                let rows = panel.subject_rows(i);
                p.add_subject(&panel.time()[rows.clone()], &residuals[rows]);
            }
            p
        })
        .collect();
    let mut total = ProcessSums::new();
    for p in &parts {
        total.merge(p);
    }
    total
}

#[allow(clippy::too_many_arguments)]
fn add_pairs(
    panel: &Panel,
    residuals: &[f64],
    subjects: std::ops::Range<usize>,
    lo: f64,
    hi: f64,
    lags: &mut LagSums,
    process: &mut ProcessSums,
    locate: impl Fn(f64) -> usize,
) {
    let time = panel.time();
    let cells = &mut lags.cells;
    let mut outside = 0u64;
    for i in subjects {
        let rows = panel.subject_rows(i);
        let (t, r) = (&time[rows.clone()], &residuals[rows]);
        process.add_subject(t, r);
        for j in 0..t.len() {
            let (tj, rj) = (t[j], r[j]);
            for k in j + 1..t.len() {
                // Times are sorted within a subject, so u only grows with k.
                let u = t[k] - tj;
                if u > hi {
                    outside += (t.len() - k) as u64;
                    break;
                }
                if u < lo {
                    outside += 1;
                    continue;
                }
                let d = r[k] - rj;
                let c = &mut cells[locate(u)];
                c[0] += 1.0;
                c[1] += u;
                c[2] += 0.5 * d * d;
                c[3] += d.abs().sqrt();
            }
        }
    }
    lags.outside += outside;
}
