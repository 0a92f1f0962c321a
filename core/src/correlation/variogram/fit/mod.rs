//! A parametric model fitted to an empirical variogram.
//!
//! Stationary model: gamma(u) = tau^2 + sigma^2 (1 - rho(u; phi)), with rho(u) = exp(-u / phi)
//! (exponential) or exp(-(u / phi)^2) (Gaussian), tau^2 the measurement error (nugget),
//! sigma^2 the serial variance and phi the range.
//!
//! Random-slope model: gamma(u) = tau^2 + sigma^2 (1 - rho(u; phi)) + omega^2 u^2 / 2. Under
//! Y(t) = b0 + b1 t + W(t) + e (random intercept and slope, stationary serial process W,
//! measurement error e, the three independent), a difference within a subject is
//! Y(t + u) - Y(t) = b1 u + W(t + u) - W(t) + e' - e: the intercept cancels, the slope leaves
//! b1 u, and the cross terms have mean 0 by independence, so half its mean square is
//! omega^2 u^2 / 2 + sigma^2 (1 - rho(u)) + tau^2 whatever cov(b0, b1) is (omega^2 = var b1;
//! the stationary part is Diggle's 1988 model, Biometrics 44:959-971; the derivation is
//! written out in docs/methods-correlation.md).
//!
//! The criterion is Cressie's (1985, Math. Geology 17:563-586) weighted least squares,
//! sum over bins N_h (gammahat_h / gamma(u_h) - 1)^2, with u_h the mean lag of the bin's pairs
//! and only bins that have an estimate. It is minimised by Nelder-Mead (the crate's
//! `optimize` module, shared with the covariance screening) over (sqrt tau^2, sqrt sigma^2,
//! ln phi), the square roots divided by the larger start so one step of 0.25 suits every
//! coordinate; the variances stay >= 0 and the range > 0. Three starts: phi = max lag x
//! (0.1, 0.3, 1), each with (tau^2, sigma^2) from a least-squares line of gammahat on 1 - rho(u) (weights N_h /
//! gammahat_h^2, clamped at 0); the best of the three is kept (the first on ties). Stops:
//! a spread of the simplex values <= 1e-12 (1 + |best|) and a simplex within 1e-9 of its best
//! vertex, or 5000 iterations.
//!
//! The random-slope model adds the coordinate sqrt(omega^2 L^2 / 2) (L the maximum lag, so
//! the coordinate is the slope term's size at L, divided by the same scale). Four starts: the
//! three above with (tau^2, sigma^2, omega^2) from a weighted least-squares plane of gammahat
//! on 1 - rho(u) and u^2 / 2, and the stationary optimum with omega^2 = 0 (so the slope fit's
//! criterion is never above the stationary one); the best is then restarted once from its
//! optimum (Nelder-Mead's usual check against a collapsed simplex).
//!
//! The range is capped at [`RANGE_CAP`] x the maximum lag (with a warning when it gets
//! there), since lags beyond those observed cannot tell larger ranges apart.
//!
//! Between-subject variance. Rows of different subjects are independent, so the process
//! variance P (the mean of (r_a - r_b)^2 / 2 over between-subject pairs) estimates the mean
//! of var Y(t_a) over the rows, row a weighted by its number of such pairs n - n_i. Stationary
//! model: var Y(t) = nu^2 + sigma^2 + tau^2 at every t, so nu^2 = P - (tau^2 + sigma^2).
//! Random-slope model: var Y(t) = B(t) + sigma^2 + tau^2 with B(t) = var(b0 + b1 t), a
//! quadratic in t with leading coefficient omega^2, so its weighted mean over the rows is
//! B(tbar) + omega^2 s_t^2 (tbar, s_t^2 the weighted mean and variance of the visit times,
//! [`super::Variogram::time_mean`], [`super::Variogram::time_variance`]). The fit reports
//! nu^2 = B(tbar) = P - (tau^2 + sigma^2 + omega^2 s_t^2): the random-intercept variance with
//! time centred at tbar, stated at `intercept_time` = tbar. Either way nu^2 is set to 0 with a
//! warning when negative (the fitted within-subject variance exceeds the process variance).
//!
//! The implied correlation of two measurements u apart, (nu^2 + sigma^2 rho(u)) /
//! (nu^2 + sigma^2 + tau^2), exists only for the stationary model: under a random slope it
//! depends on the two times and on cov(b0, b1), which the variogram does not estimate, so the
//! random-slope fit leaves `curve_correlation` NaN ([`CorrelationCurve::NotIdentified`]).
//!
//! Flags ([`flags`]) mark a fit at a boundary or otherwise not to be read as it stands;
//! [`compare`] sets the two models side by side.

