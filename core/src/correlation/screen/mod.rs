//! Screening of within-subject covariance structures on residuals from a fixed mean model.
//!
//! Residuals r (one per panel row, panel order) are taken as Gaussian with mean zero,
//! independent between subjects, with covariance V_i(theta) among subject i's visits at
//! times t_i:
//!
//! l(theta) = -1/2 sum_i [ n_i ln(2 pi) + ln det V_i + r_i' V_i^-1 r_i ].
//!
//! Each [`Structure`] is fitted by maximum likelihood, then ranked by AIC = -2 l + 2 p
//! (Akaike 1974), ties by fewer parameters; BIC = -2 l + p ln N (Schwarz 1978) with N the
//! number of observations (some texts use the number of subjects instead) is reported beside.
//! The mean model is not re-estimated: this is ML on residuals, not REML, so variances are
//! somewhat underestimated, and the ranking is a screen to pick structures worth fitting in a
//! mixed model or GEE, not a final model choice (details: docs/methods-screen.md).
//!
//! # Evaluation
//! Sums over subjects run in fixed blocks of 512 subjects in parallel, added in block order,
//! so the result does not depend on the thread count. Wherever V = c M(theta), the scale c is
//! profiled out analytically (c_hat = (1/N) sum_i r_i' M_i^-1 r_i). Independence is closed form
//! (s2 = mean r^2). Exchangeable uses the determinant lemma and Sherman-Morrison per subject
//! size, no Cholesky. Exponential alone uses its Markov property (O(n_i) per subject).
//! Intercept + exponential + error and the random-slope structures (V = Z G Z' [+ s2
//! R(phi)] + tau2 I, Z_j = (1, t_j); Laird & Ware 1982, Diggle 1988) use an exact Kalman filter
//! on the state (intercept, [slope,] serial process), O(n_i) per subject (Jones 1993).
//! Gaussian uses a Cholesky per subject, O(n_i^3).
//! Toeplitz and unstructured group subjects by their pattern of observed bins; after one pass
//! over the data each evaluation is a sum over patterns.
//!
//! # Optimisers, starting values, stops
//! - independence: closed form, 0 iterations;
//! - exchangeable: g = nu2 / tau2 on a 30-point grid of ln g over [1e-6, 1e6], then Brent's
//!   method in the cells around the best point (stop: bracket below 2 (1e-8 |ln g| + 1e-10));
//!   g = 0 is compared and taken when at least as good (noted);
//! - exponential, gaussian: ln(range) the same way over [ln(d_min / 10), ln(10 D)] with d_min
//!   the smallest positive gap between consecutive visits and D the longest follow-up of a
//!   subject; a maximum within half a grid step of an end is noted;
//! - intercept + exponential + error: the scale profiled, Nelder-Mead on (a, b, ln range)
//!   with weights (nu2, s2, tau2) / total = softmax(a, b, 0), from the best of 8 starts (range
//!   = the exponential fit's range or the middle of its interval, times shares 1/3 each or
//!   0.6 / 0.2 / 0.2), then restarted once from its result with a smaller simplex; stop:
//!   value spread <= tolerance (1 + |l|) and simplex size <= 1e-6;
//! - intercept + slope + error, and with an exponential serial process: the scale profiled,
//!   Nelder-Mead the same way on softmax logits of the variance shares, atanh of the
//!   intercept-slope correlation and ln range, on time centred at its mean and scaled by its
//!   spread; starts from per-subject least-squares lines (method of moments), the exchangeable
//!   fit, equal shares, and for the serial version the intercept + slope + error fit split
//!   between serial and error parts at three ranges. G is reported at time 0
//!   ([`Screening::time_origin`]), G_0 = A G_c A' with A = [[1, -centre], [0, 1]] after undoing
//!   the scaling;
//! - toeplitz: BFGS with the analytic gradient dl/dc_h = sum over pairs at bin lag h of
//!   1/2 sum_i (V_i^-1 r_i r_i' V_i^-1 - V_i^-1), on c / c_0(start), from the lag moments
//!   (mean product of residual pairs h bins apart), shrunk toward the diagonal until positive
//!   definite; stop: predicted decrease g'Hg <= tolerance (1 + |l|);
//! - unstructured: EM for incomplete multivariate normal data (Dempster, Laird & Rubin 1977;
//!   Little & Rubin 2002, ch. 11) from the pairwise covariance (mean product of residuals at
//!   bins a and b over subjects seen at both), shrunk the same way; stop: relative change of l
//!   below the tolerance.
//!
//! Every optimiser also stops at `max_iterations`, and `converged` says whether its rule was
//! met first. A candidate whose matrix is not positive definite at every trial (for example a
//! pure serial structure with duplicated visit times) is reported with l = -inf and a note,
//! ranked last.
//!
//! # Flags
//! Every fit carries `at_boundary` (per parameter), `flags` (in words) and `flagged`: a
//! variance at most [`VARIANCE_TOL`] times the mean squared residual (a slope variance times
//! the squared spread of the visit times), a correlation within [`CORRELATION_TOL`] of +-1, a
//! range within half a grid step of an end of its searched interval, an optimiser stopped at
//! `max_iterations`, or l = -inf. [`implied_correlation`] gives the correlation a fitted
//! structure implies between two measurements at t and t + u.

