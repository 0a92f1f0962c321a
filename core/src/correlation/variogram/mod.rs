//! The empirical variogram of residuals (Diggle 1988, Biometrics 44:959-971) and the process
//! variance.
//!
//! For every pair of visits j < k of one subject, u = t_k - t_j and v = (r_k - r_j)^2 / 2.
//! Pairs are binned by u as they are formed (never stored): bins of equal width from 0 to the
//! maximum lag, given edges, or bins of about equal pair count (the pairs are first counted in
//! [`FINE_BINS`] equal-width cells, and neighbouring cells are merged until each bin holds
//! about 1/k of the pairs, so the edges fall on cell edges). Pairs with u above the maximum lag
//! are left out and counted. Per bin: the number of pairs, their mean lag, the classical
//! estimate mean(v), and the robust estimate of Cressie & Hawkins (1980),
//! (mean |r_k - r_j|^(1/2))^4 / (0.457 + 0.494 / N) / 2. Bins with fewer than `min_pairs`
//! pairs (default 30, common practice with no single source) report their count and NaN.
//!
//! The process variance is the mean of v over all pairs of visits of *different* subjects,
//! from the identity sum over all pairs (r_j - r_k)^2 = n sum (r - mean)^2 applied to all
//! values and to each subject (O(n), see [`ProcessSums`]). Under the usual decomposition
//! (random intercept nu^2 + serial sigma^2 + error tau^2) it estimates their sum.
//!
//! The sums ([`LagSums`], [`ProcessSums`]) merge exactly across partitions of the subjects:
//! [`variogram_sums`] on each part, [`VariogramSums::merge`], then [`VariogramSums::finish`].
//!
//! Optional extras: a seeded sample of raw pairs (see [`pairs`]), all pairs only up to
//! [`PAIR_LIMIT`], and a smoothed variogram: any [`Smoother`] fitted to v on u over the sample
//! (or, when no sample is asked, over a seeded sample of [`SMOOTH_PAIRS`] pairs).

pub mod fit;
pub mod pairs;
pub mod sums;

use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{whole_number, Error, Result, MAX_SEED};
use crate::individuals::ranking::check_residuals;
use crate::trend::curve::Curve;
use crate::trend::smoother::Smoother;

pub use pairs::PairSample;
pub use sums::{LagSums, ProcessSums};

/// Cells counted before equal-count bins are formed.
pub const FINE_BINS: usize = 4096;
/// Most raw pairs returned when all are asked for (about 320 MB as lag, value and subject).
pub const PAIR_LIMIT: u64 = 10_000_000;
/// Pairs the smoothed variogram is fitted to when no sample is asked for.
pub const SMOOTH_PAIRS: usize = 20_000;
/// Most lag bins.
pub const MAX_LAG_BINS: usize = 1000;

/// How lags are binned.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", content = "value", rename_all = "snake_case")]
pub enum LagBins {
    /// This many bins of equal width from 0 to the maximum lag.
    EqualWidth(usize),
    /// This many bins of about equal pair count from 0 to the maximum lag.
    EqualCount(usize),
    /// Given edges (the last one is the maximum lag).
    Edges(Vec<f64>),
}