pub mod compare;
pub mod flags;

use serde::Serialize;

use crate::error::{Error, Result};
use crate::numeric::linalg::{backward, cholesky, forward};
use crate::numeric::optimize::{nelder_mead, Minimum};

use super::Variogram;

pub use compare::{compare_variogram_fits, Preference, VariogramComparison};

/// Largest range, as a multiple of the maximum lag.
pub const RANGE_CAP: f64 = 10.0;
/// Most Nelder-Mead iterations of one start.
pub const MAX_ITERATIONS: usize = 5000;
/// Points of the fitted curves.
const CURVE_POINTS: usize = 101;

/// The correlation function of the serial process.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum VariogramModel {
    /// rho(u) = exp(-u / phi).
    Exponential,
    /// rho(u) = exp(-(u / phi)^2).
    Gaussian,
}

impl VariogramModel {
    /// The model called `name` ("exponential" or "gaussian").
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `model` otherwise.
    pub fn parse(name: &str) -> Result<VariogramModel> {
        match name {
            "exponential" => Ok(VariogramModel::Exponential),
            "gaussian" => Ok(VariogramModel::Gaussian),
            other => Err(Error::option(
                "model",
                format!("{other:?}"),
                "\"exponential\" or \"gaussian\"",
            )),
        }
    }

    /// The model's name.
    pub fn name(&self) -> &'static str {
        match self {
            VariogramModel::Exponential => "exponential",
            VariogramModel::Gaussian => "gaussian",
        }
    }

    /// rho(u; phi).
    pub fn rho(&self, u: f64, phi: f64) -> f64 {
        match self {
            VariogramModel::Exponential => (-u / phi).exp(),
            VariogramModel::Gaussian => (-(u / phi) * (u / phi)).exp(),
        }
    }
}

/// Which bin estimates are fitted.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Estimate {
    /// Mean of v.
    Classical,
    /// Cressie-Hawkins.
    Robust,
}

impl Estimate {
    /// The estimate called `name` ("classical" or "robust").
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `estimate` otherwise.
    pub fn parse(name: &str) -> Result<Estimate> {
        match name {
            "classical" => Ok(Estimate::Classical),
            "robust" => Ok(Estimate::Robust),
            other => Err(Error::option(
                "estimate",
                format!("{other:?}"),
                "\"classical\" or \"robust\"",
            )),
        }
    }

    /// The estimate's name.
    pub fn name(&self) -> &'static str {
        match self {
            Estimate::Classical => "classical",
            Estimate::Robust => "robust",
        }
    }
}

/// Settings of [`fit_variogram_with`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FitOptions {
    /// The serial correlation function (default exponential).
    pub model: VariogramModel,
    /// The bin estimate fitted (default classical).
    pub estimate: Estimate,
    /// Add the random-slope term omega^2 u^2 / 2 (default false).
    pub random_slope: bool,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            model: VariogramModel::Exponential,
            estimate: Estimate::Classical,
            random_slope: false,
        }
    }
}

/// What `curve_correlation` holds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CorrelationCurve {
    /// The implied correlation of two measurements u apart, the same at every time
    /// (stationary model).
    Stationary,
    /// NaN: under a random slope the correlation depends on the two times and on the
    /// intercept-slope covariance, which the variogram does not estimate.
    NotIdentified,
}

