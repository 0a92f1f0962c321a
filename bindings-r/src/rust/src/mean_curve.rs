//! `mean_curve()` and `bootstrap_options()`: the panel's mean trend with an optional
//! subject-bootstrap band; grid, fit and band limits cross as double vectors.

use extendr_api::prelude::*;
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};

use crate::convert::{field, named_fields, named_list, one_number, optional_reals};
use crate::error::{respond, Failure, Outcome};
use crate::panel::panel_ref;
use crate::smoother::{build, curve_robj};

/// Largest seed: every whole number up to 2^53 - 1 is exact as an R double.
pub const MAX_SEED: f64 = 9_007_199_254_740_991.0;
/// How the seed's range is worded.
pub const SEED_ALLOWED: &str = "a whole number from 0 to 2^53 - 1";

/// Bootstrap settings from R numbers, checked by the core (whole numbers and ranges).
fn bootstrap_options(reps: &Robj, level: &Robj, seed: &Robj) -> Result<BootstrapOptions, Failure> {
    let (reps, level, seed) = (
        one_number(reps, "reps")?,
        one_number(level, "level")?,
        one_number(seed, "seed")?,
    );
    Ok(BootstrapOptions::from_numbers(reps, level, seed)?)
}

fn bootstrap_robj(o: &BootstrapOptions) -> Outcome {
    named_list(
        ["reps", "level", "seed"].into_iter(),
        vec![
            (o.reps as f64).into(),
            o.level.into(),
            (o.seed as f64).into(),
        ],
    )
}

/// Checked bootstrap settings as `list(reps, level, seed)`.
#[extendr]
fn tw_bootstrap_options(reps: Robj, level: Robj, seed: Robj) -> Robj {
    respond(bootstrap_options(&reps, &level, &seed).and_then(|o| bootstrap_robj(&o)))
}

/// The mean curve of `panel` with `smoother` (an R spec), at `at` (`NULL`: the core's default
/// grid), with a band when `bootstrap` is a `list(reps, level, seed)` (`NULL`: no band).
#[extendr]
fn tw_mean_curve(smoother: Robj, panel: Robj, at: Robj, bootstrap: Robj) -> Robj {
    respond(run(&smoother, &panel, &at, &bootstrap))
}

fn run(smoother: &Robj, panel: &Robj, at: &Robj, bootstrap: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let at = optional_reals(at, "at")?;
    let bootstrap = if bootstrap.is_null() {
        None
    } else {
        let fields = named_fields(bootstrap, "bootstrap")?;
        Some(bootstrap_options(
            &field(&fields, "reps"),
            &field(&fields, "level"),
            &field(&fields, "seed"),
        )?)
    };
    let m = mean_curve(panel, &smoother, at.as_deref(), bootstrap.as_ref())?;
    let band = match &m.band {
        None => ().into(),
        Some(b) => named_list(
            ["lower", "upper", "reps", "level", "seed", "failed"].into_iter(),
            vec![
                b.lower.as_slice().into(),
                b.upper.as_slice().into(),
                (b.bootstrap.reps as f64).into(),
                b.bootstrap.level.into(),
                (b.bootstrap.seed as f64).into(),
                (b.failed as f64).into(),
            ],
        )?,
    };
    named_list(
        ["curve", "at", "fitted", "band"].into_iter(),
        vec![
            curve_robj(&m.curve)?,
            m.at.as_slice().into(),
            m.fitted.as_slice().into(),
            band,
        ],
    )
}

extendr_module! {
    mod mean_curve;
    fn tw_bootstrap_options;
    fn tw_mean_curve;
}
