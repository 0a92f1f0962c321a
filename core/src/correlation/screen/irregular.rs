//! Log-likelihood pieces for the structures defined on the visit times themselves
//! (independence, exchangeable, exponential, gaussian, intercept + exponential + error).
//!
//! Every evaluator works on the shape M = w_nu J + w_s R(phi) + w_tau I of V = c M and returns
//! (sum_i log det M_i, sum_i r_i' M_i^-1 r_i), from which both the log-likelihood at a given
//! scale c and the one with c profiled out follow ([`loglik_at`], [`profiled`]). Sums over
//! subjects run in fixed blocks of [`SUBJECT_BLOCK`] subjects in parallel and are added in
//! block order, so the thread count changes nothing.

use std::collections::BTreeMap;

use rayon::prelude::*;

use crate::numeric::linalg;

/// Subjects per block of a parallel sum (fixed, so sums do not depend on the thread count).
pub(crate) const SUBJECT_BLOCK: usize = 512;

const LN_2PI: f64 = 1.837_877_066_409_345_5;

/// Residuals and times in panel order with the subject offsets.
#[derive(Clone, Copy)]
pub(crate) struct Data<'a> {
    pub offsets: &'a [usize],
    pub time: &'a [f64],
    pub r: &'a [f64],
}

impl Data<'_> {
    pub fn n_subjects(&self) -> usize {
        self.offsets.len() - 1
    }

    pub fn n_obs(&self) -> usize {
        self.r.len()
    }

    pub fn rows(&self, i: usize) -> std::ops::Range<usize> {
        self.offsets[i]..self.offsets[i + 1]
    }
}

/// Sums `f(subject)` over all subjects in fixed blocks; `None` when any subject gives `None`.
pub(crate) fn block_sum<F>(data: Data<'_>, f: F) -> Option<(f64, f64)>
where
    F: Fn(usize, &mut Vec<f64>) -> Option<(f64, f64)> + Sync,
{
    let m = data.n_subjects();
    let blocks: Vec<Option<(f64, f64)>> = (0..m.div_ceil(SUBJECT_BLOCK))
        .into_par_iter()
        .map(|b| {
            let mut work = Vec::new();
            let mut acc = (0.0, 0.0);
            for i in b * SUBJECT_BLOCK..((b + 1) * SUBJECT_BLOCK).min(m) {
                let (x, y) = f(i, &mut work)?;
                acc.0 += x;
                acc.1 += y;
            }
            Some(acc)
        })
        .collect();
    blocks.into_iter().try_fold((0.0, 0.0), |acc, b| {
        let b = b?;
        Some((acc.0 + b.0, acc.1 + b.1))
    })
}

/// l at V = c M from (log det M, r' M^-1 r) summed over subjects.
pub(crate) fn loglik_at(n_obs: usize, c: f64, logdet: f64, quad: f64) -> f64 {
    let n = n_obs as f64;
    -0.5 * (n * LN_2PI + n * c.ln() + logdet + quad / c)
}

/// l with the scale profiled out (c_hat = quad / N), and c_hat.
pub(crate) fn profiled(n_obs: usize, logdet: f64, quad: f64) -> (f64, f64) {
    let c = quad / n_obs as f64;
    (loglik_at(n_obs, c, logdet, quad), c)
}

/// The serial correlation function.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(crate) enum Serial {
    /// exp(-d / phi)
    Exponential,
    /// exp(-(d / phi)^2)
    Gaussian,
}

/// The shape M = w_nu J + w_s R(phi) + w_tau I.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Shape {
    pub serial: Serial,
    pub phi: f64,
    pub w_nu: f64,
    pub w_s: f64,
    pub w_tau: f64,
}

/// (sum log det M_i, sum r_i' M_i^-1 r_i) for a shape; `None` when some M_i is not positive
/// definite.
pub(crate) fn shape_terms(data: Data<'_>, shape: Shape) -> Option<(f64, f64)> {
    match shape.serial {
        Serial::Exponential if shape.w_nu == 0.0 && shape.w_tau == 0.0 => {
            let s = shape.w_s;
            let (ld, q) = markov_terms(data, shape.phi)?;
            let n = data.n_obs() as f64;
            Some((ld + n * s.ln(), q / s))
        }
        Serial::Exponential => block_sum(data, |i, _| kalman_subject(data, i, shape)),
        Serial::Gaussian => dense_terms(data, shape),
    }
}

/// The same terms by a Cholesky factor of each subject's M (any shape).
pub(crate) fn dense_terms(data: Data<'_>, shape: Shape) -> Option<(f64, f64)> {
    block_sum(data, |i, work| dense_subject(data, i, shape, work))
}

