//! The population mean trend: a smoother of response on time over all observations, with an
//! optional pointwise band from resampling whole subjects.
//!
//! Band (Davison & Hinkley 1997, ch. 3, resampling clusters): each replicate draws as many
//! subjects as the panel has, uniformly with replacement, refits the smoother on all their
//! observations, and evaluates it at the grid; the band at each grid point is the
//! ((1 - level) / 2, (1 + level) / 2) percentile pair of the replicates (type-7 quantiles).
//! Resampling subjects, not rows, keeps each subject's correlated observations together, so
//! the band reflects between-subject variation. Replicate r draws from its own random stream
//! (seed, r), and replicates run in parallel but are gathered in order, so the band is the
//! same for any number of threads. A replicate whose fit fails (too few distinct times, say)
//! is left out and counted.

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::numeric::quantile::quantile_sorted;
use crate::numeric::rng::Rng;
use crate::trend::curve::{check_finite, Curve};
use crate::trend::smoother::Smoother;

const REPS_ALLOWED: &str = "a whole number from 10 to 100000";

/// Settings of the subject bootstrap.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BootstrapOptions {
    /// Number of replicates (10 to 100000).
    pub reps: usize,
    /// Coverage of the pointwise band, in (0, 1).
    pub level: f64,
    /// Seed of the replicates' random streams.
    pub seed: u64,
}

impl Default for BootstrapOptions {
    fn default() -> Self {
        BootstrapOptions {
            reps: 200,
            level: 0.95,
            seed: 1,
        }
    }
}

impl BootstrapOptions {
    /// Settings from numbers as a front hands them over (R and Python pass doubles): `reps`
    /// and `seed` must be whole, then every range is checked.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::mean_curve::BootstrapOptions;
    /// # fn main() -> trajweave_core::Result<()> {
    /// assert_eq!(BootstrapOptions::from_numbers(50.0, 0.9, 7.0)?.reps, 50);
    /// assert!(BootstrapOptions::from_numbers(50.5, 0.9, 7.0).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option that is not whole or is out of range.
    pub fn from_numbers(reps: f64, level: f64, seed: f64) -> Result<BootstrapOptions> {
        let whole = |name: &str, v: f64, max: f64, allowed: &str| {
            if v.fract() == 0.0 && (0.0..=max).contains(&v) {
                Ok(v)
            } else {
                Err(Error::option(name, v, allowed))
            }
        };
        let o = BootstrapOptions {
            reps: whole("reps", reps, 1e15, REPS_ALLOWED)? as usize,
            level,
            seed: whole(
                "seed",
                seed,
                9_007_199_254_740_991.0,
                "a whole number from 0 to 2^53 - 1",
            )? as u64,
        };
        o.validate()?;
        Ok(o)
    }

    /// Checks the ranges.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option out of range.
    pub fn validate(&self) -> Result<()> {
        if !(10..=100_000).contains(&self.reps) {
            return Err(Error::option(
                "reps",
                self.reps,
                "a whole number from 10 to 100000",
            ));
        }
        if !(self.level > 0.0 && self.level < 1.0) {
            return Err(Error::option(
                "level",
                self.level,
                "a number in (0, 1), e.g. 0.95",
            ));
        }
        Ok(())
    }
}

/// A pointwise band.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Band {
    /// Lower limit at each grid point.
    pub lower: Vec<f64>,
    /// Upper limit at each grid point.
    pub upper: Vec<f64>,
    /// The settings used.
    pub bootstrap: BootstrapOptions,
    /// Replicates whose fit failed and were left out.
    pub failed: usize,
}

/// The mean curve of a panel.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeanCurve {
    /// The fit at the distinct times.
    pub curve: Curve,
    /// The grid the curve and band are evaluated at.
    pub at: Vec<f64>,
    /// The curve at the grid.
    pub fitted: Vec<f64>,
    /// The band, when asked for.
    pub band: Option<Band>,
}

/// The default grid: 101 equally spaced times from the first to the last visit.
pub fn default_grid(panel: &Panel) -> Vec<f64> {
    let t = panel.time();
    let lo = t.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (0..=100)
        .map(|i| lo + (hi - lo) * i as f64 / 100.0)
        .collect()
}

/// The given grid (checked finite) or [`default_grid`].
pub(crate) fn resolve_grid(panel: &Panel, at: Option<&[f64]>) -> Result<Vec<f64>> {
    match at {
        Some(a) => check_finite("at", a).map(|()| a.to_vec()),
        None => Ok(default_grid(panel)),
    }
}