impl LagBins {
    /// Bins from a front's options: `kind` "equal_width" (default) or "equal_count" with a
    /// number of `bins` (default 20), or `edges`.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::correlation::variogram::LagBins;
    /// # fn main() -> trajweave_core::Result<()> {
    /// assert_eq!(LagBins::from_options(None, None, None)?, LagBins::EqualWidth(20));
    /// assert_eq!(LagBins::from_options(Some("equal_count"), Some(8.0), None)?, LagBins::EqualCount(8));
    /// assert!(LagBins::from_options(None, Some(2.5), None).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown kind, a count that is not a whole number in
    /// 1..=1000, edges that are not increasing from >= 0, or edges given with a kind or count.
    pub fn from_options(
        kind: Option<&str>,
        bins: Option<f64>,
        edges: Option<Vec<f64>>,
    ) -> Result<LagBins> {
        if let Some(edges) = edges {
            if kind.is_some() || bins.is_some() {
                return Err(Error::option(
                    "lag_edges",
                    "given with a bin kind or count",
                    "give either lag edges or a kind and number of bins",
                ));
            }
            check_edges(&edges)?;
            return Ok(LagBins::Edges(edges));
        }
        let n = match bins {
            None => 20,
            Some(b) if b.fract() == 0.0 && (1.0..=MAX_LAG_BINS as f64).contains(&b) => b as usize,
            Some(b) => {
                return Err(Error::option(
                    "lag_bins",
                    b,
                    &format!("a whole number of bins from 1 to {MAX_LAG_BINS}"),
                ))
            }
        };
        match kind.unwrap_or("equal_width") {
            "equal_width" => Ok(LagBins::EqualWidth(n)),
            "equal_count" => Ok(LagBins::EqualCount(n)),
            other => Err(Error::option(
                "lag_kind",
                format!("{other:?}"),
                "\"equal_width\" or \"equal_count\"",
            )),
        }
    }
}

fn check_edges(edges: &[f64]) -> Result<()> {
    let ok = edges.len() >= 2
        && edges.len() <= MAX_LAG_BINS + 1
        && edges.iter().all(|e| e.is_finite())
        && edges[0] >= 0.0
        && edges.windows(2).all(|w| w[0] < w[1]);
    if ok {
        Ok(())
    } else {
        Err(Error::option(
            "lag_edges",
            format!("{edges:?}"),
            &format!(
                "2 to {} finite, strictly increasing lag edges starting at >= 0",
                MAX_LAG_BINS + 1
            ),
        ))
    }
}

/// How many raw pairs to return.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", content = "value", rename_all = "snake_case")]
pub enum SampleSize {
    /// None.
    Off,
    /// A seeded sample of at most this many.
    Count(usize),
    /// Every pair (refused above [`PAIR_LIMIT`]).
    All,
}

impl SampleSize {
    /// From a number of pairs (a whole number >= 1).
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `sample` otherwise.
    pub fn from_number(n: f64) -> Result<SampleSize> {
        if n.fract() == 0.0 && n >= 1.0 && n <= PAIR_LIMIT as f64 {
            Ok(SampleSize::Count(n as usize))
        } else {
            Err(Error::option(
                "sample",
                n,
                &format!("a whole number of pairs from 1 to {PAIR_LIMIT}, or \"all\""),
            ))
        }
    }

    /// From text: "all", or a number of pairs.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `sample` for anything else.
    pub fn from_text(s: &str) -> Result<SampleSize> {
        match s {
            "all" => Ok(SampleSize::All),
            _ => match s.parse::<f64>() {
                Ok(n) => SampleSize::from_number(n),
                Err(_) => Err(Error::option(
                    "sample",
                    format!("{s:?}"),
                    "\"all\" or a whole number of pairs",
                )),
            },
        }
    }
}

/// Settings of [`variogram`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VariogramOptions {
    /// Lag bins.
    pub bins: LagBins,
    /// Largest lag kept; default the longest follow-up of any subject. Not allowed with
    /// [`LagBins::Edges`] (their last edge is the maximum).
    pub max_lag: Option<f64>,
    /// Fewest pairs for a bin's estimate to be given.
    pub min_pairs: usize,
    /// Raw pairs to return.
    pub sample: SampleSize,
    /// Seed of the pair sample.
    pub seed: u64,
    /// Smoother of v on u, if a smoothed variogram is wanted.
    pub smoother: Option<Smoother>,
}

impl Default for VariogramOptions {
    fn default() -> Self {
        VariogramOptions {
            bins: LagBins::EqualWidth(20),
            max_lag: None,
            min_pairs: 30,
            sample: SampleSize::Off,
            seed: 1,
            smoother: None,
        }
    }
}