mod binned;
mod fit;
mod fit_slope;
mod flags;
mod implied;
mod irregular;
mod random_slope;
mod structures;

use rayon::prelude::*;
use serde::Serialize;

pub use binned::MAX_BINS;
pub use flags::{CORRELATION_TOL, VARIANCE_TOL};
pub use implied::implied_correlation;
pub use structures::Structure;

use crate::data::grid::TimeGrid;
use crate::data::panel::Panel;
use crate::error::{Error, Result};
use fit::{Control, Fitted, Moments, GRID_POINTS};
use fit_slope::{slope_error_starts, slope_serial_starts, SlopeMoments};
use flags::{boundary_flags, FlagContext};
use irregular::{loglik_at, shape_terms, Data, ExchangeableStats, Serial, Shape};
use random_slope::{covariance_of, slope_terms, SlopeShape, SlopeStats, TimeScale};

/// Settings of [`screen_structures`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScreenOptions {
    /// The structures to fit (duplicates are fitted once).
    pub candidates: Vec<Structure>,
    /// A time grid, needed by toeplitz and unstructured (at most [`MAX_BINS`] bins, every
    /// visit in a bin, at most one visit per subject per bin).
    pub grid: Option<TimeGrid>,
    /// Cap on each optimiser's iterations (>= 1).
    pub max_iterations: usize,
    /// Relative convergence tolerance on the log-likelihood, in (0, 0.1].
    pub convergence: f64,
}

impl ScreenOptions {
    /// Options from a front's values (absent ones take their defaults): candidate names,
    /// a grid, `max_iterations` and `convergence`.
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::correlation::screen::ScreenOptions;
    /// # fn main() -> trajweave_core::Result<()> {
    /// let o = ScreenOptions::from_front(Some(&["exponential".to_string()]), None, Some(200.0), None)?;
    /// assert_eq!((o.candidates.len(), o.max_iterations), (1, 200));
    /// assert!(ScreenOptions::from_front(Some(&["ar1".to_string()]), None, None, None).is_err());
    /// # Ok(()) }
    /// ```
    ///
    /// # Errors
    /// [`Error::InvalidOption`] for an unknown name, a `max_iterations` that is not a whole
    /// number from 1 to 10^6, or a `convergence` outside (0, 0.1].
    pub fn from_front(
        candidates: Option<&[String]>,
        grid: Option<TimeGrid>,
        max_iterations: Option<f64>,
        convergence: Option<f64>,
    ) -> Result<ScreenOptions> {
        let d = ScreenOptions::default();
        let o = ScreenOptions {
            candidates: match candidates {
                Some(names) => names
                    .iter()
                    .map(|n| Structure::parse(n))
                    .collect::<Result<_>>()?,
                None => d.candidates,
            },
            grid,
            max_iterations: match max_iterations {
                Some(m) => crate::error::whole_number("max_iterations", m, 1, 1_000_000)? as usize,
                None => d.max_iterations,
            },
            convergence: convergence.unwrap_or(d.convergence),
        };
        check_options(&o)?;
        Ok(o)
    }
}

impl Default for ScreenOptions {
    /// Every structure, no grid (so toeplitz and unstructured are skipped), 1000 iterations,
    /// convergence 1e-10.
    fn default() -> Self {
        ScreenOptions {
            candidates: Structure::ALL.to_vec(),
            grid: None,
            max_iterations: 1000,
            convergence: 1e-10,
        }
    }
}