/// Fits the mean curve of response on time, optionally with a subject-bootstrap band.
///
/// # Examples
/// ```
/// use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let panel = simulate(&SimulateOptions { subjects: 60, ..Default::default() })?.to_panel()?;
/// let boot = BootstrapOptions { reps: 20, ..Default::default() };
/// let m = mean_curve(&panel, &Smoother::new("kernel")?, None, Some(&boot))?;
/// let band = m.band.unwrap();
/// assert!(band.lower[50] <= m.fitted[50] && m.fitted[50] <= band.upper[50]);
/// # Ok(()) }
/// ```
///
/// # Errors
/// Those of the smoother's fit, [`BootstrapOptions::validate`], [`Error::NonFinite`] for a
/// non-finite grid point, and [`Error::TooFew`] when every replicate fails.
pub fn mean_curve(
    panel: &Panel,
    smoother: &Smoother,
    at: Option<&[f64]>,
    bootstrap: Option<&BootstrapOptions>,
) -> Result<MeanCurve> {
    let at = resolve_grid(panel, at)?;
    let curve = smoother.fit(panel.time(), panel.response())?;
    let fitted = curve.predict(&at);
    let band = match bootstrap {
        None => None,
        Some(b) => Some(subject_bootstrap(panel, smoother, &at, b)?),
    };
    Ok(MeanCurve {
        curve,
        at,
        fitted,
        band,
    })
}

fn subject_bootstrap(
    panel: &Panel,
    smoother: &Smoother,
    at: &[f64],
    b: &BootstrapOptions,
) -> Result<Band> {
    b.validate()?;
    let smoother = smoother.for_response(panel.response());
    let reps = subject_replicates(panel, b, |t, y| {
        smoother.fit(t, y).ok().map(|c| c.predict(at))
    });
    let ok: Vec<&Vec<f64>> = reps.iter().flatten().collect();
    let failed = reps.len() - ok.len();
    if ok.len() < 2 {
        return Err(too_few_replicates("a bootstrap band", ok.len()));
    }
    let mut lower = Vec::with_capacity(at.len());
    let mut upper = Vec::with_capacity(at.len());
    let mut column = Vec::with_capacity(ok.len());
    for k in 0..at.len() {
        column.clear();
        column.extend(ok.iter().map(|v| v[k]));
        let (lo, hi) = percentile_interval(&mut column, b.level);
        lower.push(lo);
        upper.push(hi);
    }
    Ok(Band {
        lower,
        upper,
        bootstrap: b.clone(),
        failed,
    })
}

/// Runs the subject bootstrap of the module doc: replicate r draws as many subjects as the
/// panel has, uniformly with replacement, from the random stream (seed, r), and hands all
/// their observations (times, responses) to `statistic`. Replicates run in parallel and come
/// back in replicate order, `None` where the statistic could not be computed, so the result
/// does not depend on the thread count.
pub(crate) fn subject_replicates<T, F>(
    panel: &Panel,
    b: &BootstrapOptions,
    statistic: F,
) -> Vec<Option<T>>
where
    T: Send,
    F: Fn(&[f64], &[f64]) -> Option<T> + Sync,
{
    let s = panel.n_subjects();
    let (t, y) = (panel.time(), panel.response());
    (0..b.reps)
        .into_par_iter()
        .map(|r| {
            let mut rng = Rng::new(b.seed, r as u64);
            let (mut bx, mut by) = (Vec::with_capacity(t.len()), Vec::with_capacity(t.len()));
            for _ in 0..s {
                let i = ((rng.uniform() * s as f64) as usize).min(s - 1);
                let rows = panel.subject_rows(i);
                bx.extend_from_slice(&t[rows.clone()]);
                by.extend_from_slice(&y[rows]);
            }
            statistic(&bx, &by)
        })
        .collect()
}

/// The ((1 - level) / 2, (1 + level) / 2) type-7 percentiles of the replicate values, NaN
/// values left out (`values` is reordered).
pub(crate) fn percentile_interval(values: &mut Vec<f64>, level: f64) -> (f64, f64) {
    values.retain(|v| !v.is_nan());
    values.sort_unstable_by(f64::total_cmp);
    let (p_lo, p_hi) = ((1.0 - level) / 2.0, (1.0 + level) / 2.0);
    (quantile_sorted(values, p_lo), quantile_sorted(values, p_hi))
}

/// The error when fewer than two bootstrap replicates could be computed for `estimate`.
pub(crate) fn too_few_replicates(estimate: &str, found: usize) -> Error {
    Error::TooFew {
        what: "bootstrap replicates that could be fitted".into(),
        estimate: estimate.into(),
        needed: 2,
        found,
    }
}
