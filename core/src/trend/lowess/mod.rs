//! LOWESS: locally weighted regression with robustness iterations (Cleveland 1979, "Robust
//! locally weighted regression and smoothing scatterplots", JASA 74:829-836).
//!
//! Points are sorted by x (tied x ordered by y, so the result does not depend on row order).
//! With n points and span f, each local fit uses the `q = max(2, min(n, floor(f n + 1e-7)))`
//! nearest points (the rounding of R's `stats::lowess`). At a fit point x0 the radius
//! `h = max(x0 - x[left], x[right] - x0)` of the window `left..=right` gives tricube weights
//!
//! ```text
//! w_j = 1                        if |x_j - x0| <= 0.001 h
//!       (1 - (|x_j - x0| / h)^3)^3  if 0.001 h < |x_j - x0| <= 0.999 h
//!       0                        otherwise
//! ```
//!
//! times the robustness weight of the point, and the fit is the weighted least-squares line
//! at x0. Conventions, all those of Cleveland's published algorithm as R implements it:
//!
//! - **Window and ties.** The window slides right while that shrinks its radius. A tie group
//!   cut by the window's edge lies at distance exactly h and has weight 0, so the fit never
//!   depends on which of its members the window holds; when h = 0 (more tied points at x0
//!   than q) the window extends to every point tied with x0. Tied x always get the same fit.
//! - **Local-constant fallback.** When h = 0, or when the weighted standard deviation of x in
//!   the window is at most 0.001 times the x range of the data, the fit is the weighted mean
//!   of y. When every weight in the window is 0 (all its points rejected as outliers) the fit
//!   is the point's own y.
//! - **Robustness.** After a fit, residuals r_i give s = 6 median|r_i| (over all n points) and
//!   weights `1` for |r| <= 0.001 s, `(1 - (r/s)^2)^2` for 0.001 s < |r| <= 0.999 s and `0`
//!   beyond; the fit is repeated with them. The iterations stop early, with the last fit kept,
//!   when s < 1e-7 times the mean |r_i| (more than half the points fitted exactly).
//! - **delta.** After a fit at x0, points with x <= x0 + delta are not fitted: the last of
//!   them is fitted and the ones between are linearly interpolated. The default delta is 1% of
//!   the x range; delta = 0 fits at every distinct x.
//! - **Binary responses.** Robustness weights assume outliers are rare errors. On a 0/1
//!   response (exactly two distinct y values, [`is_binary`]) every point of the rarer value
//!   is an "outlier" wherever the curve is near the common value, so the iterations give it
//!   weight 0 and drive the curve to the common value (a mean curve of 0 for a rare event).
//!   So when `iterations` is not set, it is 3 for other responses and 0 for a binary one; when
//!   it is set above 0 on a binary response the fit runs as asked and the curve carries a
//!   warning.
//!
//! Arithmetic: R's rules decide every weight, window and fallback; only the summation differs.
//! Each local fit sums centred weighted moments in one pass, taking whole blocks of 512 points
//! in the tricube's smooth part from per-block power sums (see `moments.rs`), so a fit costs
//! O(window / 512 + 512) rather than O(window). A fit whose moments would lose more than two
//! digits to cancellation is recomputed with R's own two-pass arithmetic. Memory: five arrays
//! of length n besides the input.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::trend::curve::{
    check_xy, distinct_points, is_binary, sort_by_x, Curve, Diagnostics, OptionValue,
};

mod moments;

use moments::{exact_fit, Blocks, BLOCK};

const SPAN_ALLOWED: &str = "give a number in (0, 1], the fraction of points in each local fit";
const ITERATIONS_ALLOWED: &str = "give a whole number from 0 to 100 (robustness iterations)";
const DELTA_ALLOWED: &str =
    "give a finite number >= 0 (the x distance within which points are interpolated)";
const MAX_ITERATIONS: usize = 100;
/// Robustness iterations when `iterations` is not set and the response is not binary.
pub const DEFAULT_ITERATIONS: usize = 3;
/// The warning a binary response with robustness iterations asked for carries.
pub const BINARY_ROBUSTNESS_WARNING: &str = "the response has two distinct values (binary): \
robustness weights discard the rarer value (weight 0 wherever the curve is near the common \
one), pulling the curve toward the common value; set iterations = 0 (or leave it unset) for a \
curve of proportions";