/// The fitted model, the variance components, flags and the curves for plotting.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VariogramFit {
    /// The correlation model.
    pub model: VariogramModel,
    /// The estimate fitted.
    pub estimate: Estimate,
    /// Whether the random-slope term omega^2 u^2 / 2 was fitted.
    pub random_slope: bool,
    /// tau^2, measurement-error variance.
    pub error_variance: f64,
    /// sigma^2, serial variance.
    pub serial_variance: f64,
    /// phi, range (time units).
    pub range: f64,
    /// omega^2, random-slope variance (per time unit squared; 0 when not fitted).
    pub slope_variance: f64,
    /// nu^2 (>= 0): the random-intercept variance; under the random-slope model, the
    /// between-subject variance var(b0 + b1 t) at `intercept_time` (NaN when the variogram
    /// carries no visit-time variance).
    pub intercept_variance: f64,
    /// The time at which `intercept_variance` is stated under the random-slope model (the
    /// weighted mean visit time); NaN for the stationary model, where nu^2 is the same at
    /// every time.
    pub intercept_time: f64,
    /// The process variance the components add up to.
    pub process_variance: f64,
    /// The minimised criterion.
    pub criterion: f64,
    /// sqrt(criterion / pairs in the fitted bins): the root mean squared relative misfit
    /// gammahat / gamma - 1, weighted by pairs.
    pub relative_misfit: f64,
    /// Bins fitted.
    pub bins_used: usize,
    /// Nelder-Mead iterations of the kept start (with its restart, for the random slope).
    pub iterations: usize,
    /// Whether that start met the stopping rule.
    pub converged: bool,
    /// Warnings for the reader (e.g. nu^2 clamped at 0).
    pub warnings: Vec<String>,
    /// Parameters at a boundary: "range", "error_variance", "serial_variance",
    /// "slope_variance", "intercept_variance" (see [`flags`]).
    pub at_boundary: Vec<String>,
    /// Whether any flag is raised: the fit should not be read as it stands.
    pub flagged: bool,
    /// Each flag in plain words (see [`flags`] for the conditions and tolerances).
    pub flags: Vec<String>,
    /// What the flags mean for a reader, in a sentence or two.
    pub reading: String,
    /// Lags of the curves: 101 points from 0 to the maximum lag.
    pub curve_lag: Vec<f64>,
    /// The fitted variogram there (its value at 0 is the limit tau^2).
    pub curve_variogram: Vec<f64>,
    /// rho(u), the serial correlation.
    pub curve_serial_correlation: Vec<f64>,
    /// Stationary model: (nu^2 + sigma^2 rho(u)) / (nu^2 + sigma^2 + tau^2), the implied
    /// correlation of two measurements u apart. Random-slope model: NaN (see
    /// `curve_correlation_kind`).
    pub curve_correlation: Vec<f64>,
    /// What `curve_correlation` holds.
    pub curve_correlation_kind: CorrelationCurve,
}

impl VariogramFit {
    /// The fitted variogram at lag `u`: tau^2 + sigma^2 (1 - rho(u)) + omega^2 u^2 / 2.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::correlation::variogram::fit::{fit_variogram, Estimate, VariogramModel};
    /// use trajweave_core::correlation::variogram::Variogram;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let vg = Variogram::for_fit(vec![1.0, 2.0, 3.0], vec![40; 3], vec![2.0, 3.0, 3.5],
    ///     vec![2.0, 3.0, 3.5], 3.0, 6.0)?;
    /// let f = fit_variogram(&vg, VariogramModel::Exponential, Estimate::Classical)?;
    /// assert_eq!(f.variogram_at(0.0), f.error_variance);
    /// # Ok(()) }
    /// ```
    pub fn variogram_at(&self, u: f64) -> f64 {
        model_value(
            self.model,
            u,
            self.error_variance,
            self.serial_variance,
            self.range,
            self.slope_variance,
        )
    }
}

