//! Toeplitz and unstructured covariances on the bins of a time grid.
//!
//! Subjects are grouped by their pattern of observed bins. The likelihood of a pattern p
//! seen by m_p subjects depends on the data only through T_p = sum y y' over those subjects,
//! so after one pass over the data every evaluation, gradient and EM step costs a sum over
//! patterns (at most 2^12), whatever the number of subjects.

use std::collections::BTreeMap;

use rayon::prelude::*;

use super::irregular::{Data, SUBJECT_BLOCK};
use crate::data::grid::TimeGrid;
use crate::data::panel::SubjectId;
use crate::numeric::linalg;

/// Most bins a grid may have for toeplitz and unstructured.
pub const MAX_BINS: usize = 12;

const LN_2PI: f64 = 1.837_877_066_409_345_5;

/// Subjects sharing one pattern of observed bins.
pub(crate) struct Pattern {
    /// The observed bins, increasing.
    pub bins: Vec<usize>,
    /// Number of subjects.
    pub count: f64,
    /// sum y y' over them, row-major n x n (n = bins.len()).
    pub t: Vec<f64>,
}

/// The grouped data of a grid.
pub(crate) struct Patterns {
    pub k: usize,
    pub subjects: f64,
    pub patterns: Vec<Pattern>,
}

/// Groups the subjects by bin pattern, or says why the grid cannot be used.
pub(crate) fn patterns(
    data: Data<'_>,
    grid: &TimeGrid,
    ids: &[SubjectId],
) -> Result<Patterns, String> {
    let k = grid.n_bins();
    if k > MAX_BINS {
        return Err(format!(
            "the grid has {k} bins; toeplitz and unstructured need at most {MAX_BINS}"
        ));
    }
    let m = data.n_subjects();
    type Block = Result<BTreeMap<u16, (f64, Vec<f64>)>, String>;
    let blocks: Vec<Block> = (0..m.div_ceil(SUBJECT_BLOCK))
        .into_par_iter()
        .map(|b| {
            let mut map: BTreeMap<u16, (f64, Vec<f64>)> = BTreeMap::new();
            let mut y = [0.0; MAX_BINS];
            let range = b * SUBJECT_BLOCK..((b + 1) * SUBJECT_BLOCK).min(m);
            for (i, id) in range.clone().zip(&ids[range]) {
                let mut mask: u16 = 0;
                for row in data.rows(i) {
                    let t = data.time[row];
                    let Some(bin) = grid.bin_of(t) else {
                        return Err(format!(
                            "the visit of subject {id} at time {t} is in no bin of `grid`"
                        ));
                    };
                    if mask & (1 << bin) != 0 {
                        return Err(format!(
                            "subject {id} has two visits in bin {} of `grid`",
                            grid.label(bin)
                        ));
                    }
                    mask |= 1 << bin;
                    y[bin] = data.r[row];
                }
                let obs: Vec<usize> = (0..k).filter(|&a| mask & (1 << a) != 0).collect();
                let n = obs.len();
                let e = map.entry(mask).or_insert_with(|| (0.0, vec![0.0; n * n]));
                e.0 += 1.0;
                for (j, &a) in obs.iter().enumerate() {
                    for (l, &c) in obs.iter().enumerate() {
                        e.1[j * n + l] += y[a] * y[c];
                    }
                }
            }
            Ok(map)
        })
        .collect();
    let mut all: BTreeMap<u16, (f64, Vec<f64>)> = BTreeMap::new();
    for block in blocks {
        for (mask, (c, t)) in block? {
            match all.get_mut(&mask) {
                Some(e) => {
                    e.0 += c;
                    e.1.iter_mut().zip(&t).for_each(|(a, b)| *a += b);
                }
                None => {
                    all.insert(mask, (c, t));
                }
            }
        }
    }
    let patterns: Vec<Pattern> = all
        .into_iter()
        .map(|(mask, (count, t))| Pattern {
            bins: (0..k).filter(|&a| mask & (1 << a) != 0).collect(),
            count,
            t,
        })
        .collect();
    if let Some(a) = (0..k).find(|&a| !patterns.iter().any(|p| p.bins.contains(&a))) {
        return Err(format!("bin {} of `grid` holds no visit", grid.label(a)));
    }
    Ok(Patterns {
        k,
        subjects: m as f64,
        patterns,
    })
}

