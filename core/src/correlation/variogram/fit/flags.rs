//! Flags on a variogram fit: when it stops at a boundary of its parameters, leaves a
//! component at 0, implies more within-subject variance than the residuals hold, or did not
//! converge, the numbers are not to be read as variance components as they stand.
//!
//! Conditions (L the maximum lag, u_1 the shortest mean lag among the fitted bins, P the
//! process variance, S = tau^2 + sigma^2 + omega^2 L^2 / 2 the fitted variance scale, W the
//! fitted within-subject variance tau^2 + sigma^2, plus omega^2 s_t^2 under the random slope):
//!
//! | flag | condition | boundary name |
//! |---|---|---|
//! | no convergence | Nelder-Mead stopped at [`super::MAX_ITERATIONS`] | - |
//! | range at its cap | phi >= (1 - [`RANGE_CAP_TOLERANCE`]) x [`super::RANGE_CAP`] x L | `range` |
//! | range shorter than the lags seen | rho(u_1; phi) < [`SHORT_RANGE_RHO`] | `range` |
//! | tau^2, sigma^2 at 0 | the variance <= [`ZERO_COMPONENT`] x S | `error_variance`, `serial_variance` |
//! | omega^2 at 0 (random slope) | omega^2 L^2 / 2 <= [`ZERO_COMPONENT`] x S | `slope_variance` |
//! | nu^2 clamped at 0 | W > P | `intercept_variance` |
//! | within-subject variance far above P | W > [`SILL_FACTOR`] x P | - |
//! | nu^2 not computed | P (or, under the random slope, s_t^2) not finite | - |
//!
//! The tolerances are our choices (no published source): a component under 1/10,000 of the
//! fitted scale contributes nothing visible to the curve; 0.1% of the range cap is far below
//! what the lags can resolve; a serial correlation under 0.01 at the shortest lag leaves
//! sigma^2 and tau^2 confounded; 1.5 x P is well past sampling noise in P.

use super::VariogramModel;

/// Relative distance from the range cap within which the range counts as at the cap.
pub const RANGE_CAP_TOLERANCE: f64 = 1e-3;
/// Serial correlation at the shortest fitted lag below which the range counts as too short.
pub const SHORT_RANGE_RHO: f64 = 0.01;
/// A variance component at most this fraction of the fitted variance scale counts as 0.
pub const ZERO_COMPONENT: f64 = 1e-4;
/// A fitted within-subject variance above this multiple of the process variance is flagged.
pub const SILL_FACTOR: f64 = 1.5;

/// Whether `phi` is at the cap `longest` (within [`RANGE_CAP_TOLERANCE`]).
pub(super) fn range_at_cap(phi: f64, longest: f64) -> bool {
    phi >= (1.0 - RANGE_CAP_TOLERANCE) * longest
}

/// What the flags are decided on.
pub(super) struct Facts {
    pub model: VariogramModel,
    pub random_slope: bool,
    pub converged: bool,
    pub tau2: f64,
    pub s2: f64,
    pub phi: f64,
    pub w: f64,
    pub max_lag: f64,
    pub shortest_lag: f64,
    pub within: f64,
    pub process_variance: f64,
    pub clamped: bool,
}

/// The flags of a fit.
pub(super) struct Assessed {
    pub at_boundary: Vec<String>,
    pub flags: Vec<String>,
    pub reading: String,
}

/// `x` with six significant digits.
fn sig(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let digits = (5 - x.abs().log10().floor() as i32).clamp(0, 17) as usize;
    format!("{x:.digits$}")
}

