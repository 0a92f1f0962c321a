//! Friedman's super smoother: running-lines smooths with a span chosen point by point by local
//! cross-validation (Friedman 1984, "A variable span smoother", Stanford LCS Tech. Rep. 5).
//!
//! **Running lines.** With the points sorted by x, the smooth at point j is the least-squares
//! line through the window of the `k = max(2, floor(span n / 2 + 1/2))` points on each side of j
//! (the window slides inward at the ends so that it always holds `2k + 1` points, or all `n`
//! when fewer), evaluated at `x_j`. Window means, the centred cross-product and the variance of
//! x are updated as a point enters and one leaves, so a pass is O(n) for any span. A window
//! whose x variance is at most `(0.001 s)^2`, where s is the interquartile-like spread
//! `x_(3i) - x_(i)`, `i = floor(n/4)` (widened until positive), is fitted by its mean. Tied x
//! then share the mean of their smooths.
//!
//! **Variable span** (the default, `span = None`). Three passes with the tweeter, midrange and
//! woofer spans 0.05, 0.2 and 0.5 give smooths `s_1, s_2, s_3` and leave-one-out residuals
//! `|y_j - s_i(x_j)| / (1 - h_jj)` (h_jj the leverage of point j in its own window). Each
//! residual series is smoothed with the midrange span to `e_i`, and point j takes the span with
//! the smallest `e_i(j)`. The bass control `alpha` in (0, 10] moves that span toward the woofer:
//! `span_j + (0.5 - span_j) max(1e-7, e_min / e_3)^(10 - alpha)` when `0 < e_min < e_3` (so
//! `alpha = 10` always takes the woofer); `alpha = 0` leaves it. The chosen spans are smoothed
//! with the midrange span, clipped to [0.05, 0.5], and the fit at j interpolates linearly (in
//! span) between the two neighbouring smooths `s_1, s_2` or `s_2, s_3`. A last pass with the
//! tweeter span smooths the result.
//!
//! **Fixed span** (`span = Some(f)`, f in (0, 1]): one running-lines pass with span f.
//!
//! Conventions follow R's `stats::supsmu` (unit weights, non-periodic), the test reference:
//! points are sorted by x and tied x by y (so the fit does not depend on row order), the spans
//! and constants are the single-precision values R's routine holds, and the curve reports each
//! distinct x once. Where a leverage is 1 (a point alone at its x in a window of ties) its
//! residual is the previous point's; leverages within 1e-10 of 1 count as 1, since rounding
//! puts such values on either side of it. Needs at least 4 points and 2 distinct x.
//!
//! Parallel work (rayon): the sort, the six passes of the three spans (scheduled so that two
//! threads take the time of three passes) and the later passes, which are cut at a fixed place
//! into two blocks when n >= 50 000. Every pass is sequential inside its block and the blocks
//! depend on the data alone, so the result is the same for any thread count.

mod running;

use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::trend::curve::{check_xy, distinct_points, sort_by_x, Curve, Diagnostics, OptionValue};

// The reference keeps these as single-precision literals; the same doubles decide the window
// half-widths exactly where `span n / 2 + 1/2` lands on a whole number.
const TWEETER: f64 = 0.05_f32 as f64;
const MIDRANGE: f64 = 0.2_f32 as f64;
const WOOFER: f64 = 0.5_f32 as f64;
/// Floor of the residual ratio in the bass control.
const RATIO_FLOOR: f64 = 1e-7_f32 as f64;
/// Relative size of the x spread below which a window's slope is taken as 0.
const SLOPE_EPS: f64 = 1e-3_f32 as f64;

/// Fewest points accepted (the spread s needs `floor(n/4) >= 1`).
const MIN_POINTS: usize = 4;
/// Fewest distinct x values accepted (a line needs two).
const MIN_DISTINCT: usize = 2;
const ESTIMATE: &str = "the super smoother";
const SPAN_ALLOWED: &str = "a number in (0, 1] (fixed span) or \"cv\" (variable span)";
const BASS_ALLOWED: &str = "a number in [0, 10]";

/// The option names [`SuperSmootherOptions::set`] accepts.
pub const SUPER_SMOOTHER_OPTION_NAMES: [&str; 2] = ["span", "bass"];

/// Settings; Default: span None (variable span chosen by local cross-validation), bass 0.
///
/// # Examples
/// ```
/// use trajweave_core::trend::curve::OptionValue;
/// use trajweave_core::trend::supsmu::SuperSmootherOptions;
/// # fn main() -> trajweave_core::Result<()> {
/// let mut o = SuperSmootherOptions::default();
/// o.set("bass", &OptionValue::Number(5.0))?;
/// o.set("span", &OptionValue::Text("cv".into()))?;
/// assert_eq!(o, SuperSmootherOptions { span: None, bass: 5.0 });
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SuperSmootherOptions {
    /// Fixed span as a fraction of the points, in (0, 1]; `None` chooses the span at each
    /// point by local cross-validation.
    pub span: Option<f64>,
    /// Bass control in [0, 10]: larger values favour the woofer span (smoother fits); 0 has
    /// no effect. Used only with the variable span.
    pub bass: f64,
}