/// Settings of [`lowess`]; `Default`: span 2/3, iterations `None` (= 3, or 0 on a binary
/// response), delta `None` (= 1% of the x range).
///
/// # Examples
/// ```
/// use trajweave_core::trend::lowess::LowessOptions;
/// let o = LowessOptions { span: 0.3, ..Default::default() };
/// assert_eq!((o.iterations, o.delta), (None, None));
/// assert_eq!(o.iterations_for(&[1.0, 5.0, 2.0]), 3);
/// assert_eq!(o.iterations_for(&[0.0, 1.0, 0.0]), 0);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LowessOptions {
    /// Fraction of the points in each local fit, in (0, 1].
    pub span: f64,
    /// Robustness iterations after the first fit, 0 to 100; `None` means 3, or 0 when the
    /// response is binary (see the module doc).
    pub iterations: Option<usize>,
    /// Points within this x distance of the last fitted point are interpolated; `None` means
    /// 1% of the x range, 0 fits every distinct x.
    pub delta: Option<f64>,
}

impl Default for LowessOptions {
    fn default() -> Self {
        LowessOptions {
            span: 2.0 / 3.0,
            iterations: None,
            delta: None,
        }
    }
}

impl LowessOptions {
    /// Sets one option by name, as a front end passes it: `span` in (0, 1], `iterations` a
    /// whole number from 0 to 100, `delta` a finite number >= 0.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::curve::OptionValue;
    /// use trajweave_core::trend::lowess::LowessOptions;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = LowessOptions::default();
    /// o.set("span", &OptionValue::Number(0.5))?;
    /// o.set("iterations", &OptionValue::Number(0.0))?;
    /// assert_eq!((o.span, o.iterations), (0.5, Some(0)));
    /// assert!(o.set("iterations", &OptionValue::Number(2.5)).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name (listing `span, iterations, delta`), a
    /// word where a number is needed, or a value outside the option's range.
    pub fn set(&mut self, name: &str, value: &OptionValue) -> Result<()> {
        match name {
            "span" => {
                let v = value.number("span", SPAN_ALLOWED)?;
                check_span(v)?;
                self.span = v;
            }
            "iterations" => {
                let v = value.number("iterations", ITERATIONS_ALLOWED)?;
                if v.fract() != 0.0 || !(0.0..=MAX_ITERATIONS as f64).contains(&v) {
                    return Err(Error::option("iterations", v, ITERATIONS_ALLOWED));
                }
                self.iterations = Some(v as usize);
            }
            "delta" => {
                let v = value.number("delta", DELTA_ALLOWED)?;
                check_delta(v)?;
                self.delta = Some(v);
            }
            other => {
                return Err(Error::option(
                    "lowess option",
                    format!("{other:?}"),
                    "use one of: span, iterations, delta",
                ))
            }
        }
        Ok(())
    }

    /// Checks every option's range ([`lowess`] calls it too).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::lowess::LowessOptions;
    /// assert!(LowessOptions::default().validate().is_ok());
    /// assert!(LowessOptions { span: 1.5, ..Default::default() }.validate().is_err());
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] naming the first option out of range.
    pub fn validate(&self) -> Result<()> {
        check_span(self.span)?;
        if let Some(k) = self.iterations.filter(|&k| k > MAX_ITERATIONS) {
            return Err(Error::option("iterations", k, ITERATIONS_ALLOWED));
        }
        if let Some(d) = self.delta {
            check_delta(d)?;
        }
        Ok(())
    }
}

impl LowessOptions {
    /// The robustness iterations a fit to response `y` runs: the value set, else 0 on a
    /// binary `y` and [`DEFAULT_ITERATIONS`] otherwise.
    pub fn iterations_for(&self, y: &[f64]) -> usize {
        match self.iterations {
            Some(k) => k,
            None if is_binary(y) => 0,
            None => DEFAULT_ITERATIONS,
        }
    }
}

fn check_span(v: f64) -> Result<()> {
    if v > 0.0 && v <= 1.0 {
        Ok(())
    } else {
        Err(Error::option("span", v, SPAN_ALLOWED))
    }
}

fn check_delta(v: f64) -> Result<()> {
    if v >= 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::option("delta", v, DELTA_ALLOWED))
    }
}

