//! The stationary and the random-slope model fitted to the same bins, and which to read.
//!
//! Both fits minimise Cressie's criterion over the same bins with the same weights, and the
//! stationary model is the random-slope model with omega^2 = 0 (the slope fit starts from the
//! stationary optimum, so its criterion is never higher). The comparison is the relative
//! reduction of the criterion, 1 - C_slope / C_stationary (0 when C_stationary is 0).
//!
//! Rule (a rule of thumb, our choice; pairs within a subject are dependent, so the criterion
//! is not a chi-square and no test is offered):
//! 1. the random-slope fit, when it is not flagged and its criterion is lower by at least
//!    [`SLOPE_REDUCTION`] (a fraction of the stationary criterion);
//! 2. otherwise the stationary fit, when it is not flagged;
//! 3. otherwise neither: both fits carry flags and neither should be read as it stands.

use serde::Serialize;

use crate::error::Result;

use super::super::Variogram;
use super::{fit_variogram_with, Estimate, FitOptions, VariogramFit, VariogramModel};

/// Smallest relative reduction of the criterion for which the random slope is preferred.
pub const SLOPE_REDUCTION: f64 = 0.5;

/// Which fit the comparison prefers.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Preference {
    /// The stationary model.
    Stationary,
    /// The model with a random slope.
    RandomSlope,
    /// Neither: both are flagged.
    Neither,
}

/// Both fits and the verdict of the rule in the module doc.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VariogramComparison {
    /// The stationary fit.
    pub stationary: VariogramFit,
    /// The fit with a random slope.
    pub random_slope: VariogramFit,
    /// 1 - C_slope / C_stationary.
    pub criterion_reduction: f64,
    /// The fit the rule prefers.
    pub preferred: Preference,
    /// Why, in plain words.
    pub reason: String,
}

/// Fits `model` to the `estimate` bins of `vg` with and without a random slope and applies
/// the rule of the module doc.
///
/// # Examples
/// ```
/// use trajweave_core::correlation::variogram::fit::{compare_variogram_fits, Estimate, VariogramModel};
/// use trajweave_core::correlation::variogram::{variogram, VariogramOptions};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let p = simulate(&SimulateOptions { subjects: 300, ..Default::default() })?.to_panel()?;
/// let r: Vec<f64> = p.time().iter().zip(p.response()).map(|(t, y)| y - 58.0 + 1.2 * t).collect();
/// let vg = variogram(&p, &r, &VariogramOptions::default())?;
/// let c = compare_variogram_fits(&vg, VariogramModel::Exponential, Estimate::Classical)?;
/// assert!(c.random_slope.criterion <= c.stationary.criterion);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`crate::Error::TooFew`] when fewer than 4 bins have an estimate.
pub fn compare_variogram_fits(
    vg: &Variogram,
    model: VariogramModel,
    estimate: Estimate,
) -> Result<VariogramComparison> {
    let options = FitOptions {
        model,
        estimate,
        random_slope: true,
    };
    // The slope fit first: it refuses fewer than 4 bins, the stronger requirement.
    let random_slope = fit_variogram_with(vg, &options)?;
    let stationary = fit_variogram_with(
        vg,
        &FitOptions {
            random_slope: false,
            ..options
        },
    )?;
    let reduction = if stationary.criterion > 0.0 {
        1.0 - random_slope.criterion / stationary.criterion
    } else {
        0.0
    };
    let percent = |x: f64| format!("{:.1}%", 100.0 * x);
    let (preferred, reason) = if !random_slope.flagged && reduction >= SLOPE_REDUCTION {
        (
            Preference::RandomSlope,
            format!(
                "the random slope lowers the criterion by {} (at least {} asked) and its fit \
                 has no flags",
                percent(reduction),
                percent(SLOPE_REDUCTION)
            ),
        )
    } else if !stationary.flagged {
        (
            Preference::Stationary,
            if random_slope.flagged {
                format!(
                    "the stationary fit has no flags and the random-slope fit is flagged (its \
                     criterion is {} lower)",
                    percent(reduction)
                )
            } else {
                format!(
                    "the random slope lowers the criterion by only {} (less than {}), so the \
                     simpler stationary fit is kept",
                    percent(reduction),
                    percent(SLOPE_REDUCTION)
                )
            },
        )
    } else if random_slope.flagged {
        (
            Preference::Neither,
            "both fits are flagged: read neither as variance components".to_string(),
        )
    } else {
        (
            Preference::Neither,
            format!(
                "the stationary fit is flagged and the random slope lowers the criterion by \
                 only {} (less than {}): read neither as variance components",
                percent(reduction),
                percent(SLOPE_REDUCTION)
            ),
        )
    };
    Ok(VariogramComparison {
        stationary,
        random_slope,
        criterion_reduction: reduction,
        preferred,
        reason,
    })
}