/// One candidate's maximum-likelihood fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StructureFit {
    /// The structure's name ([`Structure::name`]).
    pub structure: String,
    /// Parameter names ([`Structure::parameter_names`]).
    pub parameter_names: Vec<String>,
    /// Maximum-likelihood values (NaN when l = -inf).
    pub parameters: Vec<f64>,
    /// Number of parameters p.
    pub n_parameters: usize,
    /// The maximised log-likelihood (-inf when never positive definite).
    pub loglik: f64,
    /// -2 l + 2 p.
    pub aic: f64,
    /// -2 l + p ln N, N the number of observations.
    pub bic: f64,
    /// AIC minus the smallest AIC.
    pub delta_aic: f64,
    /// BIC minus the smallest BIC.
    pub delta_bic: f64,
    /// Optimiser iterations (grid points included for the 1-D searches).
    pub iterations: usize,
    /// True when the optimiser's stopping rule was met before `max_iterations`.
    pub converged: bool,
    /// A remark: a parameter at a bound, a range at the edge of its search, a singular matrix.
    pub note: Option<String>,
    /// One per parameter: true when it lies on the boundary of its space (a variance at most
    /// [`VARIANCE_TOL`] times the mean squared residual, a correlation within
    /// [`CORRELATION_TOL`] of +-1, a range within half a grid step of an end of its searched
    /// interval).
    pub at_boundary: Vec<bool>,
    /// Each flag in words: parameters at their boundary, an optimiser stopped at
    /// `max_iterations`, a covariance not positive definite.
    pub flags: Vec<String>,
    /// True when any parameter is at its boundary, the optimiser did not converge, or
    /// l = -inf: the fit needs care before it is read.
    pub flagged: bool,
}

/// A candidate not fitted, and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SkippedStructure {
    /// The structure's name.
    pub structure: String,
    /// Why it was not fitted.
    pub reason: String,
}

/// The result of [`screen_structures`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Screening {
    /// Fits, best (smallest AIC) first.
    pub fits: Vec<StructureFit>,
    /// Candidates not fitted.
    pub skipped: Vec<SkippedStructure>,
    /// Number of subjects.
    pub subjects: usize,
    /// Number of observations N.
    pub observations: usize,
    /// The time at which `intercept_variance` of the random-slope structures is given: the
    /// intercept variance of the random-slope structures is the between-subject variance at
    /// this time (time 0 of the panel's time scale, the times as given).
    pub time_origin: f64,
}