/// Fits LOWESS of `y` on `x` (see the module doc for the method and its conventions).
///
/// Returns a [`Curve`] at the distinct x values (tied x share one fit); its settings hold the
/// iterations and delta actually used, its diagnostics the span and the robustness iterations
/// run (fewer than asked when the residual scale vanished), its warnings
/// [`BINARY_ROBUSTNESS_WARNING`] when iterations were set above 0 on a binary response. One
/// distinct x is enough: the fit is then the (robust) weighted mean of y.
///
/// # Examples
/// ```
/// use trajweave_core::trend::lowess::{lowess, LowessOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let x: Vec<f64> = (0..20).map(f64::from).collect();
/// let y: Vec<f64> = x.iter().map(|v| 2.0 * v + 1.0).collect();
/// let c = lowess(&x, &y, &LowessOptions::default())?;
/// // A straight line is reproduced exactly by local lines.
/// assert!(c.fitted.iter().zip(&y).all(|(f, v)| (f - v).abs() < 1e-9));
/// // Residuals all (nearly) 0: the robustness iterations stop before the first.
/// assert_eq!(c.diagnostics.iterations, Some(0));
/// let noisy: Vec<f64> = y.iter().enumerate().map(|(i, v)| v + [0.3, -0.2, 0.1][i % 3]).collect();
/// assert_eq!(lowess(&x, &noisy, &LowessOptions::default())?.diagnostics.iterations, Some(3));
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for options out of range, [`Error::LengthMismatch`] when `x` and
/// `y` differ in length, [`Error::NonFinite`] for a NaN or infinite value, [`Error::TooFew`]
/// for empty input.
pub fn lowess(x: &[f64], y: &[f64], options: &LowessOptions) -> Result<Curve> {
    options.validate()?;
    check_xy(x, y, "LOWESS", 1)?;
    let (xs, ys) = sort_by_x(x, y);
    let n = xs.len();
    let range = xs[n - 1] - xs[0];
    let delta = options.delta.unwrap_or(0.01 * range);
    let asked = options.iterations_for(&ys);
    let mut fit = vec![0.0; n];
    let iterations = fit_sorted(&xs, &ys, (options.span, asked, delta), BLOCK, &mut fit);
    let (ux, uf) = distinct_points(&xs, &fit);
    let used = LowessOptions {
        span: options.span,
        iterations: Some(asked),
        delta: Some(delta),
    };
    let warnings = if asked > 0 && is_binary(&ys) {
        vec![BINARY_ROBUSTNESS_WARNING.to_string()]
    } else {
        Vec::new()
    };
    // Serialising two numbers and an integer cannot fail.
    let settings = serde_json::to_value(&used).unwrap_or_default();
    let diagnostics = Diagnostics {
        span: Some(options.span),
        iterations: Some(iterations),
        ..Diagnostics::new(n)
    };
    Ok(Curve::new("lowess", ux, uf, settings, diagnostics).with_warnings(warnings))
}

/// LOWESS of sorted data into `fit`; returns the robustness iterations run.
/// `settings` are (span, iterations, delta); `block` is the block size of the power sums.
fn fit_sorted(
    x: &[f64],
    y: &[f64],
    settings: (f64, usize, f64),
    block: usize,
    fit: &mut [f64],
) -> usize {
    let (span, iterations, delta) = settings;
    let n = x.len();
    if n < 2 {
        fit[0] = y[0];
        return 0;
    }
    // R's rounding: (int)(f * n + 1e-7), kept within 2..=n.
    let q = ((span * n as f64 + 1e-7) as usize).clamp(2, n);
    let range = x[n - 1] - x[0];
    let mut robustness = vec![1.0; n];
    let mut scratch = vec![0.0; n];
    // y is centred at one of its own values in every sum (any fixed value would do).
    let y_ref = y[n / 2];
    let mut done = 0;
    loop {
        let rw = (done > 0).then_some(&robustness[..]);
        let sweep = Sweep {
            x,
            y,
            rw,
            q,
            range,
            y_ref,
            blocks: Blocks::new(x, y, rw, y_ref, block),
        };
        sweep.run(delta, fit, &mut scratch);
        if done == iterations {
            return done;
        }
        let mut abs_sum = 0.0;
        for ((s, &yi), &fi) in scratch.iter_mut().zip(y).zip(fit.iter()) {
            *s = (yi - fi).abs();
            abs_sum += *s;
        }
        let mean_abs = abs_sum / n as f64;
        // 6 x median |residual|; for even n the median is the mean of the two middle values.
        let m1 = n / 2;
        let (low, mid, _) = scratch.select_nth_unstable_by(m1, f64::total_cmp);
        let mid = *mid;
        let cmad = if n.is_multiple_of(2) {
            let below = low.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            3.0 * (mid + below)
        } else {
            6.0 * mid
        };
        if cmad < 1e-7 * mean_abs {
            return done;
        }
        let (c1, c9) = (0.001 * cmad, 0.999 * cmad);
        for ((w, &yi), &fi) in robustness.iter_mut().zip(y).zip(fit.iter()) {
            let r = (yi - fi).abs();
            *w = if r <= c1 {
                1.0
            } else if r <= c9 {
                let u = r / cmad;
                (1.0 - u * u) * (1.0 - u * u)
            } else {
                0.0
            };
        }
        done += 1;
    }
}

