//! The empirical variogram, the process variance alone, and the variogram's parametric fit
//! (core modules `variogram` and `variogram::fit`).
//!
//! The variogram crosses as an R list (bins as a data.frame, `NA` where the core has NaN). For
//! the fit it travels back: [`variogram_from`] rebuilds the core [`Variogram`] from that list,
//! every field, `NA` read as NaN, so the fit made from R equals the fit made in Rust directly.
//! The smoothed curve comes back from its points and method only; its settings and diagnostics
//! are descriptive and are not read by the fit.

use extendr_api::prelude::*;
use trajweave_core::correlation::variogram::fit::{
    compare_variogram_fits, fit_variogram_with, CorrelationCurve, Estimate, FitOptions, Preference,
    VariogramFit, VariogramModel,
};
use trajweave_core::correlation::variogram::{
    process_variance, variogram, PairSample, Variogram, VariogramOptions,
};
use trajweave_core::SubjectId;

use crate::convert::{
    data_frame, field, ids_robj, named_fields, named_list, one_number, one_text, optional_real,
    optional_reals, optional_text, real_slice, reals_na, strings, text_ids, value_text,
};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::individuals::panel_residuals;
use crate::panel::panel_ref;
use crate::smoother::{build, curve_from_points, curve_robj};

const VG_ALLOWED: &str = "pass a variogram made by variogram(), unchanged in shape";
/// Counts are exact as R doubles up to 2^53.
const MAX_COUNT: f64 = 9_007_199_254_740_992.0;

/// The empirical variogram of `residuals` (one per input row, the caller's order). `sample` is
/// `NULL`, a number of pairs or `"all"`; `smoother` `NULL` or a smoother spec.
#[extendr]
#[allow(clippy::too_many_arguments)] // one argument per option of the R function
fn tw_variogram(
    panel: Robj,
    residuals: Robj,
    lag_bins: Robj,
    lag_kind: Robj,
    lag_edges: Robj,
    max_lag: Robj,
    min_pairs: Robj,
    sample: Robj,
    seed: Robj,
    smoother: Robj,
) -> Robj {
    respond(run_variogram(
        &panel, &residuals, &lag_bins, &lag_kind, &lag_edges, &max_lag, &min_pairs, &sample, &seed,
        &smoother,
    ))
}

/// The sample option as the core reads it: a number is written as text (Rust's shortest
/// round-trip form, so the core sees the same number), "all" passes as it is.
fn sample_text(sample: &Robj) -> Result<Option<String>, Failure> {
    if sample.is_null() {
        return Ok(None);
    }
    if let Ok(v) = one_number(sample, "sample") {
        return Ok(Some(format!("{v}")));
    }
    one_text(sample, "sample", "\"all\" or a whole number of pairs").map(Some)
}

#[allow(clippy::too_many_arguments)]
fn run_variogram(
    panel: &Robj,
    values: &Robj,
    lag_bins: &Robj,
    lag_kind: &Robj,
    lag_edges: &Robj,
    max_lag: &Robj,
    min_pairs: &Robj,
    sample: &Robj,
    seed: &Robj,
    smoother: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let kind = optional_text(lag_kind, "lag_kind", "\"equal_width\" or \"equal_count\"")?;
    let sample = sample_text(sample)?;
    let smoother = if smoother.is_null() {
        None
    } else {
        Some(build(smoother)?)
    };
    let options = VariogramOptions::from_front(
        kind.as_deref(),
        optional_real(lag_bins, "lag_bins")?,
        optional_reals(lag_edges, "lag_edges")?,
        optional_real(max_lag, "max_lag")?,
        Some(one_number(min_pairs, "min_pairs")?),
        sample.as_deref(),
        Some(one_number(seed, "seed")?),
        smoother,
    )?;
    let r = panel_residuals(panel, values)?;
    let vg = variogram(panel, &r, &options)?;
    variogram_robj(&vg, text_ids(panel))
}

fn counts(values: &[u64]) -> Robj {
    values.iter().map(|&n| n as f64).collect_robj()
}

