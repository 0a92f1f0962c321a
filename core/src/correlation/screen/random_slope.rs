//! Random intercept and slope (+ exponential serial process) + error as a state-space model,
//! evaluated by a Kalman filter in O(n_i) per subject (Jones 1993, ch. 3 and 6).
//!
//! For subject i with visits at t_1 < ... < t_n (ties allowed) and u_j = (t_j - centre) /
//! spread,
//!
//! r_j = b0 + b1 u_j + W(t_j) + e_j,
//!
//! with (b0, b1) ~ N(0, G_u) constant over the visits, W a stationary Ornstein-Uhlenbeck
//! process (W_j = rho_j W_{j-1} + noise of variance w_s (1 - rho_j^2), rho_j =
//! exp(-(t_j - t_{j-1}) / phi), W_1 ~ N(0, w_s)) and e_j ~ N(0, w_tau) independent. The state
//! is x = (b0, b1, W) with prior mean 0 and covariance blockdiag(G_u, w_s); each visit is an
//! observation r_j = h_j' x + e_j, h_j = (1, u_j, 1). The filter's innovations v_j and their
//! variances F_j give the prediction-error decomposition
//!
//! ln det M = sum_j ln F_j,   r' M^-1 r = sum_j v_j^2 / F_j
//!
//! exactly, for M = Z G_u Z' + w_s R(phi) + w_tau I.
//!
//! Without the serial part (w_s = 0) no filter is needed: with A = Z'Z and b = Z'r per subject
//! (sums kept once, [`SlopeStats`]), the determinant lemma and Woodbury's identity give
//! det M = w_tau^(n-2) det(w_tau I + A G_u) and r' M^-1 r = (r'r - b' G_u (w_tau I + A G_u)^-1 b)
//! / w_tau, O(1) per subject and evaluation.
//!
//! The time is centred and scaled ([`TimeScale`]) only for the optimiser's conditioning; the
//! covariance of (intercept, slope) is reported at time 0 of the panel's time scale in its
//! units, G_0 = A G_u A' with A = [[1, -centre / spread], [0, 1 / spread]] (exact; det A =
//! 1 / spread, so G_0 is singular exactly when G_u is).

use super::irregular::{block_sum, Data};

/// The centre and spread of the visit times the filter works in.
#[derive(Clone, Copy, Debug)]
pub(crate) struct TimeScale {
    pub centre: f64,
    pub spread: f64,
}

impl TimeScale {
    /// The mean of all visit times and their root-mean-square deviation from it (1 when that
    /// is 0 or not finite).
    pub fn new(data: Data<'_>) -> TimeScale {
        let n = data.n_obs() as f64;
        let centre = data.time.iter().sum::<f64>() / n;
        let ss: f64 = data.time.iter().map(|t| (t - centre) * (t - centre)).sum();
        let spread = (ss / n).sqrt();
        TimeScale {
            centre: if centre.is_finite() { centre } else { 0.0 },
            spread: if spread.is_finite() && spread > 0.0 {
                spread
            } else {
                1.0
            },
        }
    }

    /// G_u (about the centre, slope per spread unit) from G_0 (at time 0, slope per time
    /// unit); G as [g00, g01, g11].
    pub fn to_scaled(self, g0: [f64; 3]) -> [f64; 3] {
        let (c, s) = (self.centre, self.spread);
        [
            g0[0] + 2.0 * c * g0[1] + c * c * g0[2],
            s * (g0[1] + c * g0[2]),
            s * s * g0[2],
        ]
    }

    /// G_0 from G_u (the inverse of [`TimeScale::to_scaled`]).
    pub fn to_origin(self, gu: [f64; 3]) -> [f64; 3] {
        let (k, s) = (self.centre / self.spread, self.spread);
        [
            gu[0] - 2.0 * k * gu[1] + k * k * gu[2],
            (gu[1] - k * gu[2]) / s,
            gu[2] / (s * s),
        ]
    }
}

/// (variance, variance, correlation) of a 2 x 2 covariance [g00, g01, g11]; the correlation is
/// 0 when a variance is 0 (then it does not change G) and is kept in [-1, 1] against rounding.
pub(crate) fn variances_and_correlation(g: [f64; 3]) -> (f64, f64, f64) {
    let d = (g[0] * g[2]).sqrt();
    let r = if d > 0.0 {
        (g[1] / d).clamp(-1.0, 1.0)
    } else {
        0.0
    };
    (g[0], g[2], r)
}