/// One pass of local fits over sorted data with fixed robustness weights.
struct Sweep<'a> {
    x: &'a [f64],
    y: &'a [f64],
    rw: Option<&'a [f64]>,
    q: usize,
    range: f64,
    y_ref: f64,
    blocks: Blocks,
}

impl Sweep<'_> {
    fn run(&self, delta: f64, fit: &mut [f64], scratch: &mut [f64]) {
        let (x, n) = (self.x, self.x.len());
        let (mut left, mut right) = (0, self.q - 1);
        let mut last = 0;
        let mut i = 0;
        loop {
            if right < n - 1 && x[i] - x[left] > x[right + 1] - x[i] {
                // The window's radius shrinks by moving right.
                left += 1;
                right += 1;
                continue;
            }
            fit[i] = self.local_fit(i, left, right, scratch).unwrap_or(self.y[i]);
            if i > 0 && last + 1 < i {
                let denom = x[i] - x[last];
                for j in last + 1..i {
                    let alpha = (x[j] - x[last]) / denom;
                    fit[j] = alpha * fit[i] + (1.0 - alpha) * fit[last];
                }
            }
            last = i;
            let cut = x[last] + delta;
            let mut k = last + 1;
            while k < n && x[k] <= cut {
                if x[k] == x[last] {
                    fit[k] = fit[last];
                    last = k;
                }
                k += 1;
            }
            if last >= n - 1 {
                return;
            }
            i = (last + 1).max(k - 1);
        }
    }

    /// The local fit at x[i] over the window `left..=right`; `None` when every weight is 0.
    fn local_fit(&self, i: usize, left: usize, right: usize, scratch: &mut [f64]) -> Option<f64> {
        let x = self.x;
        let x0 = x[i];
        let h = (x0 - x[left]).max(x[right] - x0);
        let h9 = 0.999 * h;
        // Only points tied with x0 lie beyond `right` within 0.999 h (then h = 0).
        let mut end = right;
        while end + 1 < x.len() && (x[end + 1] - x0).abs() <= h9 {
            end += 1;
        }
        let win = left..end + 1;
        if h == 0.0 {
            return self.weighted_mean(win);
        }
        let m = self
            .blocks
            .moments(x, self.y, self.rw, win.clone(), x0, self.y_ref, h);
        if m.s0 <= 0.0 {
            return None;
        }
        let mean_d = m.s1 / m.s0;
        let second = m.s2 / m.s0;
        let c = second - mean_d * mean_d;
        if c < second * 1e-2 {
            // Cancellation would cost more than two digits: centre exactly, as R does.
            return exact_fit(x, self.y, self.rw, x0, win, h, self.range, scratch);
        }
        let ybar = m.t0 / m.s0;
        if c.sqrt() > 0.001 * self.range {
            let cov = m.t1 / m.s0 - mean_d * ybar;
            Some(self.y_ref + ybar - cov / c * mean_d)
        } else {
            Some(self.y_ref + ybar)
        }
    }

    /// The (robustness-)weighted mean of y over points all tied at x0.
    fn weighted_mean(&self, win: std::ops::Range<usize>) -> Option<f64> {
        let ys = &self.y[win.clone()];
        let (a, s) = match self.rw {
            None => (ys.len() as f64, ys.iter().sum::<f64>()),
            Some(rw) => rw[win]
                .iter()
                .zip(ys)
                .fold((0.0, 0.0), |(a, s), (&w, &v)| (a + w, s + w * v)),
        };
        (a > 0.0).then(|| s / a)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ties_sorted_by_y_within_runs() {
        let (xs, ys) = sort_by_x(
            &[2.0, 1.0, 2.0, 3.0, 2.0, -0.0],
            &[3.0, 5.0, 1.0, 0.0, 2.0, 4.0],
        );
        assert_eq!(xs, [0.0, 1.0, 2.0, 2.0, 2.0, 3.0]);
        assert!(xs[0].is_sign_positive());
        assert_eq!(ys, [4.0, 5.0, 1.0, 2.0, 3.0, 0.0]);
    }

    #[test]
    fn one_point_and_one_distinct_x() {
        // Closed form: a single point is its own fit; all-tied x give the mean of y.
        let c = lowess(&[2.0], &[7.0], &LowessOptions::default()).unwrap();
        assert_eq!((c.x.clone(), c.fitted.clone()), (vec![2.0], vec![7.0]));
        let o = LowessOptions {
            iterations: Some(0),
            ..Default::default()
        };
        let c = lowess(&[1.0, 1.0, 1.0], &[1.0, 2.0, 6.0], &o).unwrap();
        assert_eq!((c.x.clone(), c.fitted.clone()), (vec![1.0], vec![3.0]));
    }

    #[test]
    fn binary_response_skips_robustness_unless_asked() {
        // Closed form: one point in ten is 1, evenly spread, so the proportion is 0.1 in every
        // window of the default span; local lines over such a pattern stay within 0.02 of it.
        let x: Vec<f64> = (0..200).map(f64::from).collect();
        let y: Vec<f64> = (0..200).map(|i| f64::from(u8::from(i % 10 == 3))).collect();
        let c = lowess(&x, &y, &LowessOptions::default()).unwrap();
        assert_eq!(c.settings["iterations"], 0);
        assert!(c.warnings.is_empty());
        assert!(
            c.fitted.iter().all(|f| (f - 0.1).abs() < 0.02),
            "{:?}",
            c.fitted
        );
        // Asked for: the robustness weights of every 1 are 0 (|r| = 0.9 > 6 median |r| = 0.6),
        // so the curve is 0 everywhere, with the warning.
        let asked = LowessOptions {
            iterations: Some(3),
            ..Default::default()
        };
        let c = lowess(&x, &y, &asked).unwrap();
        assert!(c.fitted.iter().all(|&f| f.abs() < 1e-12));
        assert_eq!(c.warnings, vec![BINARY_ROBUSTNESS_WARNING.to_string()]);
        // Three distinct values: the default stays 3 iterations.
        let mut y3 = y.clone();
        y3[0] = 2.0;
        assert_eq!(
            lowess(&x, &y3, &LowessOptions::default()).unwrap().settings["iterations"],
            3
        );
    }

    #[test]
    fn block_sums_match_r_at_any_block_size() {
        // Reference: R stats::lowess, fixture lowess_r.json (see core/tests/lowess_reference.rs).
        // Small blocks send most of every window through the block polynomials.
        let r: serde_json::Value =
            serde_json::from_str(include_str!("../../../../tests/fixtures/lowess_r.json")).unwrap();
        let nums = |v: &serde_json::Value| -> Vec<f64> {
            v.as_array()
                .unwrap()
                .iter()
                .map(|a| a.as_f64().unwrap())
                .collect()
        };
        for case in r["cases"].as_array().unwrap() {
            let data = &r["inputs"][case["data"].as_str().unwrap()];
            let (xs, ys) = sort_by_x(&nums(&data["x"]), &nums(&data["y"]));
            let mean = ys.iter().sum::<f64>() / ys.len() as f64;
            let sd =
                (ys.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (ys.len() - 1) as f64).sqrt();
            let want = nums(&case["expected"]);
            let settings = (
                case["span"].as_f64().unwrap(),
                case["iterations"].as_u64().unwrap() as usize,
                case["delta"].as_f64().unwrap(),
            );
            for block in [2, 4, 8, 32] {
                let mut fit = vec![0.0; xs.len()];
                fit_sorted(&xs, &ys, settings, block, &mut fit);
                let worst = fit
                    .iter()
                    .zip(&want)
                    .map(|(a, b)| (a - b).abs())
                    .fold(0.0, f64::max);
                assert!(
                    worst <= 1e-10 * sd,
                    "{} block {block}: {worst:e}",
                    case["name"]
                );
            }
        }
    }
}
