//! The average change of the mean trend per time unit, with a subject-bootstrap interval.
//!
//! With t the observation times of all subjects, q_lo and q_hi their type-7 quantiles at
//! (1 - central) / 2 and (1 + central) / 2 (default central = 0.9), and m the smoother's mean
//! curve fitted to all observations (evaluated by [`Curve::predict`]):
//!
//! ```text
//! estimate = (m(q_hi) - m(q_lo)) / (q_hi - q_lo)
//! ```
//!
//! which, by the fundamental theorem of calculus, is the mean of the derivative m' over
//! [q_lo, q_hi]: the curve's average slope where most observations lie. Leaving out the outer
//! (1 - central) of the times keeps the few observations at the ends of follow-up, where a
//! smoother rests on a handful of subjects, from setting the number; central = 1 takes the
//! whole observed range.
//!
//! Beside it, `ols_slope` is the least-squares slope of response on time over all
//! observations, sum (t - t̄)(y - ȳ) / sum (t - t̄)^2: a model-free number that weighs times by
//! how many observations they hold rather than evenly.
//!
//! Interval: the subject bootstrap of [`crate::trend::mean_curve`] (Davison & Hinkley 1997,
//! ch. 3: subjects drawn with replacement, each with all its observations; replicate r from the
//! stream (seed, r), so the result is the same for any thread count), with the same resampling
//! code. Each replicate refits the smoother and recomputes both numbers; the window
//! [q_lo, q_hi] stays that of the full data, as the band's grid does, so the interval is for
//! the average slope over the stated window. The amount of smoothing stays that of the fit to
//! all the data too ([`Smoother::as_fitted`]: a kernel's rule-of-thumb bandwidth, a spline's
//! GCV penalty), so the interval is conditional on it: a resample holds repeated copies of
//! subjects, and GCV rerun on it takes the copies for replicated measurements and nearly
//! interpolates (on the demo data, df about 550 per resample against 2.9 on the data, which
//! spread the interval over -3.1 to -0.3 per year). The interval is the percentile interval (Efron &
//! Tibshirani 1993, *An Introduction to the Bootstrap*, ch. 13): the (1 - level) / 2 and
//! (1 + level) / 2 type-7 quantiles of the replicate values (defaults 200 replicates, level
//! 0.95, seed 1). A replicate whose fit fails is left out of both intervals and counted in
//! `failed`.

use serde::Serialize;

use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::numeric::quantile::quantile_sorted;
use crate::trend::curve::Curve;
use crate::trend::mean_curve::{
    percentile_interval, subject_replicates, too_few_replicates, BootstrapOptions,
};
use crate::trend::smoother::Smoother;

const CENTRAL_ALLOWED: &str =
    "a number in (0, 1], the share of observation times the window covers (e.g. 0.9)";
const ESTIMATE: &str = "an average change per time unit";

/// Settings of [`average_change`]; `Default`: central 0.9 and the bootstrap defaults (200
/// replicates, level 0.95, seed 1).
///
/// # Examples
/// ```
/// use trajweave_core::trend::change::ChangeOptions;
/// # fn main() -> trajweave_core::Result<()> {
/// let o = ChangeOptions::from_numbers(0.8, 100.0, 0.9, 3.0)?;
/// assert_eq!((o.central, o.bootstrap.reps), (0.8, 100));
/// assert!(ChangeOptions::from_numbers(1.5, 100.0, 0.9, 3.0).is_err());
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChangeOptions {
    /// Share of the observation times the window covers, in (0, 1].
    pub central: f64,
    /// Replicates, level and seed of the subject bootstrap.
    pub bootstrap: BootstrapOptions,
}

impl Default for ChangeOptions {
    fn default() -> Self {
        ChangeOptions {
            central: 0.9,
            bootstrap: BootstrapOptions::default(),
        }
    }
}