/// Intercept + exponential + error as a state-space model: r_j = U + W(t_j) + e_j with the
/// state (U, W), U constant, W an Ornstein-Uhlenbeck process (W_j = rho_j W_{j-1} + noise of
/// variance w_s (1 - rho_j^2)). The Kalman filter's prediction-error decomposition gives
/// log det M = sum ln F_j and r' M^-1 r = sum v_j^2 / F_j exactly (v_j the innovations, F_j
/// their variances), in O(n) per subject.
fn kalman_subject(data: Data<'_>, i: usize, shape: Shape) -> Option<(f64, f64)> {
    let rows = data.rows(i);
    let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
    let Shape {
        w_nu, w_s, w_tau, ..
    } = shape;
    let floor = 1e-12 * (w_nu + w_s + w_tau);
    let inv_phi = 1.0 / shape.phi;
    // State mean (u, w) and covariance [[p11, p12], [p12, p22]].
    let (mut u, mut w) = (0.0, 0.0);
    let (mut p11, mut p12, mut p22) = (w_nu, 0.0, w_s);
    let (mut ld, mut q, mut prod) = (0.0, 0.0, 1.0);
    for j in 0..r.len() {
        if j > 0 {
            let rho = libm::exp(-(t[j] - t[j - 1]) * inv_phi);
            w *= rho;
            p12 *= rho;
            p22 = rho * rho * p22 + w_s * (1.0 - rho * rho);
        }
        let f = p11 + 2.0 * p12 + p22 + w_tau;
        if f.is_nan() || f <= floor {
            return None;
        }
        let v = r[j] - u - w;
        let (k1, k2) = ((p11 + p12) / f, (p12 + p22) / f);
        u += k1 * v;
        w += k2 * v;
        let (a, b) = (p11 + p12, p12 + p22);
        p11 -= k1 * a;
        p12 -= k1 * b;
        p22 -= k2 * b;
        q += v * v / f;
        // One ln per subject, not per visit, unless the product nears the ends of the range.
        prod *= f;
        if !(1e-150..=1e150).contains(&prod) {
            ld += prod.ln();
            prod = 1.0;
        }
    }
    Some((ld + prod.ln(), q))
}

/// The exponential correlation alone: the process is Markov in time, so with sorted times
/// t_1..t_n and rho_j = exp(-(t_j - t_{j-1}) / phi) the likelihood factors into
/// r_1 ~ N(0, 1), r_j | r_{j-1} ~ N(rho_j r_{j-1}, 1 - rho_j^2): O(n) per subject, no matrix.
pub(crate) fn markov_terms(data: Data<'_>, phi: f64) -> Option<(f64, f64)> {
    block_sum(data, |i, _| {
        let rows = data.rows(i);
        let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
        let mut ld = 0.0;
        let mut q = r[0] * r[0];
        let mut prod = 1.0;
        for j in 1..r.len() {
            let u = (t[j] - t[j - 1]) / phi;
            let rho = libm::exp(-u);
            // 1 - rho^2, by expm1 only for short gaps where the subtraction would cancel.
            let s = if u < 0.1 {
                -libm::expm1(-2.0 * u)
            } else {
                1.0 - rho * rho
            };
            if s.is_nan() || s <= 1e-12 {
                return None;
            }
            let e = r[j] - rho * r[j - 1];
            q += e * e / s;
            prod *= s;
            if prod < 1e-150 {
                ld += prod.ln();
                prod = 1.0;
            }
        }
        Some((ld + prod.ln(), q))
    })
}

/// One subject by Cholesky of its M.
fn dense_subject(
    data: Data<'_>,
    i: usize,
    shape: Shape,
    work: &mut Vec<f64>,
) -> Option<(f64, f64)> {
    let rows = data.rows(i);
    let n = rows.len();
    let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
    work.clear();
    work.resize(n * n + 2 * n, 0.0);
    let (a, rest) = work.split_at_mut(n * n);
    let (z, rho) = rest.split_at_mut(n);
    let inv_phi = 1.0 / shape.phi;
    if shape.serial == Serial::Exponential {
        // corr(j, k) = rho_{k+1} ... rho_j with rho_j = exp(-(t_j - t_{j-1}) / phi): n - 1
        // exps per subject instead of one per pair.
        for j in 1..n {
            rho[j] = libm::exp(-(t[j] - t[j - 1]) * inv_phi);
        }
    }
    for j in 0..n {
        a[j * n + j] = shape.w_nu + shape.w_s + shape.w_tau;
        // Lower triangle only.
        match shape.serial {
            Serial::Exponential => {
                let mut c = 1.0;
                for k in (0..j).rev() {
                    c *= rho[k + 1];
                    a[j * n + k] = shape.w_nu + shape.w_s * c;
                }
            }
            Serial::Gaussian => {
                for k in 0..j {
                    let u = (t[j] - t[k]) * inv_phi;
                    a[j * n + k] = shape.w_nu + shape.w_s * libm::exp(-u * u);
                }
            }
        }
    }
    let ld = linalg::cholesky(a, n)?;
    z.copy_from_slice(r);
    linalg::forward(a, n, z);
    Some((ld, z.iter().map(|v| v * v).sum()))
}

