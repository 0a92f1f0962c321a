//! Covariate effects and dropout: equal-count bands, conditional trends, group and dropout
//! curves, and the trajectory grid (core modules `bands`, `conditional`, `groups`,
//! `trajectory_grid`).
//!
//! Curves on the common grid cross as numeric matrices (grid points x bands or groups) with
//! `NA` where the core has NaN (outside a group's observed time range); the trajectory grid as
//! a subjects x bins matrix, `NA` in empty cells. Bands travel back to the core from their R
//! list, so R may keep, subset or print them in between.

use extendr_api::prelude::*;
use trajweave_core::covariates::bands::{covariate_bands, equal_count_bands, Band, Bands};
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::covariates::groups::{dropout_curves, group_curves, GroupCurves};
use trajweave_core::individuals::trajectory_grid::trajectory_grid;
use trajweave_core::{Error, TimeGrid};

use crate::convert::{
    data_frame, field, ids_robj, matrix, named_fields, named_list, one_number, one_text,
    optional_real, optional_reals, real_slice, reals_na, text_ids, usize_counts, value_text,
    whole_number,
};
use crate::error::{invalid_option, respond, Failure, Outcome};
use crate::panel::panel_ref;
use crate::smoother::{build, curve_robj};

/// The core's words for a number of intervals out of range.
const NUMBER_ALLOWED: &str = "give a whole number of intervals >= 1";
const COVARIATE_ALLOWED: &str = "give one covariate name as a string";
const BANDS_ALLOWED: &str =
    "pass bands made by covariate_bands() or equal_count_bands(), unchanged in shape";

fn band_options(number: &Robj, overlap: &Robj) -> Result<(usize, f64), Failure> {
    Ok((
        whole_number(number, "number", 1e15, NUMBER_ALLOWED)? as usize,
        one_number(overlap, "overlap")?,
    ))
}

/// Bands as `list(bands = data.frame(lower, upper, count), number, overlap, counted)`.
fn bands_robj(b: &Bands) -> Outcome {
    let table = data_frame(
        ["lower", "upper", "count"].into_iter(),
        vec![
            b.bands.iter().map(|x| x.lower).collect_robj(),
            b.bands.iter().map(|x| x.upper).collect_robj(),
            usize_counts(b.bands.iter().map(|x| &x.count)),
        ],
        b.bands.len(),
    )?;
    named_list(
        ["bands", "number", "overlap", "counted"].into_iter(),
        vec![
            table,
            (b.number as f64).into(),
            b.overlap.into(),
            b.counted.as_str().into(),
        ],
    )
}

/// The core's bands from their R list (see [`bands_robj`]).
fn bands_from(x: &Robj) -> Result<Bands, Failure> {
    let refuse = || invalid_option("bands", value_text(x), BANDS_ALLOWED);
    let fields = named_fields(x, "bands").map_err(|_| refuse())?;
    let table = named_fields(&field(&fields, "bands"), "bands").map_err(|_| refuse())?;
    let column = |name: &str| -> Result<Vec<f64>, Failure> {
        let v = field(&table, name);
        real_slice(&v, "bands")
            .map(<[f64]>::to_vec)
            .map_err(|_| refuse())
    };
    let (lower, upper, count) = (column("lower")?, column("upper")?, column("count")?);
    let usable = lower.len() == upper.len()
        && lower.len() == count.len()
        && count.iter().all(|c| c.fract() == 0.0 && *c >= 0.0);
    if !usable {
        return Err(refuse());
    }
    let bands = lower
        .iter()
        .zip(&upper)
        .zip(&count)
        .map(|((&lower, &upper), &count)| Band {
            lower,
            upper,
            count: count as usize,
        })
        .collect();
    let number = whole_number(&field(&fields, "number"), "bands", 1e15, BANDS_ALLOWED)?;
    let overlap = one_number(&field(&fields, "overlap"), "bands").map_err(|_| refuse())?;
    let counted = one_text(&field(&fields, "counted"), "bands", BANDS_ALLOWED)?;
    Ok(Bands {
        bands,
        number: number as usize,
        overlap,
        counted,
    })
}

/// Equal-count overlapping intervals of `values` (a double vector).
#[extendr]
fn tw_equal_count_bands(values: Robj, number: Robj, overlap: Robj) -> Robj {
    respond(run_equal_count(&values, &number, &overlap))
}