impl VariogramOptions {
    /// Options from a front's values (absent ones take their defaults): lag bins as in
    /// [`LagBins::from_options`], `sample` as a number of pairs or the text "all".
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option out of range.
    #[allow(clippy::too_many_arguments)] // one argument per option, as every front has them
    pub fn from_front(
        lag_kind: Option<&str>,
        lag_bins: Option<f64>,
        lag_edges: Option<Vec<f64>>,
        max_lag: Option<f64>,
        min_pairs: Option<f64>,
        sample: Option<&str>,
        seed: Option<f64>,
        smoother: Option<Smoother>,
    ) -> Result<VariogramOptions> {
        let d = VariogramOptions::default();
        Ok(VariogramOptions {
            bins: LagBins::from_options(lag_kind, lag_bins, lag_edges)?,
            max_lag,
            min_pairs: match min_pairs {
                Some(m) => whole_number("min_pairs", m, 1, u32::MAX as u64)? as usize,
                None => d.min_pairs,
            },
            sample: match sample {
                Some(s) => SampleSize::from_text(s)?,
                None => SampleSize::Off,
            },
            seed: match seed {
                Some(s) => whole_number("seed", s, 0, MAX_SEED)?,
                None => d.seed,
            },
            smoother,
        })
    }
}

/// Lag and process sums of one set of subjects (see [`variogram_sums`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VariogramSums {
    /// Within-subject pair sums by lag bin.
    pub lags: LagSums,
    /// Sums for the process variance.
    pub process: ProcessSums,
    /// Subjects summed.
    pub subjects: usize,
}

impl VariogramSums {
    /// Adds the sums of other subjects.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when the lag edges differ.
    pub fn merge(&mut self, other: &VariogramSums) -> Result<()> {
        self.lags.merge(&other.lags)?;
        self.process.merge(&other.process);
        self.subjects += other.subjects;
        Ok(())
    }

    /// The variogram estimates from the sums: equal-count bins are formed here when `bins` asks
    /// for them (the sums then hold [`FINE_BINS`] cells).
    ///
    /// # Errors
    /// [`Error::TooFew`] when no bin has `min_pairs` pairs.
    pub fn finish(&self, bins: &LagBins, min_pairs: usize) -> Result<Variogram> {
        let lags = match bins {
            LagBins::EqualCount(k) => self.lags.coarsen_equal_count(*k),
            _ => self.lags.clone(),
        };
        let m = lags.cells.len();
        let (time_mean, time_variance) = self.process.time_moments();
        let mut out = Variogram {
            lower: lags.edges[..m].to_vec(),
            upper: lags.edges[1..].to_vec(),
            lag: Vec::with_capacity(m),
            pairs: Vec::with_capacity(m),
            classical: Vec::with_capacity(m),
            robust: Vec::with_capacity(m),
            min_pairs,
            max_lag: lags.edges[m],
            pairs_in_bins: 0,
            pairs_outside: lags.outside,
            process_variance: self.process.process_variance(),
            variance: self.process.variance(),
            between_pairs: self.process.between_pairs(),
            time_mean,
            time_variance,
            subjects: self.subjects,
            observations: self.process.n as usize,
            sample: None,
            smoothed: None,
            smoothed_pairs: 0,
        };
        let mut usable = 0;
        for c in &lags.cells {
            let [n, su, sv, sr] = *c;
            out.pairs.push(n as u64);
            out.pairs_in_bins += n as u64;
            out.lag.push(if n > 0.0 { su / n } else { f64::NAN });
            if n >= min_pairs as f64 && n > 0.0 {
                usable += 1;
                out.classical.push(sv / n);
                out.robust
                    .push((sr / n).powi(4) / (0.457 + 0.494 / n) / 2.0);
            } else {
                out.classical.push(f64::NAN);
                out.robust.push(f64::NAN);
            }
        }
        if usable == 0 {
            return Err(Error::TooFew {
                what: format!("lag bins with at least {min_pairs} pairs"),
                estimate: "a variogram".into(),
                needed: 1,
                found: 0,
            });
        }
        Ok(out)
    }
}