/// Per subject size: (number of subjects, sum of squared residual totals).
type SizeMap = BTreeMap<usize, (f64, f64)>;

/// Sufficient statistics of the exchangeable likelihood: the sum of squares, and per subject
/// size n the number of subjects and the sum of their squared residual totals.
pub(crate) struct ExchangeableStats {
    pub ss: f64,
    pub by_size: Vec<(usize, f64, f64)>,
}

impl ExchangeableStats {
    pub fn new(data: Data<'_>) -> Self {
        let m = data.n_subjects();
        let blocks: Vec<(f64, SizeMap)> = (0..m.div_ceil(SUBJECT_BLOCK))
            .into_par_iter()
            .map(|b| {
                let mut ss = 0.0;
                let mut map = BTreeMap::new();
                for i in b * SUBJECT_BLOCK..((b + 1) * SUBJECT_BLOCK).min(m) {
                    let r = &data.r[data.rows(i)];
                    let total: f64 = r.iter().sum();
                    ss += r.iter().map(|v| v * v).sum::<f64>();
                    let e = map.entry(r.len()).or_insert((0.0, 0.0));
                    e.0 += 1.0;
                    e.1 += total * total;
                }
                (ss, map)
            })
            .collect();
        let mut ss = 0.0;
        let mut all: BTreeMap<usize, (f64, f64)> = BTreeMap::new();
        for (s, map) in blocks {
            ss += s;
            for (n, (c, t)) in map {
                let e = all.entry(n).or_insert((0.0, 0.0));
                e.0 += c;
                e.1 += t;
            }
        }
        ExchangeableStats {
            ss,
            by_size: all.into_iter().map(|(n, (c, t))| (n, c, t)).collect(),
        }
    }

    /// (sum log det M_i, sum r' M_i^-1 r) for M = g J + I, by the determinant lemma
    /// (det = 1 + n g) and Sherman-Morrison (M^-1 = I - g / (1 + n g) J).
    pub fn terms(&self, g: f64) -> (f64, f64) {
        let mut ld = 0.0;
        let mut q = self.ss;
        for &(n, count, tot2) in &self.by_size {
            let d = 1.0 + n as f64 * g;
            ld += count * d.ln();
            q -= g * tot2 / d;
        }
        (ld, q)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Three subjects with irregular times (one with a single visit).
    fn data() -> (Vec<usize>, Vec<f64>, Vec<f64>) {
        let offsets = vec![0, 4, 5, 8];
        let time = vec![0.0, 0.3, 1.1, 2.6, 0.5, 0.0, 0.05, 3.0];
        let r = vec![1.2, 0.7, -0.4, 0.9, -1.5, 0.3, 0.2, -0.8];
        (offsets, time, r)
    }

    #[test]
    fn fast_paths_agree_with_cholesky() {
        let (o, t, r) = data();
        let d = Data {
            offsets: &o,
            time: &t,
            r: &r,
        };
        let close = |a: (f64, f64), b: (f64, f64)| {
            assert!(
                (a.0 - b.0).abs() < 1e-12 && (a.1 - b.1).abs() < 1e-12,
                "{a:?} {b:?}"
            );
        };
        for (w_nu, w_s, w_tau) in [
            (0.0, 1.0, 0.0),
            (0.3, 0.5, 0.2),
            (0.0, 0.7, 0.3),
            (0.5, 0.5, 0.0),
        ] {
            let shape = Shape {
                serial: Serial::Exponential,
                phi: 0.8,
                w_nu,
                w_s,
                w_tau,
            };
            close(
                shape_terms(d, shape).unwrap(),
                dense_terms(d, shape).unwrap(),
            );
        }
        let shape = Shape {
            serial: Serial::Exponential,
            phi: 1.0,
            w_nu: 0.4,
            w_s: 0.0,
            w_tau: 1.0,
        };
        close(
            ExchangeableStats::new(d).terms(0.4),
            dense_terms(d, shape).unwrap(),
        );
    }

    #[test]
    fn duplicated_times_make_pure_serial_singular() {
        let (o, t, r) = (vec![0, 2, 3], vec![1.0, 1.0, 0.0], vec![0.5, 0.4, 0.1]);
        let d = Data {
            offsets: &o,
            time: &t,
            r: &r,
        };
        let mut shape = Shape {
            serial: Serial::Exponential,
            phi: 1.0,
            w_nu: 0.0,
            w_s: 1.0,
            w_tau: 0.0,
        };
        assert!(shape_terms(d, shape).is_none());
        shape.serial = Serial::Gaussian;
        assert!(shape_terms(d, shape).is_none());
        shape.w_tau = 0.1;
        assert!(shape_terms(d, shape).is_some());
    }
}
