//! Mean curves per group: per level of a categorical covariate, and per dropout cohort
//! (Little & Rubin 2002, ch. 1: the mean by dropout time, a first look at whether dropout
//! depends on the trajectory).
//!
//! - [`group_curves`]: the levels are the covariate's distinct values (at most
//!   [`MAX_LEVELS`]), increasing; a row belongs to the level of its own value, so with a
//!   time-varying covariate a subject can contribute rows to several levels.
//! - [`dropout_curves`]: a subject's cohort is the grid bin of its last visit; the cohort holds
//!   all rows of its subjects. Subjects whose last visit falls in no bin are left out and
//!   counted in [`GroupCurves::left_out`]. Cohorts are listed by bin; empty bins are omitted.
//!
//! Each group's curve is the smoother fitted to that group's rows alone, evaluated at the
//! common grid (default as [`crate::trend::mean_curve::default_grid`]) and NaN at grid times outside
//! the group's observed time range, so a cohort that left early is not drawn past its last
//! visit. A group whose fit fails for too few distinct times gives [`Error::TooFew`] naming
//! the group. Groups are fitted in parallel and gathered in order; rows enter each fit ordered
//! by (time, response) within subjects, so neither the thread count nor the input row order
//! changes a result.

use rayon::prelude::*;
use serde::Serialize;

use crate::covariates::bands::find_covariate;
use crate::covariates::conditional::{canonical_pairs, fit_on_grid};
use crate::data::grid::TimeGrid;
use crate::data::panel::Panel;
use crate::error::{Error, Result};
use crate::trend::curve::Curve;
use crate::trend::mean_curve::resolve_grid;
use crate::trend::smoother::Smoother;

/// Most levels [`group_curves`] accepts.
pub const MAX_LEVELS: usize = 50;

/// The mean curve of one group.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GroupCurve {
    /// The level's value as text, or the dropout bin's label.
    pub label: String,
    /// The covariate's value ([`group_curves`]); `None` for dropout cohorts.
    pub level: Option<f64>,
    /// Subjects with at least one row in the group.
    pub subjects: usize,
    /// Rows in the group.
    pub observations: usize,
    /// The fit at the group's distinct times.
    pub curve: Curve,
    /// The fit at the common grid; NaN outside the group's observed time range.
    pub fitted: Vec<f64>,
}

/// Mean curves of several groups on one grid.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GroupCurves {
    /// The covariate's name, or `"dropout"`.
    pub by: String,
    /// The common grid.
    pub at: Vec<f64>,
    /// One curve per group, by increasing level or bin.
    pub groups: Vec<GroupCurve>,
    /// Subjects in no group (dropout cohorts: last visit in no bin); 0 for [`group_curves`].
    pub left_out: usize,
}

/// Mean curve per level of a categorical covariate (its distinct values, at most
/// [`MAX_LEVELS`]).
///
/// # Examples
/// ```
/// use trajweave_core::covariates::groups::group_curves;
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::{Covariate, Missing, Panel, SubjectIds};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int((0..40).map(|r| Some(r / 4)).collect());
/// let time: Vec<f64> = (0..40).map(|r| (r % 4) as f64).collect();
/// let arm: Vec<f64> = (0..40).map(|r| ((r / 4) % 2) as f64).collect();
/// let y: Vec<f64> = (0..40).map(|r| time[r] * (1.0 + arm[r])).collect();
/// let p = Panel::new(ids, &time, &y, vec![Covariate::new("arm", arm)], Missing::Error)?;
/// let g = group_curves(&p, "arm", &Smoother::new("lowess")?, Some(&[3.0]))?;
/// assert_eq!(g.groups.len(), 2);
/// assert_eq!((g.groups[0].label.as_str(), g.groups[0].subjects), ("0", 5));
/// assert!((g.groups[1].fitted[0] - 6.0).abs() < 1e-9);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::InvalidOption`] for an unknown covariate or one with more than [`MAX_LEVELS`]
/// distinct values; [`Error::NonFinite`] for a non-finite grid point; [`Error::TooFew`]
/// naming the group when its fit has too few distinct times; other errors of the fit.
pub fn group_curves(
    panel: &Panel,
    covariate: &str,
    smoother: &Smoother,
    at: Option<&[f64]>,
) -> Result<GroupCurves> {
    let c = find_covariate(panel, covariate)?;
    let at = resolve_grid(panel, at)?;
    // `+ 0.0` makes -0 and 0 one level.
    let mut levels: Vec<f64> = c.values.iter().map(|v| v + 0.0).collect();
    levels.sort_unstable_by(f64::total_cmp);
    levels.dedup();
    if levels.len() > MAX_LEVELS {
        return Err(Error::option(
            "covariate",
            format!("{covariate:?} with {} distinct values", levels.len()),
            &format!(
                "group curves take a categorical covariate with at most {MAX_LEVELS} levels; \
                 band a continuous covariate with covariate_bands and use conditional_trends"
            ),
        ));
    }
    let results: Vec<Result<GroupCurve>> = levels
        .par_iter()
        .map(|&level| {
            let clusters: Vec<Vec<(f64, f64)>> = (0..panel.n_subjects())
                .map(|i| {
                    canonical_pairs(
                        panel.subject_rows(i).filter(|&r| c.values[r] == level),
                        panel,
                    )
                })
                .filter(|p| !p.is_empty())
                .collect();
            let label = format!("{level}");
            let name = format!("group {label} of `{covariate}`");
            group_curve(label, Some(level), &clusters, smoother, &at, &name)
        })
        .collect();
    Ok(GroupCurves {
        by: covariate.to_string(),
        at,
        groups: results.into_iter().collect::<Result<Vec<_>>>()?,
        left_out: 0,
    })
}