/// An empirical variogram with the process variance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Variogram {
    /// Lower edge of each lag bin.
    pub lower: Vec<f64>,
    /// Upper edge of each lag bin.
    pub upper: Vec<f64>,
    /// Mean lag of the pairs in each bin (NaN when empty).
    pub lag: Vec<f64>,
    /// Pairs per bin.
    pub pairs: Vec<u64>,
    /// Classical estimate mean(v) per bin (NaN below `min_pairs`).
    pub classical: Vec<f64>,
    /// Cressie-Hawkins robust estimate per bin (NaN below `min_pairs`).
    pub robust: Vec<f64>,
    /// Fewest pairs for an estimate.
    pub min_pairs: usize,
    /// Largest lag kept.
    pub max_lag: f64,
    /// Pairs in the bins.
    pub pairs_in_bins: u64,
    /// Within-subject pairs left out (lag beyond the bins).
    pub pairs_outside: u64,
    /// Mean of v over between-subject pairs.
    pub process_variance: f64,
    /// Sample variance of the residuals.
    pub variance: f64,
    /// Number of between-subject pairs.
    pub between_pairs: f64,
    /// Mean of the visit times, each visit weighted by its number of between-subject pairs
    /// (n - n_i), as in the process variance.
    pub time_mean: f64,
    /// Variance of the visit times under the same weights (the random-slope model's
    /// intercept variance at `time_mean` needs it).
    pub time_variance: f64,
    /// Subjects.
    pub subjects: usize,
    /// Observations.
    pub observations: usize,
    /// Raw pairs, if asked for.
    pub sample: Option<PairSample>,
    /// The smoothed variogram, if asked for.
    pub smoothed: Option<Curve>,
    /// Pairs the smoother was fitted to.
    pub smoothed_pairs: usize,
}

impl Variogram {
    /// A variogram rebuilt from the fields a fit needs, as a front holds them (mean lag, pairs,
    /// classical and robust estimates per bin with NaN where absent, the maximum lag and the
    /// process variance), so [`fit::fit_variogram`] gives the same fit from any front. The
    /// weighted visit-time moments start as NaN; set them with [`Variogram::with_times`] (the
    /// random-slope fit needs them for the intercept variance).
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] when the per-bin fields differ in length from `lag`;
    /// [`Error::InvalidOption`] for a `max_lag` that is not finite and > 0.
    pub fn for_fit(
        lag: Vec<f64>,
        pairs: Vec<u64>,
        classical: Vec<f64>,
        robust: Vec<f64>,
        max_lag: f64,
        process_variance: f64,
    ) -> Result<Variogram> {
        for (name, n) in [
            ("pairs", pairs.len()),
            ("classical", classical.len()),
            ("robust", robust.len()),
        ] {
            if n != lag.len() {
                return Err(Error::LengthMismatch {
                    argument: name.into(),
                    reference: "lag".into(),
                    expected: lag.len(),
                    found: n,
                });
            }
        }
        if !(max_lag.is_finite() && max_lag > 0.0) {
            return Err(Error::option("max_lag", max_lag, "a finite number > 0"));
        }
        let m = lag.len();
        Ok(Variogram {
            lower: vec![f64::NAN; m],
            upper: vec![f64::NAN; m],
            pairs_in_bins: pairs.iter().sum(),
            lag,
            pairs,
            classical,
            robust,
            min_pairs: 0,
            max_lag,
            pairs_outside: 0,
            process_variance,
            variance: f64::NAN,
            between_pairs: f64::NAN,
            time_mean: f64::NAN,
            time_variance: f64::NAN,
            subjects: 0,
            observations: 0,
            sample: None,
            smoothed: None,
            smoothed_pairs: 0,
        })
    }

    /// The same variogram with the weighted visit-time mean and variance set (the fields
    /// `time_mean` and `time_variance` as [`variogram`] reports them).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::correlation::variogram::Variogram;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let vg = Variogram::for_fit(vec![1.0, 2.0, 3.0], vec![40; 3], vec![2.0, 3.0, 3.5],
    ///     vec![2.0, 3.0, 3.5], 3.0, 6.0)?.with_times(2.5, 4.0);
    /// assert_eq!((vg.time_mean, vg.time_variance), (2.5, 4.0));
    /// # Ok(()) }
    /// ```
    pub fn with_times(mut self, mean: f64, variance: f64) -> Variogram {
        self.time_mean = mean;
        self.time_variance = variance;
        self
    }
}