/// gamma(u) at (tau^2, sigma^2, phi, omega^2). With omega^2 = 0 the added term is +0.0, so
/// the stationary values are exactly those of tau^2 + sigma^2 (1 - rho).
fn model_value(model: VariogramModel, u: f64, tau2: f64, s2: f64, phi: f64, w: f64) -> f64 {
    tau2 + s2 * (1.0 - model.rho(u, phi)) + 0.5 * w * u * u
}

/// Cressie's criterion for bins (u, gammahat, N) at (tau^2, sigma^2, phi, omega^2).
fn criterion(
    model: VariogramModel,
    bins: &[(f64, f64, f64)],
    tau2: f64,
    s2: f64,
    phi: f64,
    w: f64,
) -> f64 {
    bins.iter()
        .map(|&(u, g, n)| {
            let m = model_value(model, u, tau2, s2, phi, w);
            n * (g / m - 1.0).powi(2)
        })
        .sum()
}

/// Fits the stationary `model` to the `estimate` bins of `vg` (no random slope; see
/// [`fit_variogram_with`] for that).
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::fit::{fit_variogram, Estimate, VariogramModel};
/// use trajweave_core::correlation::variogram::{variogram, VariogramOptions};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let p = simulate(&SimulateOptions { subjects: 300, ..Default::default() })?.to_panel()?;
/// let r: Vec<f64> = p.response().iter().map(|y| y - 50.0).collect();
/// let vg = variogram(&p, &r, &VariogramOptions::default())?;
/// let fit = fit_variogram(&vg, VariogramModel::Exponential, Estimate::Classical)?;
/// assert!(fit.range > 0.0 && fit.error_variance >= 0.0);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::TooFew`] when fewer than 3 bins have an estimate.
pub fn fit_variogram(
    vg: &Variogram,
    model: VariogramModel,
    estimate: Estimate,
) -> Result<VariogramFit> {
    fit_variogram_with(
        vg,
        &FitOptions {
            model,
            estimate,
            random_slope: false,
        },
    )
}