/// Fits the candidate covariance structures to residuals by maximum likelihood and ranks them
/// by AIC.
///
/// `resid` holds one residual per panel row in panel order (as returned by
/// [`crate::individuals::residuals::residuals`]).
///
/// # Examples
/// ```
/// use trajweave_core::individuals::residuals::{residuals, MeanModel};
/// use trajweave_core::correlation::screen::{screen_structures, ScreenOptions};
/// use trajweave_core::{simulate, SimulateOptions};
/// # fn main() -> trajweave_core::Result<()> {
/// let data = simulate(&SimulateOptions { subjects: 200, ..Default::default() })?;
/// let panel = data.to_panel()?;
/// let r = residuals(&panel, &MeanModel::Polynomial { degree: 1 })?;
/// let s = screen_structures(&panel, &r.residuals, &ScreenOptions::default())?;
/// assert_eq!(s.fits.len(), 7); // toeplitz and unstructured need a grid
/// assert_eq!(s.skipped.len(), 2);
/// assert_eq!(s.fits[0].delta_aic, 0.0);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] naming `resid` unless it has one value per panel row;
/// [`Error::NonFinite`] naming `resid` (row counted from 1 in the caller's input order);
/// [`Error::TooFew`] with fewer than 2 subjects or 2 observations; [`Error::InvalidOption`]
/// for no candidates, `max_iterations` = 0, a tolerance outside (0, 0.1], or (naming `grid`)
/// when only toeplitz / unstructured are asked for and the grid is missing or unusable.
pub fn screen_structures(
    panel: &Panel,
    resid: &[f64],
    options: &ScreenOptions,
) -> Result<Screening> {
    let data = checked_data(panel, resid)?;
    let control = check_options(options)?;
    let mut candidates: Vec<Structure> = Vec::new();
    for &s in &options.candidates {
        if !candidates.contains(&s) {
            candidates.push(s);
        }
    }

    let mut skipped = Vec::new();
    let mut grid_reason = |s: Structure, reason: String| {
        skipped.push(SkippedStructure {
            structure: s.name().into(),
            reason,
        })
    };
    let wants_grid = candidates.iter().any(|s| s.needs_grid());
    let patterns = match (&options.grid, wants_grid) {
        (_, false) => Err(String::new()),
        (None, true) => Err("no `grid` given; toeplitz and unstructured need one".into()),
        (Some(g), true) => binned::patterns(data, g, panel.ids()),
    };

    let moments = Moments::new(data);
    let scale = TimeScale::new(data);
    let mut fitted: Vec<(Structure, Fitted)> = Vec::new();
    // Results other fits start from, computed when first needed whether or not they are
    // candidates, so a fit does not depend on which other candidates were asked for.
    let mut exponential_range: Option<Option<f64>> = None;
    let mut exchangeable: Option<Option<[f64; 2]>> = None;
    let mut slope_error: Option<Fitted> = None;
    let mut slope_moments: Option<SlopeMoments> = None;
    let exchangeable_fit = || fit::exchangeable(data, &ExchangeableStats::new(data), control);
    let exponential_fit = || fit::serial(data, Serial::Exponential, &moments, control);
    let finite = |f: &Fitted| f.loglik.is_finite().then(|| f.parameters.clone());
    for &s in &Structure::ALL {
        let needed = candidates.contains(&s)
            || (s == Structure::InterceptSlopeError
                && candidates.contains(&Structure::InterceptSlopeExponentialError));
        if !needed {
            continue;
        }
        let result = match s {
            Structure::Independence => fit::independence(data),
            Structure::Exchangeable => {
                let f = exchangeable_fit();
                exchangeable = Some(finite(&f).map(|p| [p[0], p[1]]));
                f
            }
            Structure::Exponential | Structure::Gaussian => {
                let kind = if s == Structure::Exponential {
                    Serial::Exponential
                } else {
                    Serial::Gaussian
                };
                let f = fit::serial(data, kind, &moments, control);
                if s == Structure::Exponential {
                    exponential_range = Some(finite(&f).map(|p| p[1]));
                }
                f
            }
            Structure::InterceptExponentialError => {
                let range = *exponential_range
                    .get_or_insert_with(|| finite(&exponential_fit()).map(|p| p[1]));
                let range = range.unwrap_or_else(|| {
                    let (lo, hi) = moments.log_range_bounds();
                    (0.5 * (lo + hi)).exp()
                });
                fit::intercept_exponential_error(data, range, &moments, control)
            }
            Structure::InterceptSlopeError => {
                let ex = *exchangeable
                    .get_or_insert_with(|| finite(&exchangeable_fit()).map(|p| [p[0], p[1]]));
                let sm = slope_moments.get_or_insert_with(|| SlopeMoments::new(data, scale));
                let starts = slope_error_starts(sm, ex);
                let f = fit_slope::random_slope(data, scale, false, &starts, &moments, control);
                slope_error = Some(f.clone());
                if !candidates.contains(&s) {
                    continue;
                }
                f
            }
            Structure::InterceptSlopeExponentialError => {
                let range = *exponential_range
                    .get_or_insert_with(|| finite(&exponential_fit()).map(|p| p[1]));
                let sm = slope_moments.get_or_insert_with(|| SlopeMoments::new(data, scale));
                let from_slope_error = slope_error
                    .as_ref()
                    .and_then(finite)
                    .map(|p| (scale.to_scaled(covariance_of(p[0], p[1], p[2])), p[3]));
                let starts = slope_serial_starts(sm, from_slope_error, range, &moments);
                fit_slope::random_slope(data, scale, true, &starts, &moments, control)
            }
            Structure::Toeplitz | Structure::Unstructured => {
                let out = patterns.as_ref().map_err(Clone::clone).and_then(|p| {
                    if s == Structure::Toeplitz {
                        fit::toeplitz_fit(p, control)
                    } else {
                        fit::unstructured_fit(p, control)
                    }
                });
                match out {
                    Ok(f) => f,
                    Err(reason) => {
                        grid_reason(s, reason);
                        continue;
                    }
                }
            }
        };
        fitted.push((s, result));
    }
    if fitted.is_empty() {
        let reason = skipped
            .first()
            .map(|s| s.reason.clone())
            .unwrap_or_default();
        return Err(Error::option(
            "grid",
            match &options.grid {
                Some(g) => format!("a grid of {} bins", g.n_bins()),
                None => "not given".into(),
            },
            &format!(
                "toeplitz and unstructured need a time grid of at most {MAX_BINS} bins holding \
                 every visit, at most one per subject per bin ({reason})"
            ),
        ));
    }

    let k_bins = options.grid.as_ref().map_or(0, TimeGrid::n_bins);
    let ln_n = (data.n_obs() as f64).ln();
    let (lo, hi) = moments.log_range_bounds();
    let context = FlagContext {
        total: data.r.iter().map(|v| v * v).sum::<f64>() / data.n_obs() as f64,
        time_spread: scale.spread,
        log_range: (lo, hi),
        half_step: 0.5 * (hi - lo) / (GRID_POINTS - 1) as f64,
        min_gap: moments.min_gap,
        max_span: moments.max_span,
        k_bins,
    };
    let mut fits: Vec<StructureFit> = fitted
        .into_iter()
        .map(|(s, f)| {
            let names = s.parameter_names(k_bins);
            let p = names.len();
            let (at_boundary, flags) =
                boundary_flags(s, &names, &f.parameters, f.loglik, f.converged, &context);
            StructureFit {
                structure: s.name().into(),
                n_parameters: p,
                parameter_names: names,
                parameters: f.parameters,
                loglik: f.loglik,
                aic: -2.0 * f.loglik + 2.0 * p as f64,
                bic: -2.0 * f.loglik + p as f64 * ln_n,
                delta_aic: 0.0,
                delta_bic: 0.0,
                iterations: f.iterations,
                converged: f.converged,
                note: f.note,
                flagged: !flags.is_empty(),
                at_boundary,
                flags,
            }
        })
        .collect();
    fits.sort_by(|a, b| {
        a.aic
            .total_cmp(&b.aic)
            .then(a.n_parameters.cmp(&b.n_parameters))
    });
    let best_aic = fits.iter().map(|f| f.aic).fold(f64::INFINITY, f64::min);
    let best_bic = fits.iter().map(|f| f.bic).fold(f64::INFINITY, f64::min);
    for f in &mut fits {
        f.delta_aic = f.aic - best_aic;
        f.delta_bic = f.bic - best_bic;
        if !f.loglik.is_finite() {
            (f.delta_aic, f.delta_bic) = (f64::INFINITY, f64::INFINITY);
        }
    }
    Ok(Screening {
        fits,
        skipped,
        subjects: data.n_subjects(),
        observations: data.n_obs(),
        time_origin: 0.0,
    })
}

