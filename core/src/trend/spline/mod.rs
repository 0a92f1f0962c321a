//! The cubic smoothing spline (Reinsch 1967, Numer. Math. 10:177-183; Green & Silverman 1994,
//! *Nonparametric Regression and Generalized Linear Models*, ch. 2).
//!
//! The fit minimises, over all functions with a square-integrable second derivative,
//!
//! ```text
//! S(f) = Σ_i (y_i - f(x_i))² + λ ∫ f''(t)² dt
//! ```
//!
//! over every observation `i`. The minimiser is the natural cubic spline with a knot at every
//! distinct x. Tied x are collapsed to one point with weight `w` = the tie count and response
//! `ȳ` = the tie mean: `S` then equals `Σ_j w_j (ȳ_j - f(x_j))² + λ ∫ f''²` plus the within-tie
//! sum of squares, which does not depend on `f` and is added back into the reported RSS. λ is on
//! the x scale the caller gave: the criterion of scipy's `make_smoothing_spline(x, y, lam=λ)`.
//!
//! **Computation.** The spline is the posterior mean of `f` when `(f, f')` is an integrated
//! Wiener process with diffusion `1/λ` under a flat prior on the initial state, observed at
//! the distinct x with noise variance `1/w` (Wecker & Ansley 1983, JASA 78:81-89). It is
//! computed in O(n) by a forward information filter and the same filter on the reflected data
//! (the two-filter smoother, Fraser & Potter 1969): at each point the two predicted
//! informations give the leave-one-out posterior (variance `V_i`, mean `m_i`), whence the
//! leverage `H_ii = w_i V_i / (1 + w_i V_i)` (Wahba 1983, JRSS B 45:133-150: the posterior
//! covariance at the data is `H W⁻¹`), `1 - H_ii = 1 / (1 + w_i V_i)` and the residual
//! `ȳ_i - f_i = (ȳ_i - m_i) / (1 + w_i V_i)`; `df = Σ H_ii` and `n - df = Σ (1 - H_ii)`. Zero
//! information is the flat prior exactly, and every information entry and determinant is a
//! sum of non-negative terms, so nothing cancels whatever n and λ (unlike Reinsch's normal
//! equations, whose condition grows as n⁴). With ties, the trace of the hat matrix on the
//! distinct x with weights equals the trace of the full n-observation smoother, so df means
//! the same in both views (and is what R's `smooth.spline` reports).
//!
//! **Scaling.** x is mapped to `t = (x - x_min) / r`, `r = x_max - x_min`, and ȳ is centred and
//! divided by its weighted rms. Since `∫ f''(x)² dx = r⁻³ ∫ f''(t)² dt`, the internal penalty is
//! `λ_t = λ / r³`; values below 1e-90 are raised to 1e-90, where the fit is the interpolant to
//! double precision. The search runs on `u = log10(λ_t (π (n - 1))⁴ / N)`, so `u = 0` is where
//! the equally spaced approximation `df ≈ (N / λ_t)^{1/4} / π + 1` reaches n.
//!
//! **Choosing λ.**
//! - [`Penalty::Lambda`]: λ > 0 as given.
//! - [`Penalty::Df`]: `tr H(λ) = df` solved by Brent's root finder on log λ (df is decreasing in
//!   λ), to 1e-9 in df. Allowed: `2 < df <= number of distinct x`; `df` equal to that number
//!   interpolates (λ = 0). `df -> 2` as `λ -> ∞` (the weighted least-squares line).
//! - [`Penalty::Gcv`] (default): `GCV(λ) = N · RSS(λ) / (N - df(λ))²` (Craven & Wahba 1979,
//!   Numer. Math. 31:377-403), with `N` the number of observations and `RSS` over all of
//!   them, including the within-tie sum of squares: the GCV of the full-data smoother, whose
//!   trace is df. It is the same criterion as R's `smooth.spline` with `cv = FALSE`. It is
//!   scanned every 2 decades of λ from `u = 0` up to where df is within 0.01 of 2 (1e-5 while
//!   the top point is the best), and further down while the lowest point is the best (until
//!   `n - df <= 0.001 (n - 2)`); then Brent's minimiser runs between the neighbours of the best
//!   grid point. When that point is an end of the scan the settings say so (`gcv_boundary`).
//!
//! At least 3 distinct x are needed (one interior knot, so a penalty has something to act on).