impl Default for SuperSmootherOptions {
    fn default() -> Self {
        SuperSmootherOptions {
            span: None,
            bass: 0.0,
        }
    }
}

impl SuperSmootherOptions {
    /// Sets one option by name from a front end: "span" a number in (0, 1] (fixed-span mode) or
    /// the text "cv" (variable span, the default); "bass" in [0, 10].
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::curve::OptionValue;
    /// use trajweave_core::trend::supsmu::SuperSmootherOptions;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = SuperSmootherOptions::default();
    /// o.set("span", &OptionValue::Number(0.3))?;
    /// assert_eq!(o.span, Some(0.3));
    /// assert!(o.set("span", &OptionValue::Number(0.0)).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for a value outside its range or of the wrong kind, and for an
    /// unknown name (listing "span, bass"); the options are unchanged then.
    pub fn set(&mut self, name: &str, value: &OptionValue) -> Result<()> {
        match name {
            "span" => {
                self.span = match value {
                    OptionValue::Text(t) if t == "cv" => None,
                    OptionValue::Number(f) if span_ok(*f) => Some(*f),
                    other => return Err(Error::option("span", other, SPAN_ALLOWED)),
                }
            }
            "bass" => {
                let b = value.number("bass", BASS_ALLOWED)?;
                if !bass_ok(b) {
                    return Err(Error::option("bass", value, BASS_ALLOWED));
                }
                self.bass = b;
            }
            other => {
                return Err(Error::option(
                    "super smoother option",
                    format!("{other:?}"),
                    &format!("use one of: {}", SUPER_SMOOTHER_OPTION_NAMES.join(", ")),
                ))
            }
        }
        Ok(())
    }

    /// Checks the ranges (for options built as a struct rather than through [`Self::set`]).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::supsmu::SuperSmootherOptions;
    /// assert!(SuperSmootherOptions::default().validate().is_ok());
    /// assert!(SuperSmootherOptions { span: Some(1.5), bass: 0.0 }.validate().is_err());
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when `span` is outside (0, 1] or `bass` outside [0, 10].
    pub fn validate(&self) -> Result<()> {
        if let Some(f) = self.span {
            if !span_ok(f) {
                return Err(Error::option("span", OptionValue::Number(f), SPAN_ALLOWED));
            }
        }
        if !bass_ok(self.bass) {
            return Err(Error::option(
                "bass",
                OptionValue::Number(self.bass),
                BASS_ALLOWED,
            ));
        }
        Ok(())
    }
}

fn span_ok(f: f64) -> bool {
    f > 0.0 && f <= 1.0
}

fn bass_ok(b: f64) -> bool {
    (0.0..=10.0).contains(&b)
}

/// Fits the super smoother of y on x; Curve at the distinct x values, method "super", settings
/// = serde_json of the options, diagnostics.span = Some(fixed span) in fixed mode.
///
/// # Examples
/// ```
/// use trajweave_core::trend::supsmu::{super_smoother, SuperSmootherOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let x: Vec<f64> = (0..100).map(|i| i as f64 / 10.0).collect();
/// let y: Vec<f64> = x.iter().map(|t| 2.0 * t + 1.0).collect();
/// let c = super_smoother(&x, &y, &SuperSmootherOptions::default())?;
/// assert_eq!(c.method, "super");
/// // A straight line is reproduced by every running-lines pass.
/// assert!((c.predict(&[5.05])[0] - 11.1).abs() < 1e-9);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for options out of range; [`Error::LengthMismatch`] and
/// [`Error::NonFinite`] from the input checks; [`Error::TooFew`] with fewer than 4 points or
/// fewer than 2 distinct x values.
pub fn super_smoother(x: &[f64], y: &[f64], options: &SuperSmootherOptions) -> Result<Curve> {
    options.validate()?;
    // Errors that name a row must name the caller's row, so bad input is checked in its own
    // order; good input is checked once sorted, where counting distinct x is linear.
    if x.len() != y.len() || !x.iter().chain(y).all(|v| v.is_finite()) {
        check_xy(x, y, ESTIMATE, MIN_DISTINCT)?;
    }
    let (xs, ys) = sort_by_x(x, y);
    let ties = tie_runs(&xs);
    check_xy(&xs, &ys, ESTIMATE, MIN_DISTINCT)?;
    let n = x.len();
    if n < MIN_POINTS {
        return Err(Error::TooFew {
            what: "points".into(),
            estimate: ESTIMATE.into(),
            needed: MIN_POINTS,
            found: n,
        });
    }
    let vsmlsq = slope_floor(&xs);
    let fitted = match options.span {
        Some(span) => {
            let mut fit = vec![0.0; n];
            running::smooth_into(&xs, &ys, &mut fit, &ties, span, vsmlsq);
            fit
        }
        None => variable_span(&xs, ys, &ties, options.bass, vsmlsq),
    };
    let (ux, uf) = distinct_points(&xs, &fitted);
    let mut diagnostics = Diagnostics::new(n);
    diagnostics.span = options.span;
    let settings = serde_json::json!({ "span": options.span, "bass": options.bass });
    Ok(Curve::new("super", ux, uf, settings, diagnostics))
}