impl Patterns {
    /// How often each bin pair (a, b) is seen together, row-major k x k.
    fn pair_counts(&self) -> Vec<f64> {
        let k = self.k;
        let mut n = vec![0.0; k * k];
        for p in &self.patterns {
            for &a in &p.bins {
                for &b in &p.bins {
                    n[a * k + b] += p.count;
                }
            }
        }
        n
    }

    /// Pairwise covariance sum y_a y_b / #(subjects seeing a and b), row-major k x k (zero
    /// where a pair is never seen), and the pair counts.
    pub fn pairwise(&self) -> (Vec<f64>, Vec<f64>) {
        let k = self.k;
        let counts = self.pair_counts();
        let mut s = vec![0.0; k * k];
        for p in &self.patterns {
            let n = p.bins.len();
            for (j, &a) in p.bins.iter().enumerate() {
                for (l, &b) in p.bins.iter().enumerate() {
                    s[a * k + b] += p.t[j * n + l];
                }
            }
        }
        for (v, c) in s.iter_mut().zip(&counts) {
            if *c > 0.0 {
                *v /= c;
            }
        }
        (s, counts)
    }

    /// Toeplitz start: the pairwise covariance averaged along each diagonal (weighted by pair
    /// counts), and the lags never observed.
    pub fn lag_moments(&self) -> (Vec<f64>, Vec<usize>) {
        let k = self.k;
        let (mut num, mut den) = (vec![0.0; k], vec![0.0; k]);
        for p in &self.patterns {
            let n = p.bins.len();
            for (j, &a) in p.bins.iter().enumerate() {
                for (l, &b) in p.bins.iter().enumerate() {
                    num[a.abs_diff(b)] += p.t[j * n + l];
                    den[a.abs_diff(b)] += p.count;
                }
            }
        }
        let missing = (0..k).filter(|&h| den[h] == 0.0).collect();
        let c = num
            .iter()
            .zip(&den)
            .map(|(a, b)| if *b > 0.0 { a / b } else { 0.0 })
            .collect();
        (c, missing)
    }

    /// Bin pairs never seen together (a < b).
    pub fn unseen_pairs(&self) -> Vec<(usize, usize)> {
        let k = self.k;
        let counts = self.pair_counts();
        (0..k)
            .flat_map(|a| (a + 1..k).map(move |b| (a, b)))
            .filter(|&(a, b)| counts[a * k + b] == 0.0)
            .collect()
    }

    /// l at the full k x k covariance `s` (row-major); with `grad`, also dl/dV_ab summed into
    /// it per bin pair (row-major k x k: 1/2 (V^-1 T V^-1 - m V^-1) per pattern). `None` when
    /// some pattern's block is not positive definite.
    pub fn loglik(&self, s: &[f64], mut grad: Option<&mut [f64]>) -> Option<f64> {
        let k = self.k;
        let mut l = 0.0;
        for p in &self.patterns {
            let n = p.bins.len();
            let mut v: Vec<f64> = p
                .bins
                .iter()
                .flat_map(|&a| p.bins.iter().map(move |&b| s[a * k + b]))
                .collect();
            let ld = linalg::cholesky(&mut v, n)?;
            let w = linalg::inverse(&v, n);
            let wt = matmul(&w, &p.t, n);
            let tr: f64 = (0..n).map(|j| wt[j * n + j]).sum();
            l -= 0.5 * (p.count * (n as f64 * LN_2PI + ld) + tr);
            if let Some(g) = grad.as_deref_mut() {
                let wtw = matmul(&wt, &w, n);
                for (j, &a) in p.bins.iter().enumerate() {
                    for (c, &b) in p.bins.iter().enumerate() {
                        g[a * k + b] += 0.5 * (wtw[j * n + c] - p.count * w[j * n + c]);
                    }
                }
            }
        }
        Some(l)
    }

