//! What every smoother returns: a [`Curve`], plus the input checks and option values the
//! smoothers share.
//!
//! A curve holds the distinct x values in increasing order with one fitted value each (tied x
//! always receive the same fit), the settings used and diagnostics. [`Curve::predict`]
//! interpolates linearly between those points and holds the end values beyond them (the rule
//! of R's `approx(rule = 2)`), so held-out subjects and bootstrap grids can be evaluated from
//! any smoother the same way.

use rayon::prelude::*;
use serde::Serialize;

use crate::error::{Error, Result};

/// A fitted smooth.
///
/// # Examples
/// ```
/// use trajweave_core::trend::curve::{Curve, Diagnostics};
/// let c = Curve::new("example", vec![0.0, 1.0], vec![0.0, 2.0], serde_json::json!({}), Diagnostics::new(2));
/// assert_eq!(c.predict(&[0.25, -1.0, 9.0]), vec![0.5, 0.0, 2.0]);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Curve {
    /// The smoother's name (`lowess`, `kernel`, `spline`, `super`).
    pub method: String,
    /// Distinct x values, increasing.
    pub x: Vec<f64>,
    /// Fitted value at each x.
    pub fitted: Vec<f64>,
    /// The settings used, after defaults and conversions.
    pub settings: serde_json::Value,
    /// What the fit reports about itself.
    pub diagnostics: Diagnostics,
    /// Warnings about the fit (empty when there are none): each front shows them as warnings.
    pub warnings: Vec<String>,
}

/// Diagnostics of a fit; fields a smoother does not produce are `None`.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct Diagnostics {
    /// Number of points fitted.
    pub n: usize,
    /// Number of distinct x values.
    pub distinct_x: usize,
    /// Equivalent degrees of freedom (trace of the smoother matrix).
    pub df: Option<f64>,
    /// Generalised cross-validation score.
    pub gcv: Option<f64>,
    /// Penalty of a smoothing spline, on the scale of the documented criterion.
    pub lambda: Option<f64>,
    /// Span used (fraction of points).
    pub span: Option<f64>,
    /// Kernel bandwidth used.
    pub bandwidth: Option<f64>,
    /// Iterations run (robustness steps, root-finding steps).
    pub iterations: Option<usize>,
    /// Residual sum of squares of the fit at the data.
    pub rss: Option<f64>,
}

impl Diagnostics {
    /// Diagnostics with only the point count set.
    pub fn new(n: usize) -> Diagnostics {
        Diagnostics {
            n,
            ..Default::default()
        }
    }
}

impl Curve {
    /// A curve from its parts; `x` must be increasing and as long as `fitted`.
    pub fn new(
        method: &str,
        x: Vec<f64>,
        fitted: Vec<f64>,
        settings: serde_json::Value,
        mut diagnostics: Diagnostics,
    ) -> Curve {
        diagnostics.distinct_x = x.len();
        Curve {
            method: method.to_string(),
            x,
            fitted,
            settings,
            diagnostics,
            warnings: Vec::new(),
        }
    }

    /// The curve with `warnings` attached.
    pub fn with_warnings(mut self, warnings: Vec<String>) -> Curve {
        self.warnings = warnings;
        self
    }

    /// The curve at `new_x`: linear interpolation between fitted points, the end values
    /// beyond the range, NaN at a NaN.
    pub fn predict(&self, new_x: &[f64]) -> Vec<f64> {
        new_x.iter().map(|&t| self.at(t)).collect()
    }

    fn at(&self, t: f64) -> f64 {
        let (x, f) = (&self.x, &self.fitted);
        let n = x.len();
        if t.is_nan() || n == 0 {
            return f64::NAN;
        }
        if t <= x[0] {
            return f[0];
        }
        if t >= x[n - 1] {
            return f[n - 1];
        }
        let j = x.partition_point(|&v| v <= t); // x[j - 1] <= t < x[j]
        let (x0, x1) = (x[j - 1], x[j]);
        if t == x0 {
            return f[j - 1];
        }
        f[j - 1] + (f[j] - f[j - 1]) * ((t - x0) / (x1 - x0))
    }
}