impl ChangeOptions {
    /// Settings from numbers as a front hands them over: `reps` and `seed` must be whole, then
    /// every range is checked.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option out of range or not whole.
    pub fn from_numbers(central: f64, reps: f64, level: f64, seed: f64) -> Result<ChangeOptions> {
        let o = ChangeOptions {
            central,
            bootstrap: BootstrapOptions::from_numbers(reps, level, seed)?,
        };
        o.validate()?;
        Ok(o)
    }

    /// Checks every range.
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the option out of range: `central` outside (0, 1], and
    /// those of [`BootstrapOptions::validate`].
    pub fn validate(&self) -> Result<()> {
        if !(self.central > 0.0 && self.central <= 1.0) {
            return Err(Error::option("central", self.central, CENTRAL_ALLOWED));
        }
        self.bootstrap.validate()
    }
}

/// The average change per time unit, its interval and the least-squares slope beside it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    /// (m(to) - m(from)) / (to - from): the mean curve's average slope over the window.
    pub estimate: f64,
    /// Lower limit of the percentile interval of `estimate`.
    pub lower: f64,
    /// Upper limit of the percentile interval of `estimate`.
    pub upper: f64,
    /// Coverage of both intervals.
    pub level: f64,
    /// Bootstrap replicates drawn.
    pub reps: usize,
    /// Seed of the replicates' random streams.
    pub seed: u64,
    /// Replicates whose fit failed, left out of both intervals.
    pub failed: usize,
    /// Start of the window: the (1 - central) / 2 quantile of the observation times.
    pub from: f64,
    /// End of the window: the (1 + central) / 2 quantile of the observation times.
    pub to: f64,
    /// Share of the observation times the window covers.
    pub central: f64,
    /// Least-squares slope of response on time over all observations.
    pub ols_slope: f64,
    /// Lower limit of the percentile interval of `ols_slope`, from the same replicates.
    pub ols_lower: f64,
    /// Upper limit of the percentile interval of `ols_slope`.
    pub ols_upper: f64,
    /// The smoother as given (family and options).
    pub smoother: Smoother,
    /// The settings the fit to all observations used (defaults filled in).
    pub settings: serde_json::Value,
    /// How the numbers were computed, in words.
    pub method: String,
    /// Warnings of the fit to all observations (see [`Curve::warnings`]).
    pub warnings: Vec<String>,
}

/// The least-squares slope of `y` on `t` (two passes about the means); NaN when t is constant.
pub fn ols_slope(t: &[f64], y: &[f64]) -> f64 {
    let n = t.len() as f64;
    let tbar = t.iter().sum::<f64>() / n;
    let ybar = y.iter().sum::<f64>() / n;
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for (&a, &b) in t.iter().zip(y) {
        sxy += (a - tbar) * (b - ybar);
        sxx += (a - tbar) * (a - tbar);
    }
    if sxx > 0.0 {
        sxy / sxx
    } else {
        f64::NAN
    }
}

/// The average slope of `curve` over [from, to].
fn average_slope(curve: &Curve, from: f64, to: f64) -> f64 {
    let m = curve.predict(&[from, to]);
    (m[1] - m[0]) / (to - from)
}