fn variogram_robj(vg: &Variogram, text: bool) -> Outcome {
    let bins = data_frame(
        ["lower", "upper", "lag", "pairs", "classical", "robust"].into_iter(),
        vec![
            vg.lower.as_slice().into(),
            vg.upper.as_slice().into(),
            reals_na(&vg.lag),
            counts(&vg.pairs),
            reals_na(&vg.classical),
            reals_na(&vg.robust),
        ],
        vg.lag.len(),
    )?;
    let sample = match &vg.sample {
        None => ().into(),
        Some(s) => data_frame(
            ["lag", "half_sq_diff", "subject"].into_iter(),
            vec![
                s.lag.as_slice().into(),
                s.half_sq_diff.as_slice().into(),
                ids_robj(&s.subjects, text),
            ],
            s.lag.len(),
        )?,
    };
    let smoothed = match &vg.smoothed {
        None => ().into(),
        Some(c) => curve_robj(c)?,
    };
    named_list(
        [
            "bins",
            "min_pairs",
            "max_lag",
            "pairs_in_bins",
            "pairs_outside",
            "process_variance",
            "variance",
            "between_pairs",
            "time_mean",
            "time_variance",
            "subjects",
            "observations",
            "sample",
            "smoothed",
            "smoothed_pairs",
        ]
        .into_iter(),
        vec![
            bins,
            (vg.min_pairs as f64).into(),
            vg.max_lag.into(),
            (vg.pairs_in_bins as f64).into(),
            (vg.pairs_outside as f64).into(),
            vg.process_variance.into(),
            vg.variance.into(),
            vg.between_pairs.into(),
            reals_na(&[vg.time_mean]),
            reals_na(&[vg.time_variance]),
            (vg.subjects as f64).into(),
            (vg.observations as f64).into(),
            sample,
            smoothed,
            (vg.smoothed_pairs as f64).into(),
        ],
    )
}

/// The core variogram of its R list (see [`variogram_robj`]); anything of another shape is
/// refused under `vg`.
fn variogram_from(x: &Robj) -> Result<Variogram, Failure> {
    let refuse = || invalid_option("vg", value_text(x), VG_ALLOWED);
    let fields = named_fields(x, "vg").map_err(|_| refuse())?;
    let table = named_fields(&field(&fields, "bins"), "vg").map_err(|_| refuse())?;
    // R's NA is a NaN with a payload; the core's "no estimate" is a plain NaN.
    let column = |table: &[(String, Robj)], name: &str| -> Result<Vec<f64>, Failure> {
        let v = field(table, name);
        real_slice(&v, "vg")
            .map(|s| {
                s.iter()
                    .map(|&v| if v.is_nan() { f64::NAN } else { v })
                    .collect()
            })
            .map_err(|_| refuse())
    };
    let whole = |v: f64| v.fract() == 0.0 && (0.0..=MAX_COUNT).contains(&v);
    let count = |name: &str| -> Result<u64, Failure> {
        match one_number(&field(&fields, name), "vg") {
            Ok(v) if whole(v) => Ok(v as u64),
            _ => Err(refuse()),
        }
    };
    let number = |name: &str| one_number(&field(&fields, name), "vg").map_err(|_| refuse());
    // NA (or absent, in a variogram saved before these fields existed) is NaN: the
    // random-slope fit then flags its intercept variance as not computed.
    let time_moment = |name: &str| -> Result<f64, Failure> {
        match field(&fields, name) {
            x if x.is_null() => Ok(f64::NAN),
            x => real_slice(&x, "vg")
                .ok()
                .filter(|v| v.len() == 1)
                .map(|v| if v[0].is_nan() { f64::NAN } else { v[0] })
                .ok_or_else(refuse),
        }
    };
    let lower = column(&table, "lower")?;
    let upper = column(&table, "upper")?;
    let lag = column(&table, "lag")?;
    let pairs = column(&table, "pairs")?;
    let classical = column(&table, "classical")?;
    let robust = column(&table, "robust")?;
    let m = lag.len();
    let shaped = m > 0
        && [&lower, &upper, &pairs, &classical, &robust]
            .iter()
            .all(|c| c.len() == m)
        && pairs.iter().all(|&n| whole(n));
    if !shaped {
        return Err(refuse());
    }
    let sample = match field(&fields, "sample") {
        s if s.is_null() => None,
        s => {
            let t = named_fields(&s, "vg").map_err(|_| refuse())?;
            let (lag, half_sq_diff) = (column(&t, "lag")?, column(&t, "half_sq_diff")?);
            let subjects = sample_subjects(&field(&t, "subject")).ok_or_else(refuse)?;
            if half_sq_diff.len() != lag.len() || subjects.len() != lag.len() {
                return Err(refuse());
            }
            Some(PairSample {
                lag,
                half_sq_diff,
                subjects,
            })
        }
    };
    let smoothed = match field(&fields, "smoothed") {
        c if c.is_null() => None,
        c => {
            let f = named_fields(&c, "vg").map_err(|_| refuse())?;
            let method = one_text(&field(&f, "method"), "vg", VG_ALLOWED)?;
            Some(curve_from_points(
                &method,
                &field(&f, "x"),
                &field(&f, "fitted"),
                "vg",
            )?)
        }
    };
    Ok(Variogram {
        lower,
        upper,
        lag,
        pairs: pairs.iter().map(|&n| n as u64).collect(),
        classical,
        robust,
        min_pairs: count("min_pairs")? as usize,
        max_lag: number("max_lag")?,
        pairs_in_bins: count("pairs_in_bins")?,
        pairs_outside: count("pairs_outside")?,
        process_variance: number("process_variance")?,
        variance: number("variance")?,
        between_pairs: number("between_pairs")?,
        time_mean: time_moment("time_mean")?,
        time_variance: time_moment("time_variance")?,
        subjects: count("subjects")? as usize,
        observations: count("observations")? as usize,
        sample,
        smoothed,
        smoothed_pairs: count("smoothed_pairs")? as usize,
    })
}