/// The boundary names, flags and reading of a fit.
pub(super) fn assess(f: &Facts) -> Assessed {
    let mut at_boundary: Vec<String> = Vec::new();
    let mut flags = Vec::new();
    let mut reading = Vec::new();
    let longest = super::RANGE_CAP * f.max_lag;
    let scale = f.tau2 + f.s2 + 0.5 * f.w * f.max_lag * f.max_lag;

    if !f.converged {
        flags.push(format!(
            "no convergence: the optimiser stopped at its cap of {} iterations",
            super::MAX_ITERATIONS
        ));
        reading.push(
            "The optimiser did not converge, so these numbers are not a minimum of the \
             criterion and should not be used."
                .to_string(),
        );
    }
    let at_cap = range_at_cap(f.phi, longest);
    if at_cap {
        at_boundary.push("range".into());
        flags.push(format!(
            "range at its cap: phi = {} is within {}% of {} x the maximum lag ({}); longer \
             ranges cannot be told apart over the lags seen",
            sig(f.phi),
            100.0 * RANGE_CAP_TOLERANCE,
            super::RANGE_CAP,
            sig(longest)
        ));
    }
    let rho_first = f.model.rho(f.shortest_lag, f.phi);
    let short = rho_first < SHORT_RANGE_RHO;
    if short {
        at_boundary.push("range".into());
        flags.push(format!(
            "range shorter than the lags seen: the serial correlation at the shortest fitted \
             lag ({}) is {}, below {}, so the serial variance and the measurement error cannot \
             be told apart",
            sig(f.shortest_lag),
            sig(rho_first),
            SHORT_RANGE_RHO
        ));
    }
    let far_above = f.within > SILL_FACTOR * f.process_variance;
    if far_above {
        flags.push(format!(
            "the fitted within-subject variance {} is more than {} x the process variance {}",
            sig(f.within),
            SILL_FACTOR,
            sig(f.process_variance)
        ));
    }
    if !f.random_slope && (at_cap || far_above) {
        reading.push(
            "The variogram keeps rising over the lags seen, so no stationary model fits; a \
             random slope (refit with the random-slope option) or a trend left in the \
             residuals may explain it."
                .to_string(),
        );
    } else if f.random_slope && far_above {
        reading.push(
            "The fitted within-subject variance is far above the residuals' process variance, \
             so even with a random slope the model does not describe these residuals (a trend \
             left in them?)."
                .to_string(),
        );
    } else if f.random_slope && at_cap {
        reading.push(
            "The serial term does not level off over the lags seen, so the serial variance, \
             the range and the slope variance cannot be read one by one."
                .to_string(),
        );
    }
    if short {
        reading.push(
            "The serial correlation has died out by the shortest lag, so only the sum of the \
             serial and measurement-error variances is estimated."
                .to_string(),
        );
    }

    let mut zero = Vec::new();
    let mut component = |name: &str, words: &str, symbol: &str, size: f64| {
        if size <= ZERO_COMPONENT * scale {
            at_boundary.push(name.into());
            flags.push(format!(
                "{words} {symbol} at 0 (below {ZERO_COMPONENT} of the fitted variance scale {})",
                sig(scale)
            ));
            zero.push(symbol.to_string());
        }
    };
    component(
        "error_variance",
        "measurement-error variance",
        "tau^2",
        f.tau2,
    );
    component("serial_variance", "serial variance", "sigma^2", f.s2);
    if f.random_slope {
        component(
            "slope_variance",
            "slope variance",
            "omega^2",
            0.5 * f.w * f.max_lag * f.max_lag,
        );
    }
    if !zero.is_empty() {
        let slope_zero = zero.iter().any(|z| z == "omega^2");
        reading.push(format!(
            "{} {} estimated at 0: the variogram gives no evidence for {}{}",
            zero.join(" and "),
            if zero.len() == 1 { "is" } else { "are" },
            if zero.len() == 1 {
                "that component"
            } else {
                "those components"
            },
            if slope_zero {
                " (no random slope is needed: prefer the stationary fit)."
            } else {
                "; a model without it describes the variogram as well."
            }
        ));
    }

    if f.clamped {
        at_boundary.push("intercept_variance".into());
        flags.push(format!(
            "intercept variance nu^2 clamped at 0: the fitted within-subject variance {} \
             exceeds the process variance {}",
            sig(f.within),
            sig(f.process_variance)
        ));
        if !(at_cap || far_above) {
            reading.push(
                "No between-subject variance is left beyond the within-subject terms (nu^2 \
                 set to 0)."
                    .to_string(),
            );
        }
    }
    if !f.within.is_finite() || !f.process_variance.is_finite() {
        flags.push(if f.process_variance.is_finite() {
            "intercept variance not computed: the variogram carries no visit-time variance \
             (time_variance), which the random-slope model needs"
                .to_string()
        } else {
            "intercept variance not computed: the variogram carries no process variance".to_string()
        });
        reading.push("The between-subject variance could not be computed.".to_string());
    }
    at_boundary.dedup();
    let reading = if flags.is_empty() {
        format!(
            "No flags: the {} model{} fits the variogram inside its parameter bounds.",
            f.model.name(),
            if f.random_slope {
                " with a random slope"
            } else {
                ""
            }
        )
    } else {
        reading.join(" ")
    };
    Assessed {
        at_boundary,
        flags,
        reading,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn facts() -> Facts {
        Facts {
            model: VariogramModel::Exponential,
            random_slope: false,
            converged: true,
            tau2: 9.0,
            s2: 16.0,
            phi: 1.5,
            w: 0.0,
            max_lag: 6.0,
            shortest_lag: 0.2,
            within: 25.0,
            process_variance: 125.0,
            clamped: false,
        }
    }

    #[test]
    fn a_clean_fit_has_no_flags() {
        let a = assess(&facts());
        assert!(a.flags.is_empty() && a.at_boundary.is_empty());
        assert!(a.reading.starts_with("No flags"));
    }

    #[test]
    fn each_condition_at_its_stated_tolerance() {
        // Range: 60 = 10 x 6 is the cap; 0.1% below it is still at the cap, 0.2% below is not.
        let mut f = facts();
        f.phi = 60.0 * (1.0 - 1e-3);
        assert_eq!(assess(&f).at_boundary, vec!["range"]);
        f.phi = 60.0 * (1.0 - 2e-3);
        assert!(assess(&f).flags.is_empty());
        // Short range: exp(-0.2 / phi) < 0.01 when phi < 0.2 / ln 100 = 0.0434 (closed form).
        let mut f = facts();
        f.phi = 0.043;
        assert_eq!(assess(&f).at_boundary, vec!["range"]);
        f.phi = 0.044;
        assert!(assess(&f).flags.is_empty());
        // tau^2 at 0 when tau^2 <= 1e-4 (tau^2 + 16), i.e. tau^2 <= 1.60016e-3.
        let mut f = facts();
        f.tau2 = 1.5e-3;
        assert_eq!(assess(&f).at_boundary, vec!["error_variance"]);
        f.tau2 = 1.7e-3;
        assert!(assess(&f).flags.is_empty());
        // Within-subject variance 1.5 x P flags; nu^2 clamped flags the boundary.
        let mut f = facts();
        f.within = 1.5 * 125.0 + 1e-9;
        f.clamped = true;
        let a = assess(&f);
        assert_eq!(a.at_boundary, vec!["intercept_variance"]);
        assert_eq!(a.flags.len(), 2);
        assert!(a.reading.contains("no stationary model fits"));
    }

    #[test]
    fn six_significant_digits() {
        assert_eq!(sig(79.94999), "79.9500");
        assert_eq!(sig(0.000123456789), "0.000123457");
        assert_eq!(sig(703.1), "703.100");
    }
}