mod filter;
mod search;

use serde::Serialize;

use crate::error::{Error, Result};
use crate::trend::curve::{check_xy, Curve, Diagnostics, OptionValue};
use filter::{Sum, System};

/// Fewest distinct x values a smoothing spline accepts.
pub const MIN_DISTINCT_X: usize = 3;

const ESTIMATE: &str = "a smoothing spline";
const LAMBDA_ALLOWED: &str = "a finite number > 0 (the penalty on the x scale given)";
const DF_ALLOWED: &str = "a number > 2 and at most the number of distinct x";
const NAMES_ALLOWED: &str = "not a spline option; use one of lambda, df, gcv";

/// How the penalty is set.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "by", content = "value", rename_all = "lowercase")]
pub enum Penalty {
    /// λ given, on the x scale of the data.
    Lambda(f64),
    /// Target equivalent degrees of freedom (trace of the hat matrix).
    Df(f64),
    /// λ minimising generalised cross-validation.
    Gcv,
}

/// Settings of [`smoothing_spline`]; the default chooses λ by GCV.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SplineOptions {
    /// How the penalty is set.
    pub penalty: Penalty,
}

impl Default for SplineOptions {
    fn default() -> Self {
        SplineOptions {
            penalty: Penalty::Gcv,
        }
    }
}

impl SplineOptions {
    /// Sets one option by name, as a front end passes it: `"lambda"` (a number > 0, on the x
    /// scale given), `"df"` (a number > 2; at fit time also at most the number of distinct
    /// x) or `"gcv"` (any value). The text `"gcv"` given to `lambda` or `df` also selects GCV.
    /// Each replaces the others.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::curve::OptionValue;
    /// use trajweave_core::trend::spline::{Penalty, SplineOptions};
    /// # fn main() -> trajweave_core::Result<()> {
    /// let mut o = SplineOptions::default();
    /// o.set("df", &OptionValue::Number(5.0))?;
    /// assert_eq!(o.penalty, Penalty::Df(5.0));
    /// o.set("lambda", &OptionValue::Text("gcv".into()))?;
    /// assert_eq!(o.penalty, Penalty::Gcv);
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name or a value outside the ranges above.
    pub fn set(&mut self, name: &str, value: &OptionValue) -> Result<()> {
        let is_gcv = matches!(value, OptionValue::Text(s) if s == "gcv");
        let penalty = match name {
            "gcv" => Penalty::Gcv,
            "lambda" | "df" if is_gcv => Penalty::Gcv,
            "lambda" => Penalty::Lambda(value.number(name, LAMBDA_ALLOWED)?),
            "df" => Penalty::Df(value.number(name, DF_ALLOWED)?),
            _ => return Err(Error::option(name, value, NAMES_ALLOWED)),
        };
        let candidate = SplineOptions { penalty };
        candidate.validate()?;
        *self = candidate;
        Ok(())
    }

    /// Checks the ranges that do not depend on the data (`df` against the number of distinct
    /// x is checked by the fit).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::trend::spline::{Penalty, SplineOptions};
    /// assert!(SplineOptions { penalty: Penalty::Lambda(-1.0) }.validate().is_err());
    /// assert!(SplineOptions::default().validate().is_ok());
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] when λ is not a finite number > 0 or df is not a finite
    /// number > 2.
    pub fn validate(&self) -> Result<()> {
        match self.penalty {
            Penalty::Lambda(l) if !(l.is_finite() && l > 0.0) => {
                Err(Error::option("lambda", l, LAMBDA_ALLOWED))
            }
            Penalty::Df(d) if !(d.is_finite() && d > 2.0) => {
                Err(Error::option("df", d, DF_ALLOWED))
            }
            _ => Ok(()),
        }
    }
}