/// The largest lag of the options, or the longest follow-up in the panel.
fn resolve_max_lag(panel: &Panel, options: &VariogramOptions) -> Result<f64> {
    match (&options.bins, options.max_lag) {
        (LagBins::Edges(_), Some(_)) => Err(Error::option(
            "max_lag",
            "given with lag edges",
            "leave max_lag out: the last lag edge is the maximum lag",
        )),
        (LagBins::Edges(e), None) => Ok(e[e.len() - 1]),
        (_, Some(m)) if m.is_finite() && m > 0.0 => Ok(m),
        (_, Some(m)) => Err(Error::option("max_lag", m, "a finite number > 0")),
        (_, None) => {
            let t = panel.time();
            let longest = (0..panel.n_subjects())
                .map(|i| {
                    let r = panel.subject_rows(i);
                    t[r.end - 1] - t[r.start]
                })
                .fold(0.0, f64::max);
            if longest > 0.0 {
                Ok(longest)
            } else {
                Err(Error::TooFew {
                    what: "subjects with visits at two different times".into(),
                    estimate: "a variogram".into(),
                    needed: 1,
                    found: 0,
                })
            }
        }
    }
}

/// The edges the sums are made on.
fn sum_edges(bins: &LagBins, max_lag: f64) -> Result<Vec<f64>> {
    let equal = |k: usize| -> Vec<f64> {
        let w = max_lag / k as f64;
        let mut e: Vec<f64> = (0..k).map(|i| i as f64 * w).collect();
        e.push(max_lag);
        e
    };
    match bins {
        LagBins::EqualWidth(k) | LagBins::EqualCount(k) if *k == 0 || *k > MAX_LAG_BINS => {
            Err(Error::option(
                "lag_bins",
                k,
                &format!("a whole number of bins from 1 to {MAX_LAG_BINS}"),
            ))
        }
        LagBins::EqualWidth(k) => Ok(equal(*k)),
        LagBins::EqualCount(_) => Ok(equal(FINE_BINS)),
        LagBins::Edges(e) => {
            check_edges(e)?;
            Ok(e.clone())
        }
    }
}

/// The mergeable sums of `residuals` (one per panel row, panel order) on the lag bins of
/// `options` (for equal-count bins, on [`FINE_BINS`] cells).
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::{variogram, variogram_sums, VariogramOptions};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let p = simulate(&SimulateOptions { subjects: 200, ..Default::default() })?.to_panel()?;
/// let r: Vec<f64> = p.response().iter().map(|y| y - 50.0).collect();
/// let o = VariogramOptions { max_lag: Some(6.0), ..Default::default() };
/// let whole = variogram(&p, &r, &o)?;
/// let sums = variogram_sums(&p, &r, &o)?;
/// assert_eq!(sums.finish(&o.bins, o.min_pairs)?.pairs, whole.pairs);
/// # Ok(()) }
/// ```
///
/// # Errors
/// As [`variogram`].
pub fn variogram_sums(
    panel: &Panel,
    residuals: &[f64],
    options: &VariogramOptions,
) -> Result<VariogramSums> {
    check_residuals(panel, residuals)?;
    let max_lag = resolve_max_lag(panel, options)?;
    let edges = sum_edges(&options.bins, max_lag)?;
    let (lags, process) = sums::accumulate(panel, residuals, &edges);
    Ok(VariogramSums {
        lags,
        process,
        subjects: panel.n_subjects(),
    })
}

/// Refuses to return every pair when there are more than [`PAIR_LIMIT`].
fn check_all_pairs(pairs: u64) -> Result<()> {
    if pairs > PAIR_LIMIT {
        return Err(Error::option(
            "sample",
            format!("\"all\" ({pairs} pairs)"),
            &format!("at most {PAIR_LIMIT} pairs: ask for a sample count instead"),
        ));
    }
    Ok(())
}