    /// One EM step for the unstructured covariance (zero mean, data missing at random by
    /// bin): the observed-data l at `s` and the updated covariance
    /// S' = (1 / subjects) sum E[y y' | observed, S]. `None` when a block is not positive
    /// definite.
    pub fn em_step(&self, s: &[f64]) -> Option<(f64, Vec<f64>)> {
        let k = self.k;
        let mut l = 0.0;
        let mut acc = vec![0.0; k * k];
        for p in &self.patterns {
            let o = &p.bins;
            let n = o.len();
            let mis: Vec<usize> = (0..k).filter(|a| !o.contains(a)).collect();
            let mut v: Vec<f64> = o
                .iter()
                .flat_map(|&a| o.iter().map(move |&b| s[a * k + b]))
                .collect();
            let ld = linalg::cholesky(&mut v, n)?;
            let w = linalg::inverse(&v, n);
            let tr: f64 = (0..n * n).map(|i| w[i] * p.t[i]).sum();
            l -= 0.5 * (p.count * (n as f64 * LN_2PI + ld) + tr);
            // B = S_mo S_oo^-1 (|mis| x n).
            let q = mis.len();
            let mut bmat = vec![0.0; q * n];
            for (x, &a) in mis.iter().enumerate() {
                for j in 0..n {
                    bmat[x * n + j] = (0..n).map(|c| s[a * k + o[c]] * w[c * n + j]).sum();
                }
            }
            // E[y_o y_o'] = T; E[y_m y_o'] = B T; E[y_m y_m'] = B T B' + m (S_mm - B S_om).
            let bt = matmul_rect(&bmat, &p.t, q, n, n);
            for (j, &a) in o.iter().enumerate() {
                for (c, &b) in o.iter().enumerate() {
                    acc[a * k + b] += p.t[j * n + c];
                }
            }
            for (x, &a) in mis.iter().enumerate() {
                for (c, &b) in o.iter().enumerate() {
                    acc[a * k + b] += bt[x * n + c];
                    acc[b * k + a] += bt[x * n + c];
                }
                for (z, &b) in mis.iter().enumerate() {
                    let btb: f64 = (0..n).map(|c| bt[x * n + c] * bmat[z * n + c]).sum();
                    let bso: f64 = (0..n).map(|c| bmat[x * n + c] * s[o[c] * k + b]).sum();
                    acc[a * k + b] += btb + p.count * (s[a * k + b] - bso);
                }
            }
        }
        acc.iter_mut().for_each(|v| *v /= self.subjects);
        // Symmetrise against rounding.
        for a in 0..k {
            for b in a + 1..k {
                let m = 0.5 * (acc[a * k + b] + acc[b * k + a]);
                acc[a * k + b] = m;
                acc[b * k + a] = m;
            }
        }
        Some((l, acc))
    }
}

/// The k x k Toeplitz matrix of `c` (row-major).
pub(crate) fn toeplitz(c: &[f64]) -> Vec<f64> {
    let k = c.len();
    (0..k)
        .flat_map(|a| (0..k).map(move |b| c[a.abs_diff(b)]))
        .collect()
}

fn matmul(a: &[f64], b: &[f64], n: usize) -> Vec<f64> {
    matmul_rect(a, b, n, n, n)
}

/// (r x m) times (m x c).
fn matmul_rect(a: &[f64], b: &[f64], r: usize, m: usize, c: usize) -> Vec<f64> {
    let mut out = vec![0.0; r * c];
    for i in 0..r {
        for x in 0..m {
            let v = a[i * m + x];
            for j in 0..c {
                out[i * c + j] += v * b[x * c + j];
            }
        }
    }
    out
}
