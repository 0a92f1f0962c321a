//! A seeded sample of raw within-subject pairs (u, v) for plotting or smoothing.
//!
//! Every pair of rows (j, k) gets a key from a hash of (seed, j, k); the sample is the `size`
//! pairs with the smallest keys. Which pairs are chosen therefore depends only on the seed
//! and the data, not on the thread count or the order of the work, and memory stays at
//! `size` pairs per block of subjects.

use std::collections::BinaryHeap;

use rayon::prelude::*;
use serde::Serialize;

use crate::data::panel::{Panel, SubjectId};
use crate::numeric::rng::pair_key;

use super::sums::block_size;

/// Raw pairs: lag, half squared difference, and the subject.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PairSample {
    /// Lags u = t_k - t_j.
    pub lag: Vec<f64>,
    /// Half squared differences v = (r_k - r_j)^2 / 2.
    pub half_sq_diff: Vec<f64>,
    /// The subject of each pair.
    pub subjects: Vec<SubjectId>,
}

/// Pairs with lag in [lo, hi]: all of them (`size` = None) or the `size` with smallest keys,
/// ordered by lag (ties by row).
pub(crate) fn sample_pairs(
    panel: &Panel,
    residuals: &[f64],
    lo: f64,
    hi: f64,
    size: Option<usize>,
    seed: u64,
) -> PairSample {
    let s = panel.n_subjects();
    let block = block_size(s);
    let starts: Vec<usize> = (0..s).step_by(block).collect();
    let time = panel.time();
    // (key, subject, row j, row k); with no size every key is 0 and nothing is dropped.
    let parts: Vec<Vec<(u64, usize, usize, usize)>> = starts
        .par_iter()
        .map(|&first| {
            let mut heap: BinaryHeap<(u64, usize, usize, usize)> = BinaryHeap::new();
            let mut all = Vec::new();
            for i in first..(first + block).min(s) {
                let rows = panel.subject_rows(i);
                for j in rows.clone() {
                    for k in j + 1..rows.end {
                        let u = time[k] - time[j];
                        if u > hi {
                            break;
                        }
                        if u < lo {
                            continue;
                        }
                        match size {
                            None => all.push((0, i, j, k)),
                            Some(m) => {
                                let key = pair_key(seed, j as u64, k as u64);
                                if heap.len() < m {
                                    heap.push((key, i, j, k));
                                } else if heap.peek().is_some_and(|top| key < top.0) {
                                    heap.pop();
                                    heap.push((key, i, j, k));
                                }
                            }
                        }
                    }
                }
            }
            if size.is_some() {
                heap.into_vec()
            } else {
                all
            }
        })
        .collect();
    let mut chosen: Vec<(u64, usize, usize, usize)> = parts.into_iter().flatten().collect();
    if let Some(m) = size {
        chosen.sort_unstable();
        chosen.truncate(m);
    }
    let lag_of = |&(_, _, j, k): &(u64, usize, usize, usize)| time[k] - time[j];
    chosen.sort_by(|a, b| {
        lag_of(a)
            .total_cmp(&lag_of(b))
            .then((a.2, a.3).cmp(&(b.2, b.3)))
    });
    let ids = panel.ids();
    PairSample {
        lag: chosen.iter().map(lag_of).collect(),
        half_sq_diff: chosen
            .iter()
            .map(|&(_, _, j, k)| 0.5 * (residuals[k] - residuals[j]).powi(2))
            .collect(),
        subjects: chosen.iter().map(|&(_, i, _, _)| ids[i].clone()).collect(),
    }
}