/// [g00, g01, g11] from two variances and a correlation.
pub(crate) fn covariance_of(v0: f64, v1: f64, r: f64) -> [f64; 3] {
    [v0, r * (v0 * v1).sqrt(), v1]
}

/// M = Z G_u Z' + w_s R(phi) + w_tau I on the scaled times (w_s = 0: no serial part).
#[derive(Clone, Copy, Debug)]
pub(crate) struct SlopeShape {
    pub g: [f64; 3],
    pub w_s: f64,
    pub phi: f64,
    pub w_tau: f64,
}

/// (sum_i ln det M_i, sum_i r_i' M_i^-1 r_i); `None` when some M_i is not positive definite
/// (an innovation variance at or below 1e-12 times the sum of the shape's variances).
pub(crate) fn slope_terms(
    data: Data<'_>,
    scale: TimeScale,
    shape: SlopeShape,
) -> Option<(f64, f64)> {
    block_sum(data, |i, _| filter_subject(data, i, scale, shape))
}

/// Per subject: n, r'r, sum u, sum u^2, sum r, sum u r (u the scaled time), for the shape
/// without a serial part.
pub(crate) struct SlopeStats {
    subjects: Vec<[f64; 6]>,
}

impl SlopeStats {
    pub fn new(data: Data<'_>, scale: TimeScale) -> SlopeStats {
        let subjects = (0..data.n_subjects())
            .map(|i| {
                let rows = data.rows(i);
                let mut s = [0.0; 6];
                for (t, r) in data.time[rows.clone()].iter().zip(&data.r[rows]) {
                    let u = (t - scale.centre) / scale.spread;
                    s[0] += 1.0;
                    s[1] += r * r;
                    s[2] += u;
                    s[3] += u * u;
                    s[4] += r;
                    s[5] += u * r;
                }
                s
            })
            .collect();
        SlopeStats { subjects }
    }

    /// The terms of [`slope_terms`] for a shape with `w_s` = 0, by the determinant lemma and
    /// Woodbury's identity; `None` when some M_i is not positive definite (det(w_tau I + A G)
    /// at or below 1e-12 w_tau^2, or a negative quadratic form).
    pub fn terms(&self, data: Data<'_>, shape: SlopeShape) -> Option<(f64, f64)> {
        let [g00, g01, g11] = shape.g;
        let tau = shape.w_tau;
        if tau.is_nan() || tau <= 0.0 {
            return None;
        }
        let ln_tau = tau.ln();
        block_sum(data, |i, _| {
            let [n, rr, s1, s2, b0, b1] = self.subjects[i];
            // M = tau I + A G with A = [[n, s1], [s1, s2]].
            let m00 = tau + n * g00 + s1 * g01;
            let m01 = n * g01 + s1 * g11;
            let m10 = s1 * g00 + s2 * g01;
            let m11 = tau + s1 * g01 + s2 * g11;
            let det = m00 * m11 - m01 * m10;
            if det.is_nan() || det <= 1e-12 * tau * tau {
                return None;
            }
            // y = M^-1 b, then b' G y.
            let y0 = (m11 * b0 - m01 * b1) / det;
            let y1 = (m00 * b1 - m10 * b0) / det;
            let bg = b0 * (g00 * y0 + g01 * y1) + b1 * (g01 * y0 + g11 * y1);
            let quad = (rr - bg) / tau;
            if quad.is_nan() || quad < -1e-12 * rr / tau {
                return None;
            }
            Some(((n - 2.0) * ln_tau + det.ln(), quad.max(0.0)))
        })
    }
}