fn run_equal_count(values: &Robj, number: &Robj, overlap: &Robj) -> Outcome {
    let (number, overlap) = band_options(number, overlap)?;
    bands_robj(&equal_count_bands(
        real_slice(values, "values")?,
        number,
        overlap,
    )?)
}

/// Equal-count overlapping intervals of the panel's covariate `covariate`.
#[extendr]
fn tw_covariate_bands(panel: Robj, covariate: Robj, number: Robj, overlap: Robj) -> Robj {
    respond(run_covariate_bands(&panel, &covariate, &number, &overlap))
}

fn run_covariate_bands(panel: &Robj, covariate: &Robj, number: &Robj, overlap: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let covariate = one_text(covariate, "covariate", COVARIATE_ALLOWED)?;
    let (number, overlap) = band_options(number, overlap)?;
    bands_robj(&covariate_bands(panel, &covariate, number, overlap)?)
}

/// A column-major grid points x curves matrix of per-curve fits (each as long as `at`), `NA`
/// for NaN, columns named by `labels`.
fn fits_matrix(at: &[f64], fits: &[&[f64]], labels: Robj) -> Outcome {
    let values: Vec<f64> = fits.iter().flat_map(|f| f.iter().copied()).collect();
    matrix(reals_na(&values), at.len(), fits.len(), ().into(), labels)
}

/// A smooth and a least-squares line within each band of covariate `by`.
#[extendr]
fn tw_conditional_trends(smoother: Robj, panel: Robj, by: Robj, bands: Robj, at: Robj) -> Robj {
    respond(run_conditional(&smoother, &panel, &by, &bands, &at))
}

fn run_conditional(smoother: &Robj, panel: &Robj, by: &Robj, bands: &Robj, at: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let by = one_text(by, "by", COVARIATE_ALLOWED)?;
    let bands = bands_from(bands)?;
    let at = optional_reals(at, "at")?;
    let c = conditional_trends(panel, &by, &bands, &smoother, at.as_deref())?;
    let t = &c.trends;
    let trends = data_frame(
        [
            "lower",
            "upper",
            "count",
            "subjects",
            "observations",
            "intercept",
            "slope",
            "slope_se",
        ]
        .into_iter(),
        vec![
            t.iter().map(|x| x.band.lower).collect_robj(),
            t.iter().map(|x| x.band.upper).collect_robj(),
            usize_counts(t.iter().map(|x| &x.band.count)),
            usize_counts(t.iter().map(|x| &x.subjects)),
            usize_counts(t.iter().map(|x| &x.observations)),
            t.iter().map(|x| x.intercept).collect_robj(),
            t.iter().map(|x| x.slope).collect_robj(),
            t.iter().map(|x| x.slope_se).collect_robj(),
        ],
        t.len(),
    )?;
    let fits: Vec<&[f64]> = t.iter().map(|x| x.fitted.as_slice()).collect();
    let labels = t.iter().map(|x| x.band.label()).collect_robj();
    named_list(
        ["covariate", "at", "trends", "fitted", "se_kind"].into_iter(),
        vec![
            c.covariate.as_str().into(),
            c.at.as_slice().into(),
            trends,
            fits_matrix(&c.at, &fits, labels)?,
            c.se_kind.as_str().into(),
        ],
    )
}

/// Group or dropout curves as `list(by, at, groups, curves, fitted, left_out)`: `groups` a
/// data.frame (label, level, subjects, observations), `curves` the fits named by label,
/// `fitted` the grid points x groups matrix.
fn group_curves_robj(g: &GroupCurves) -> Outcome {
    let groups = data_frame(
        ["label", "level", "subjects", "observations"].into_iter(),
        vec![
            g.groups.iter().map(|x| x.label.as_str()).collect_robj(),
            reals_na(
                &g.groups
                    .iter()
                    .map(|x| x.level.unwrap_or(f64::NAN))
                    .collect::<Vec<_>>(),
            ),
            usize_counts(g.groups.iter().map(|x| &x.subjects)),
            usize_counts(g.groups.iter().map(|x| &x.observations)),
        ],
        g.groups.len(),
    )?;
    let curves = g
        .groups
        .iter()
        .map(|x| curve_robj(&x.curve))
        .collect::<Result<Vec<_>, Failure>>()?;
    let curves = named_list(g.groups.iter().map(|x| x.label.as_str()), curves)?;
    let fits: Vec<&[f64]> = g.groups.iter().map(|x| x.fitted.as_slice()).collect();
    let labels = g.groups.iter().map(|x| x.label.as_str()).collect_robj();
    named_list(
        ["by", "at", "groups", "curves", "fitted", "left_out"].into_iter(),
        vec![
            g.by.as_str().into(),
            g.at.as_slice().into(),
            groups,
            curves,
            fits_matrix(&g.at, &fits, labels)?,
            (g.left_out as f64).into(),
        ],
    )
}