/// An option value as a front passes it: a number or a word.
#[derive(Debug, Clone, PartialEq)]
pub enum OptionValue {
    /// A number.
    Number(f64),
    /// A word (such as `"gaussian"` or `"gcv"`).
    Text(String),
}

impl std::fmt::Display for OptionValue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            OptionValue::Number(x) => write!(f, "{x}"),
            OptionValue::Text(s) => write!(f, "{s:?}"),
        }
    }
}

impl OptionValue {
    /// The number, or an [`Error::InvalidOption`] naming `name`.
    pub fn number(&self, name: &str, allowed: &str) -> Result<f64> {
        match self {
            OptionValue::Number(x) if !x.is_nan() => Ok(*x),
            other => Err(Error::option(name, other, allowed)),
        }
    }

    /// The word, or an [`Error::InvalidOption`] naming `name`.
    pub fn text(&self, name: &str, allowed: &str) -> Result<&str> {
        match self {
            OptionValue::Text(s) => Ok(s),
            other => Err(Error::option(name, other, allowed)),
        }
    }
}

/// Checks that every value of `argument` is finite, naming the first that is not (counted
/// from 1).
///
/// # Errors
/// [`Error::NonFinite`].
pub fn check_finite(argument: &str, values: &[f64]) -> Result<()> {
    match values.iter().position(|v| !v.is_finite()) {
        None => Ok(()),
        Some(row) => Err(Error::NonFinite {
            argument: argument.into(),
            row: row + 1,
            value: format!("{}", values[row]),
        }),
    }
}

/// Checks paired x and y for a smoother: equal lengths, finite values, at least `min_distinct`
/// distinct x values.
///
/// # Errors
/// [`Error::LengthMismatch`], [`Error::NonFinite`] (row counted from 1), [`Error::TooFew`].
pub fn check_xy(x: &[f64], y: &[f64], estimate: &str, min_distinct: usize) -> Result<()> {
    if y.len() != x.len() {
        return Err(Error::LengthMismatch {
            argument: "y".into(),
            reference: "x".into(),
            expected: x.len(),
            found: y.len(),
        });
    }
    check_finite("x", x)?;
    check_finite("y", y)?;
    // Stop as soon as enough distinct values are seen: O(n min_distinct) at worst, and
    // min_distinct is a small constant.
    let mut seen: Vec<f64> = Vec::with_capacity(min_distinct);
    for &v in x {
        if seen.len() >= min_distinct {
            break;
        }
        if !seen.contains(&v) {
            seen.push(v);
        }
    }
    if seen.len() < min_distinct {
        return Err(Error::TooFew {
            what: "distinct x values".into(),
            estimate: estimate.into(),
            needed: min_distinct,
            found: seen.len(),
        });
    }
    Ok(())
}

/// The points sorted by x, tied x in y order: a total order of the pairs, so the result (and
/// every sum a smoother forms over it) does not depend on the input's row order. The sorts
/// compare order-keeping integer images of x and y (so -0 and 0 are one value) and run in
/// parallel; only identical pairs end up level, so the unstable sorts have one possible
/// result whatever the thread count.
pub fn sort_by_x(x: &[f64], y: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut pairs: Vec<(u64, u64)> = x
        .par_iter()
        .zip(y)
        .map(|(&a, &b)| (key(a), key(b)))
        .collect();
    if !pairs.par_windows(2).all(|w| w[0] <= w[1]) {
        // By x alone, then each run of tied x by y: cheaper than comparing pairs throughout.
        pairs.par_sort_unstable_by_key(|p| p.0);
        pairs
            .par_chunk_by_mut(|p, q| p.0 == q.0)
            .for_each(|run| run.sort_unstable_by_key(|p| p.1));
    }
    pairs
        .into_par_iter()
        .map(|(a, b)| (unkey(a), unkey(b)))
        .unzip()
}

const SIGN: u64 = 1 << 63;

/// An integer whose order is that of the finite double `x` (`-0.0` taken as `0.0`, as in
/// every comparison of doubles).
fn key(x: f64) -> u64 {
    let b = (x + 0.0).to_bits();
    if b & SIGN != 0 {
        !b
    } else {
        b | SIGN
    }
}

