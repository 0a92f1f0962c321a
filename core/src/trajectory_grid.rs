//! Many trajectories at once as a grid of subjects by time bins (Swihart et al. 2010,
//! Epidemiology 21:621-625): one row per subject, ordered by a per-subject summary, one column
//! per time bin, each cell the mean of a per-row variable (the response, or residuals) over
//! the subject's visits in the bin, shown as a colour.
//!
//! Rows are ordered by `order_by` increasing, ties by subject id. A cell with no visit is NaN
//! with count 0. Visits outside every bin are not in any cell. Within a cell the values are
//! summed in (time, value) order, so rows tied in (subject, time) give the same mean whatever
//! their input order. Subjects are processed in parallel, each writing only its own row, so the
//! thread count changes nothing.

use rayon::prelude::*;
use serde::Serialize;

use crate::error::{Error, Result};
use crate::grid::TimeGrid;
use crate::panel::{Panel, SubjectId};

/// Subjects by time bins.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrajectoryGrid {
    /// Bin labels, one per column.
    pub bins: Vec<String>,
    /// Subjects, one per row, in display order.
    pub subjects: Vec<SubjectId>,
    /// The ordering value of each row's subject.
    pub order_values: Vec<f64>,
    /// Row-major subjects x bins: mean of the variable in the cell, NaN when empty.
    pub values: Vec<f64>,
    /// Row-major subjects x bins: number of visits in the cell.
    pub counts: Vec<u32>,
}

/// Builds the subjects-by-bins grid of `values` (one per panel row, in panel order), rows
/// ordered by `order_by` (one per panel subject, in panel order), ties by subject id.
///
/// # Examples
/// ```
/// use trajweave_core::trajectory_grid::trajectory_grid;
/// use trajweave_core::{Missing, Panel, SubjectIds, SubjectId, TimeGrid};
/// # fn main() -> trajweave_core::Result<()> {
/// let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(1), Some(2)]);
/// let p = Panel::new(ids, &[0.0, 0.5, 1.5, 0.2], &[1.0, 3.0, 5.0, 7.0], vec![], Missing::Error)?;
/// let grid = TimeGrid::edges(vec![0.0, 1.0, 2.0])?;
/// let g = trajectory_grid(&p, p.response(), &grid, &[2.0, 1.0])?;
/// assert_eq!(g.subjects, vec![SubjectId::Int(2), SubjectId::Int(1)]);
/// assert_eq!(g.counts, vec![1, 0, 2, 1]);
/// assert_eq!((g.values[0], g.values[2], g.values[3]), (7.0, 2.0, 5.0));
/// assert!(g.values[1].is_nan());
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`Error::LengthMismatch`] when `values` is not one per panel row or `order_by` not one per
/// subject; [`Error::NonFinite`] for a non-finite entry (rows of `values` counted in the
/// caller's input order, from 1; entries of `order_by` by subject in id order, from 1).
pub fn trajectory_grid(
    panel: &Panel,
    values: &[f64],
    grid: &TimeGrid,
    order_by: &[f64],
) -> Result<TrajectoryGrid> {
    let (n, s) = (panel.n_obs(), panel.n_subjects());
    if values.len() != n {
        return Err(Error::LengthMismatch {
            argument: "values".into(),
            reference: "the panel's rows".into(),
            expected: n,
            found: values.len(),
        });
    }
    if order_by.len() != s {
        return Err(Error::LengthMismatch {
            argument: "order_by".into(),
            reference: "the panel's subjects".into(),
            expected: s,
            found: order_by.len(),
        });
    }
    if let Some(k) = values.par_iter().position_first(|v| !v.is_finite()) {
        return Err(Error::NonFinite {
            argument: "values".into(),
            row: panel.order()[k] + 1,
            value: format!("{}", values[k]),
        });
    }
    if let Some(i) = order_by.iter().position(|v| !v.is_finite()) {
        return Err(Error::NonFinite {
            argument: "order_by".into(),
            row: i + 1,
            value: format!("{}", order_by[i]),
        });
    }

    let mut rows: Vec<usize> = (0..s).collect();
    // Subject index order is id order, so ties by index are ties by id; the key is total.
    rows.par_sort_unstable_by(|&a, &b| {
        (order_by[a] + 0.0)
            .total_cmp(&(order_by[b] + 0.0))
            .then(a.cmp(&b))
    });

    let k = grid.n_bins();
    let mut cell_values = vec![0.0; s * k];
    let mut counts = vec![0u32; s * k];
    let time = panel.time();
    cell_values
        .par_chunks_mut(k.max(1))
        .zip(counts.par_chunks_mut(k.max(1)))
        .zip(rows.par_iter())
        .for_each(|((out, cnt), &i)| {
            let r = panel.subject_rows(i);
            let mut a = r.start;
            while a < r.end {
                // A run of rows tied in time: summed in value order.
                let mut b = a + 1;
                while b < r.end && time[b] == time[a] {
                    b += 1;
                }
                if let Some(bin) = grid.bin_of(time[a]) {
                    if b - a == 1 {
                        out[bin] += values[a];
                    } else {
                        let mut run = values[a..b].to_vec();
                        run.sort_unstable_by(f64::total_cmp);
                        for v in run {
                            out[bin] += v;
                        }
                    }
                    cnt[bin] += (b - a) as u32;
                }
                a = b;
            }
            for (v, &c) in out.iter_mut().zip(cnt.iter()) {
                *v = if c == 0 { f64::NAN } else { *v / f64::from(c) };
            }
        });

    Ok(TrajectoryGrid {
        bins: (0..k).map(|b| grid.label(b)).collect(),
        subjects: rows.iter().map(|&i| panel.ids()[i].clone()).collect(),
        order_values: rows.iter().map(|&i| order_by[i]).collect(),
        values: cell_values,
        counts,
    })
}