/// Subject ids of a pair sample as [`ids_robj`] wrote them: text, or whole numbers.
fn sample_subjects(x: &Robj) -> Option<Vec<SubjectId>> {
    if x.rtype() == Rtype::Strings {
        return strings(x, "vg")
            .ok()?
            .into_iter()
            .map(|s| s.map(SubjectId::Text))
            .collect();
    }
    real_slice(x, "vg")
        .ok()?
        .iter()
        .map(|&v| (v.fract() == 0.0 && v.abs() <= MAX_COUNT).then_some(SubjectId::Int(v as i64)))
        .collect()
}

/// Fits `model` ("exponential" or "gaussian") to the `estimate` ("classical" or "robust") bins
/// of the variogram `vg` (its R list), with a random slope when `random_slope` is `TRUE`.
#[extendr]
fn tw_fit_variogram(vg: Robj, model: Robj, estimate: Robj, random_slope: Robj) -> Robj {
    respond(run_fit(&vg, &model, &estimate, &random_slope))
}

/// The model and estimate arguments as the core reads them.
fn fit_choice(model: &Robj, estimate: &Robj) -> Result<(VariogramModel, Estimate), Failure> {
    let model = VariogramModel::parse(&one_text(
        model,
        "model",
        "\"exponential\" or \"gaussian\"",
    )?)?;
    let estimate = Estimate::parse(&one_text(
        estimate,
        "estimate",
        "\"classical\" or \"robust\"",
    )?)?;
    Ok((model, estimate))
}

/// Exactly one `TRUE` or `FALSE`.
fn one_logical(x: &Robj, argument: &str) -> Result<bool, Failure> {
    match x.as_logical_slice() {
        Some([v]) if !v.is_na() => Ok(v.is_true()),
        _ => Err(invalid_option(argument, value_text(x), "TRUE or FALSE")),
    }
}

