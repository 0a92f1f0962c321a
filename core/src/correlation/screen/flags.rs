//! Boundary flags of every fit: which parameters lie on the edge of their space, in plain
//! words, with the tolerances of docs/methods-screen.md.
//!
//! - a variance is at its lower bound 0 when it is at most [`VARIANCE_TOL`] times the mean
//!   squared residual (a slope variance after multiplying by the squared spread of the visit
//!   times, so both are in the response's squared units);
//! - a correlation (intercept-slope, or a toeplitz / unstructured covariance over the product
//!   of its standard deviations) is at its bound when within [`CORRELATION_TOL`] of +-1;
//! - a range is at the edge of its searched interval when ln range is within half a step of
//!   the 30-point grid of that interval from either end;
//! - the exchangeable ratio nu2 / tau2 at its search limit 1e6 puts error_variance at its
//!   bound.

use super::structures::{diag_index, Structure};

/// Relative tolerance of a variance at 0 (times the mean squared residual).
pub const VARIANCE_TOL: f64 = 1e-6;
/// Distance from +-1 of a correlation at its bound.
pub const CORRELATION_TOL: f64 = 1e-4;

/// What the flags are measured against.
pub(crate) struct FlagContext {
    /// Mean squared residual.
    pub total: f64,
    /// Root-mean-square deviation of the visit times from their mean.
    pub time_spread: f64,
    /// The searched ln range interval.
    pub log_range: (f64, f64),
    /// Half a step of the range grid, ln scale.
    pub half_step: f64,
    /// Smallest positive gap between visits, longest follow-up.
    pub min_gap: Option<f64>,
    /// Longest follow-up of a subject.
    pub max_span: f64,
    /// Bins of the grid (toeplitz, unstructured).
    pub k_bins: usize,
}

/// A number in about three significant digits, for the flags' text.
pub(crate) fn short(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let a = x.abs();
    let trim = |s: &str| {
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s.to_string()
        }
    };
    if (1e-3..1e6).contains(&a) {
        let decimals = (2 - a.log10().floor() as i32).max(0) as usize;
        trim(&format!("{x:.decimals$}"))
    } else {
        let s = format!("{x:.2e}");
        match s.split_once('e') {
            Some((m, e)) => format!("{}e{e}", trim(m)),
            None => s,
        }
    }
}

