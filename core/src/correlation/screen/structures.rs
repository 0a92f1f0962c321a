//! The candidate covariance structures: names, parameters and the covariance each defines.

use serde::Serialize;

use crate::error::{Error, Result};

/// A candidate within-subject covariance structure.
///
/// # Examples
/// ```
/// use trajweave_core::correlation::screen::Structure;
/// # fn main() -> trajweave_core::Result<()> {
/// let s = Structure::parse("exponential")?;
/// assert_eq!(s.name(), "exponential");
/// assert_eq!(s.parameter_names(0), vec!["variance", "range"]);
/// assert_eq!(Structure::Toeplitz.parameter_names(3), vec!["lag_0", "lag_1", "lag_2"]);
/// assert!(Structure::parse("ar1").is_err());
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Structure {
    /// V = s2 I.
    Independence,
    /// V = nu2 J + tau2 I (random intercept plus error).
    Exchangeable,
    /// V_jk = s2 exp(-|t_j - t_k| / phi).
    Exponential,
    /// V_jk = s2 exp(-(|t_j - t_k| / phi)^2).
    Gaussian,
    /// V = nu2 J + s2 exp(-|t_j - t_k| / phi) + tau2 I.
    InterceptExponentialError,
    /// V = Z G Z' + tau2 I with Z_j = (1, t_j) and G the 2 x 2 covariance of a random
    /// intercept (at time 0) and slope (Laird & Ware 1982).
    InterceptSlopeError,
    /// V = Z G Z' + s2 exp(-|t_j - t_k| / phi) + tau2 I (random intercept and slope,
    /// exponential serial process, error; Diggle 1988).
    InterceptSlopeExponentialError,
    /// V_jk = c_{|b_j - b_k|} on the bins b of a time grid.
    Toeplitz,
    /// V_jk = S_{b_j b_k} on the bins b of a time grid.
    Unstructured,
}

impl Structure {
    /// Every structure, in the order they are listed and fitted.
    pub const ALL: [Structure; 9] = [
        Structure::Independence,
        Structure::Exchangeable,
        Structure::Exponential,
        Structure::Gaussian,
        Structure::InterceptExponentialError,
        Structure::InterceptSlopeError,
        Structure::InterceptSlopeExponentialError,
        Structure::Toeplitz,
        Structure::Unstructured,
    ];

    /// The structure called `name` (one of the names of [`Structure::name`]).
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `candidates` and listing the allowed names.
    pub fn parse(name: &str) -> Result<Structure> {
        Structure::parse_argument(name, "candidates")
    }

    /// As [`Structure::parse`], the error naming `argument` (e.g. `structure` where one name
    /// is asked for).
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming `argument` and listing the allowed names.
    pub fn parse_argument(name: &str, argument: &str) -> Result<Structure> {
        Structure::ALL
            .iter()
            .copied()
            .find(|s| s.name() == name)
            .ok_or_else(|| {
                let names: Vec<&str> = Structure::ALL.iter().map(|s| s.name()).collect();
                Error::option(
                    argument,
                    format!("{name:?}"),
                    &format!("use one of: {}", names.join(", ")),
                )
            })
    }