fn run_fit(vg: &Robj, model: &Robj, estimate: &Robj, random_slope: &Robj) -> Outcome {
    let (model, estimate) = fit_choice(model, estimate)?;
    let random_slope = one_logical(random_slope, "random_slope")?;
    let vg = variogram_from(vg)?;
    let f = fit_variogram_with(
        &vg,
        &FitOptions {
            model,
            estimate,
            random_slope,
        },
    )?;
    fit_robj(&f)
}

/// Fits `model` to `vg` with and without a random slope and says which to read.
#[extendr]
fn tw_compare_variogram_fits(vg: Robj, model: Robj, estimate: Robj) -> Robj {
    respond(run_compare(&vg, &model, &estimate))
}

fn run_compare(vg: &Robj, model: &Robj, estimate: &Robj) -> Outcome {
    let (model, estimate) = fit_choice(model, estimate)?;
    let vg = variogram_from(vg)?;
    let c = compare_variogram_fits(&vg, model, estimate)?;
    let preferred = match c.preferred {
        Preference::Stationary => "stationary",
        Preference::RandomSlope => "random_slope",
        Preference::Neither => "neither",
    };
    named_list(
        [
            "stationary",
            "random_slope",
            "criterion_reduction",
            "preferred",
            "reason",
        ]
        .into_iter(),
        vec![
            fit_robj(&c.stationary)?,
            fit_robj(&c.random_slope)?,
            c.criterion_reduction.into(),
            preferred.into(),
            c.reason.as_str().into(),
        ],
    )
}

fn texts(values: &[String]) -> Robj {
    values.iter().map(String::as_str).collect::<Vec<_>>().into()
}

/// A fit as an R list: every field of the core's result, the curves as one data.frame.
fn fit_robj(f: &VariogramFit) -> Outcome {
    let curve = data_frame(
        ["lag", "variogram", "serial_correlation", "correlation"].into_iter(),
        vec![
            f.curve_lag.as_slice().into(),
            reals_na(&f.curve_variogram),
            reals_na(&f.curve_serial_correlation),
            reals_na(&f.curve_correlation),
        ],
        f.curve_lag.len(),
    )?;
    let kind = match f.curve_correlation_kind {
        CorrelationCurve::Stationary => "stationary",
        CorrelationCurve::NotIdentified => "not_identified",
    };
    named_list(
        [
            "model",
            "estimate",
            "random_slope",
            "error_variance",
            "serial_variance",
            "range",
            "slope_variance",
            "intercept_variance",
            "intercept_time",
            "process_variance",
            "criterion",
            "relative_misfit",
            "bins_used",
            "iterations",
            "converged",
            "warnings",
            "at_boundary",
            "flagged",
            "flags",
            "reading",
            "curve",
            "curve_correlation_kind",
        ]
        .into_iter(),
        vec![
            f.model.name().into(),
            f.estimate.name().into(),
            f.random_slope.into(),
            f.error_variance.into(),
            f.serial_variance.into(),
            f.range.into(),
            f.slope_variance.into(),
            reals_na(&[f.intercept_variance]),
            reals_na(&[f.intercept_time]),
            f.process_variance.into(),
            f.criterion.into(),
            f.relative_misfit.into(),
            (f.bins_used as f64).into(),
            (f.iterations as f64).into(),
            f.converged.into(),
            texts(&f.warnings),
            texts(&f.at_boundary),
            f.flagged.into(),
            texts(&f.flags),
            f.reading.as_str().into(),
            curve,
            kind.into(),
        ],
    )
}

/// The process variance of `residuals` (one per input row, the caller's order): the mean of
/// (r_j - r_k)^2 / 2 over pairs of rows of different subjects.
#[extendr]
fn tw_process_variance(panel: Robj, residuals: Robj) -> Robj {
    respond(run_process_variance(&panel, &residuals))
}

fn run_process_variance(panel: &Robj, values: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let r = panel_residuals(panel, values)?;
    Ok(process_variance(panel, &r)?.into())
}

extendr_module! {
    mod variogram;
    fn tw_variogram;
    fn tw_fit_variogram;
    fn tw_compare_variogram_fits;
    fn tw_process_variance;
}