/// (at_boundary per parameter, flags in words) of one fit.
pub(crate) fn boundary_flags(
    structure: Structure,
    names: &[String],
    p: &[f64],
    loglik: f64,
    converged: bool,
    ctx: &FlagContext,
) -> (Vec<bool>, Vec<String>) {
    let mut at = vec![false; p.len()];
    let mut flags = Vec::new();
    if !loglik.is_finite() || p.iter().any(|v| !v.is_finite()) {
        flags.push("the covariance is not positive definite".to_string());
        return (at, flags);
    }
    let limit = VARIANCE_TOL * ctx.total;
    let variance = |i: usize, squared_units: f64, at: &mut Vec<bool>, flags: &mut Vec<String>| {
        if p[i] * squared_units <= limit {
            at[i] = true;
            flags.push(format!(
                "{} is at its lower bound 0 ({}{}, at most {} x the mean squared residual {})",
                names[i],
                short(p[i]),
                if squared_units == 1.0 {
                    String::new()
                } else {
                    format!(
                        "; times the squared spread of the visit times {}",
                        short(squared_units)
                    )
                },
                short(VARIANCE_TOL),
                short(ctx.total)
            ));
        }
    };
    let correlation =
        |i: usize, r: f64, what: String, at: &mut Vec<bool>, flags: &mut Vec<String>| {
            if r.abs() >= 1.0 - CORRELATION_TOL {
                at[i] = true;
                flags.push(format!(
                    "{} is at its bound {} ({what} {r:.6})",
                    names[i],
                    if r > 0.0 { "1" } else { "-1" },
                ));
            }
        };
    let range = |i: usize, at: &mut Vec<bool>, flags: &mut Vec<String>| {
        let (lo, hi) = ctx.log_range;
        let u = p[i].ln();
        let searched = format!("searched {} to {}", short(lo.exp()), short(hi.exp()));
        if u <= lo + ctx.half_step {
            at[i] = true;
            flags.push(format!(
                "{} is at the lower edge of its searched interval ({}; {searched}{})",
                names[i],
                short(p[i]),
                ctx.min_gap.map_or(String::new(), |d| format!(
                    ", shortest gap between visits {}",
                    short(d)
                ))
            ));
        } else if u >= hi - ctx.half_step {
            at[i] = true;
            flags.push(format!(
                "{} is at the upper edge of its searched interval ({}; {searched}, longest \
                 follow-up {})",
                names[i],
                short(p[i]),
                short(ctx.max_span)
            ));
        }
    };
    let spread2 = ctx.time_spread * ctx.time_spread;
    match structure {
        Structure::Independence => variance(0, 1.0, &mut at, &mut flags),
        Structure::Exchangeable => {
            variance(0, 1.0, &mut at, &mut flags);
            variance(1, 1.0, &mut at, &mut flags);
            if !at[1] && p[0] >= (1.0 - 1e-9) * 1e6 * p[1] {
                at[1] = true;
                flags.push(format!(
                    "{} is at its lower bound: intercept_variance / error_variance reached its \
                     search limit 1e6",
                    names[1]
                ));
            }
        }
        Structure::Exponential | Structure::Gaussian => {
            variance(0, 1.0, &mut at, &mut flags);
            range(1, &mut at, &mut flags);
        }
        Structure::InterceptExponentialError => {
            variance(0, 1.0, &mut at, &mut flags);
            variance(1, 1.0, &mut at, &mut flags);
            range(2, &mut at, &mut flags);
            variance(3, 1.0, &mut at, &mut flags);
        }
        Structure::InterceptSlopeError | Structure::InterceptSlopeExponentialError => {
            variance(0, 1.0, &mut at, &mut flags);
            variance(1, spread2, &mut at, &mut flags);
            // The correlation is meaningless when a variance is 0 (flagged above).
            if !at[0] && !at[1] {
                correlation(2, p[2], "correlation".into(), &mut at, &mut flags);
            }
            if structure == Structure::InterceptSlopeError {
                variance(3, 1.0, &mut at, &mut flags);
            } else {
                variance(3, 1.0, &mut at, &mut flags);
                range(4, &mut at, &mut flags);
                variance(5, 1.0, &mut at, &mut flags);
            }
        }
        Structure::Toeplitz => {
            variance(0, 1.0, &mut at, &mut flags);
            if !at[0] {
                for h in 1..p.len() {
                    let what = format!("correlation {} / {} =", names[h], names[0]);
                    correlation(h, p[h] / p[0], what, &mut at, &mut flags);
                }
            }
        }
        Structure::Unstructured => {
            let k = ctx.k_bins;
            for a in 0..k {
                variance(diag_index(k, a), 1.0, &mut at, &mut flags);
            }
            for a in 0..k {
                for b in a + 1..k {
                    let (ia, ib) = (diag_index(k, a), diag_index(k, b));
                    if at[ia] || at[ib] {
                        continue;
                    }
                    let i = ia + (b - a);
                    let r = p[i] / (p[ia] * p[ib]).sqrt();
                    let what = format!("correlation of bins {a} and {b} =");
                    correlation(i, r, what, &mut at, &mut flags);
                }
            }
        }
    }
    if !converged {
        flags.push("the optimiser stopped at max_iterations without converging".to_string());
    }
    (at, flags)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_numbers() {
        assert_eq!(short(18.3), "18.3");
        assert_eq!(short(8.0), "8");
        assert_eq!(short(0.0123), "0.0123");
        assert_eq!(short(9.1e-11), "9.1e-11");
        assert_eq!(short(1e6), "1e6");
        assert_eq!(short(1e-6), "1e-6");
        assert_eq!(short(-0.99995), "-1");
    }
}