    /// The name every front uses.
    pub fn name(self) -> &'static str {
        match self {
            Structure::Independence => "independence",
            Structure::Exchangeable => "exchangeable",
            Structure::Exponential => "exponential",
            Structure::Gaussian => "gaussian",
            Structure::InterceptExponentialError => "intercept_exponential_error",
            Structure::InterceptSlopeError => "intercept_slope_error",
            Structure::InterceptSlopeExponentialError => "intercept_slope_exponential_error",
            Structure::Toeplitz => "toeplitz",
            Structure::Unstructured => "unstructured",
        }
    }

    /// True for the structures defined on the bins of a time grid.
    pub fn needs_grid(self) -> bool {
        matches!(self, Structure::Toeplitz | Structure::Unstructured)
    }

    /// Parameter names, in the order of parameter vectors; `k_bins` (the grid's bin count) is
    /// used by toeplitz (`lag_0..lag_{k-1}`) and unstructured (`cov_a_b`, a <= b, bins from 0).
    pub fn parameter_names(self, k_bins: usize) -> Vec<String> {
        let fixed: &[&str] = match self {
            Structure::Independence => &["variance"],
            Structure::Exchangeable => &["intercept_variance", "error_variance"],
            Structure::Exponential | Structure::Gaussian => &["variance", "range"],
            Structure::InterceptExponentialError => &[
                "intercept_variance",
                "serial_variance",
                "range",
                "error_variance",
            ],
            Structure::InterceptSlopeError => &[
                "intercept_variance",
                "slope_variance",
                "intercept_slope_correlation",
                "error_variance",
            ],
            Structure::InterceptSlopeExponentialError => &[
                "intercept_variance",
                "slope_variance",
                "intercept_slope_correlation",
                "serial_variance",
                "range",
                "error_variance",
            ],
            Structure::Toeplitz => {
                return (0..k_bins).map(|h| format!("lag_{h}")).collect();
            }
            Structure::Unstructured => {
                return (0..k_bins)
                    .flat_map(|a| (a..k_bins).map(move |b| format!("cov_{a}_{b}")))
                    .collect();
            }
        };
        fixed.iter().map(|s| s.to_string()).collect()
    }

    /// True for the structures with a random slope (their intercept variance refers to time
    /// 0 of the panel's time scale).
    pub fn has_random_slope(self) -> bool {
        matches!(
            self,
            Structure::InterceptSlopeError | Structure::InterceptSlopeExponentialError
        )
    }

    /// Checks a parameter vector for this structure: its length, finiteness and ranges
    /// (variances > 0, or >= 0 for the components that may vanish; ranges > 0; correlations
    /// in [-1, 1]).
    pub(crate) fn check_parameters(self, p: &[f64], k_bins: usize) -> Result<()> {
        let names = self.parameter_names(k_bins);
        if p.len() != names.len() {
            return Err(Error::option(
                "parameters",
                format!("{} value(s)", p.len()),
                &format!(
                    "{} takes {} parameters: {}",
                    self.name(),
                    names.len(),
                    names.join(", ")
                ),
            ));
        }
        if let Some((name, v)) = names.iter().zip(p).find(|(_, v)| !v.is_finite()) {
            return Err(Error::option(
                "parameters",
                format!("{name} = {v}"),
                "every parameter must be finite",
            ));
        }
        // (index, strictly positive?) of every constrained parameter.
        let rule: Vec<(usize, bool)> = match self {
            Structure::Independence => vec![(0, true)],
            Structure::Exchangeable => vec![(0, false), (1, true)],
            Structure::Exponential | Structure::Gaussian => vec![(0, true), (1, true)],
            Structure::InterceptExponentialError => {
                vec![(0, false), (1, false), (2, true), (3, false)]
            }
            Structure::InterceptSlopeError => vec![(0, false), (1, false), (3, true)],
            Structure::InterceptSlopeExponentialError => {
                vec![(0, false), (1, false), (3, false), (4, true), (5, false)]
            }
            Structure::Toeplitz => vec![(0, true)],
            Structure::Unstructured => (0..k_bins).map(|a| (diag_index(k_bins, a), true)).collect(),
        };
        for (i, strict) in rule {
            let v = p[i];
            if (strict && v <= 0.0) || v < 0.0 {
                let need = if strict { "> 0" } else { ">= 0" };
                return Err(Error::option(
                    "parameters",
                    format!("{} = {v}", names[i]),
                    &format!("{} must be {need}", names[i]),
                ));
            }
        }
        if self.has_random_slope() && !(-1.0..=1.0).contains(&p[2]) {
            return Err(Error::option(
                "parameters",
                format!("{} = {}", names[2], p[2]),
                &format!("{} must be in [-1, 1]", names[2]),
            ));
        }
        let (serial, error) = match self {
            Structure::InterceptExponentialError => (p[1], p[3]),
            Structure::InterceptSlopeExponentialError => (p[3], p[5]),
            _ => (1.0, 1.0),
        };
        if serial + error <= 0.0 {
            return Err(Error::option(
                "parameters",
                "serial_variance = error_variance = 0",
                "serial_variance + error_variance must be > 0",
            ));
        }
        Ok(())
    }
}

/// Position of cov_a_a in the unstructured parameter vector (rows a of the upper triangle).
pub(crate) fn diag_index(k: usize, a: usize) -> usize {
    // Rows 0..a hold k, k - 1, ..., k - a + 1 entries; cov_a_a opens row a.
    a * k - a * a.saturating_sub(1) / 2
}

/// The unstructured parameters (upper triangle by rows) as a full symmetric k x k matrix.
pub(crate) fn unstructured_matrix(k: usize, p: &[f64]) -> Vec<f64> {
    let mut s = vec![0.0; k * k];
    let mut idx = 0;
    for a in 0..k {
        for b in a..k {
            s[a * k + b] = p[idx];
            s[b * k + a] = p[idx];
            idx += 1;
        }
    }
    s
}

/// The upper triangle by rows of a symmetric k x k matrix (the unstructured parameters).
pub(crate) fn upper_triangle(k: usize, s: &[f64]) -> Vec<f64> {
    (0..k)
        .flat_map(|a| (a..k).map(move |b| s[a * k + b]))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn diagonal_positions_match_the_names() {
        for k in 1..6 {
            let names = Structure::Unstructured.parameter_names(k);
            for a in 0..k {
                assert_eq!(names[diag_index(k, a)], format!("cov_{a}_{a}"));
            }
        }
    }

    #[test]
    fn every_name_parses_back() {
        for s in Structure::ALL {
            assert_eq!(Structure::parse(s.name()).unwrap(), s);
        }
    }
}
