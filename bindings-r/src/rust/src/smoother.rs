//! Smoothers: a family name with (name, value) options in, the core's [`Curve`] out, and
//! [`Curve::predict`] on a curve's points handed back from R.
//!
//! The R side keeps a smoother as its family and the options given (class
//! `trajweave_smoother`), and passes that list to every entry point, which rebuilds the
//! core [`Smoother`] through [`Smoother::from_options`]; so a family the core adds needs no
//! change here. `x` and `fitted` cross as double vectors; only the small `settings` and
//! `diagnostics` go through the JSON converter.

use extendr_api::prelude::*;
use trajweave_core::trend::curve::{Curve, Diagnostics, OptionValue};
use trajweave_core::trend::smoother::Smoother;

use crate::convert::{
    field, named_fields, named_list, option_value, real_slice, strings, value_text,
};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::json::to_robj;

/// The core smoother of an R spec `list(family = "...", options = list(name = value, ...))`,
/// its options set in the order given.
pub fn build(spec: &Robj) -> Result<Smoother, Failure> {
    let fields = named_fields(spec, "smoother")?;
    let family = field(&fields, "family");
    let family = match strings(&family, "smoother")?.as_slice() {
        [Some(f)] => f.clone(),
        _ => {
            return Err(invalid_option(
                "smoother",
                value_text(&family),
                "give one family name",
            ))
        }
    };
    let options = named_fields(&field(&fields, "options"), "smoother options")?
        .into_iter()
        .map(|(name, v)| {
            let v = option_value(&v, &name)?;
            Ok((name, v))
        })
        .collect::<Result<Vec<(String, OptionValue)>, Failure>>()?;
    Ok(Smoother::from_options(&family, &options)?)
}

/// A curve as the R list `list(method, x, fitted, settings, diagnostics, warnings)` (the R
/// wrapper adds the class and raises the warnings).
pub fn curve_robj(c: &Curve) -> Outcome {
    let settings = to_robj(&c.settings)?;
    let diagnostics = serde_json::to_value(&c.diagnostics)
        .map_err(|e| Failure::Internal(e.to_string()))
        .and_then(|v| to_robj(&v))?;
    named_list(
        ["method", "x", "fitted", "settings", "diagnostics", "warnings"].into_iter(),
        vec![
            c.method.as_str().into(),
            c.x.as_slice().into(),
            c.fitted.as_slice().into(),
            settings,
            diagnostics,
            Strings::from_values(c.warnings.iter().map(String::as_str)).into(),
        ],
    )
}

/// Checks a smoother spec by building it in the core: `NULL` when it is usable, else the
/// core's error for the first option it refuses.
#[extendr]
fn tw_smoother_check(smoother: Robj) -> Robj {
    respond(build(&smoother).map(|_| ().into()))
}

/// Fits the smoother (an R spec) to `x` and `y` (double vectors).
#[extendr]
fn tw_fit_smoother(smoother: Robj, x: Robj, y: Robj) -> Robj {
    respond(fit(&smoother, &x, &y))
}

fn fit(smoother: &Robj, x: &Robj, y: &Robj) -> Outcome {
    let smoother = build(smoother)?;
    let curve = smoother.fit(real_slice(x, "x")?, real_slice(y, "y")?)?;
    curve_robj(&curve)
}

/// A curve given by its points (`x` increasing without ties, one `fitted` value each),
/// evaluated at `new_x` by the core's rule.
#[extendr]
fn tw_predict_curve(x: Robj, fitted: Robj, new_x: Robj) -> Robj {
    respond(predict(&x, &fitted, &new_x))
}

fn predict(x: &Robj, fitted: &Robj, new_x: &Robj) -> Outcome {
    let curve = curve_from_points("", x, fitted, "object")?;
    Ok(curve.predict(real_slice(new_x, "newdata")?).into())
}

/// A core curve from the points of an R curve (`x` and `fitted`), refused under `argument`
/// when they were edited so that the curve's rule no longer applies.
pub fn curve_from_points(
    method: &str,
    x: &Robj,
    fitted: &Robj,
    argument: &str,
) -> Result<Curve, Failure> {
    let points = real_slice(x, argument)?;
    let values = real_slice(fitted, argument)?;
    // The points come back from R, where they may have been edited: the interpolation needs
    // them finite and strictly increasing, with one fitted value each.
    let usable = !points.is_empty()
        && points.len() == values.len()
        && points.iter().all(|v| v.is_finite())
        && points.windows(2).all(|w| w[0] < w[1]);
    if !usable {
        return Err(invalid_option(
            argument,
            "a curve whose points were changed".into(),
            "`x` must be finite and increasing without ties, with one `fitted` value each; \
             use a curve from fit_smoother()",
        ));
    }
    Ok(Curve::new(
        method,
        points.to_vec(),
        values.to_vec(),
        serde_json::Value::Null,
        Diagnostics::new(points.len()),
    ))
}

extendr_module! {
    mod smoother;
    fn tw_smoother_check;
    fn tw_fit_smoother;
    fn tw_predict_curve;
}