/// The inverse of [`key`].
fn unkey(k: u64) -> f64 {
    f64::from_bits(if k & SIGN != 0 { k & !SIGN } else { !k })
}

/// Whether `y` holds exactly two distinct values (a binary response such as 0/1); NaN values
/// are not counted. Stops at the third distinct value, so it costs O(n) at most.
///
/// # Examples
/// ```
/// use trajweave_core::trend::curve::is_binary;
/// assert!(is_binary(&[0.0, 1.0, 1.0, 0.0]));
/// assert!(is_binary(&[2.0, 5.0]));
/// assert!(!is_binary(&[1.0, 1.0]));
/// assert!(!is_binary(&[0.0, 1.0, 2.0]));
/// ```
pub fn is_binary(y: &[f64]) -> bool {
    let mut values = y.iter().filter(|v| !v.is_nan());
    let Some(&a) = values.next() else {
        return false;
    };
    let mut b = None;
    for &v in values {
        if v == a {
            continue;
        }
        match b {
            None => b = Some(v),
            Some(w) if w == v => {}
            Some(_) => return false,
        }
    }
    b.is_some()
}

/// Collapses sorted (x, fitted) pairs to distinct x, keeping the first fit of each tie.
pub fn distinct_points(xs: &[f64], fitted: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut ux = Vec::with_capacity(xs.len());
    let mut uf = Vec::with_capacity(xs.len());
    for (i, (&a, &f)) in xs.iter().zip(fitted).enumerate() {
        if i == 0 || a != xs[i - 1] {
            ux.push(a);
            uf.push(f);
        }
    }
    (ux, uf)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn predict_matches_linear_interpolation_rule_2() {
        // Worked by hand, the rule of R's approx(x, y, xout, rule = 2).
        let c = Curve::new(
            "t",
            vec![1.0, 2.0, 4.0],
            vec![10.0, 20.0, 0.0],
            serde_json::Value::Null,
            Diagnostics::new(3),
        );
        assert_eq!(
            c.predict(&[0.0, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0]),
            vec![10.0, 10.0, 15.0, 20.0, 10.0, 0.0, 0.0]
        );
        assert!(c.predict(&[f64::NAN])[0].is_nan());
    }

    #[test]
    fn keys_keep_the_order_of_doubles() {
        // IEEE 754 order, checked on neighbours of every sign and size.
        let v = [
            f64::MIN,
            -1e300,
            -1.0,
            -1e-310,
            0.0,
            1e-310,
            1.0,
            2.5,
            1e300,
            f64::MAX,
        ];
        for w in v.windows(2) {
            assert!(key(w[0]) < key(w[1]));
        }
        assert_eq!(key(-0.0), key(0.0));
        assert!(v.iter().all(|&a| unkey(key(a)) == a));
    }

    #[test]
    fn sorting_ignores_row_order() {
        let x = [2.0, -0.0, 1.0, 2.0, 0.0];
        let y = [5.0, 1.0, 3.0, 4.0, 0.5];
        let (xs, ys) = sort_by_x(&x, &y);
        assert_eq!(xs, vec![0.0, 0.0, 1.0, 2.0, 2.0]);
        assert_eq!(ys, vec![0.5, 1.0, 3.0, 4.0, 5.0]);
        let (xr, yr): (Vec<f64>, Vec<f64>) = x
            .iter()
            .rev()
            .zip(y.iter().rev())
            .map(|(a, b)| (*a, *b))
            .unzip();
        assert_eq!(sort_by_x(&xr, &yr), (xs, ys));
    }

    #[test]
    fn checks() {
        assert_eq!(
            check_xy(&[1.0], &[1.0, 2.0], "s", 1).unwrap_err().kind(),
            "length_mismatch"
        );
        let e = check_xy(&[1.0, f64::NAN], &[1.0, 2.0], "s", 1).unwrap_err();
        assert_eq!(
            e.to_string(),
            "`x` is not finite at row 2 (value NaN): remove the row or give a finite value"
        );
        let e = check_xy(&[1.0, 1.0], &[1.0, 2.0], "a smoothing spline", 4).unwrap_err();
        assert_eq!(
            e.to_string(),
            "too few distinct x values for a smoothing spline: need at least 4, found 1"
        );
    }
}