/// The log-likelihood of the residuals under `structure` at the given `parameters` (in the
/// order of [`Structure::parameter_names`]); -inf when some subject's V is not positive
/// definite (for example duplicated visit times under a pure serial structure).
///
/// # Examples
/// ```
/// use trajweave_core::correlation::screen::{structure_loglik, Structure};
/// use trajweave_core::{Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2)]);
/// let p = Panel::new(ids, &[0.0, 1.0, 0.0], &[0.0; 3], vec![], Missing::Error)?;
/// let r = [1.0, -1.0, 0.5];
/// // Independence with variance 1: -1/2 (3 ln(2 pi) + 2.25).
/// let l = structure_loglik(&p, &r, Structure::Independence, &[1.0], None)?;
/// assert!((l + 0.5 * (3.0 * (2.0 * std::f64::consts::PI).ln() + 2.25)).abs() < 1e-12);
/// # Ok(()) }
/// ```
///
/// # Errors
/// As [`screen_structures`] for `resid`; [`Error::InvalidOption`] naming `parameters` for a
/// wrong count, a non-finite value or a variance or range out of range, and naming `grid`
/// when toeplitz or unstructured is asked for without a usable grid.
pub fn structure_loglik(
    panel: &Panel,
    resid: &[f64],
    structure: Structure,
    parameters: &[f64],
    grid: Option<&TimeGrid>,
) -> Result<f64> {
    let data = checked_data(panel, resid)?;
    let n = data.n_obs();
    let k_bins = grid.map_or(0, TimeGrid::n_bins);
    let no_grid = || {
        Error::option(
            "grid",
            "not given",
            &format!("{} needs a time grid", structure.name()),
        )
    };
    if structure.needs_grid() && grid.is_none() {
        return Err(no_grid());
    }
    structure.check_parameters(parameters, k_bins)?;
    let p = parameters;
    let at_shape = |c: f64, shape: Shape| match shape_terms(data, shape) {
        Some((ld, q)) => loglik_at(n, c, ld, q),
        None => f64::NEG_INFINITY,
    };
    let l = match structure {
        Structure::Independence => {
            let ss: f64 = data.r.iter().map(|v| v * v).sum();
            loglik_at(n, p[0], 0.0, ss)
        }
        Structure::Exchangeable => {
            let (ld, q) = ExchangeableStats::new(data).terms(p[0] / p[1]);
            loglik_at(n, p[1], ld, q)
        }
        Structure::Exponential | Structure::Gaussian => {
            let serial = if structure == Structure::Exponential {
                Serial::Exponential
            } else {
                Serial::Gaussian
            };
            at_shape(
                p[0],
                Shape {
                    serial,
                    phi: p[1],
                    w_nu: 0.0,
                    w_s: 1.0,
                    w_tau: 0.0,
                },
            )
        }
        Structure::InterceptExponentialError => {
            let c = p[0] + p[1] + p[3];
            at_shape(
                c,
                Shape {
                    serial: Serial::Exponential,
                    phi: p[2],
                    w_nu: p[0] / c,
                    w_s: p[1] / c,
                    w_tau: p[3] / c,
                },
            )
        }
        Structure::InterceptSlopeError | Structure::InterceptSlopeExponentialError => {
            let scale = TimeScale::new(data);
            let g = scale.to_scaled(covariance_of(p[0], p[1], p[2]));
            let shape = if structure == Structure::InterceptSlopeError {
                SlopeShape {
                    g,
                    w_s: 0.0,
                    phi: 1.0,
                    w_tau: p[3],
                }
            } else {
                SlopeShape {
                    g,
                    w_s: p[3],
                    phi: p[4],
                    w_tau: p[5],
                }
            };
            let terms = if structure == Structure::InterceptSlopeError {
                SlopeStats::new(data, scale).terms(data, shape)
            } else {
                slope_terms(data, scale, shape)
            };
            match terms {
                Some((ld, q)) => loglik_at(n, 1.0, ld, q),
                None => f64::NEG_INFINITY,
            }
        }
        Structure::Toeplitz | Structure::Unstructured => {
            let g = grid.ok_or_else(no_grid)?;
            let pats = binned::patterns(data, g, panel.ids()).map_err(|reason| {
                Error::option("grid", format!("a grid of {k_bins} bins"), &reason)
            })?;
            let s = if structure == Structure::Toeplitz {
                binned::toeplitz(p)
            } else {
                structures::unstructured_matrix(k_bins, p)
            };
            pats.loglik(&s, None).unwrap_or(f64::NEG_INFINITY)
        }
    };
    Ok(l)
}