/// Fits the model of `options` (stationary, or with a random slope) to `vg`.
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::fit::{fit_variogram_with, FitOptions};
/// use trajweave_core::correlation::variogram::{variogram, VariogramOptions};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let p = simulate(&SimulateOptions { subjects: 300, ..Default::default() })?.to_panel()?;
/// // The simulated mean slope for the reference patient, -1.2 per year, taken out.
/// let r: Vec<f64> = p.time().iter().zip(p.response()).map(|(t, y)| y - 58.0 + 1.2 * t).collect();
/// let vg = variogram(&p, &r, &VariogramOptions::default())?;
/// let o = FitOptions { random_slope: true, ..Default::default() };
/// let fit = fit_variogram_with(&vg, &o)?;
/// assert!(fit.random_slope && fit.slope_variance >= 0.0);
/// assert!(fit.curve_correlation.iter().all(|c| c.is_nan()));
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::TooFew`] when fewer than 3 bins (4 with the random slope) have an estimate.
pub fn fit_variogram_with(vg: &Variogram, options: &FitOptions) -> Result<VariogramFit> {
    let bins = fit_bins(vg, options.estimate);
    let needed = if options.random_slope { 4 } else { 3 };
    if bins.len() < needed {
        return Err(Error::TooFew {
            what: "lag bins with an estimate".into(),
            estimate: if options.random_slope {
                "a variogram model fit with a random slope (4 parameters)".into()
            } else {
                "a variogram model fit (3 parameters)".into()
            },
            needed,
            found: bins.len(),
        });
    }
    let stationary = fit_stationary(options.model, &bins, vg.max_lag);
    let p = if options.random_slope {
        fit_slope(options.model, &bins, vg.max_lag, &stationary)
    } else {
        stationary
    };
    Ok(assemble(vg, options, &bins, &p))
}

/// The (mean lag, estimate, pairs) of the bins that have an estimate.
fn fit_bins(vg: &Variogram, estimate: Estimate) -> Vec<(f64, f64, f64)> {
    let values = match estimate {
        Estimate::Classical => &vg.classical,
        Estimate::Robust => &vg.robust,
    };
    (0..values.len())
        .filter(|&i| values[i].is_finite() && vg.lag[i].is_finite())
        .map(|i| (vg.lag[i], values[i], vg.pairs[i] as f64))
        .collect()
}

/// Fitted parameters with the optimiser's report.
struct Parameters {
    tau2: f64,
    s2: f64,
    phi: f64,
    w: f64,
    value: f64,
    iterations: usize,
    converged: bool,
}

/// The best of several Nelder-Mead runs, the first on ties so the choice is reproducible.
fn best(runs: Vec<(Minimum, f64)>) -> (Minimum, f64) {
    let mut kept: Option<(Minimum, f64)> = None;
    for r in runs {
        if kept.as_ref().is_none_or(|k| r.0.f < k.0.f) {
            kept = Some(r);
        }
    }
    // At least one start is always run.
    kept.unwrap_or((
        Minimum {
            x: vec![],
            f: f64::NAN,
            iterations: 0,
            converged: false,
        },
        1.0,
    ))
}

fn fit_stationary(model: VariogramModel, bins: &[(f64, f64, f64)], max_lag: f64) -> Parameters {
    // A range far beyond the longest lag is not identified by the data: cap it.
    let longest = RANGE_CAP * max_lag;
    let cap = |c: f64| c.exp().min(longest);
    let runs: Vec<_> = [0.1, 0.3, 1.0]
        .iter()
        .map(|share| {
            let phi = max_lag * share;
            let (tau2, s2) = start_components(model, bins, phi);
            // Variances enter as square roots scaled by the larger, so one simplex step
            // suits every coordinate.
            let scale = tau2.sqrt().max(s2.sqrt()).max(1e-8);
            let start = [tau2.sqrt() / scale, s2.sqrt() / scale, phi.ln()];
            let m = nelder_mead(
                |x| {
                    let (a, b) = (x[0] * scale, x[1] * scale);
                    criterion(model, bins, a * a, b * b, cap(x[2]), 0.0)
                },
                &start,
                0.25,
                1e-12,
                1e-9,
                MAX_ITERATIONS,
            );
            (m, scale)
        })
        .collect();
    let (m, scale) = best(runs);
    let (a, b) = (m.x[0] * scale, m.x[1] * scale);
    Parameters {
        tau2: a * a,
        s2: b * b,
        phi: cap(m.x[2]),
        w: 0.0,
        value: m.f,
        iterations: m.iterations,
        converged: m.converged,
    }
}

fn fit_slope(
    model: VariogramModel,
    bins: &[(f64, f64, f64)],
    max_lag: f64,
    stationary: &Parameters,
) -> Parameters {
    let longest = RANGE_CAP * max_lag;
    let cap = |c: f64| c.exp().min(longest);
    // omega^2 enters as d = sqrt(omega^2 L^2 / 2), the slope term's size at the maximum lag.
    let half_l2 = 0.5 * max_lag * max_lag;
    let run = |x0: [f64; 4], scale: f64| -> (Minimum, f64) {
        let m = nelder_mead(
            |x| {
                let (a, b, d) = (x[0] * scale, x[1] * scale, x[3] * scale);
                criterion(model, bins, a * a, b * b, cap(x[2]), d * d / half_l2)
            },
            &x0,
            0.25,
            1e-12,
            1e-9,
            MAX_ITERATIONS,
        );
        (m, scale)
    };
    let start = |tau2: f64, s2: f64, phi: f64, w: f64| -> ([f64; 4], f64) {
        let d = (w * half_l2).sqrt();
        let scale = tau2.sqrt().max(s2.sqrt()).max(d).max(1e-8);
        (
            [tau2.sqrt() / scale, s2.sqrt() / scale, phi.ln(), d / scale],
            scale,
        )
    };
    let mut runs: Vec<_> = [0.1, 0.3, 1.0]
        .iter()
        .map(|share| {
            let phi = max_lag * share;
            let (tau2, s2, w) = start_slope_components(model, bins, phi, max_lag);
            let (x0, scale) = start(tau2, s2, phi, w);
            run(x0, scale)
        })
        .collect();
    let (x0, scale) = start(stationary.tau2, stationary.s2, stationary.phi, 0.0);
    runs.push(run(x0, scale));
    let (first, scale) = best(runs);
    let mut x0 = [0.0; 4];
    x0.copy_from_slice(&first.x);
    let (m, _) = run(x0, scale);
    let (a, b, d) = (m.x[0] * scale, m.x[1] * scale, m.x[3] * scale);
    Parameters {
        tau2: a * a,
        s2: b * b,
        phi: cap(m.x[2]),
        w: d * d / half_l2,
        value: m.f,
        iterations: first.iterations + m.iterations,
        converged: m.converged,
    }
}

/// The result struct from the fitted parameters: nu^2, warnings, flags, curves.
fn assemble(
    vg: &Variogram,
    options: &FitOptions,
    bins: &[(f64, f64, f64)],
    p: &Parameters,
) -> VariogramFit {
    let (model, slope) = (options.model, options.random_slope);
    let (tau2, s2, phi, w) = (p.tau2, p.s2, p.phi, p.w);
    let longest = RANGE_CAP * vg.max_lag;
    let at_cap = flags::range_at_cap(phi, longest);
    let mut warnings = Vec::new();
    if at_cap {
        warnings.push(if slope {
            format!(
                "the range reached its cap of {RANGE_CAP} x the maximum lag: the serial term \
                 does not level off over the lags seen, so sigma^2, the range and omega^2 are \
                 not separately identified"
            )
        } else {
            format!(
                "the range reached its cap of {RANGE_CAP} x the maximum lag: the variogram keeps \
                 rising over the lags seen (a random slope, or a trend left in the residuals?)"
            )
        });
    }
    if !p.converged {
        warnings.push("the variogram fit stopped at its iteration cap before converging".into());
    }
    // The fitted within-subject part of the mean row variance (see the module doc).
    let within = if slope {
        tau2 + s2 + w * vg.time_variance
    } else {
        tau2 + s2
    };
    let mut nu2 = vg.process_variance - within;
    let clamped = nu2 < 0.0;
    if clamped {
        warnings.push(if slope {
            format!(
                "the fitted within-subject variance tau^2 + sigma^2 + omega^2 s_t^2 = {:.6} \
                 exceeds the process variance {:.6}; the intercept variance nu^2 at the mean \
                 visit time is set to 0 (the variogram rises faster than the random slope and \
                 the serial process explain, or a trend is left in the residuals)",
                within, vg.process_variance
            )
        } else {
            format!(
                "the fitted sill tau^2 + sigma^2 = {:.6} exceeds the process variance {:.6}; the \
                 random-intercept variance nu^2 is set to 0 (no between-subject variance beyond the \
                 serial process, or the variogram has not levelled off within the maximum lag)",
                tau2 + s2,
                vg.process_variance
            )
        });
        nu2 = 0.0;
    }
    let pairs: f64 = bins.iter().map(|b| b.2).sum();
    let shortest = bins.iter().map(|b| b.0).fold(f64::INFINITY, f64::min);
    let assessed = flags::assess(&flags::Facts {
        model,
        random_slope: slope,
        converged: p.converged,
        tau2,
        s2,
        phi,
        w,
        max_lag: vg.max_lag,
        shortest_lag: shortest,
        within,
        process_variance: vg.process_variance,
        clamped,
    });
    let curve_lag: Vec<f64> = (0..CURVE_POINTS)
        .map(|i| vg.max_lag * i as f64 / (CURVE_POINTS - 1) as f64)
        .collect();
    let curve_serial_correlation: Vec<f64> = curve_lag.iter().map(|&u| model.rho(u, phi)).collect();
    let total = nu2 + s2 + tau2;
    let (curve_correlation, curve_correlation_kind) = if slope {
        (
            vec![f64::NAN; curve_lag.len()],
            CorrelationCurve::NotIdentified,
        )
    } else {
        (
            curve_serial_correlation
                .iter()
                .map(|r| (nu2 + s2 * r) / total)
                .collect(),
            CorrelationCurve::Stationary,
        )
    };
    VariogramFit {
        model,
        estimate: options.estimate,
        random_slope: slope,
        error_variance: tau2,
        serial_variance: s2,
        range: phi,
        slope_variance: w,
        intercept_variance: nu2,
        intercept_time: if slope { vg.time_mean } else { f64::NAN },
        process_variance: vg.process_variance,
        criterion: p.value,
        relative_misfit: (p.value / pairs).sqrt(),
        bins_used: bins.len(),
        iterations: p.iterations,
        converged: p.converged,
        warnings,
        at_boundary: assessed.at_boundary,
        flagged: !assessed.flags.is_empty(),
        flags: assessed.flags,
        reading: assessed.reading,
        curve_variogram: curve_lag
            .iter()
            .map(|&u| model_value(model, u, tau2, s2, phi, w))
            .collect(),
        curve_lag,
        curve_serial_correlation,
        curve_correlation,
        curve_correlation_kind,
    }
}

/// (tau^2, sigma^2) from a weighted least-squares line of gammahat on 1 - rho(u; phi), with
/// weights N / gammahat^2 (Cressie's weights at the data), both clamped at >= 0.
fn start_components(model: VariogramModel, bins: &[(f64, f64, f64)], phi: f64) -> (f64, f64) {
    let (mut sw, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for &(u, g, n) in bins {
        let w = n / (g * g).max(f64::MIN_POSITIVE);
        let x = 1.0 - model.rho(u, phi);
        sw += w;
        sx += w * x;
        sy += w * g;
        sxx += w * x * x;
        sxy += w * x * g;
    }
    let det = sw * sxx - sx * sx;
    let mean = sy / sw;
    if det.abs() <= 1e-12 * sw * sxx {
        return (0.5 * mean, 0.5 * mean);
    }
    let slope = (sw * sxy - sx * sy) / det;
    let intercept = (sy - slope * sx) / sw;
    let floor = 1e-6 * mean.abs().max(f64::MIN_POSITIVE);
    (intercept.max(floor), slope.max(floor))
}

/// (tau^2, sigma^2, omega^2) from a weighted least-squares plane of gammahat on 1 - rho(u; phi)
/// and u^2 / 2 (weights N / gammahat^2), each clamped at a small positive floor; the line of
/// [`start_components`] with a small omega^2 when the plane's equations are singular.
fn start_slope_components(
    model: VariogramModel,
    bins: &[(f64, f64, f64)],
    phi: f64,
    max_lag: f64,
) -> (f64, f64, f64) {
    let mut a = [0.0; 9];
    let mut b = [0.0; 3];
    let (mut sw, mut sy) = (0.0, 0.0);
    for &(u, g, n) in bins {
        let wt = n / (g * g).max(f64::MIN_POSITIVE);
        let x = [1.0, 1.0 - model.rho(u, phi), 0.5 * u * u];
        for i in 0..3 {
            for j in 0..3 {
                a[i * 3 + j] += wt * x[i] * x[j];
            }
            b[i] += wt * x[i] * g;
        }
        sw += wt;
        sy += wt * g;
    }
    let mean = sy / sw;
    let floor = 1e-6 * mean.abs().max(f64::MIN_POSITIVE);
    // omega^2 whose term at the maximum lag is the floor.
    let w_floor = floor / (0.5 * max_lag * max_lag);
    if cholesky(&mut a, 3).is_none() {
        let (tau2, s2) = start_components(model, bins, phi);
        return (tau2, s2, w_floor);
    }
    forward(&a, 3, &mut b);
    backward(&a, 3, &mut b);
    if !b.iter().all(|v| v.is_finite()) {
        let (tau2, s2) = start_components(model, bins, phi);
        return (tau2, s2, w_floor);
    }
    (b[0].max(floor), b[1].max(floor), b[2].max(w_floor))
}