/// The average change per time unit of the mean curve over the central part of the
/// observation times, with subject-bootstrap intervals for it and for the least-squares slope
/// (see the module doc).
///
/// # Examples
/// ```
/// use trajweave_core::trend::change::{average_change, ChangeOptions};
/// use trajweave_core::trend::mean_curve::BootstrapOptions;
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let panel = simulate(&SimulateOptions { subjects: 80, ..Default::default() })?.to_panel()?;
/// let o = ChangeOptions { bootstrap: BootstrapOptions { reps: 20, ..Default::default() }, ..Default::default() };
/// let c = average_change(&panel, &Smoother::new("spline")?, &o)?;
/// assert!(c.lower <= c.estimate && c.estimate <= c.upper);
/// assert!(c.from < c.to);
/// # Ok(()) }
/// ```
///
/// # Errors
/// Those of [`ChangeOptions::validate`] and of the smoother's fit; [`Error::TooFew`] when the
/// window has zero width (one distinct time in its range) or fewer than two replicates could
/// be fitted.
pub fn average_change(
    panel: &Panel,
    smoother: &Smoother,
    options: &ChangeOptions,
) -> Result<Change> {
    options.validate()?;
    let (t, y) = (panel.time(), panel.response());
    let mut sorted = t.to_vec();
    sorted.sort_unstable_by(f64::total_cmp);
    let central = options.central;
    let from = quantile_sorted(&sorted, (1.0 - central) / 2.0);
    let to = quantile_sorted(&sorted, (1.0 + central) / 2.0);
    if to <= from {
        return Err(Error::TooFew {
            what: "distinct observation times in the central window".into(),
            estimate: ESTIMATE.into(),
            needed: 2,
            found: 1,
        });
    }
    let curve = smoother.fit(t, y)?;
    let estimate = average_slope(&curve, from, to);
    let slope = ols_slope(t, y);

    let b = &options.bootstrap;
    let resolved = smoother.as_fitted(y, &curve);
    let reps = subject_replicates(panel, b, |bt, by| {
        let c = resolved.fit(bt, by).ok()?;
        Some((average_slope(&c, from, to), ols_slope(bt, by)))
    });
    let ok: Vec<(f64, f64)> = reps.into_iter().flatten().collect();
    let failed = b.reps - ok.len();
    if ok.len() < 2 {
        return Err(too_few_replicates(ESTIMATE, ok.len()));
    }
    let (lower, upper) = percentile_interval(&mut ok.iter().map(|r| r.0).collect(), b.level);
    let (ols_lower, ols_upper) =
        percentile_interval(&mut ok.iter().map(|r| r.1).collect(), b.level);
    let method = format!(
        "estimate: (m(to) - m(from)) / (to - from), the average slope of the {family} mean \
         curve m between the {lo:.4} and {hi:.4} type-7 quantiles of the observation times \
         (the central {central} of them); ols_slope: least-squares slope of response on time \
         over all observations; intervals: {level} percentile intervals over {reps} \
         subject-bootstrap resamples (seed {seed}, window fixed), {failed} failed",
        family = smoother.family(),
        lo = (1.0 - central) / 2.0,
        hi = (1.0 + central) / 2.0,
        level = b.level,
        reps = b.reps,
        seed = b.seed,
    );
    Ok(Change {
        estimate,
        lower,
        upper,
        level: b.level,
        reps: b.reps,
        seed: b.seed,
        failed,
        from,
        to,
        central,
        ols_slope: slope,
        ols_lower,
        ols_upper,
        smoother: smoother.clone(),
        settings: curve.settings.clone(),
        method,
        warnings: curve.warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ols_slope_closed_form() {
        // Closed form: points on y = 3 - 2 t have slope -2; constant t has none.
        let t = [0.0, 1.0, 2.5, 4.0];
        let y: Vec<f64> = t.iter().map(|v| 3.0 - 2.0 * v).collect();
        assert!((ols_slope(&t, &y) + 2.0).abs() < 1e-14);
        assert!(ols_slope(&[1.0, 1.0], &[0.0, 2.0]).is_nan());
    }

    #[test]
    fn option_errors_name_the_option() {
        let e = ChangeOptions {
            central: 0.0,
            ..Default::default()
        }
        .validate()
        .unwrap_err();
        assert_eq!(
            e.to_string(),
            "`central` = 0 is not allowed: a number in (0, 1], the share of observation times \
             the window covers (e.g. 0.9)"
        );
        let e = ChangeOptions::from_numbers(0.9, 0.0, 0.95, 1.0).unwrap_err();
        assert_eq!(
            e.to_string(),
            "`reps` = 0 is not allowed: a whole number from 10 to 100000"
        );
    }
}