/// Checks `resid` against the panel and returns the evaluators' view of the data.
fn checked_data<'a>(panel: &'a Panel, resid: &'a [f64]) -> Result<Data<'a>> {
    let n = panel.n_obs();
    if resid.len() != n {
        return Err(Error::LengthMismatch {
            argument: "resid".into(),
            reference: "the panel's rows".into(),
            expected: n,
            found: resid.len(),
        });
    }
    let all_finite = resid
        .par_chunks(1 << 16)
        .all(|c| c.iter().fold(true, |ok, v| ok & v.is_finite()));
    if let Some(k) = (!all_finite)
        .then(|| resid.iter().position(|v| !v.is_finite()))
        .flatten()
    {
        return Err(Error::NonFinite {
            argument: "resid".into(),
            row: panel.order()[k] + 1,
            value: format!("{}", resid[k]),
        });
    }
    let too_few = |what: &str, found: usize| Error::TooFew {
        what: what.into(),
        estimate: "covariance screening".into(),
        needed: 2,
        found,
    };
    if panel.n_subjects() < 2 {
        return Err(too_few("subjects", panel.n_subjects()));
    }
    if n < 2 {
        return Err(too_few("observations", n));
    }
    Ok(Data {
        offsets: panel.offsets(),
        time: panel.time(),
        r: resid,
    })
}

fn check_options(o: &ScreenOptions) -> Result<Control> {
    if o.candidates.is_empty() {
        return Err(Error::option(
            "candidates",
            "none",
            "give at least one structure name",
        ));
    }
    if o.max_iterations == 0 {
        return Err(Error::option("max_iterations", 0, "a whole number >= 1"));
    }
    if !(o.convergence > 0.0 && o.convergence <= 0.1) {
        return Err(Error::option(
            "convergence",
            o.convergence,
            "a number in (0, 0.1]",
        ));
    }
    Ok(Control {
        max_iterations: o.max_iterations,
        tolerance: o.convergence,
    })
}