/// Fits the cubic smoothing spline (see the module doc for the criterion and how λ is chosen).
///
/// Returns a curve at the distinct x (increasing), method `"spline"`, settings holding the
/// options and the `lambda` used (on the x scale given; for GCV also the scanned λ interval
/// and `gcv_boundary`, `null` or `"lower"`/`"upper"`), and diagnostics `df` (trace of the hat
/// matrix), `gcv`, `lambda`, `rss` (over all observations) and `iterations` (fits evaluated
/// while choosing λ; 0 when λ is given).
///
/// # Examples
/// ```
/// use trajweave_core::trend::spline::{smoothing_spline, Penalty, SplineOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let x: Vec<f64> = (0..50).map(|i| i as f64 / 7.0).collect();
/// let y: Vec<f64> = x.iter().map(|t| t.sin() + 0.1 * (t * 13.0).cos()).collect();
/// let fit = smoothing_spline(&x, &y, &SplineOptions { penalty: Penalty::Df(6.0) })?;
/// assert!((fit.diagnostics.df.unwrap() - 6.0).abs() < 1e-6);
/// assert_eq!(fit.fitted.len(), 50);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`], [`Error::NonFinite`] for the inputs, [`Error::TooFew`] with fewer
/// than [`MIN_DISTINCT_X`] distinct x, [`Error::InvalidOption`] for an option out of range
/// (including df above the number of distinct x).
pub fn smoothing_spline(x: &[f64], y: &[f64], options: &SplineOptions) -> Result<Curve> {
    fit(x, y, options, false).map(|(c, _)| c)
}

/// [`smoothing_spline`] plus the leverages (diagonal of the hat matrix on the distinct x with
/// weights, in the curve's x order); they sum to the df.
///
/// # Examples
/// ```
/// use trajweave_core::trend::spline::{smoothing_spline_with_leverages, SplineOptions, Penalty};
/// # fn main() -> trajweave_core::Result<()> {
/// let x = [0.0, 1.0, 1.0, 2.5, 3.0, 4.0, 6.0];
/// let y = [1.0, 2.0, 2.4, 2.0, 3.5, 3.0, 5.0];
/// let (fit, lev) = smoothing_spline_with_leverages(&x, &y, &SplineOptions { penalty: Penalty::Lambda(0.5) })?;
/// assert_eq!(lev.len(), fit.x.len());
/// assert!((lev.iter().sum::<f64>() - fit.diagnostics.df.unwrap()).abs() < 1e-9);
/// # Ok(()) }
/// ```
///
/// # Errors
/// As [`smoothing_spline`].
pub fn smoothing_spline_with_leverages(
    x: &[f64],
    y: &[f64],
    options: &SplineOptions,
) -> Result<(Curve, Vec<f64>)> {
    fit(x, y, options, true).map(|(c, l)| (c, l.unwrap_or_default()))
}

/// Distinct x (increasing) with tie counts, tie means, and the within-tie sum of squares.
struct Collapsed {
    x: Vec<f64>,
    w: Vec<f64>,
    ybar: Vec<f64>,
    ssw: f64,
}

/// An integer with the order of `f64::total_cmp`.
fn order_key(v: f64) -> i64 {
    let b = v.to_bits() as i64;
    b ^ ((((b >> 63) as u64) >> 1) as i64)
}

fn collapse(x: &[f64], y: &[f64]) -> Collapsed {
    // Sorting (x, y) pairs makes tie sums, and so the whole fit, independent of row order;
    // sorting the pairs themselves rather than an index keeps the sort in cache.
    let mut pairs: Vec<(f64, f64)> = x.iter().map(|v| v + 0.0).zip(y.iter().copied()).collect();
    // Finite x (checked) with -0 made +0 order as their bit patterns mapped to the integer
    // order, a cheaper comparison; then each tie is ordered by y.
    pairs.sort_unstable_by_key(|p| order_key(p.0));
    for tie in pairs.chunk_by_mut(|a, b| a.0 == b.0) {
        if tie.len() > 1 {
            tie.sort_unstable_by(|a, b| a.1.total_cmp(&b.1));
        }
    }
    let mut c = Collapsed {
        x: Vec::new(),
        w: Vec::new(),
        ybar: Vec::new(),
        ssw: 0.0,
    };
    let mut ssw = Sum::default();
    for tie in pairs.chunk_by(|a, b| a.0 == b.0) {
        let k = tie.len() as f64;
        let mean = tie.iter().map(|p| p.1).sum::<f64>() / k;
        if tie.len() > 1 {
            for p in tie {
                ssw.add((p.1 - mean) * (p.1 - mean));
            }
        }
        c.x.push(tie[0].0);
        c.w.push(k);
        c.ybar.push(mean);
    }
    c.ssw = ssw.value();
    c
}

