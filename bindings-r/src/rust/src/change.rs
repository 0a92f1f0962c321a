//! `average_change()`: the mean curve's average change per time unit with subject-bootstrap
//! intervals; the core's result reaches R through the generic JSON converter.

use extendr_api::prelude::*;
use trajweave_core::trend::change::{average_change, ChangeOptions};

use crate::convert::one_number;
use crate::error::{respond, Failure, Outcome};
use crate::json::to_robj;
use crate::panel::panel_ref;
use crate::smoother::build;

/// The average change of `smoother` (an R spec) on `panel` over the central `central` share of
/// the times, with `reps` resamples at `level`, seeded by `seed` (all checked by the core).
#[extendr]
fn tw_average_change(
    smoother: Robj,
    panel: Robj,
    central: Robj,
    reps: Robj,
    level: Robj,
    seed: Robj,
) -> Robj {
    respond(run(&smoother, &panel, &central, &reps, &level, &seed))
}

fn run(
    smoother: &Robj,
    panel: &Robj,
    central: &Robj,
    reps: &Robj,
    level: &Robj,
    seed: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let o = ChangeOptions::from_numbers(
        one_number(central, "central")?,
        one_number(reps, "reps")?,
        one_number(level, "level")?,
        one_number(seed, "seed")?,
    )?;
    let c = average_change(panel, &smoother, &o)?;
    let v = serde_json::to_value(&c).map_err(|e| Failure::Internal(e.to_string()))?;
    to_robj(&v)
}

extendr_module! {
    mod change;
    fn tw_average_change;
}
