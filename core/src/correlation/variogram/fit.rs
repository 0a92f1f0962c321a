//! A parametric model fitted to an empirical variogram:
//! gamma(u) = tau^2 + sigma^2 (1 - rho(u; phi)), with rho(u) = exp(-u / phi) (exponential) or
//! exp(-(u / phi)^2) (Gaussian), tau^2 the measurement error (nugget), sigma^2 the serial
//! variance and phi the range.
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
//! The range is capped at [`RANGE_CAP`] x the maximum lag (with a warning when it gets
//! there), since lags beyond those observed cannot tell larger ranges apart.
//!
//! The random-intercept variance is nu^2 = process variance - (tau^2 + sigma^2), set to 0 with
//! a warning when negative (the fitted sill exceeds the process variance).

use serde::Serialize;

use crate::error::{Error, Result};
use crate::numeric::optimize::nelder_mead;

use super::Variogram;

/// Largest range, as a multiple of the maximum lag.
pub const RANGE_CAP: f64 = 10.0;

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
}

/// The fitted model, the variance components and the curves for plotting.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VariogramFit {
    /// The correlation model.
    pub model: VariogramModel,
    /// The estimate fitted.
    pub estimate: Estimate,
    /// tau^2, measurement-error variance.
    pub error_variance: f64,
    /// sigma^2, serial variance.
    pub serial_variance: f64,
    /// phi, range (time units).
    pub range: f64,
    /// nu^2, random-intercept variance (>= 0).
    pub intercept_variance: f64,
    /// The process variance the components add up to.
    pub process_variance: f64,
    /// The minimised criterion.
    pub criterion: f64,
    /// Bins fitted.
    pub bins_used: usize,
    /// Nelder-Mead iterations of the kept start.
    pub iterations: usize,
    /// Whether that start met the stopping rule.
    pub converged: bool,
    /// Warnings for the reader (e.g. nu^2 clamped at 0).
    pub warnings: Vec<String>,
    /// Lags of the curves: 101 points from 0 to the maximum lag.
    pub curve_lag: Vec<f64>,
    /// The fitted variogram there (its value at 0 is the limit tau^2).
    pub curve_variogram: Vec<f64>,
    /// rho(u), the serial correlation.
    pub curve_serial_correlation: Vec<f64>,
    /// (nu^2 + sigma^2 rho(u)) / (nu^2 + sigma^2 + tau^2), the implied correlation of two
    /// measurements u apart.
    pub curve_correlation: Vec<f64>,
}

/// Cressie's criterion for bins (u, gammahat, N) at (tau^2, sigma^2, phi).
fn criterion(model: VariogramModel, bins: &[(f64, f64, f64)], tau2: f64, s2: f64, phi: f64) -> f64 {
    bins.iter()
        .map(|&(u, g, n)| {
            let m = tau2 + s2 * (1.0 - model.rho(u, phi));
            n * (g / m - 1.0).powi(2)
        })
        .sum()
}

/// Fits `model` to the `estimate` bins of `vg`.
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
    let values = match estimate {
        Estimate::Classical => &vg.classical,
        Estimate::Robust => &vg.robust,
    };
    let bins: Vec<(f64, f64, f64)> = (0..values.len())
        .filter(|&i| values[i].is_finite() && vg.lag[i].is_finite())
        .map(|i| (vg.lag[i], values[i], vg.pairs[i] as f64))
        .collect();
    if bins.len() < 3 {
        return Err(Error::TooFew {
            what: "lag bins with an estimate".into(),
            estimate: "a variogram model fit (3 parameters)".into(),
            needed: 3,
            found: bins.len(),
        });
    }
    // A range far beyond the longest lag is not identified by the data: cap it.
    let longest = RANGE_CAP * vg.max_lag;
    let cap = |c: f64| c.exp().min(longest);
    let fits: Vec<_> = [0.1, 0.3, 1.0]
        .iter()
        .map(|share| {
            let phi = vg.max_lag * share;
            let (tau2, s2) = start_components(model, &bins, phi);
            // Variances enter as square roots scaled by the larger, so one simplex step
            // suits every coordinate.
            let scale = tau2.sqrt().max(s2.sqrt()).max(1e-8);
            let start = [tau2.sqrt() / scale, s2.sqrt() / scale, phi.ln()];
            let m = nelder_mead(
                |x| {
                    let (a, b) = (x[0] * scale, x[1] * scale);
                    criterion(model, &bins, a * a, b * b, cap(x[2]))
                },
                &start,
                0.25,
                1e-12,
                1e-9,
                5000,
            );
            (m, scale)
        })
        .collect();
    // The first start wins ties, so the choice is reproducible.
    let mut kept = &fits[0];
    for m in &fits[1..] {
        if m.0.f < kept.0.f {
            kept = m;
        }
    }
    let (m, scale) = kept;
    let (value, iterations, converged) = (m.f, m.iterations, m.converged);
    let x = [m.x[0] * scale, m.x[1] * scale, m.x[2]];
    let (tau2, s2, phi) = (x[0] * x[0], x[1] * x[1], cap(x[2]));
    let mut warnings = Vec::new();
    if phi >= longest {
        warnings.push(format!(
            "the range reached its cap of {RANGE_CAP} x the maximum lag: the variogram keeps \
             rising over the lags seen (a random slope, or a trend left in the residuals?)"
        ));
    }
    if !converged {
        warnings.push("the variogram fit stopped at its iteration cap before converging".into());
    }
    let mut nu2 = vg.process_variance - (tau2 + s2);
    if nu2 < 0.0 {
        warnings.push(format!(
            "the fitted sill tau^2 + sigma^2 = {:.6} exceeds the process variance {:.6}; the \
             random-intercept variance nu^2 is set to 0 (no between-subject variance beyond the \
             serial process, or the variogram has not levelled off within the maximum lag)",
            tau2 + s2,
            vg.process_variance
        ));
        nu2 = 0.0;
    }
    let total = nu2 + s2 + tau2;
    let curve_lag: Vec<f64> = (0..=100).map(|i| vg.max_lag * i as f64 / 100.0).collect();
    let curve_serial_correlation: Vec<f64> = curve_lag.iter().map(|&u| model.rho(u, phi)).collect();
    Ok(VariogramFit {
        model,
        estimate,
        error_variance: tau2,
        serial_variance: s2,
        range: phi,
        intercept_variance: nu2,
        process_variance: vg.process_variance,
        criterion: value,
        bins_used: bins.len(),
        iterations,
        converged,
        warnings,
        curve_variogram: curve_serial_correlation
            .iter()
            .map(|r| tau2 + s2 * (1.0 - r))
            .collect(),
        curve_correlation: curve_serial_correlation
            .iter()
            .map(|r| (nu2 + s2 * r) / total)
            .collect(),
        curve_serial_correlation,
        curve_lag,
    })
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