fn fit(
    x: &[f64],
    y: &[f64],
    options: &SplineOptions,
    want_leverages: bool,
) -> Result<(Curve, Option<Vec<f64>>)> {
    options.validate()?;
    check_xy(x, y, ESTIMATE, MIN_DISTINCT_X)?;
    let Collapsed {
        x: ux,
        w,
        ybar,
        ssw,
    } = collapse(x, y);
    let n = ux.len();
    let n_obs = x.len() as f64;
    if let Penalty::Df(d) = options.penalty {
        if d > n as f64 {
            return Err(Error::option("df", d, &format!("{DF_ALLOWED} (here {n})")));
        }
    }
    let range = ux[n - 1] - ux[0];
    // Weighted centring: the line is unpenalised, so this changes nothing but rounding.
    let mut wy = Sum::default();
    for (a, b) in w.iter().zip(&ybar) {
        wy.add(a * b);
    }
    let ymean = wy.value() / n_obs;
    let t = ux.iter().map(|v| (v - ux[0]) / range).collect();
    let yc: Vec<f64> = ybar.iter().map(|v| v - ymean).collect();
    let sys = System::new(t, w, &yc);
    drop(yc);
    let to_user = |l: f64| l * range * range * range;

    let mut extra = serde_json::Map::new();
    let (lambda_t, iterations) = match options.penalty {
        Penalty::Lambda(l) => (l / range / range / range, 0),
        Penalty::Df(d) if d >= n as f64 - search::DF_TOL => (0.0, 0),
        Penalty::Df(d) => {
            let (e, it) = search::solve_df(&sys, n_obs, d);
            (e.lambda, it)
        }
        Penalty::Gcv => {
            let (e, it, s) = search::search_gcv(&sys, n_obs, ssw);
            extra.insert(
                "gcv_lambda_interval".into(),
                serde_json::json!([to_user(s.lambda_range[0]), to_user(s.lambda_range[1])]),
            );
            extra.insert("gcv_boundary".into(), serde_json::json!(s.boundary));
            (e.lambda, it)
        }
    };
    let (e, residuals, lev) = sys.fit(lambda_t, want_leverages);
    let fitted: Vec<f64> = ybar.iter().zip(&residuals).map(|(v, r)| v - r).collect();
    let leverages = want_leverages.then_some(lev);
    // A given λ is reported as given, not as a round trip through the internal scale.
    let lambda = match options.penalty {
        Penalty::Lambda(l) => l,
        _ => to_user(lambda_t),
    };

    let mut settings = match serde_json::to_value(options) {
        Ok(serde_json::Value::Object(m)) => m,
        _ => serde_json::Map::new(),
    };
    settings.insert("lambda".into(), serde_json::json!(lambda));
    settings.extend(extra);
    let mut diagnostics = Diagnostics::new(x.len());
    diagnostics.df = Some(if lambda_t == 0.0 { n as f64 } else { e.df });
    diagnostics.gcv = Some(search::gcv(&e, n_obs, n as f64, ssw));
    diagnostics.lambda = Some(lambda);
    diagnostics.rss = Some(e.rss_w + ssw);
    diagnostics.iterations = Some(iterations);
    let curve = Curve::new(
        "spline",
        ux,
        fitted,
        serde_json::Value::Object(settings),
        diagnostics,
    );
    Ok((curve, leverages))
}