/// The process variance alone: the mean of (r_j - r_k)^2 / 2 over all pairs of rows of
/// different subjects, in O(n) (see [`ProcessSums`]).
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::process_variance;
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2)]);
/// let p = Panel::new(ids, &[0.0, 1.0, 0.0], &[0.0, 2.0, 4.0], vec![], Missing::Error)?;
/// // Between-subject pairs: (0, 4) and (2, 4), v = 8 and 2.
/// assert_eq!(process_variance(&p, p.response())?, 5.0);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] / [`Error::NonFinite`] for `residuals`; [`Error::TooFew`] for a
/// panel with one subject.
pub fn process_variance(panel: &Panel, residuals: &[f64]) -> Result<f64> {
    check_residuals(panel, residuals)?;
    if panel.n_subjects() < 2 {
        return Err(Error::TooFew {
            what: "subjects".into(),
            estimate: "the process variance".into(),
            needed: 2,
            found: panel.n_subjects(),
        });
    }
    Ok(sums::process_sums(panel, residuals).process_variance())
}

/// The empirical variogram of `residuals` (one per panel row, panel order).
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::{variogram, VariogramOptions, LagBins};
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(1), Some(2), Some(2)]);
/// let p = Panel::new(ids, &[0.0, 1.0, 2.0, 0.0, 1.0], &[1.0, 3.0, 2.0, 0.0, 2.0], vec![], Missing::Error)?;
/// let o = VariogramOptions { bins: LagBins::Edges(vec![0.0, 1.5, 2.5]), min_pairs: 1, ..Default::default() };
/// let v = variogram(&p, p.response(), &o)?;
/// assert_eq!(v.pairs, vec![3, 1]); // lags 1, 1, 1 and 2
/// assert_eq!(v.classical, vec![(4.0 + 1.0 + 4.0) / 2.0 / 3.0, 0.5]);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] / [`Error::NonFinite`] for `residuals`; [`Error::InvalidOption`]
/// for bins, `max_lag`, or a sample of all pairs above [`PAIR_LIMIT`]; [`Error::TooFew`] when no
/// subject has two visit times or no bin reaches `min_pairs`; a smoother's own errors.
pub fn variogram(
    panel: &Panel,
    residuals: &[f64],
    options: &VariogramOptions,
) -> Result<Variogram> {
    let sums = variogram_sums(panel, residuals, options)?;
    let mut vg = sums.finish(&options.bins, options.min_pairs)?;
    let (lo, hi) = (sums.lags.edges[0], vg.max_lag);
    let sample = match options.sample {
        SampleSize::Off => None,
        SampleSize::Count(m) => Some(pairs::sample_pairs(
            panel,
            residuals,
            lo,
            hi,
            Some(m),
            options.seed,
        )),
        SampleSize::All => {
            check_all_pairs(vg.pairs_in_bins)?;
            Some(pairs::sample_pairs(panel, residuals, lo, hi, None, 0))
        }
    };
    if let Some(smoother) = &options.smoother {
        let own;
        let pts = match &sample {
            Some(s) => s,
            None => {
                own =
                    pairs::sample_pairs(panel, residuals, lo, hi, Some(SMOOTH_PAIRS), options.seed);
                &own
            }
        };
        vg.smoothed = Some(smoother.fit(&pts.lag, &pts.half_sq_diff)?);
        vg.smoothed_pairs = pts.lag.len();
    }
    vg.sample = sample;
    Ok(vg)
}

#[cfg(test)]
mod tests {
    use super::{check_all_pairs, PAIR_LIMIT};

    #[test]
    fn all_pairs_refused_above_the_limit() {
        assert!(check_all_pairs(PAIR_LIMIT).is_ok());
        let e = check_all_pairs(PAIR_LIMIT + 1).unwrap_err();
        assert_eq!(e.argument(), Some("sample"));
        assert!(e.to_string().contains("ask for a sample count"));
    }
}
