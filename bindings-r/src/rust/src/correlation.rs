//! The binned residual correlation between time bins (core module `correlation`).
//!
//! The grid is made from the front's values by `TimeGrid::for_times` (exactly one of a bin
//! count, edges, or a schedule with a tolerance). The k x k results cross as numeric matrices
//! with the bin labels as dimnames and `NA` where the core has NaN (a cell below `min_count`
//! subjects or without spread).

use extendr_api::prelude::*;
use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::TimeGrid;

use crate::convert::{
    data_frame, matrix, named_list, one_number, optional_real, optional_reals, reals_na,
    usize_counts,
};
use crate::error::{respond, Outcome};
use crate::individuals::panel_residuals;
use crate::panel::panel_ref;

/// The correlation of `residuals` (one per input row, the caller's order) between the bins of
/// the grid given by `bins`, `edges` or `schedule` with `tolerance`, as
/// `list(bins, centres, correlation, counts, lower, upper, means, sds, lags, level, min_count,
/// visits_used, visits_outside, visits_unused)`.
#[extendr]
#[allow(clippy::too_many_arguments)] // one argument per option of the R function
fn tw_binned_correlation(
    panel: Robj,
    residuals: Robj,
    bins: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
    level: Robj,
    min_count: Robj,
) -> Robj {
    respond(run(
        &panel, &residuals, &bins, &edges, &schedule, &tolerance, &level, &min_count,
    ))
}

#[allow(clippy::too_many_arguments)]
fn run(
    panel: &Robj,
    values: &Robj,
    bins: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
    level: &Robj,
    min_count: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let grid = TimeGrid::for_times(
        panel.time(),
        optional_real(bins, "bins")?,
        optional_reals(edges, "edges")?,
        optional_reals(schedule, "schedule")?,
        optional_real(tolerance, "tolerance")?,
    )?;
    let options = CorrelationOptions::from_numbers(
        Some(one_number(level, "level")?),
        Some(one_number(min_count, "min_count")?),
    )?;
    let r = panel_residuals(panel, values)?;
    let c = binned_correlation(panel, &r, &grid, &options)?;
    let k = c.bins.len();
    let labels: Robj = c.bins.iter().map(String::as_str).collect_robj();
    // The core's matrices are row-major; R's are column-major.
    let square = |values: &[f64]| -> Outcome {
        let column_major: Vec<f64> = (0..k * k).map(|i| values[(i % k) * k + i / k]).collect();
        matrix(
            reals_na(&column_major),
            k,
            k,
            labels.clone(),
            labels.clone(),
        )
    };
    let counts: Vec<f64> = c.counts.iter().map(|&n| n as f64).collect();
    let l = &c.lags;
    let lags = data_frame(
        ["lag", "gap", "correlation", "pairs", "cells"].into_iter(),
        vec![
            usize_counts(l.lag.iter()),
            reals_na(&l.gap),
            reals_na(&l.correlation),
            l.pairs.iter().map(|&n| n as f64).collect_robj(),
            usize_counts(l.cells.iter()),
        ],
        l.lag.len(),
    )?;
    named_list(
        [
            "bins",
            "centres",
            "correlation",
            "counts",
            "lower",
            "upper",
            "means",
            "sds",
            "lags",
            "level",
            "min_count",
            "visits_used",
            "visits_outside",
            "visits_unused",
        ]
        .into_iter(),
        vec![
            labels.clone(),
            c.centres.as_slice().into(),
            square(&c.correlation)?,
            square(&counts)?,
            square(&c.lower)?,
            square(&c.upper)?,
            reals_na(&c.means),
            reals_na(&c.sds),
            lags,
            c.level.into(),
            (c.min_count as f64).into(),
            (c.visits_used as f64).into(),
            (c.visits_outside as f64).into(),
            (c.visits_unused as f64).into(),
        ],
    )
}

extendr_module! {
    mod correlation;
    fn tw_binned_correlation;
}
