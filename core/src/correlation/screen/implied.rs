//! The correlation a structure implies between two separate measurements of one subject, at
//! times t and t + u: V(t, t + u) / sqrt(V(t, t) V(t + u, t + u)), the error variance entering
//! the variances only (two measurements, two errors), so at u = 0 it is the correlation of two
//! measurements taken at the same time, 1 minus the error's share, not 1.

use super::binned::toeplitz;
use super::structures::{unstructured_matrix, Structure};
use crate::data::grid::TimeGrid;
use crate::error::{Error, Result};

/// The correlation implied by `structure` at `parameters` (in the order of
/// [`Structure::parameter_names`]) between measurements at `time` and `time + lag`, for each
/// lag (negative lags look back).
///
/// For the stationary structures (all but the random-slope ones) it depends on the lag only.
/// The random-slope structures give, with z(t) = (1, t) and their G at time 0,
/// corr = (z(t) G z(t+u)' + s2 exp(-|u| / phi)) / sqrt(v(t) v(t+u)),
/// v(t) = z(t) G z(t)' + s2 + tau2. Toeplitz and unstructured need `grid`: the bins of t and
/// t + u give c_{|a-b|} / c_0, or S_ab / sqrt(S_aa S_bb); NaN where a time is in no bin.
///
/// # Examples
/// ```
/// use trajweave_core::correlation::screen::{implied_correlation, Structure};
/// # fn main() -> trajweave_core::Result<()> {
/// // Random intercept (variance 3) + error (variance 1): 3 / 4 at every lag.
/// let c = implied_correlation(Structure::Exchangeable, &[3.0, 1.0], 0.0, &[0.0, 5.0], None)?;
/// assert_eq!(c, vec![0.75, 0.75]);
/// let e = implied_correlation(Structure::Exponential, &[2.0, 1.5], 4.0, &[1.5], None)?;
/// assert!((e[0] - (-1.0f64).exp()).abs() < 1e-15);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] naming `parameters` as [`super::structure_loglik`] does, `time`
/// or `lags` for a value that is not finite, and `grid` when toeplitz or unstructured is asked
/// for without one.
pub fn implied_correlation(
    structure: Structure,
    parameters: &[f64],
    time: f64,
    lags: &[f64],
    grid: Option<&TimeGrid>,
) -> Result<Vec<f64>> {
    if !time.is_finite() {
        return Err(Error::option("time", time, "a finite number"));
    }
    if let Some(u) = lags.iter().find(|u| !u.is_finite()) {
        return Err(Error::option("lags", u, "finite numbers"));
    }
    let k_bins = grid.map_or(0, TimeGrid::n_bins);
    if structure.needs_grid() && grid.is_none() {
        return Err(Error::option(
            "grid",
            "not given",
            &format!("{} needs a time grid", structure.name()),
        ));
    }
    structure.check_parameters(parameters, k_bins)?;
    let p = parameters;
    let each = |f: &dyn Fn(f64) -> f64| lags.iter().map(|&u| f(u)).collect::<Vec<f64>>();
    // z(a) G z(b)' for G at time 0.
    let zgz = |a: f64, b: f64| {
        let c = p[2] * (p[0] * p[1]).sqrt();
        p[0] + c * (a + b) + p[1] * a * b
    };
    let out = match structure {
        Structure::Independence => each(&|_| 0.0),
        Structure::Exchangeable => each(&|_| p[0] / (p[0] + p[1])),
        Structure::Exponential => each(&|u| (-u.abs() / p[1]).exp()),
        Structure::Gaussian => each(&|u| (-(u / p[1]) * (u / p[1])).exp()),
        Structure::InterceptExponentialError => {
            each(&|u| (p[0] + p[1] * (-u.abs() / p[2]).exp()) / (p[0] + p[1] + p[3]))
        }
        Structure::InterceptSlopeError => each(&|u| {
            let b = time + u;
            zgz(time, b) / ((zgz(time, time) + p[3]) * (zgz(b, b) + p[3])).sqrt()
        }),
        Structure::InterceptSlopeExponentialError => each(&|u| {
            let b = time + u;
            let extra = p[3] + p[5];
            (zgz(time, b) + p[3] * (-u.abs() / p[4]).exp())
                / ((zgz(time, time) + extra) * (zgz(b, b) + extra)).sqrt()
        }),
        Structure::Toeplitz | Structure::Unstructured => {
            let g = grid.ok_or_else(|| Error::option("grid", "not given", "a time grid"))?;
            let k = k_bins;
            let s = if structure == Structure::Toeplitz {
                toeplitz(p)
            } else {
                unstructured_matrix(k, p)
            };
            each(&|u| match (g.bin_of(time), g.bin_of(time + u)) {
                (Some(a), Some(b)) => s[a * k + b] / (s[a * k + a] * s[b * k + b]).sqrt(),
                _ => f64::NAN,
            })
        }
    };
    Ok(out)
}
