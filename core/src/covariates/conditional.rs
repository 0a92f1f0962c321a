//! Trends conditional on a covariate: one smooth and one straight line per covariate interval
//! (Cleveland 1993, *Visualizing Data*, conditioning plots).
//!
//! For each interval of [`Bands`], the rows whose covariate value lies in the closed interval
//! are taken (a subject whose covariate is time-fixed enters with all its rows or none; with a
//! time-varying covariate only the rows inside count). On them:
//! - the smoother is fitted to response on time and evaluated at the common grid (default: 101
//!   equally spaced times over the panel's time range, as [`crate::trend::mean_curve::default_grid`]),
//!   NaN at grid times outside the interval's own observed time range (no extrapolation);
//! - an ordinary least-squares line y = a + b t is fitted, with a cluster-robust (sandwich)
//!   standard error of the slope, clustered by subject (Liang & Zeger 1986, Biometrika
//!   73:13-22). With N rows, G subjects, K = 2 coefficients, t̄ and ȳ the means,
//!   S_tt = Σ (t - t̄)², e = y - a - b t the residuals and u_g = Σ_{rows of g} (t - t̄) e:
//!
//!   b = Σ (t - t̄)(y - ȳ) / S_tt,  a = ȳ - b t̄,
//!   se(b)² = G/(G - 1) · (N - 1)/(N - K) · Σ_g u_g² / S_tt².
//!
//!   This is the CR1 estimator, the default of statsmodels' `OLS(...).fit(cov_type="cluster")`
//!   (`use_correction=True`); centring t makes the information matrix diagonal, so the slope's
//!   entry of the sandwich is exactly the expression above.
//!
//! An interval needs at least 2 subjects, 3 rows and 2 distinct times (for the line), and as
//! many distinct times as the smoother needs; otherwise [`Error::TooFew`] names the interval.
//! Sums run over subjects in id order and, within a subject, over rows ordered by (time,
//! response), so permuting the input rows changes nothing; intervals run in parallel and are
//! gathered in order, so the thread count changes nothing either.

use rayon::prelude::*;
use serde::Serialize;

use crate::covariates::bands::{find_covariate, Band, Bands};
use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::trend::mean_curve::resolve_grid;
use crate::trend::smoother::Smoother;

/// The trend within one covariate interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BandTrend {
    /// The interval.
    pub band: Band,
    /// Subjects with at least one row in the interval.
    pub subjects: usize,
    /// Rows in the interval.
    pub observations: usize,
    /// The smooth at the common grid; NaN outside the interval's observed time range.
    pub fitted: Vec<f64>,
    /// Least-squares slope of response on time.
    pub slope: f64,
    /// Cluster-robust (CR1, by subject) standard error of the slope.
    pub slope_se: f64,
    /// Least-squares intercept (the line at time 0).
    pub intercept: f64,
}

/// Trends per interval of a covariate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConditionalTrends {
    /// The covariate conditioned on.
    pub covariate: String,
    /// The common grid.
    pub at: Vec<f64>,
    /// One trend per interval, in the order of the intervals.
    pub trends: Vec<BandTrend>,
    /// The kind of standard error: `"CR1 cluster-robust by subject"`.
    pub se_kind: String,
}

/// The kind of standard error reported in [`ConditionalTrends::se_kind`].
pub const SE_KIND: &str = "CR1 cluster-robust by subject";

/// Fits a smooth and a line of response on time within each interval of `bands` of the
/// covariate `by`.
///
/// # Examples
/// ```
/// use trajweave_core::covariates::bands::covariate_bands;
/// use trajweave_core::covariates::conditional::conditional_trends;
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let panel = simulate(&SimulateOptions { subjects: 200, ..Default::default() })?.to_panel()?;
/// let by = panel.covariates()[0].name.clone();
/// let bands = covariate_bands(&panel, &by, 3, 0.5)?;
/// let c = conditional_trends(&panel, &by, &bands, &Smoother::new("lowess")?, None)?;
/// assert_eq!(c.trends.len(), bands.bands.len());
/// assert!(c.trends.iter().all(|t| t.slope_se > 0.0));
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for an unknown covariate; [`Error::NonFinite`] for a non-finite
/// grid point; [`Error::TooFew`] naming the interval when it holds fewer than 2 subjects, 3
/// rows or 2 distinct times, or fewer distinct times than the smoother needs; other errors of
/// the smoother's fit.
pub fn conditional_trends(
    panel: &Panel,
    by: &str,
    bands: &Bands,
    smoother: &Smoother,
    at: Option<&[f64]>,
) -> Result<ConditionalTrends> {
    let covariate = find_covariate(panel, by)?;
    let at = resolve_grid(panel, at)?;
    let results: Vec<Result<BandTrend>> = bands
        .bands
        .par_iter()
        .enumerate()
        .map(|(j, band)| {
            let name = format!("interval {} {} of `{by}`", j + 1, band.label());
            let clusters: Vec<Vec<(f64, f64)>> = (0..panel.n_subjects())
                .map(|i| {
                    let rows = panel.subject_rows(i);
                    canonical_pairs(rows.filter(|&r| band.contains(covariate.values[r])), panel)
                })
                .filter(|c| !c.is_empty())
                .collect();
            band_trend(band.clone(), &clusters, smoother, &at, &name)
        })
        .collect();
    let trends = results.into_iter().collect::<Result<Vec<_>>>()?;
    Ok(ConditionalTrends {
        covariate: by.to_string(),
        at,
        trends,
        se_kind: SE_KIND.into(),
    })
}

