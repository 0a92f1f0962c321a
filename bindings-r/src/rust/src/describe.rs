//! `describe()`: the core's [`Description`](trajweave_core::Description) as an R list, plus its
//! text table for `print()`.

use extendr_api::prelude::*;
use trajweave_core::{describe, TimeGrid};

use crate::convert::{optional_real, optional_reals};
use crate::error::{respond, Failure, Outcome};
use crate::json::to_robj;
use crate::panel::panel_ref;

/// Describes a panel on an optional grid (`edges`, or `schedule` with `tolerance`; `NULL` for
/// not given). The answer is the description's JSON as R values, with the core's text table in
/// the attribute `text`.
#[extendr]
fn tw_describe(panel: Robj, edges: Robj, schedule: Robj, tolerance: Robj) -> Robj {
    respond(run(&panel, &edges, &schedule, &tolerance))
}

fn run(panel: &Robj, edges: &Robj, schedule: &Robj, tolerance: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let grid = TimeGrid::from_options(
        optional_reals(edges, "edges")?,
        optional_reals(schedule, "schedule")?,
        optional_real(tolerance, "tolerance")?,
    )?;
    let d = describe(panel, grid.as_ref())?;
    let json = serde_json::to_value(&d).map_err(|e| Failure::Internal(e.to_string()))?;
    let mut out = to_robj(&json)?;
    out.set_attrib("text", d.to_text())?;
    Ok(out)
}

extendr_module! {
    mod describe;
    fn tw_describe;
}