fn filter_subject(
    data: Data<'_>,
    i: usize,
    scale: TimeScale,
    shape: SlopeShape,
) -> Option<(f64, f64)> {
    let rows = data.rows(i);
    let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
    let SlopeShape { g, w_s, phi, w_tau } = shape;
    let floor = 1e-12 * (g[0] + g[2] + w_s + w_tau);
    let serial = w_s > 0.0;
    let inv_phi = 1.0 / phi;
    let inv_spread = 1.0 / scale.spread;
    // State mean (x0, x1, x2) and covariance p (upper triangle).
    let (mut x0, mut x1, mut x2) = (0.0, 0.0, 0.0);
    let (mut p00, mut p01, mut p11) = (g[0], g[1], g[2]);
    let (mut p02, mut p12, mut p22) = (0.0, 0.0, w_s);
    let (mut ld, mut q, mut prod) = (0.0, 0.0, 1.0);
    for j in 0..r.len() {
        if serial && j > 0 {
            let z = (t[j] - t[j - 1]) * inv_phi;
            let rho = libm::exp(-z);
            // 1 - rho^2 by expm1 for short gaps, where the subtraction would cancel.
            let fresh = if z < 0.1 {
                -libm::expm1(-2.0 * z)
            } else {
                1.0 - rho * rho
            };
            x2 *= rho;
            p02 *= rho;
            p12 *= rho;
            p22 = rho * rho * p22 + w_s * fresh;
        }
        let u = (t[j] - scale.centre) * inv_spread;
        // m = P h with h = (1, u, 1); F = h' P h + w_tau.
        let m0 = p00 + u * p01 + p02;
        let m1 = p01 + u * p11 + p12;
        let m2 = p02 + u * p12 + p22;
        let f = m0 + u * m1 + m2 + w_tau;
        if f.is_nan() || f <= floor {
            return None;
        }
        let v = r[j] - (x0 + u * x1 + x2);
        let inv_f = 1.0 / f;
        let (k0, k1, k2) = (m0 * inv_f, m1 * inv_f, m2 * inv_f);
        x0 += k0 * v;
        x1 += k1 * v;
        x2 += k2 * v;
        // P - m m' / F, symmetric by construction.
        p00 -= k0 * m0;
        p01 -= k0 * m1;
        p11 -= k1 * m1;
        p02 -= k0 * m2;
        p12 -= k1 * m2;
        p22 -= k2 * m2;
        q += v * v * inv_f;
        // One ln per subject, not per visit, unless the product nears the ends of the range.
        prod *= f;
        if !(1e-150..=1e150).contains(&prod) {
            ld += prod.ln();
            prod = 1.0;
        }
    }
    Some((ld + prod.ln(), q))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::linalg;

    /// The same terms by a Cholesky factor of each subject's M built entry by entry.
    fn dense(data: Data<'_>, scale: TimeScale, s: SlopeShape) -> (f64, f64) {
        let mut acc = (0.0, 0.0);
        for i in 0..data.n_subjects() {
            let rows = data.rows(i);
            let (t, r) = (&data.time[rows.clone()], &data.r[rows]);
            let n = t.len();
            let mut a = vec![0.0; n * n];
            for j in 0..n {
                for k in 0..=j {
                    let (uj, uk) = (
                        (t[j] - scale.centre) / scale.spread,
                        (t[k] - scale.centre) / scale.spread,
                    );
                    let zgz = s.g[0] + s.g[1] * (uj + uk) + s.g[2] * uj * uk;
                    let serial = s.w_s * (-(t[j] - t[k]).abs() / s.phi).exp();
                    a[j * n + k] = zgz + serial + if j == k { s.w_tau } else { 0.0 };
                }
            }
            let ld = linalg::cholesky(&mut a, n).unwrap();
            let mut z = r.to_vec();
            linalg::forward(&a, n, &mut z);
            acc.0 += ld;
            acc.1 += z.iter().map(|v| v * v).sum::<f64>();
        }
        acc
    }

    #[test]
    fn filter_agrees_with_cholesky() {
        let offsets = vec![0, 4, 5, 8, 12];
        let time = vec![0.0, 0.3, 1.1, 2.6, 0.5, 0.0, 0.05, 3.0, 1.0, 1.0, 4.0, 7.5];
        let r = vec![
            1.2, 0.7, -0.4, 0.9, -1.5, 0.3, 0.2, -0.8, 2.0, 1.1, -0.3, 0.6,
        ];
        let d = Data {
            offsets: &offsets,
            time: &time,
            r: &r,
        };
        let scale = TimeScale::new(d);
        for (g, w_s, w_tau) in [
            ([0.5, 0.1, 0.2], 0.0, 0.3),
            ([0.5, -0.3, 0.4], 0.4, 0.3),
            ([0.2, 0.2, 0.2], 0.6, 0.01),
        ] {
            let s = SlopeShape {
                g,
                w_s,
                phi: 1.3,
                w_tau,
            };
            let (a, b) = (slope_terms(d, scale, s).unwrap(), dense(d, scale, s));
            assert!(
                (a.0 - b.0).abs() < 1e-12 && (a.1 - b.1).abs() < 1e-12,
                "{a:?} {b:?}"
            );
        }
    }

    #[test]
    fn origin_and_scaled_covariances_round_trip() {
        let scale = TimeScale {
            centre: 3.2,
            spread: 2.1,
        };
        let g0 = [110.0, 2.4, 2.2];
        let back = scale.to_origin(scale.to_scaled(g0));
        for (a, b) in back.iter().zip(g0) {
            assert!((a - b).abs() < 1e-12 * b.abs().max(1.0));
        }
    }
}