/// Mean curve per dropout cohort: subjects grouped by the grid bin of their last visit (the
/// label is the bin's label); subjects whose last visit is in no bin are left out and counted.
///
/// # Examples
/// ```
/// use trajweave_core::covariates::groups::dropout_curves;
/// use trajweave_core::trend::smoother::Smoother;
/// use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};
/// # fn main() -> trajweave_core::Result<()> {
/// // Subjects 0-2 seen at 0..3, subjects 3-5 at 0..1, subject 6 at 0 and 9.
/// let (mut ids, mut time) = (vec![], vec![]);
/// for s in 0..7i64 {
///     let times: Vec<f64> = match s { 0..=2 => vec![0., 1., 2., 3.], 3..=5 => vec![0., 1.], _ => vec![0., 9.] };
///     for t in times { ids.push(Some(s)); time.push(t); }
/// }
/// let y = vec![1.0; time.len()];
/// let p = Panel::new(SubjectIds::Int(ids), &time, &y, vec![], Missing::Error)?;
/// let grid = TimeGrid::edges(vec![0.0, 2.0, 4.0])?;
/// let d = dropout_curves(&p, &grid, &Smoother::new("kernel")?, None)?;
/// assert_eq!(d.groups.iter().map(|g| g.subjects).collect::<Vec<_>>(), vec![3, 3]);
/// assert_eq!(d.groups[0].label, "[0, 2)");
/// assert_eq!(d.left_out, 1);
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::NonFinite`] for a non-finite grid point; [`Error::Empty`] when no subject's last
/// visit is in a bin; [`Error::TooFew`] naming the cohort when its fit has too few distinct
/// times; other errors of the fit.
pub fn dropout_curves(
    panel: &Panel,
    grid: &TimeGrid,
    smoother: &Smoother,
    at: Option<&[f64]>,
) -> Result<GroupCurves> {
    let at = resolve_grid(panel, at)?;
    let mut cohorts: Vec<Vec<usize>> = vec![Vec::new(); grid.n_bins()];
    let mut left_out = 0;
    for i in 0..panel.n_subjects() {
        // Rows are sorted by time within a subject, so the last row is the last visit.
        let last = panel.time()[panel.subject_rows(i).end - 1];
        match grid.bin_of(last) {
            Some(b) => cohorts[b].push(i),
            None => left_out += 1,
        }
    }
    if left_out == panel.n_subjects() {
        return Err(Error::Empty {
            stage: "in any dropout cohort".into(),
            fix: "no subject's last visit falls in a bin of the grid; widen the grid".into(),
        });
    }
    let results: Vec<Result<GroupCurve>> = cohorts
        .par_iter()
        .enumerate()
        .filter(|(_, s)| !s.is_empty())
        .map(|(b, subjects)| {
            let clusters: Vec<Vec<(f64, f64)>> = subjects
                .iter()
                .map(|&i| canonical_pairs(panel.subject_rows(i), panel))
                .collect();
            let label = grid.label(b);
            let name = format!("the dropout cohort {label}");
            group_curve(label, None, &clusters, smoother, &at, &name)
        })
        .collect();
    Ok(GroupCurves {
        by: "dropout".into(),
        at,
        groups: results.into_iter().collect::<Result<Vec<_>>>()?,
        left_out,
    })
}

fn group_curve(
    label: String,
    level: Option<f64>,
    clusters: &[Vec<(f64, f64)>],
    smoother: &Smoother,
    at: &[f64],
    name: &str,
) -> Result<GroupCurve> {
    let (curve, fitted) = fit_on_grid(clusters, smoother, at, name)?;
    Ok(GroupCurve {
        label,
        level,
        subjects: clusters.len(),
        observations: clusters.iter().map(Vec::len).sum(),
        curve,
        fitted,
    })
}