/// The runs of tied x (`start..end`, longer than one) in sorted x.
fn tie_runs(xs: &[f64]) -> Vec<(usize, usize)> {
    let mut ties = Vec::new();
    let mut start = 0;
    for j in 1..=xs.len() {
        if j == xs.len() || xs[j] != xs[start] {
            if j - start > 1 {
                ties.push((start, j));
            }
            start = j;
        }
    }
    ties
}

/// `(eps s)^2` with s = `x_(3i) - x_(i)`, i = floor(n/4) (1-based ranks), the two ranks moved
/// apart until s > 0; needs n >= 4 and two distinct x.
fn slope_floor(xs: &[f64]) -> f64 {
    let n = xs.len();
    let (mut lo, mut hi) = (n / 4, 3 * (n / 4));
    let mut scale = xs[hi - 1] - xs[lo - 1];
    while scale <= 0.0 {
        if hi < n {
            hi += 1;
        }
        if lo > 1 {
            lo -= 1;
        }
        scale = xs[hi - 1] - xs[lo - 1];
    }
    (SLOPE_EPS * scale).powi(2)
}

/// The variable-span fit at the sorted points; consumes `ys`.
fn variable_span(
    xs: &[f64],
    ys: Vec<f64>,
    ties: &[(usize, usize)],
    bass: f64,
    vsmlsq: f64,
) -> Vec<f64> {
    let n = xs.len();
    // Per span: its smooth, and its cross-validated residuals, later smoothed in place with
    // the midrange span. Six passes in three chains, ordered so that two threads finish in
    // the time of three passes: (tweeter, its residuals) beside (midrange, woofer), then the
    // residuals of woofer and midrange side by side.
    let first = |span: f64| {
        let (mut fit, mut resid) = (vec![0.0; n], vec![0.0; n]);
        running::smooth_with_cv(xs, &ys, &mut fit, &mut resid, ties, span, vsmlsq);
        (fit, resid)
    };
    let residuals = |mut resid: Vec<f64>| {
        running::smooth_in_place(xs, &mut resid, ties, MIDRANGE, vsmlsq);
        resid
    };
    let ((s1, e1), ((s2, r2), (s3, r3))) = rayon::join(
        || {
            let (s, r) = first(TWEETER);
            (s, residuals(r))
        },
        || (first(MIDRANGE), first(WOOFER)),
    );
    let (e3, e2) = rayon::join(|| residuals(r3), || residuals(r2));

    // The span with the smallest smoothed residual, moved toward the woofer by the bass.
    // Starting from +inf rather than a large constant keeps this scale-free in y.
    let mut spans = e1;
    let bass_on = bass > 0.0 && bass <= 10.0;
    spans
        .par_iter_mut()
        .zip(e2.par_iter().zip(&e3))
        .for_each(|(e1j, (&e2j, &e3j))| {
            let (mut best, mut span) = (f64::INFINITY, WOOFER);
            for (e, s) in [(*e1j, TWEETER), (e2j, MIDRANGE), (e3j, WOOFER)] {
                if e < best {
                    best = e;
                    span = s;
                }
            }
            if bass_on && best < e3j && best > 0.0 {
                span += (WOOFER - span) * (best / e3j).max(RATIO_FLOOR).powf(10.0 - bass);
            }
            *e1j = span;
        });
    drop(e2);
    let mut smoothed = ys; // no longer needed: reuse its storage
    running::smooth_into(xs, &spans, &mut smoothed, ties, MIDRANGE, vsmlsq);

    // Interpolate between the two smooths whose spans bracket the smoothed span.
    let mut blend = spans;
    blend.par_iter_mut().enumerate().for_each(|(j, b)| {
        let f = smoothed[j].clamp(TWEETER, WOOFER) - MIDRANGE;
        *b = if f < 0.0 {
            let f = -f / (MIDRANGE - TWEETER);
            (1.0 - f) * s2[j] + f * s1[j]
        } else {
            let f = f / (WOOFER - MIDRANGE);
            (1.0 - f) * s2[j] + f * s3[j]
        };
    });
    drop((s1, s2, s3, smoothed));
    let mut fit = e3;
    running::smooth_into(xs, &blend, &mut fit, ties, TWEETER, vsmlsq);
    fit
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_are_the_single_precision_constants() {
        // The binary32 values nearest 0.05 and 0.2 are 13421773 / 2^28 and 13421773 / 2^26.
        assert_eq!(TWEETER, 13_421_773.0 / 2f64.powi(28));
        assert_eq!(MIDRANGE, 13_421_773.0 / 2f64.powi(26));
        assert_eq!(WOOFER, 0.5);
    }
}