/// A mean curve per level of the categorical covariate `covariate`.
#[extendr]
fn tw_group_curves(smoother: Robj, panel: Robj, covariate: Robj, at: Robj) -> Robj {
    respond(run_group(&smoother, &panel, &covariate, &at))
}

fn run_group(smoother: &Robj, panel: &Robj, covariate: &Robj, at: &Robj) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let covariate = one_text(covariate, "covariate", COVARIATE_ALLOWED)?;
    let at = optional_reals(at, "at")?;
    group_curves_robj(&group_curves(panel, &covariate, &smoother, at.as_deref())?)
}

/// The time grid a dropout cohort or a grid cell is binned on; one is required.
fn required_grid(edges: &Robj, schedule: &Robj, tolerance: &Robj) -> Result<TimeGrid, Failure> {
    TimeGrid::from_options(
        optional_reals(edges, "edges")?,
        optional_reals(schedule, "schedule")?,
        optional_real(tolerance, "tolerance")?,
    )?
    .ok_or_else(|| {
        Failure::Core(Error::InvalidOption {
            argument: "edges".into(),
            value: "not given".into(),
            allowed: "give bin edges, or a schedule with a tolerance".into(),
        })
    })
}

/// A mean curve per dropout cohort (the grid bin of each subject's last visit).
#[extendr]
fn tw_dropout_curves(
    smoother: Robj,
    panel: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
    at: Robj,
) -> Robj {
    respond(run_dropout(
        &smoother, &panel, &edges, &schedule, &tolerance, &at,
    ))
}

fn run_dropout(
    smoother: &Robj,
    panel: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
    at: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let smoother = build(smoother)?;
    let grid = required_grid(edges, schedule, tolerance)?;
    let at = optional_reals(at, "at")?;
    group_curves_robj(&dropout_curves(panel, &grid, &smoother, at.as_deref())?)
}

/// Subjects x time bins of the mean of `values` (one per input row, the caller's order), rows
/// ordered by `order_by` (one per subject, in sorted-id order).
#[extendr]
fn tw_trajectory_grid(
    panel: Robj,
    values: Robj,
    order_by: Robj,
    edges: Robj,
    schedule: Robj,
    tolerance: Robj,
) -> Robj {
    respond(run_grid(
        &panel, &values, &order_by, &edges, &schedule, &tolerance,
    ))
}

fn run_grid(
    panel: &Robj,
    values: &Robj,
    order_by: &Robj,
    edges: &Robj,
    schedule: &Robj,
    tolerance: &Robj,
) -> Outcome {
    let panel = panel_ref(panel)?;
    let grid = required_grid(edges, schedule, tolerance)?;
    let values = panel.from_input_order("values", real_slice(values, "values")?)?;
    let order_by = real_slice(order_by, "order_by")?;
    let g = trajectory_grid(panel, &values, &grid, order_by)?;
    let (rows, cols) = (g.subjects.len(), g.bins.len());
    // Row-major in the core, column-major in R.
    let mut means = Vec::with_capacity(rows * cols);
    let mut counts = Vec::with_capacity(rows * cols);
    for c in 0..cols {
        for r in 0..rows {
            means.push(g.values[r * cols + c]);
            counts.push(f64::from(g.counts[r * cols + c]));
        }
    }
    let text = text_ids(panel);
    let subjects = ids_robj(&g.subjects, text);
    let row_names: Robj = g.subjects.iter().map(|s| s.to_string()).collect_robj();
    let bins: Robj = g.bins.iter().map(String::as_str).collect_robj();
    named_list(
        ["bins", "subjects", "order_values", "values", "counts"].into_iter(),
        vec![
            bins.clone(),
            subjects,
            g.order_values.as_slice().into(),
            matrix(
                reals_na(&means),
                rows,
                cols,
                row_names.clone(),
                bins.clone(),
            )?,
            matrix(counts.into(), rows, cols, row_names, bins)?,
        ],
    )
}

extendr_module! {
    mod covariates;
    fn tw_equal_count_bands;
    fn tw_covariate_bands;
    fn tw_conditional_trends;
    fn tw_group_curves;
    fn tw_dropout_curves;
    fn tw_trajectory_grid;
}
