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

use crate::data::grid::TimeGrid;
use crate::data::panel::{Panel, SubjectId};
use crate::error::{Error, Result};

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
/// use trajweave_core::individuals::trajectory_grid::trajectory_grid;
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
    // A vectorisable parallel scan first; the position is looked for only on failure.
    let all_finite = values
        .par_chunks(1 << 16)
        .all(|c| c.iter().fold(true, |ok, v| ok & v.is_finite()));
    if let Some(k) = (!all_finite)
        .then(|| values.iter().position(|v| !v.is_finite()))
        .flatten()
    {
        return Err(Error::NonFinite {
            argument: "values".into(),
            row: panel.order()[k] + 1,
            value: format!("{}", values[k]),
        });
    }
    crate::trend::curve::check_finite("order_by", order_by)?;

    // Sort on (order key, subject index): integer keys compare faster than doubles, and the
    // pair is a total order, so the unstable parallel sort has one possible result.
    let mut keyed: Vec<(u64, usize)> = order_by
        .par_iter()
        .enumerate()
        .map(|(i, &v)| (order_key(v), i))
        .collect();
    keyed.par_sort_unstable();
    let rows: Vec<usize> = keyed.into_par_iter().map(|(_, i)| i).collect();

    // Cells are filled with subjects in panel order (reads run through memory in order), then
    // whole rows are gathered into display order.
    let k = grid.n_bins();
    let mut by_panel = vec![0.0; s * k];
    let mut counts_by_panel = vec![0u32; s * k];
    by_panel
        .par_chunks_mut(k)
        .zip(counts_by_panel.par_chunks_mut(k))
        .enumerate()
        .with_min_len(1024)
        .for_each(|(i, (out, cnt))| fill_row(panel, values, grid, i, out, cnt));
    let identity = rows.iter().enumerate().all(|(a, &b)| a == b);
    let (cell_values, counts) = if identity {
        (by_panel, counts_by_panel)
    } else {
        let mut v = vec![0.0; s * k];
        let mut c = vec![0u32; s * k];
        v.par_chunks_mut(k)
            .zip(c.par_chunks_mut(k))
            .zip(rows.par_iter())
            .with_min_len(1024)
            .for_each(|((ov, oc), &i)| {
                ov.copy_from_slice(&by_panel[i * k..(i + 1) * k]);
                oc.copy_from_slice(&counts_by_panel[i * k..(i + 1) * k]);
            });
        (v, c)
    };

    Ok(TrajectoryGrid {
        bins: (0..k).map(|b| grid.label(b)).collect(),
        subjects: rows.iter().map(|&i| panel.ids()[i].clone()).collect(),
        order_values: rows.iter().map(|&i| order_by[i]).collect(),
        values: cell_values,
        counts,
    })
}

/// Mean of `values` per bin over subject `i`'s rows, summing rows tied in time in value order.
fn fill_row(
    panel: &Panel,
    values: &[f64],
    grid: &TimeGrid,
    i: usize,
    out: &mut [f64],
    cnt: &mut [u32],
) {
    let time = panel.time();
    let r = panel.subject_rows(i);
    let mut bins = SortedBins::new(grid);
    let mut a = r.start;
    while a < r.end {
        let mut b = a + 1;
        while b < r.end && time[b] == time[a] {
            b += 1;
        }
        if let Some(bin) = bins.bin_of(time[a]) {
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
}

/// [`TimeGrid::bin_of`] for increasing times: with bin edges a cursor moves forward over the
/// edges (a subject's times are sorted), instead of a binary search per visit.
struct SortedBins<'a> {
    grid: &'a TimeGrid,
    cursor: usize,
}

impl<'a> SortedBins<'a> {
    fn new(grid: &'a TimeGrid) -> Self {
        SortedBins { grid, cursor: 0 }
    }

    /// The bin of `t`, which is >= every time asked before.
    fn bin_of(&mut self, t: f64) -> Option<usize> {
        match self.grid {
            TimeGrid::Edges { edges } => {
                let k = edges.len() - 1;
                if t < edges[0] || t > edges[k] {
                    return None;
                }
                // The last edge <= t, the last bin holding the end point (as `bin_of`).
                while self.cursor + 1 < k && t >= edges[self.cursor + 1] {
                    self.cursor += 1;
                }
                Some(self.cursor)
            }
            TimeGrid::Schedule { .. } => self.grid.bin_of(t),
        }
    }
}

/// An integer whose order is that of the finite double `x` (-0 taken as 0).
fn order_key(x: f64) -> u64 {
    const SIGN: u64 = 1 << 63;
    let b = (x + 0.0).to_bits();
    if b & SIGN != 0 {
        !b
    } else {
        b | SIGN
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cursor_bins_agree_with_bin_of() {
        // Against TimeGrid::bin_of (binary search) on increasing times that hit every edge,
        // fall between edges, and lie beyond both ends.
        let grid = TimeGrid::edges(vec![0.0, 1.0, 2.5, 4.0]).unwrap();
        let times = [-1.0, 0.0, 0.0, 0.5, 1.0, 1.0, 2.49, 2.5, 3.0, 4.0, 4.0, 4.5];
        let mut cursor = SortedBins::new(&grid);
        for t in times {
            assert_eq!(cursor.bin_of(t), grid.bin_of(t), "t = {t}");
        }
        let sched = TimeGrid::schedule(vec![0.0, 1.0], 0.3).unwrap();
        let mut cursor = SortedBins::new(&sched);
        for t in [-0.5, 0.2, 0.5, 0.7, 1.3, 2.0] {
            assert_eq!(cursor.bin_of(t), sched.bin_of(t));
        }
    }

    #[test]
    fn order_keys_keep_the_order_of_doubles() {
        let v = [f64::MIN, -2.0, -1e-300, 0.0, 1e-300, 3.0, f64::MAX];
        assert!(v.windows(2).all(|w| order_key(w[0]) < order_key(w[1])));
        assert_eq!(order_key(-0.0), order_key(0.0));
    }
}