/// (time, response) of the given panel rows of one subject, ordered by (time, response): rows
/// tied in time are otherwise in input order, which must not change any sum.
pub(crate) fn canonical_pairs(rows: impl Iterator<Item = usize>, panel: &Panel) -> Vec<(f64, f64)> {
    let (t, y) = (panel.time(), panel.response());
    let mut pairs: Vec<(f64, f64)> = rows.map(|r| (t[r], y[r])).collect();
    // Already in time order, so this stable sort only reorders tied runs.
    pairs.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    pairs
}

/// Fits `smoother` to the pooled pairs of `clusters` and evaluates it at `at`, NaN outside the
/// observed time range; a TooFew of the fit is renamed to point at `name`.
pub(crate) fn fit_on_grid(
    clusters: &[Vec<(f64, f64)>],
    smoother: &Smoother,
    at: &[f64],
    name: &str,
) -> Result<(crate::trend::curve::Curve, Vec<f64>)> {
    let (t, y): (Vec<f64>, Vec<f64>) = clusters.iter().flatten().copied().unzip();
    let curve = smoother.fit(&t, &y).map_err(|e| e.within(name))?;
    let (lo, hi) = (curve.x[0], curve.x[curve.x.len() - 1]);
    let fitted = at
        .iter()
        .zip(curve.predict(at))
        .map(|(&a, f)| if a < lo || a > hi { f64::NAN } else { f })
        .collect();
    Ok((curve, fitted))
}

fn too_few(what: &str, name: &str, needed: usize, found: usize) -> Error {
    Error::TooFew {
        what: what.into(),
        estimate: format!("the trend in {name}"),
        needed,
        found,
    }
}

fn band_trend(
    band: Band,
    clusters: &[Vec<(f64, f64)>],
    smoother: &Smoother,
    at: &[f64],
    name: &str,
) -> Result<BandTrend> {
    let g = clusters.len();
    if g < 2 {
        return Err(too_few("subjects", name, 2, g));
    }
    let n: usize = clusters.iter().map(Vec::len).sum();
    if n < 3 {
        return Err(too_few("observations", name, 3, n));
    }
    let line = cluster_ols(clusters, n).ok_or_else(|| too_few("distinct times", name, 2, 1))?;
    let (_, fitted) = fit_on_grid(clusters, smoother, at, name)?;
    Ok(BandTrend {
        band,
        subjects: g,
        observations: n,
        fitted,
        slope: line.slope,
        slope_se: line.slope_se,
        intercept: line.intercept,
    })
}

/// A least-squares line with its cluster-robust slope error.
struct Line {
    slope: f64,
    slope_se: f64,
    intercept: f64,
}

/// The CR1 line of the module doc over `n >= 3` rows in >= 2 clusters; `None` when every
/// time is the same.
fn cluster_ols(clusters: &[Vec<(f64, f64)>], n: usize) -> Option<Line> {
    let nf = n as f64;
    let rows = || clusters.iter().flatten();
    let t_bar = rows().map(|p| p.0).sum::<f64>() / nf;
    let y_bar = rows().map(|p| p.1).sum::<f64>() / nf;
    let s_tt: f64 = rows().map(|p| (p.0 - t_bar) * (p.0 - t_bar)).sum();
    if s_tt <= 0.0 {
        return None;
    }
    let s_ty: f64 = rows().map(|p| (p.0 - t_bar) * (p.1 - y_bar)).sum();
    let slope = s_ty / s_tt;
    let meat: f64 = clusters
        .iter()
        .map(|c| {
            let u: f64 = c
                .iter()
                .map(|&(t, y)| (t - t_bar) * ((y - y_bar) - slope * (t - t_bar)))
                .sum();
            u * u
        })
        .sum();
    let gf = clusters.len() as f64;
    let factor = gf / (gf - 1.0) * ((nf - 1.0) / (nf - 2.0));
    Some(Line {
        slope,
        slope_se: (factor * meat).sqrt() / s_tt,
        intercept: y_bar - slope * t_bar,
    })
}
